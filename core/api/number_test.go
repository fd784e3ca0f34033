package api

import (
	"regexp"
	"testing"
)

// isDecimal against the regular expression of its doc comment (Go's regexp
// package as the reference), on hand-picked strings and on every string of
// up to four characters from the alphabet that matters.
func TestIsDecimal(t *testing.T) {
	ref := regexp.MustCompile(`^[+-]?([0-9]+([.,][0-9]*)?|[.,][0-9]+)([eE][+-]?[0-9]+)?$`)
	check := func(s string) {
		if got, want := isDecimal(s), ref.MatchString(s); got != want {
			t.Errorf("isDecimal(%q) = %v, want %v", s, got, want)
		}
	}
	for _, s := range []string{"", "300", "+2.5", "2,5", ".5", "5.", ",5", "-0", "1e400", "1E-7", "1e", "1e+", "e5", ".", ",", "+", "1.2.3", "1,2,3", "0x12C", "NaN", "Inf", "1_000", " 1", "1 ", "١٢"} {
		check(s)
	}
	alphabet := "0.,e+-x"
	var walk func(prefix string, n int)
	walk = func(prefix string, n int) {
		check(prefix)
		if n == 0 {
			return
		}
		for _, c := range alphabet {
			walk(prefix+string(c), n-1)
		}
	}
	walk("", 4)
}
