package core

import "math"

// KoAForClearance returns the KoA at which arrangement a gives clearance k
// (fresh dialysate, mL/min; the first result of Transfer) at blood flow qb,
// dialysate flow qd and ultrafiltration f: the in-situ KoA of a filter
// from a measured clearance, or the filter a target clearance needs. field
// names the clearance in error messages.
//
// With ultrafiltration the forward model has no closed-form inverse, so the
// root of Transfer(KoA) = k is found by bracketing and Brent's method
// (Brent, Algorithms for Minimization without Derivatives, 1973, ch. 4;
// from memory). K rises with KoA (ultrafiltration_test.go checks it) from
// the clearance of ultrafiltration alone at KoA = 0 towards
// TransferCeiling. The root is bracketed to a relative width of
// koaTolerance, so the returned KoA gives k to about 1e-13 relative where
// K is not flat in KoA; near the ceiling, where K barely moves, KoA itself
// is poorly determined by k, as it is for any inverse.
//
// Errors name field: k at or below the clearance at KoA = 0 (Limit is that
// clearance), k at or above the ceiling (Limit is the ceiling), or k that
// would need a KoA above MaxKoA. The flows and f are assumed valid.
//
// Special cases are:
//
//	KoAForClearance(field, a, qb, qd, {0, s}, k) is the exact inverse of
//	  Dialysance, found the same way
func KoAForClearance(field string, a Arrangement, qb, qd float64, f Filtration, k float64) (float64, error) {
	if math.IsNaN(k) || math.IsInf(k, 0) {
		return 0, fieldErrorf(field, "must be a finite number")
	}
	clearance := func(koa float64) float64 { c, _ := Transfer(a, qb, qd, koa, f); return c }
	floor := clearance(0)
	if k <= floor {
		e := fieldErrorf(field, "is at or below what the ultrafiltration alone clears, %.4g mL/min, with no filter at all (got %g)", floor, k)
		e.Limit = &floor
		return 0, e
	}
	ceiling, _ := TransferCeiling(a, qb, qd, f.QF)
	if k >= ceiling {
		e := fieldErrorf(field, "is at or above the %s ceiling %.4g mL/min, which no filter reaches at these flows (got %g)", a, ceiling, k)
		e.Limit = &ceiling
		return 0, e
	}
	// Bracket: lo = 0 gives K < k; grow hi from k, about the KoA of a
	// clearance k (NTU near 1), until K(hi) >= k.
	lo, hi := 0.0, math.Max(k, MinFlow)
	for clearance(hi) < k {
		if hi >= MaxKoA {
			return 0, fieldErrorf(field, "would need a KoA above %g mL/min (got %g mL/min, ceiling %.4g)", float64(MaxKoA), k, ceiling)
		}
		lo, hi = hi, math.Min(4*hi, MaxKoA)
	}
	return brentRoot(func(x float64) float64 { return clearance(x) - k }, lo, hi), nil
}

// koaTolerance is the relative width to which KoAForClearance brackets
// the root.
const koaTolerance = 1e-14

// brentRoot returns a root of g in [a, b], where g(a) < 0 <= g(b), by
// Brent's method: inverse quadratic interpolation or the secant step when
// they stay well inside the bracket, bisection otherwise, until the
// bracket is narrower than koaTolerance relative (or 1e-300 absolute).
func brentRoot(g func(float64) float64, a, b float64) float64 {
	fa, fb := g(a), g(b)
	if fb == 0 {
		return b
	}
	c, fc := a, fa
	d := b - a
	e := d
	for range 200 {
		if (fb > 0) == (fc > 0) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol := 2*0x1p-52*math.Abs(b) + 0.5*(koaTolerance*math.Abs(b)+1e-300)
		m := 0.5 * (c - b)
		if math.Abs(m) <= tol || fb == 0 {
			return b
		}
		if math.Abs(e) >= tol && math.Abs(fa) > math.Abs(fb) {
			var p, q float64
			s := fb / fa
			if a == c {
				p, q = 2*m*s, 1-s // secant
			} else {
				qq, r := fa/fc, fb/fc // inverse quadratic interpolation
				p = s * (2*m*qq*(qq-r) - (b-a)*(r-1))
				q = (qq - 1) * (r - 1) * (s - 1)
			}
			if p > 0 {
				q = -q
			} else {
				p = -p
			}
			if 2*p < math.Min(3*m*q-math.Abs(tol*q), math.Abs(e*q)) {
				e, d = d, p/q
			} else {
				d, e = m, m
			}
		} else {
			d, e = m, m
		}
		a, fa = b, fb
		if math.Abs(d) > tol {
			b += d
		} else {
			b += math.Copysign(tol, m)
		}
		fb = g(b)
	}
	return b
}
