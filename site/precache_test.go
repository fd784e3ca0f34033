package site

import (
	"os"
	"path/filepath"
	"slices"
	"testing"
)

func writeFiles(t *testing.T, dir string, files map[string]string) {
	t.Helper()
	for name, body := range files {
		p := filepath.Join(dir, filepath.FromSlash(name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func TestPrecacheLists(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"index.html":          "<!doctype html>",
		"style.css":           "body{}",
		"js/main.js":          "//",
		"icons/icon-192.png":  "png",
		"clearkit.wasm":       "\x00asm",
		"sw.js":               "// worker",
		"precache.js":         "// generated",
		"harness_test.go":     "package site",
		"serve/main.go":       "package main",
		"serve/notes.json":    "{}",
		".hidden/secret.json": "{}",
		"README.txt":          "not an asset type",
	})
	b, err := Precache(dir)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"./", "clearkit.wasm", "icons/icon-192.png", "js/main.js", "style.css"}
	if !slices.Equal(b.Files, want) {
		t.Errorf("Precache files %q, want %q", b.Files, want)
	}
	if len(b.Version) != 16 {
		t.Errorf("version %q, want 16 hex digits", b.Version)
	}
}

// TestPrecacheVersionFollowsContent: any changed byte of an asset or of the
// worker gives a new version; the generated precache.js and files that are
// not served do not count.
func TestPrecacheVersionFollowsContent(t *testing.T) {
	base := map[string]string{"index.html": "<!doctype html>", "js/main.js": "//", "sw.js": "// worker"}
	version := func(extra map[string]string) string {
		t.Helper()
		dir := t.TempDir()
		writeFiles(t, dir, base)
		writeFiles(t, dir, extra)
		b, err := Precache(dir)
		if err != nil {
			t.Fatal(err)
		}
		return b.Version
	}
	v0 := version(nil)
	if v := version(nil); v != v0 {
		t.Errorf("same content: version %s, then %s", v0, v)
	}
	for name, body := range map[string]string{"js/main.js": "// ", "sw.js": "// worker 2", "style.css": "", "index.html": "<!DOCTYPE html>"} {
		if v := version(map[string]string{name: body}); v == v0 {
			t.Errorf("changing %s kept version %s", name, v0)
		}
	}
	for name, body := range map[string]string{"precache.js": "// other", "notes.txt": "x", "site_test.go": "package site"} {
		if v := version(map[string]string{name: body}); v != v0 {
			t.Errorf("adding %s (not served or generated) changed the version", name)
		}
	}
	// A file moved keeps its bytes but not its URL: a new version.
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{"index.html": "<!doctype html>", "js/app.js": "//", "sw.js": "// worker"})
	if b, _ := Precache(dir); b.Version == v0 {
		t.Error("renaming js/main.js to js/app.js kept the version")
	}
}

func TestPrecacheNeedsThePage(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{"style.css": "body{}"})
	if _, err := Precache(dir); err == nil {
		t.Error("Precache of a folder without index.html: no error")
	}
}
