package core_test

import (
	"math"
	"testing"

	"clearkit/core"
)

// Properties of the chart series and of the concentrations, over the seeded
// random grid of property_test.go. They complete that file: it checks the
// flow model at single points, this file the series the view draws and
// the concentration side.

// usedDialysate returns op with CDi drawn from 0 to below CBi, so that
// solute leaves the blood and clearance is positive.
func usedDialysate(op core.Operating, u float64) core.Operating {
	op.CDi = op.CBi * 0.999 * u
	return op
}

// Along every axis the clearance series rise (more flow or more filter
// never lowers clearance, the monotone property of property_test.go),
// counter-current lies on or above co-current, both lie at or below their
// ceilings, and the counter-current ceiling min(QB, QD) does not fall.
// Custom ranges, drawn within core's bounds, are checked as well as the
// default ones.
func TestPropertySweep(t *testing.T) {
	r := newRand()
	for i := range 300 {
		op := usedDialysate(randomOperating(r), r.Float64())
		spec := core.SweepSpec{Points: 2 + r.IntN(60)}
		if i%2 == 1 {
			lo := logUniform(r, 1e-3, 1e4)
			spec.QB = &core.Range{Min: lo, Max: lo * (1 + 9*r.Float64())}
			lo = logUniform(r, 1e-3, 1e4)
			spec.QD = &core.Range{Min: lo, Max: lo * (1 + 9*r.Float64())}
			spec.KoA = &core.Range{Min: 0, Max: logUniform(r, 1e-3, 1e7)}
		}
		s, err := core.Sweep(op, spec)
		if err != nil {
			t.Fatalf("Sweep(%+v, %+v) error: %v", op, spec, err)
		}
		for name, series := range map[string]core.Series{"qb": s.QB, "qd": s.QD, "koa": s.KoA} {
			if !finiteSeries(series) {
				t.Fatalf("Sweep(%+v, %+v) %s: a number is not finite", op, spec, name)
			}
			for j, x := range series.X {
				cc, co := series.Countercurrent[j], series.Cocurrent[j]
				if co < 0 || !noDip(co, cc) || !noDip(cc, series.CountercurrentCeiling[j]) || !noDip(co, series.CocurrentCeiling[j]) ||
					!noDip(series.CocurrentCeiling[j], series.CountercurrentCeiling[j]) {
					t.Errorf("Sweep(%+v) %s at x = %g: co %.17g, counter %.17g, ceilings %.17g and %.17g, want 0 <= co <= counter <= its ceiling and co <= its ceiling <= counter's",
						op, name, x, co, cc, series.CocurrentCeiling[j], series.CountercurrentCeiling[j])
				}
				if j == 0 {
					continue
				}
				if !noDip(series.Countercurrent[j-1], cc) || !noDip(series.Cocurrent[j-1], co) || !noDip(series.CountercurrentCeiling[j-1], series.CountercurrentCeiling[j]) {
					t.Errorf("Sweep(%+v) %s: from x = %g to %g clearance falls (counter %.17g to %.17g, co %.17g to %.17g) or the counter-current ceiling does",
						op, name, series.X[j-1], x, series.Countercurrent[j-1], cc, series.Cocurrent[j-1], co)
				}
			}
		}
	}
}

// No solute is created in the filter: both outlet concentrations lie
// between the two inlet concentrations, whichever way solute moves (common
// practice, no source; it follows from the mass balance with 0 <= D <=
// min(QB, QD)). CDi runs from 0 to 2 CBi.
func TestPropertyOutletsBetweenInlets(t *testing.T) {
	r := newRand()
	for range propertyPoints {
		op := randomOperating(r)
		op.CDi = 2 * op.CBi * r.Float64()
		lo, hi := math.Min(op.CBi, op.CDi), math.Max(op.CBi, op.CDi)
		// The outlets are CBi - W/QB and CDi + W/QD: a few ulp of hi.
		tol := 4 * 0x1p-52 * hi
		for _, a := range core.Arrangements {
			p, err := core.Evaluate(a, op)
			if err != nil {
				t.Fatalf("Evaluate(%v, %+v) error: %v", a, op, err)
			}
			for _, c := range []float64{p.BloodOutlet, p.DialysateOutlet} {
				if c < lo-tol || c > hi+tol {
					t.Errorf("Evaluate(%v, %+v): outlets CBo %.17g, CDo %.17g, want both in [%.17g, %.17g]", a, op, p.BloodOutlet, p.DialysateOutlet, lo, hi)
				}
			}
		}
	}
}

// The balance is linear in the concentrations: scaling CBi and CDi by the
// same factor leaves dialysance unchanged (exactly: it does not read them),
// clearance and extraction ratio unchanged to rounding, and scales the
// transfer rate, the outlets and the log-mean difference by the factor.
func TestPropertyConcentrationScale(t *testing.T) {
	r := newRand()
	for range propertyPoints {
		op := randomOperating(r)
		op.CDi = 2 * op.CBi * r.Float64()
		scaled := op
		k := logUniform(r, 1e-3, 1e3)
		scaled.CBi, scaled.CDi = k*op.CBi, k*op.CDi
		for _, a := range core.Arrangements {
			p, err1 := core.Evaluate(a, op)
			q, err2 := core.Evaluate(a, scaled)
			if err1 != nil || err2 != nil {
				t.Fatalf("Evaluate(%v, %+v or %+v) error: %v, %v", a, op, scaled, err1, err2)
			}
			if q.Dialysance != p.Dialysance {
				t.Errorf("Evaluate(%v, %+v).Dialysance = %.17g, want %.17g as at %+v", a, scaled, q.Dialysance, p.Dialysance, op)
			}
			// (k CBi - k CDi)/(k CBi) rounds differently from
			// (CBi - CDi)/CBi; near CDi = CBi the difference is a few ulp
			// of CBi, relative to a small clearance, so it is compared
			// against the driving difference.
			scale := p.Dialysance * (1 + op.CDi/op.CBi)
			if math.Abs(q.Clearance-p.Clearance) > 1e-14*scale || math.Abs(q.ExtractionRatio-p.ExtractionRatio)*op.QB > 1e-14*scale {
				t.Errorf("Evaluate(%v): clearance %.17g and extraction ratio %.17g at %+v, %.17g and %.17g at %+v, want equal", a,
					q.Clearance, q.ExtractionRatio, scaled, p.Clearance, p.ExtractionRatio, op)
			}
			// The transfer rate is D (CBi - CDi), the outlets and the
			// log-mean difference are concentrations: each is compared
			// relative to the size of the numbers it is made from.
			c := math.Max(op.CBi, op.CDi)
			for _, x := range []struct {
				name   string
				got, w float64
				size   float64
			}{
				{"TransferRate", q.TransferRate, k * p.TransferRate, k * c * p.Dialysance},
				{"BloodOutlet", q.BloodOutlet, k * p.BloodOutlet, k * c},
				{"DialysateOutlet", q.DialysateOutlet, k * p.DialysateOutlet, k * c},
				{"LogMeanDifference", q.LogMeanDifference, k * p.LogMeanDifference, k * c},
			} {
				if math.Abs(x.got-x.w) > 1e-14*x.size {
					t.Errorf("Evaluate(%v, %+v).%s = %.17g, want %g times its value at %+v = %.17g", a, scaled, x.name, x.got, k, op, x.w)
				}
			}
		}
	}
}
