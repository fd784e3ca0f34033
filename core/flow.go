package core

import "math"

// Arrangement is the relative direction of blood and dialysate flow.
type Arrangement int

const (
	// Countercurrent: dialysate flows against the blood (the usual connection).
	Countercurrent Arrangement = iota
	// Cocurrent: dialysate flows with the blood (parallel flow, as when the
	// dialysate lines are connected the wrong way round).
	Cocurrent
)

// Arrangements lists both arrangements, counter-current first.
var Arrangements = [...]Arrangement{Countercurrent, Cocurrent}

// String returns the API name of the arrangement.
func (a Arrangement) String() string {
	if a == Cocurrent {
		return "cocurrent"
	}
	return "countercurrent"
}

// ParseArrangement reads an API name ("countercurrent" or "cocurrent").
func ParseArrangement(field, s string) (Arrangement, error) {
	switch s {
	case "countercurrent":
		return Countercurrent, nil
	case "cocurrent":
		return Cocurrent, nil
	}
	return 0, fieldErrorf(field, "must be \"countercurrent\" or \"cocurrent\" (got %q)", s)
}

// capacities returns Cmin, Cmax and 1 - Cr = (Cmax - Cmin)/Cmax, the last
// computed from the difference of the flows so that it keeps full relative
// accuracy when QB and QD are nearly equal.
func capacities(qb, qd float64) (cmin, cmax, oneMinusCr float64) {
	cmin, cmax = order(qb, qd)
	return cmin, cmax, (cmax - cmin) / cmax
}

// order returns the smaller and the larger of two flows: min and max for
// the model's flows, which are positive numbers. (Go's min and max of
// floats order NaN and signed zeros, which the flows never are, and are
// calls under WebAssembly, where the chart series make some 600 of them.)
func order(a, b float64) (lo, hi float64) {
	if a < b {
		return a, b
	}
	return b, a
}

// atMostOne returns min(1, x), the same for every x (NaN stays NaN, -0
// stays -0), without the call Go's min is under WebAssembly.
func atMostOne(x float64) float64 {
	if x > 1 {
		return 1
	}
	return x
}

// Effectiveness returns the fraction eps of the largest possible transfer
// achieved by the arrangement, so that dialysance D = eps * min(QB, QD).
//
// Counter-current: eps = (1 - e^(-NTU(1-Cr))) / (1 - Cr e^(-NTU(1-Cr))),
// co-current: eps = (1 - e^(-NTU(1+Cr))) / (1 + Cr), with NTU = KoA/Cmin and
// Cr = Cmin/Cmax (effectiveness-NTU relations, Incropera & DeWitt ch. 11;
// Shah & Sekulic 2003). Inputs are assumed valid (positive flows, KoA >= 0).
//
// Special cases are:
//
//	Effectiveness(a, qb, qd, 0) = 0
//	Effectiveness(Countercurrent, q, q, koa) = NTU/(1+NTU)  (Cr = 1)
//	Effectiveness(Countercurrent, qb, qd, +Inf) = 1
//	Effectiveness(Cocurrent, qb, qd, +Inf) = 1/(1+Cr)
func Effectiveness(a Arrangement, qb, qd, koa float64) float64 {
	cmin, cmax, oneMinusCr := capacities(qb, qd)
	ntu := koa / cmin
	cr := cmin / cmax
	if a == Cocurrent {
		if math.IsInf(ntu, 1) {
			return 1 / (1 + cr)
		}
		return -math.Expm1(-ntu*(1+cr)) / (1 + cr)
	}
	if math.IsInf(ntu, 1) {
		return 1
	}
	// With x = NTU(1-Cr) and phi(x) = (1 - e^-x)/x the counter-current
	// relation becomes eps = NTU phi / (1 + Cr NTU phi), which has no 0/0
	// at Cr = 1 and reduces there to NTU/(1+NTU). Near saturation the
	// quotient can round to just above 1; the ceiling is exact.
	t := ntu * phi(ntu*oneMinusCr)
	return atMostOne(t / (1 + cr*t))
}

// phi returns (1 - e^-x)/x for x >= 0, with phi(0) = 1.
func phi(x float64) float64 {
	if x == 0 {
		return 1
	}
	return -math.Expm1(-x) / x
}

// Dialysance returns D = eps * min(QB, QD) in mL/min: the solute transfer
// rate per unit of inlet concentration difference (CBi - CDi).
func Dialysance(a Arrangement, qb, qd, koa float64) float64 {
	cmin, _ := order(qb, qd)
	return Effectiveness(a, qb, qd, koa) * cmin
}

// Ceiling returns the dialysance the arrangement approaches as KoA grows
// without bound: min(QB, QD) counter-current, QB QD/(QB+QD) co-current.
// No filter can reach or pass it at these flows.
func Ceiling(a Arrangement, qb, qd float64) float64 {
	// The same roundings as Dialysance at KoA = +Inf: 1 x Cmin
	// counter-current, (1/(1+Cr)) Cmin co-current (QB QD/(QB+QD) without
	// overflow of QB*QD), so that Dialysance never exceeds it at finite KoA.
	cmin, cmax := order(qb, qd)
	if a == Cocurrent {
		return 1 / (1 + cmin/cmax) * cmin
	}
	return cmin
}

// pair is the dialysance of both arrangements at one point, with their
// ceilings: the same values, rounding for rounding, as Dialysance and
// Ceiling give one at a time, computed with the capacities shared.
// The chart series call it at every point; under WebAssembly it is about
// twice as fast as the four calls.
type pair struct{ counter, co, counterCeiling, coCeiling float64 }

func dialysancePair(qb, qd, koa float64) pair {
	return pairFlows(qb, qd).at(koa)
}

// flowPair is what dialysancePair computes from the flows alone, so that
// a series along KoA computes it once (the same operations on the same
// flows: the same values).
type flowPair struct{ cmin, oneMinusCr, cr, co float64 }

func pairFlows(qb, qd float64) flowPair {
	cmin, cmax, oneMinusCr := capacities(qb, qd)
	cr := cmin / cmax
	return flowPair{cmin: cmin, oneMinusCr: oneMinusCr, cr: cr, co: 1 / (1 + cr)}
}

// at is dialysancePair at these flows and koa.
func (f flowPair) at(koa float64) pair {
	ntu := koa / f.cmin
	p := pair{counter: f.cmin, co: f.co * f.cmin, counterCeiling: f.cmin, coCeiling: f.co * f.cmin}
	if !math.IsInf(ntu, 1) {
		t := ntu * phi(ntu*f.oneMinusCr)
		p.counter = atMostOne(t/(1+f.cr*t)) * f.cmin
		p.co = -math.Expm1(-ntu*(1+f.cr)) / (1 + f.cr) * f.cmin
	}
	return p
}
