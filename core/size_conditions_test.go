package core_test

import (
	"math"
	"strings"
	"testing"

	"clearkit/core"
)

// Sizing with whole blood and ultrafiltration (size_conditions.go): every
// KoA it gives reaches its target through the forward model (core.Evaluate
// with the same blood and ultrafiltration), the flows it finds are the
// smallest that do, and the ceilings and messages follow the model.

// conditionedSpec is a routine sizing question on whole blood (Hct 32 %,
// QBW 258.84 mL/min) with QF 15 mL/min of urea.
func conditionedSpec() core.SizeSpec {
	b := core.DefaultWholeBlood(32)
	return core.SizeSpec{Target: 220, QB: 300, QD: 500, Flow: core.Countercurrent, K0: 0.05, Blood: &b,
		Filtration: core.Filtration{QF: 15, Sieving: 1}}
}

// forward is the clearance of a filter of KoA koa for the question s, by
// core.Evaluate (fresh dialysate).
func forward(t *testing.T, s core.SizeSpec, a core.Arrangement, qb, qd, koa float64) float64 {
	t.Helper()
	p, err := core.Evaluate(a, core.Operating{QB: qb, QD: qd, KoA: koa, CBi: 1, Blood: s.Blood, Filtration: s.Filtration})
	if err != nil {
		t.Fatal(err)
	}
	return p.Clearance
}

func TestSizeConditionsRoundTrip(t *testing.T) {
	for _, s := range []core.SizeSpec{
		conditionedSpec(),
		func() core.SizeSpec { s := conditionedSpec(); s.Blood = nil; return s }(),
		func() core.SizeSpec { s := conditionedSpec(); s.QF = 0; return s }(),
		func() core.SizeSpec { s := conditionedSpec(); s.Sieving, s.QF, s.Target = 0.7, 40, 200; return s }(),
		func() core.SizeSpec { s := conditionedSpec(); s.Flow = core.Cocurrent; s.Target = 160; return s }(),
	} {
		got, err := core.Size(s)
		if err != nil {
			t.Fatalf("Size(%+v) error: %v", s, err)
		}
		if k := forward(t, s, s.Flow, s.QB, s.QD, got.KoA); !tolerance(k, s.Target, 1e-12) {
			t.Errorf("Size(%+v).KoA = %.17g gives %.17g mL/min, want the target %g", s, got.KoA, k, s.Target)
		}
		qbw := s.QB
		if s.Blood != nil {
			qbw *= s.Blood.WaterFraction()
		}
		kc, _ := core.TransferCeiling(s.Flow, qbw, s.QD, s.QF)
		if got.QBW != qbw || !veryclose(got.NTU, got.KoA/math.Min(qbw, s.QD)) || got.ClearanceCeiling != kc {
			t.Errorf("Size(%+v): qbw %g, NTU %g, ceiling %g; want %g, KoA/min(QBW, QD), %g", s, got.QBW, got.NTU, got.ClearanceCeiling, qbw, kc)
		}
		if got.AreaM2 == nil || !veryclose(*got.AreaM2, got.KoA/s.K0/1e4) {
			t.Errorf("Size(%+v): area %v, want KoA/K0", s, got.AreaM2)
		}
	}
	// Whole blood without ultrafiltration is the aqueous question at
	// QB = QBW, to the bit.
	s := conditionedSpec()
	s.QF = 0
	water := s
	water.Blood, water.QB = nil, s.QB*s.Blood.WaterFraction()
	a, _ := core.Size(s)
	b, _ := core.Size(water)
	if a.KoA != b.KoA || a.NTU != b.NTU || a.ClearanceCeiling != b.ClearanceCeiling {
		t.Errorf("whole blood QF 0: KoA %g NTU %g ceiling %g, aqueous at QBW: %g %g %g", a.KoA, a.NTU, a.ClearanceCeiling, b.KoA, b.NTU, b.ClearanceCeiling)
	}
}

// The filters on hand are judged by the model's clearance, and the flows
// found for the filter in use are the smallest that reach the target: the
// clearance at the flow reaches it, 1e-9 below the flow it does not.
func TestSizeConditionsFiltersAndFlows(t *testing.T) {
	s := conditionedSpec()
	s.Filters = []core.Filter{{Label: "small", KoA: 500}, {Label: "medium", KoA: 900}, {Label: "large", KoA: 1400}}
	s.Current = &core.Filter{KoA: 700}
	got, err := core.Size(s)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range got.Choice.Filters {
		if k := forward(t, s, s.Flow, s.QB, s.QD, f.KoA); f.Clearance != k {
			t.Errorf("filter %s: clearance %.17g, want %.17g (Evaluate)", f.Label, f.Clearance, k)
		}
	}
	c := got.Current
	for _, fa := range []struct {
		name string
		ans  core.FlowAnswer
		at   func(q float64) float64
	}{
		{"qd", c.QD, func(q float64) float64 { return forward(t, s, s.Flow, s.QB, q, 700) }},
		{"qb", c.QB, func(q float64) float64 { return forward(t, s, s.Flow, q, s.QD, 700) }},
	} {
		if !fa.ans.OK {
			t.Fatalf("%s solve failed: %+v", fa.name, fa.ans.Error)
		}
		q := *fa.ans.Flow
		if k := fa.at(q); k < s.Target*(1-1e-13) || fa.at(q*(1-1e-9)) >= s.Target {
			t.Errorf("%s solve: %.17g gives %.17g, and 1e-9 less gives %.17g; want the smallest flow reaching %g", fa.name, q, k, fa.at(q*(1-1e-9)), s.Target)
		}
	}
}

