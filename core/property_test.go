package core_test

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"

	"clearkit/core"
)

// Identities and inequalities of the flow model over a seeded random grid.
// They are facts of the model, not values from a table: the bounds and
// orderings follow from the effectiveness-NTU relations (Incropera & DeWitt
// ch. 11, from memory) and the mass balance from the local balance
// (Michaels 1966, REFERENCES).

const (
	propertyPoints = 4000
	// monotoneSlack is the relative dip allowed where a quantity should not
	// decrease: near saturation D sits within a few ulp of its ceiling and
	// rounding can step it down by about 1e-16 relative.
	monotoneSlack = 1e-14
	// balanceRel is the relative agreement of the mass balance.
	balanceRel = 1e-12
)

// logUniform draws from [lo, hi] with a uniform logarithm.
func logUniform(r *rand.Rand, lo, hi float64) float64 {
	return math.Exp(math.Log(lo) + r.Float64()*(math.Log(hi)-math.Log(lo)))
}

// randomOperating draws flows 1e-3 to 1e4 mL/min and KoA 0 to 1e7 mL/min
// (one in twenty exactly 0, the rest log-uniform from 1e-3), with CBi
// log-uniform from 1e-3 to 1e3 and CDi = 0.
func randomOperating(r *rand.Rand) core.Operating {
	op := core.Operating{
		QB:  logUniform(r, 1e-3, 1e4),
		QD:  logUniform(r, 1e-3, 1e4),
		CBi: logUniform(r, 1e-3, 1e3),
	}
	if r.IntN(20) != 0 {
		op.KoA = logUniform(r, 1e-3, 1e7)
	}
	return op
}

// newRand returns the generator of the property tests, with a fixed seed
// so that a failure can be reproduced.
func newRand() *rand.Rand { return rand.New(rand.NewPCG(20240601, 7)) }

// allFinite reports whether every float64 field of v (a struct) is finite.
func allFinite(v any) bool {
	rv := reflect.ValueOf(v)
	for i := range rv.NumField() {
		f := rv.Field(i)
		switch f.Kind() {
		case reflect.Float64:
			if x := f.Float(); math.IsNaN(x) || math.IsInf(x, 0) {
				return false
			}
		case reflect.Struct:
			if !allFinite(f.Interface()) {
				return false
			}
		}
	}
	return true
}

// noDip reports whether after >= before, allowing monotoneSlack.
func noDip(before, after float64) bool {
	return after >= before-monotoneSlack*math.Abs(before)
}

func TestPropertyBounds(t *testing.T) {
	r := newRand()
	for range propertyPoints {
		op := randomOperating(r)
		c, err := core.Compare(op)
		if err != nil {
			t.Fatalf("Compare(%+v) error: %v", op, err)
		}
		if !allFinite(c) {
			t.Errorf("Compare(%+v) = %+v, want all finite", op, c)
		}
		for _, a := range core.Arrangements {
			p, err := core.Evaluate(a, op)
			if err != nil {
				t.Fatalf("Evaluate(%v, %+v) error: %v", a, op, err)
			}
			if !allFinite(p) {
				t.Errorf("Evaluate(%v, %+v) = %+v, want all finite", a, op, p)
			}
			// With fresh dialysate clearance equals dialysance and lies
			// between 0 and the ceiling, which no filter reaches.
			ceiling := core.Ceiling(a, op.QB, op.QD)
			if p.Clearance < 0 || p.Clearance > p.ClearanceCeiling || p.ClearanceCeiling != ceiling {
				t.Errorf("Evaluate(%v, %+v): clearance %.17g, ceiling %.17g, want 0 <= clearance <= ceiling = Ceiling = %.17g",
					a, op, p.Clearance, p.ClearanceCeiling, ceiling)
			}
			if p.Clearance != p.Dialysance || p.DialysanceCeiling != ceiling {
				t.Errorf("Evaluate(%v, %+v): clearance %.17g, dialysance %.17g, dialysance ceiling %.17g, want clearance = dialysance and ceiling %.17g",
					a, op, p.Clearance, p.Dialysance, p.DialysanceCeiling, ceiling)
			}
		}
		// Counter-current is never worse than co-current.
		if !noDip(c.Cocurrent.Clearance, c.Countercurrent.Clearance) {
			t.Errorf("Compare(%+v): counter-current %.17g < co-current %.17g", op, c.Countercurrent.Clearance, c.Cocurrent.Clearance)
		}
	}
}

// More filter and more flow never lower dialysance. Each variable is
// raised by a random factor from 1 to 2 with the others held.
func TestPropertyMonotone(t *testing.T) {
	r := newRand()
	for range propertyPoints {
		op := randomOperating(r)
		up := 1 + r.Float64()
		for _, a := range core.Arrangements {
			d := core.Dialysance(a, op.QB, op.QD, op.KoA)
			if after := core.Dialysance(a, op.QB, op.QD, op.KoA*up); !noDip(d, after) {
				t.Errorf("Dialysance(%v, %g, %g, %g) = %.17g < Dialysance(%v, %g, %g, %g) = %.17g", a, op.QB, op.QD, op.KoA*up, after, a, op.QB, op.QD, op.KoA, d)
			}
			if after := core.Dialysance(a, op.QB*up, op.QD, op.KoA); !noDip(d, after) {
				t.Errorf("Dialysance(%v, %g, %g, %g) = %.17g < Dialysance(%v, %g, %g, %g) = %.17g", a, op.QB*up, op.QD, op.KoA, after, a, op.QB, op.QD, op.KoA, d)
			}
			if after := core.Dialysance(a, op.QB, op.QD*up, op.KoA); !noDip(d, after) {
				t.Errorf("Dialysance(%v, %g, %g, %g) = %.17g < Dialysance(%v, %g, %g, %g) = %.17g", a, op.QB, op.QD*up, op.KoA, after, a, op.QB, op.QD, op.KoA, d)
			}
		}
	}
}

