package core

import (
	"fmt"
	"math"
	"math/bits"
)

// sentence formats a finding's text as fmt.Sprintf does, except that every
// float64 argument is rounded as the page rounds the same number in its
// tables (format.js, Number.prototype.toFixed), so that a sentence and a
// table never show one value two ways.
func sentence(format string, args ...any) string {
	shown := make([]any, len(args))
	for i, a := range args {
		if x, ok := a.(float64); ok {
			a = asShown(x)
		}
		shown[i] = a
	}
	return fmt.Sprintf(format, shown...)
}

// asShown is a number formatted as the page shows it. fmt's %.Nf rounds
// the exact binary value to nearest with ties to even (strconv); toFixed
// picks, of two nearest, the larger magnitude (ECMA-262,
// Number.prototype.toFixed: "If there are two such n, pick the larger n",
// on the value without its sign). They differ only on exact ties, such as
// 191.25 to one decimal (191.2 in Go, 191.3 on the page), which occur
// where a result is a simple fraction of round flows (the co-current
// ceiling 300 x 510/800). The page also writes no "+" before 0
// (format.js: signed only when above 0).
type asShown float64

// Format implements fmt.Formatter: %f with a precision rounds ties away
// from zero; every other verb is fmt's.
func (v asShown) Format(s fmt.State, verb rune) {
	x := float64(v)
	if p, ok := s.Precision(); ok && (verb == 'f' || verb == 'F') && isTie(x, p) {
		x = math.Nextafter(x, math.Copysign(math.Inf(1), x))
	}
	format := fmt.FormatString(s, verb)
	if x == 0 && s.Flag('+') {
		format = fmt.FormatString(plusless{s}, verb)
	}
	fmt.Fprintf(s, format, x)
}

// plusless is a fmt.State without the + flag.
type plusless struct{ fmt.State }

func (p plusless) Flag(c int) bool { return c != '+' && p.State.Flag(c) }

// isTie reports whether x lies exactly halfway between two numbers of p
// decimals: 2 x 10^p is an odd integer. With x = m 2^e, m odd, that is
// m 5^p 2^(e+p+1), whose factor m 5^p is odd, so it holds exactly when
// e = -(p + 1).
func isTie(x float64, p int) bool {
	if x == 0 || math.IsInf(x, 0) || math.IsNaN(x) {
		return false
	}
	frac, exp := math.Frexp(math.Abs(x)) // x = frac 2^exp, frac in [0.5, 1)
	m := uint64(math.Ldexp(frac, 53))    // exact: 53 bits
	tz := bits.TrailingZeros64(m)
	return exp-53+tz == -(p + 1)
}
