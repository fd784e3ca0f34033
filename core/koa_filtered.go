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
// (FindRoot). K rises with KoA (ultrafiltration_test.go checks it) from
// the clearance of ultrafiltration alone at KoA = 0 towards
// TransferCeiling. The root is bracketed to a width of koaTolerance times
// the top of the bracket (at most 4e-14 of the KoA), so the returned KoA
// gives k to about 1e-13 relative where K is not flat in KoA; near the
// ceiling, where K barely moves, KoA itself is poorly determined by k, as
// it is for any inverse.
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
	root, err := FindRoot(func(x float64) float64 { return clearance(x) - k }, lo, hi, koaTolerance*hi, 400)
	if err != nil {
		// Cannot happen: K(lo) < k <= K(hi) and Transfer is finite.
		return 0, fieldErrorf(field, "no KoA found for %g mL/min: %v", k, err)
	}
	return root.X, nil
}

// koaTolerance is the width, relative to the top of the bracket, to which
// KoAForClearance narrows the root.
const koaTolerance = 1e-14