// Mass balance QB (CBi - CBo) = QD (CDo - CDi) = W and extraction ratio
// (CBi - CBo)/CBi = K/QB, with used dialysate (CDi from 0 to 2 CBi, so
// that transfer into the blood is covered too). The differences of
// concentrations carry the rounding of the outlet, about 1e-16 of the
// largest concentration, so the tolerance is balanceRel relative plus
// 4 ulp of Q times the largest concentration.
func TestPropertyMassBalance(t *testing.T) {
	r := newRand()
	const ulp = 0x1p-52
	for range propertyPoints {
		op := randomOperating(r)
		op.CDi = 2 * op.CBi * r.Float64()
		for _, a := range core.Arrangements {
			p, err := core.Evaluate(a, op)
			if err != nil {
				t.Fatalf("Evaluate(%v, %+v) error: %v", a, op, err)
			}
			scale := math.Max(math.Max(op.CBi, op.CDi), math.Max(math.Abs(p.BloodOutlet), math.Abs(p.DialysateOutlet)))
			w := p.TransferRate
			blood := op.QB * (op.CBi - p.BloodOutlet)
			dialysate := op.QD * (p.DialysateOutlet - op.CDi)
			if math.Abs(blood-w) > balanceRel*math.Abs(w)+4*ulp*op.QB*scale {
				t.Errorf("Evaluate(%v, %+v): QB (CBi - CBo) = %.17g, want W = %.17g", a, op, blood, w)
			}
			if math.Abs(dialysate-w) > balanceRel*math.Abs(w)+4*ulp*op.QD*scale {
				t.Errorf("Evaluate(%v, %+v): QD (CDo - CDi) = %.17g, want W = %.17g", a, op, dialysate, w)
			}
			// W = D (CBi - CDi) and K = W/CBi by definition (REFERENCES).
			if want := p.Dialysance * (op.CBi - op.CDi); !close(w, want) {
				t.Errorf("Evaluate(%v, %+v): W = %.17g, want D (CBi - CDi) = %.17g", a, op, w, want)
			}
			if want := w / op.CBi; !close(p.Clearance, want) {
				t.Errorf("Evaluate(%v, %+v): clearance %.17g, want W/CBi = %.17g", a, op, p.Clearance, want)
			}
			// Extraction ratio against its definition (CBi - CBo)/CBi and
			// against K/QB.
			er := (op.CBi - p.BloodOutlet) / op.CBi
			if math.Abs(p.ExtractionRatio-er) > balanceRel*math.Abs(er)+4*ulp*scale/op.CBi {
				t.Errorf("Evaluate(%v, %+v): extraction ratio %.17g, want (CBi - CBo)/CBi = %.17g", a, op, p.ExtractionRatio, er)
			}
			if want := p.Clearance / op.QB; !veryclose(p.ExtractionRatio, want) {
				t.Errorf("Evaluate(%v, %+v): extraction ratio %.17g, want K/QB = %.17g", a, op, p.ExtractionRatio, want)
			}
			// W = KoA x log-mean difference (log-mean form, REFERENCES).
			if op.KoA > 0 {
				if got := op.KoA * p.LogMeanDifference; !close(got, w) {
					t.Errorf("Evaluate(%v, %+v): KoA x log-mean difference = %.17g, want W = %.17g", a, op, got, w)
				}
			} else if p.LogMeanDifference != op.CBi-op.CDi {
				t.Errorf("Evaluate(%v, %+v): log-mean difference %.17g, want CBi - CDi = %.17g at KoA = 0", a, op, p.LogMeanDifference, op.CBi-op.CDi)
			}
			if !allFinite(p) {
				t.Errorf("Evaluate(%v, %+v) = %+v, want all finite", a, op, p)
			}
		}
	}
}

// The log-mean difference tends to CBi - CDi as KoA -> 0, down to the
// smallest KoA that can be written (the end differences then coincide).
func TestLogMeanDifferenceSmallKoA(t *testing.T) {
	op := core.Operating{QB: 300, QD: 500, CBi: 1, CDi: 0.25}
	for _, koa := range []float64{1e-3, 1e-100, 1e-300, 1e-307, 1e-310, 5e-324} {
		op.KoA = koa
		for _, a := range core.Arrangements {
			p, err := core.Evaluate(a, op)
			if err != nil {
				t.Fatalf("Evaluate(%v, %+v) error: %v", a, op, err)
			}
			// The relative departure from the limit is about NTU (KoA/300).
			want := op.CBi - op.CDi
			if !tolerance(p.LogMeanDifference, want, math.Max(koa/300, 4e-16)) {
				t.Errorf("Evaluate(%v, %+v).LogMeanDifference = %.17g, want %.17g", a, op, p.LogMeanDifference, want)
			}
		}
	}
}
