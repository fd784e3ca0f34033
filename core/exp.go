package core

import "math"

// The Go standard library computes Exp and Log in assembly on amd64 (and
// arm64) but in Go on js/wasm, so the two can differ in the last bit;
// Expm1, Log1p, Ldexp and Round are Go code everywhere. ClearKit's numbers
// must be the same natively and in the page (the browser tests compare
// them for equality), so core uses only the latter: expPortable for e^x,
// log1p for logarithms.

// ln2Hi is ln 2 rounded to 32 significant bits, so that k ln2Hi is exact
// for |k| < 2^20; ln2Lo is the rest of ln 2, taken from the untyped
// constant math.Ln2 (the split of Cody and Waite, Software Manual for the
// Elementary Functions, 1980; from memory).
const (
	ln2Hi = 0x1.62e42feep-1
	ln2Lo = math.Ln2 - ln2Hi
)

// expPortable returns e^x, within an ulp or so of math.Exp, computed the
// same way on every platform: x = k ln 2 + r with |r| <= ln 2/2, and
// e^x = 2^k (1 + expm1(r)), where 1 + expm1(r) lies in [0.7, 1.42] and
// rounds once.
//
// Special cases are:
//
//	expPortable(x) = 0 for x < -746 (below the smallest subnormal)
//	expPortable(x) = +Inf for x > 710
//	expPortable(NaN) = NaN
func expPortable(x float64) float64 {
	switch {
	case x != x:
		return x
	case x < -746:
		return 0
	case x > 710:
		return math.Inf(1)
	}
	k := math.Round(x / math.Ln2)
	r := (x - k*ln2Hi) - k*ln2Lo
	return math.Ldexp(1+math.Expm1(r), int(k))
}
