//go:build !js

package main

import (
	"go/build/constraint"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestBuildConstraints checks that every source file of the bridge is built
// for js/wasm only, so that native builds of ./... never see syscall/js.
func TestBuildConstraints(t *testing.T) {
	files, err := filepath.Glob("*.go")
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range files {
		if strings.HasSuffix(f, "_test.go") {
			continue
		}
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		first, _, _ := strings.Cut(string(src), "\n")
		expr, err := constraint.Parse(first)
		if err != nil {
			t.Errorf("%s: first line %q is not a build constraint", f, first)
			continue
		}
		native := expr.Eval(func(tag string) bool { return tag == "linux" || tag == "amd64" })
		wasm := expr.Eval(func(tag string) bool { return tag == "js" || tag == "wasm" })
		if native || !wasm {
			t.Errorf("%s: constraint %q must select js/wasm only", f, first)
		}
	}
}
