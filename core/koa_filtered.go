package core

import "math"

// KoAForClearance returns the KoA at which arrangement a gives clearance k
// (mL/min) at the operating point op, whose KoA is ignored: its flows,
// inlet concentrations, blood and ultrafiltration. It is the in-situ KoA
// of a filter from a measured clearance, or the filter a target clearance
// needs. field names the clearance in error messages.
//
// Without ultrafiltration the effectiveness-NTU relations are inverted in
// closed form (requiredKoA of size.go). With it the forward model has no
// closed-form inverse, so the root of K(KoA) = k is found by bracketing
// and Brent's method (FindRoot). K rises with KoA (ultrafiltration_test.go
// checks it) from its value at KoA = 0 (what the ultrafiltration alone
// clears) towards the ceiling. The root is bracketed to a width of
// koaTolerance times the top of the bracket (at most 4e-14 of the KoA), so
// the returned KoA gives k to about 1e-13 relative where K is not flat in
// KoA; near the ceiling, where K barely moves, KoA itself is poorly
// determined by k, as it is for any inverse.
//
// Errors name field: k at or below the clearance at KoA = 0 (Limit is that
// clearance), k at or above the ceiling (Limit is the ceiling), or k that
// would need a KoA above MaxKoA; "cdi" when CDi >= CBi (the clearance then
// no longer rises with KoA); and the fields of op when op is not valid.
func KoAForClearance(field string, a Arrangement, op Operating, k float64) (float64, error) {
	if math.IsNaN(k) || math.IsInf(k, 0) {
		return 0, fieldErrorf(field, "must be a finite number")
	}
	op.KoA = 0
	if err := op.Validate(); err != nil {
		return 0, err
	}
	if op.CDi >= op.CBi {
		return 0, fieldErrorf("cdi", "must be below the blood inlet CBi for a KoA to follow from a clearance (got %g >= %g)", op.CDi, op.CBi)
	}
	inv := invertClearance(a, op.model(), k, start{})
	switch inv.reach {
	case atFloor:
		what := "a filter of KoA 0"
		if op.QF > 0 {
			what = "the ultrafiltration alone"
		}
		e := fieldErrorf(field, "is at or below %.4g mL/min, what %s clears (got %g)", inv.floor, what, k)
		e.Limit = &inv.floor
		return 0, e
	case beyondCeiling:
		e := fieldErrorf(field, "is at or above the %s ceiling %.4g mL/min, which no filter reaches at these flows (got %g)", a.label(), inv.ceiling, k)
		e.Limit = &inv.ceiling
		return 0, e
	case beyondMaxKoA:
		return 0, fieldErrorf(field, "would need a KoA above %g mL/min (got %g mL/min, ceiling %.4g)", float64(MaxKoA), k, inv.ceiling)
	}
	return inv.koa, nil
}

// koaTolerance is the width, relative to the top of the bracket, to which
// invertClearance narrows the root.
const koaTolerance = 1e-14

// inversion is the result of invertClearance.
type inversion struct {
	koa            float64
	reach          reach
	floor, ceiling float64 // clearance at KoA = 0 and as KoA grows without bound
	evaluations    int
}

// reach says whether a clearance can be inverted.
type reach int

const (
	found         reach = iota // koa gives the clearance
	atFloor                    // the clearance is at or below that of KoA = 0 (koa = 0)
	beyondCeiling              // at or above the ceiling: no KoA gives it
	beyondMaxKoA               // below the ceiling but beyond MaxKoA
)

// invertClearance finds the KoA at which arrangement a gives clearance k
// at m, a valid operating point as the model sees it (Operating.model),
// its KoA ignored. A start with KoA > 0, a KoA near the answer (the
// central value of an uncertainty analysis, the previous point of a
// series), begins a secant iteration there, which ends in a few
// evaluations when the start is close; without one, or when the iteration
// does not settle, the root is bracketed and found by FindRoot. A quick
// start evaluates the model with drawRules.
func invertClearance(a Arrangement, m Operating, k float64, st start) inversion {
	clearance := func(koa float64) float64 {
		m.KoA = koa
		c, _ := clearanceAt(a, m)
		return c
	}
	if st.quick && m.QF > 0 {
		// clearanceAt with the looser rules: K - D CDi/CBi.
		clearance = func(koa float64) float64 {
			kf, d := transfer(a, m.QB, m.QD, koa, m.Filtration, drawRules)
			return kf - d*(m.CDi/m.CBi)
		}
	}
	m.KoA = 0
	floor, ceiling := clearanceAt(a, m)
	if m.QF == 0 && floor < k && k < ceiling {
		// The closed form, on the dialysance k/f.
		inv := inversion{floor: floor, ceiling: ceiling, evaluations: 1}
		inv.koa = requiredKoA(a, m.QB, m.QD, k/m.drivingFraction())
		if !(inv.koa <= MaxKoA) {
			inv.reach = beyondMaxKoA
		}
		return inv
	}
	return invertRising(clearance, floor, ceiling, k, st)
}

