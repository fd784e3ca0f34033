package core

import (
	"fmt"
	"math"
	"strings"
)

// Sizing beyond the ideal model: whole blood and ultrafiltration.
//
// A sizing question with whole blood works with the blood-water flow
// QBW = w QB (w the water fraction, BloodWaterFlow) wherever the model
// takes QB; flows in answers and messages stay blood flows, as entered.
// With ultrafiltration the clearance (fresh dialysate) is Transfer's K,
// the ceilings TransferCeiling's, and the required KoA is found by root
// finding (invertClearance); a target at or below what the
// ultrafiltration alone clears is refused (no filter is needed). Without
// either,
// sizeModel delegates to the closed forms of size.go unchanged.

// sizeModel is the flow model of a sizing question.
type sizeModel struct {
	water float64 // water fraction of the blood, 1 for an aqueous solution
	f     Filtration
}

func (s SizeSpec) model() sizeModel {
	m := sizeModel{water: 1, f: s.Filtration}
	if s.Blood != nil {
		m.water = s.Blood.WaterFraction()
	}
	return m
}

// plain reports whether the question is the ideal one, answered by the
// closed forms exactly as without these fields.
func (m sizeModel) plain() bool { return m.water == 1 && m.f.QF == 0 }

// qbw returns the blood-side flow of the model at blood flow qb.
func (m sizeModel) qbw(qb float64) float64 {
	if m.water == 1 {
		return qb
	}
	return qb * m.water
}

// clearance is the clearance of a filter of KoA koa, fresh dialysate.
func (m sizeModel) clearance(a Arrangement, qb, qd, koa float64) float64 {
	if m.f.QF == 0 {
		return Dialysance(a, m.qbw(qb), qd, koa)
	}
	k, _ := Transfer(a, m.qbw(qb), qd, koa, m.f)
	return k
}

// ceiling is the clearance as KoA grows without bound.
func (m sizeModel) ceiling(a Arrangement, qb, qd float64) float64 {
	if m.f.QF == 0 {
		return Ceiling(a, m.qbw(qb), qd)
	}
	k, _ := TransferCeiling(a, m.qbw(qb), qd, m.f.QF)
	return k
}

// operating is the model's operating point at qb, qd, fresh dialysate.
func (m sizeModel) operating(qb, qd float64) Operating {
	return Operating{QB: m.qbw(qb), QD: qd, CBi: 1, Filtration: m.f}
}

// requiredKoA is sizeKoA for the model: the KoA that reaches target, or
// the refusal of a target out of reach (on "target_clearance").
func (m sizeModel) requiredKoA(a Arrangement, qb, qd, target float64) (float64, error) {
	if m.plain() {
		return sizeKoA(a, qb, qd, target)
	}
	inv := invertClearance(a, m.operating(qb, qd), target, start{})
	switch inv.reach {
	case atFloor:
		floor := inv.floor
		return 0, &FieldError{
			Field:   "target_clearance",
			Message: fmt.Sprintf("is at or below %s mL/min, what the ultrafiltration alone clears with no filter: aim higher", num(floor)),
			Limit:   &floor,
		}
	case beyondCeiling:
		return 0, m.unreachable(a, qb, qd, target)
	case beyondMaxKoA:
		limit := m.clearance(a, qb, qd, MaxKoA)
		return 0, &FieldError{
			Field: "target_clearance",
			Message: fmt.Sprintf("is only %s mL/min below the %s ceiling of %s mL/min: it would need a KoA above %s mL/min, beyond any filter; aim lower",
				num(inv.ceiling-target), a.label(), num(inv.ceiling), num(MaxKoA)),
			Limit: &limit,
		}
	}
	return inv.koa, nil
}