// Each point of the chart series: its KoA gives its target.
func TestSizeConditionsSeries(t *testing.T) {
	s := conditionedSpec()
	s.Sweep = &core.SizeSweepSpec{Points: 41}
	got, err := core.Size(s)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		a      core.Arrangement
		series core.SizeSeries
	}{{core.Countercurrent, got.Sweep.Countercurrent}, {core.Cocurrent, got.Sweep.Cocurrent}} {
		if len(c.series.Target) < 30 {
			t.Errorf("%v: %d points, want about 41", c.a, len(c.series.Target))
		}
		for i, x := range c.series.Target {
			koa := c.series.KoA[i]
			if k := forward(t, s, c.a, s.QB, s.QD, koa); math.Abs(k-x) > 1e-11*x {
				t.Errorf("%v series point %d: KoA %.17g gives %.17g, want %.17g", c.a, i, koa, k, x)
			}
			if i > 0 && !(x >= c.series.Target[i-1] && koa >= c.series.KoA[i-1]) {
				t.Errorf("%v series point %d: (%g, %g) after (%g, %g), want both rising", c.a, i, x, koa, c.series.Target[i-1], c.series.KoA[i-1])
			}
		}
	}
}

// Targets out of reach: above the ceiling, with ways that are checked by
// the model (each suggested flow, 1 % beyond, makes it reachable); at or
// below what the ultrafiltration alone clears (QF 15 for urea).
func TestSizeConditionsRefusals(t *testing.T) {
	s := conditionedSpec() // counter-current ceiling min(QBW 258.84, QD + QF 515) = 258.84
	s.Target = 270
	_, err := core.Size(s)
	fe, ok := err.(*core.FieldError)
	// QBW must pass 270: a blood flow of 270/0.8628 = 312.935 mL/min.
	if !ok || fe.Field != "target_clearance" || fe.Limit == nil || !close(*fe.Limit, 258.84) || !strings.Contains(fe.Message, "QB above 313.0 mL/min") {
		t.Fatalf("Size(target 270) error = %v, want target_clearance, limit 258.84, and QB above 313.0 mL/min (312.935 rounded up to a tenth)", err)
	}
	s.Target = 15
	if _, err := core.Size(s); fieldOf(err) != "target_clearance" || !strings.Contains(err.Error(), "ultrafiltration alone") {
		t.Errorf("Size(target 15) error = %v, want the ultrafiltration-alone refusal", err)
	}
	// Co-current: the QD that reaches the target, QBW (K - QF)/(QBW - K)
	// (derived in sizeModel.unreachable), suggested and right.
	s = conditionedSpec()
	s.Flow, s.Target, s.QD = core.Cocurrent, 200, 300
	_, err = core.Size(s)
	qbw := 300 * s.Blood.WaterFraction()
	qd := qbw * (200 - 15) / (qbw - 200)
	if err == nil || !strings.Contains(err.Error(), "QD above") {
		t.Fatalf("Size(co-current, 200 at QD 300) error = %v, want a QD suggestion", err)
	}
	s.QD = qd * 1.01
	if _, err := core.Size(s); err != nil {
		t.Errorf("at the suggested QD + 1 %% (%g) the target is still refused: %v", s.QD, err)
	}
	s.QD = qd * 0.99
	if _, err := core.Size(s); err == nil {
		t.Errorf("at the suggested QD - 1 %% (%g) the target is reached, want refused", s.QD)
	}
	// The blood and the ultrafiltration are validated, after qd.
	s = conditionedSpec()
	s.QF = 260
	if _, err := core.Size(s); fieldOf(err) != "qf" || !strings.Contains(err.Error(), "blood-water flow QBW") {
		t.Errorf("Size(QF 260) error = %v, want qf against the blood-water flow", err)
	}
	s = conditionedSpec()
	s.Blood.Hct, s.QD = 0.3, 0
	if _, err := core.Size(s); fieldOf(err) != "qd" {
		t.Errorf("Size(QD 0, Hct 0.3) error = %v, want qd first", err)
	}
}

func BenchmarkSizeConditions(b *testing.B) {
	s := conditionedSpec()
	s.Filters = []core.Filter{{KoA: 500}, {KoA: 900}, {KoA: 1400}, {AreaM2: 1.6}, {AreaM2: 2.1}}
	s.Current = &core.Filter{KoA: 700}
	s.Sweep = &core.SizeSweepSpec{}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := core.Size(s); err != nil {
			b.Fatal(err)
		}
	}
}
