package api

import (
	"regexp"
	"strconv"
	"strings"
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

// TestThousandsComma: a comma before exactly three digits after a whole
// part that is not zero is refused as ambiguous (1 or 1000?; in many
// locales the comma groups thousands, in many others it is the decimal
// sign: common practice, no source); any other decimal comma is read as a
// point.
func TestThousandsComma(t *testing.T) {
	for _, c := range []struct {
		text      string
		ambiguous bool
		value     float64 // when not ambiguous
	}{
		{"1,000", true, 0}, {"12,500", true, 0}, {"-1,250", true, 0}, {"+300,000", true, 0}, {"1,000e3", false, 1000}, {"5,005E2", false, 500.5},
		{"0,993", false, 0.993}, {"-0,125", false, -0.125}, {"00,500", false, 0.5}, {",500", false, 0.5},
		{"1,5", false, 1.5}, {"600,25", false, 600.25}, {"1,0000", false, 1}, {"1,", false, 1}, {"1000", false, 1000}, {"1.000", false, 1},
	} {
		n := Number{raw: []byte(strconv.Quote(c.text))}
		v, given, err := n.value("koa")
		switch {
		case c.ambiguous && (err == nil || !strings.Contains(err.Error(), "is ambiguous")):
			t.Errorf("%q: got %v, %v, want the ambiguity refused", c.text, v, err)
		case !c.ambiguous && (err != nil || !given || v != c.value):
			t.Errorf("%q: got %v (given %v), %v, want %v", c.text, v, given, err, c.value)
		}
	}
}