// unreachable is size.go's unreachable for the model. With
// ultrafiltration the ceilings are those of TransferCeiling: counter-
// current min(QBW, QD + QF), co-current QBW (QD + QF)/(QBW + QD); solved
// for one flow with the other held (derived here), and flows given as
// blood flows (QBW/w).
func (m sizeModel) unreachable(a Arrangement, qb, qd, target float64) *FieldError {
	ceiling := m.ceiling(a, qb, qd)
	qbw, qf := m.qbw(qb), m.f.QF
	var ways []string
	if cc := m.ceiling(Countercurrent, qb, qd); a == Cocurrent && target < cc {
		ways = append(ways, "counter-current flow (ceiling "+num(cc)+" mL/min)")
	}
	// QD above x at this QB, QB above y at this QD.
	if qbw > target {
		x := target - qf
		if a == Cocurrent {
			x = qbw * (target - qf) / (qbw - target)
		}
		if x = math.Max(x, 0); x < MaxFlow {
			ways = append(ways, "QD above "+flowAbove(x)+" mL/min")
		}
	}
	if qd+qf > target {
		y := target
		if a == Cocurrent {
			y = target * qd / (qd + qf - target)
		}
		if y /= m.water; y < MaxFlow {
			ways = append(ways, "QB above "+flowAbove(y)+" mL/min")
		}
	}
	if len(ways) == 0 {
		ways = append(ways, "higher blood and dialysate flows")
	}
	what := ""
	if m.water != 1 {
		what = " (blood-water flow " + num(qbw) + " mL/min)"
	}
	msg := "must be below the " + a.label() + " ceiling of " + num(ceiling) + " mL/min at QB " + num(qb) + what + " and QD " + num(qd) +
		" mL/min, which no filter reaches; it becomes reachable with " + strings.Join(ways, ", or with ")
	return &FieldError{Field: "target_clearance", Message: msg, Limit: &ceiling}
}

// flowClearance returns the clearance of a filter of KoA koa as the flow
// named vary ("qd" or "qb") varies, the other held at other.
func (m sizeModel) flowClearance(a Arrangement, vary string, other, koa float64) func(float64) float64 {
	if vary == "qd" {
		return func(q float64) float64 { return m.clearance(a, other, q, koa) }
	}
	return func(q float64) float64 { return m.clearance(a, q, other, koa) }
}

// qbRange narrows a QB range to where the blood-side flow stays above QF
// (leaving 2e-6 of it at the filter outlet, twice what Filtration.Validate
// asks, so that rounding cannot break it).
func (m sizeModel) qbRange(r Range) Range {
	if m.f.QF == 0 {
		return r
	}
	low := m.f.QF / (1 - 2*minOutletShare) / m.water
	if r.Min < low {
		r.Min = math.Min(low, r.Max)
	}
	return r
}

// series is sizeSeries for the model. The points evenly spaced in KoA
// have their targets from the forward model and keep that KoA; the
// points evenly spaced in target have their KoA by root finding, each
// started from the previous one.
func (m sizeModel) series(a Arrangement, qb, qd, koaMax, k0 float64, n int) SizeSeries {
	if m.plain() {
		return sizeSeries(a, qb, qd, koaMax, k0, n)
	}
	ceiling := m.ceiling(a, qb, qd)
	op := m.operating(qb, qd)
	op.KoA = 0
	floor, _ := clearanceAt(a, op)
	half := max(2, (n+1)/2)
	k := n - half + 1
	type point struct{ target, koa float64 }
	var byKoA []point
	for j := 1; j <= k; j++ {
		koa := koaMax * float64(j) / float64(k)
		if x := m.clearance(a, qb, qd, koa); x < ceiling {
			byKoA = append(byKoA, point{x, koa})
		}
	}
	points := []point{{floor, 0}}
	if last := len(byKoA) - 1; last >= 0 {
		points = points[:0]
		hint := 0.0
		for i := range half - 1 {
			x := floor + (byKoA[last].target-floor)*float64(i)/float64(half-1)
			koa := 0.0
			if i > 0 {
				st := start{}
				if hint > 0 {
					st = nearStart(hint)
				}
				inv := invertClearance(a, op, x, st)
				koa, hint = inv.koa, inv.koa
			}
			points = append(points, point{x, koa})
		}
	}
	merged := make([]point, 0, len(points)+len(byKoA))
	i, j := 0, 0
	for i < len(points) || j < len(byKoA) {
		if i < len(points) && (j == len(byKoA) || points[i].target <= byKoA[j].target) {
			merged = append(merged, points[i])
			i++
		} else {
			merged = append(merged, byKoA[j])
			j++
		}
	}
	s := SizeSeries{Target: make([]float64, len(merged)), KoA: make([]float64, len(merged)), ClearanceCeiling: ceiling}
	for i, p := range merged {
		s.Target[i], s.KoA[i] = p.target, p.koa
	}
	if k0 != 0 {
		s.AreaM2 = make([]float64, len(merged))
		for i, koa := range s.KoA {
			s.AreaM2[i] = AreaM2(koa, k0)
		}
	}
	return s
}