// invertRising finds the KoA at which forward, rising in KoA from floor at
// KoA = 0 towards ceiling, equals y: by the secant method from st when it
// has a KoA, otherwise (or when that does not settle) by bracketing and
// FindRoot.
func invertRising(forward func(float64) float64, floor, ceiling, y float64, st start) inversion {
	inv := inversion{floor: floor, ceiling: ceiling, evaluations: 1}
	switch {
	case y <= floor:
		inv.reach = atFloor
		return inv
	case y >= ceiling:
		inv.reach = beyondCeiling
		return inv
	}
	if st.koa > 0 && st.koa <= MaxKoA {
		if koa, n, ok := secantKoA(forward, y, st); ok {
			inv.koa, inv.evaluations = koa, inv.evaluations+n
			return inv
		}
	}
	// Bracket: forward(0) < y; grow hi from y (about the KoA of a
	// clearance y, NTU near 1) until forward(hi) >= y.
	lo, hi := 0.0, math.Max(y, MinFlow)
	for {
		inv.evaluations++
		if forward(hi) >= y {
			break
		}
		if hi >= MaxKoA {
			inv.reach = beyondMaxKoA
			return inv
		}
		lo, hi = hi, math.Min(4*hi, MaxKoA)
	}
	root, err := FindRoot(func(x float64) float64 { return forward(x) - y }, lo, hi, koaTolerance*hi, 400)
	inv.evaluations += root.Evaluations
	if err != nil {
		// Cannot happen: forward(lo) < y <= forward(hi), all finite.
		inv.reach = beyondMaxKoA
		return inv
	}
	inv.koa = root.X
	return inv
}

// koaForDialysance is the KoA at which arrangement a has dialysance d
// (Transfer's D, -dW/dCDi) at flows qb, qd (valid) with ultrafiltration f,
// and whether any KoA up to MaxKoA gives it; 0 for d <= 0. Without
// ultrafiltration it is inSituKoA's closed form. D rises with KoA from 0
// (for S = 1 it is K - QF, and K rises: ultrafiltration_test.go).
func koaForDialysance(a Arrangement, qb, qd float64, f Filtration, d float64) (float64, bool) {
	if f.QF == 0 {
		return inSituKoA(a, qb, qd, d)
	}
	if d <= 0 {
		return 0, true
	}
	_, ceiling := TransferCeiling(a, qb, qd, f.QF)
	forward := func(koa float64) float64 { _, d := Transfer(a, qb, qd, koa, f); return d }
	inv := invertRising(forward, 0, ceiling, d, start{})
	return inv.koa, inv.reach == found
}

// start is where invertClearance begins: KoA (0 for none), the relative
// offset of the secant's second point, or, when slope > 0, a Newton step
// with that slope (dK/dKoA near the answer) to reach it, and the relative
// step at which the iteration stops; quick evaluates the model with
// drawRules (the draws of an uncertainty analysis).
type start struct {
	koa, offset, tol, slope float64
	quick                   bool
}

// nearStart is a start within some per cent of the answer, solved to the
// model's own accuracy.
func nearStart(koa float64) start { return start{koa: koa, offset: 0.01, tol: 1e-13} }

// secantKoA solves clearance(KoA) = k by the secant method from st.koa and
// st.koa (1 + st.offset), or the Newton step from st.koa with st.slope,
// stopping when a step is below st.tol of the KoA (the new point is then
// returned without evaluating it: the secant converges superlinearly, so
// it is nearer than the step) or the clearance is within 1e-15 of k (a few
// rounding errors of the model). It reports false (leaving the work to bracketing) if an iterate
// leaves (0, MaxKoA] or 12 steps do not settle.
func secantKoA(clearance func(float64) float64, k float64, st start) (koa float64, evaluations int, ok bool) {
	x0 := st.koa
	f0 := clearance(x0) - k
	x1 := x0 * (1 + st.offset)
	if st.slope > 0 {
		if x1 = x0 - f0/st.slope; x1 == x0 || !(x1 > 0) {
			return x0, 1, x1 == x0
		}
	}
	f1 := clearance(x1) - k
	evaluations = 2
	for range 12 {
		if f1 == f0 {
			return 0, evaluations, false
		}
		x2 := x1 - f1*(x1-x0)/(f1-f0)
		if !(x2 > 0 && x2 <= MaxKoA) {
			return 0, evaluations, false
		}
		if math.Abs(x2-x1) <= st.tol*x2 {
			return x2, evaluations, true
		}
		x0, f0, x1 = x1, f1, x2
		f1 = clearance(x1) - k
		evaluations++
		if math.Abs(f1) <= 1e-15*k {
			return x1, evaluations, true
		}
	}
	return 0, evaluations, false
}
