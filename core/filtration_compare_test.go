package core_test

import (
	"math"
	"strings"
	"testing"

	"clearkit/core"
)

// Ultrafiltration and whole blood carried through Operating: Evaluate,
// Compare and Sweep. The model itself is tested in ultrafiltration_test.go
// and bloodwater_test.go; these tests check the wiring.

// wholeBlood is routine with whole blood of haematocrit 32 % and the
// default water fractions (QBW = 258.84 mL/min, worked by hand in
// bloodwater_test.go) and QF 10 mL/min of urea.
func wholeBlood() core.Operating {
	op := routine
	b := core.DefaultWholeBlood(32)
	op.Blood = &b
	op.Filtration = routineFiltration
	return op
}

// usedFiltered is routine, an aqueous solution, with ultrafiltration qf of
// sieving coefficient s and used dialysate at CDi = cdi.
func usedFiltered(qf, s, cdi float64) core.Operating {
	op := routine
	op.Filtration = core.Filtration{QF: qf, Sieving: s}
	op.CDi = cdi
	return op
}

// With whole blood the model works with QBW in place of QB: Compare equals
// Compare of an aqueous solution at QB = QBW, field by field, and reports
// QBW.
func TestCompareWholeBlood(t *testing.T) {
	for _, f := range []core.Filtration{{}, routineFiltration, {QF: 40, Sieving: 0.7}} {
		op := wholeBlood()
		op.Filtration = f
		got, err := core.Compare(op)
		if err != nil {
			t.Fatalf("Compare(%+v) error: %v", op, err)
		}
		water := op
		water.Blood, water.QB = nil, op.BloodSideFlow()
		want, err := core.Compare(water)
		if err != nil {
			t.Fatal(err)
		}
		if got != want {
			t.Errorf("Compare(whole blood %+v) = %+v, want Compare(aqueous at QBW) = %+v", op, got, want)
		}
		if !close(got.QBW, 258.84) {
			t.Errorf("Compare(%+v).QBW = %.17g, want 258.84", op, got.QBW)
		}
		for _, a := range core.Arrangements {
			p, err := core.Evaluate(a, op)
			if err != nil || p != map[core.Arrangement]core.Performance{core.Countercurrent: got.Countercurrent, core.Cocurrent: got.Cocurrent}[a] {
				t.Errorf("Evaluate(%v, %+v) = %+v, %v, want Compare's", a, op, p, err)
			}
		}
	}
	// An aqueous solution: QBW = QB.
	if c, _ := core.Compare(routine); c.QBW != routine.QB {
		t.Errorf("Compare(%+v).QBW = %g, want QB", routine, c.QBW)
	}
}

// Compare's derived numbers follow their definitions with ultrafiltration
// too (compare.go doc comments).
func TestCompareFiltrationDefinitions(t *testing.T) {
	for _, op := range []core.Operating{wholeBlood(), usedFiltered(25, 0.8, 0.2)} {
		c, err := core.Compare(op)
		if err != nil {
			t.Fatalf("Compare(%+v) error: %v", op, err)
		}
		if c.Gain != c.Countercurrent.Clearance-c.Cocurrent.Clearance {
			t.Errorf("Compare(%+v).Gain = %g, want counter - co clearance", op, c.Gain)
		}
		if want := 100 * (c.Countercurrent.Dialysance - c.Cocurrent.Dialysance) / c.Cocurrent.Dialysance; !veryclose(c.GainPercent, want) {
			t.Errorf("Compare(%+v).GainPercent = %g, want %g", op, c.GainPercent, want)
		}
		qbw := op.BloodSideFlow()
		if !veryclose(c.NTU, op.KoA/math.Min(qbw, op.QD)) || !veryclose(c.FlowRatio, math.Min(qbw, op.QD)/math.Max(qbw, op.QD)) {
			t.Errorf("Compare(%+v): NTU %g, flow ratio %g, want them on QBW %g", op, c.NTU, c.FlowRatio, qbw)
		}
	}
}

func TestValidateBloodAndFiltration(t *testing.T) {
	for _, c := range []struct {
		change      func(*core.Operating)
		field, word string
	}{
		{func(o *core.Operating) { o.Blood.Hct = 0.4 }, "hct", "percent"},
		{func(o *core.Operating) { o.Blood.PlasmaWater = 1.5 }, "plasma_water", "at most 1"},
		{func(o *core.Operating) { o.Blood.RedCellWater = 0 }, "red_cell_water", "above 0"},
		// QF must stay below QBW = 258.84, not below QB = 300.
		{func(o *core.Operating) { o.QF = 260 }, "qf", "blood-water flow QBW, 258.84 mL/min"},
		{func(o *core.Operating) { o.Blood = nil; o.QF = 300 }, "qf", "blood flow QB, 300 mL/min"},
		{func(o *core.Operating) { o.QF = -1 }, "qf", "negative"},
		{func(o *core.Operating) { o.Sieving = 2 }, "sieving", "from 0 to 1"},
		// Order: the operating point, then the blood, then the filtration.
		{func(o *core.Operating) { o.QD, o.Blood.Hct, o.QF = 0, -1, -1 }, "qd", "greater than 0"},
		{func(o *core.Operating) { o.Blood.Hct, o.QF = -1, -1 }, "hct", "negative"},
		// Water fractions so small that QBW is not a flow.
		{func(o *core.Operating) { o.Blood.PlasmaWater, o.Blood.RedCellWater, o.QF = 1e-9, 1e-9, 0 }, "qb", "blood-water flow"},
	} {
		op := wholeBlood()
		b := *op.Blood
		op.Blood = &b
		c.change(&op)
		for fn, err := range map[string]error{
			"Validate": op.Validate(),
			"Compare":  func() error { _, err := core.Compare(op); return err }(),
			"Evaluate": func() error { _, err := core.Evaluate(core.Cocurrent, op); return err }(),
			"Sweep":    func() error { _, err := core.Sweep(op, core.SweepSpec{}); return err }(),
		} {
			if fieldOf(err) != c.field || !strings.Contains(err.Error(), c.word) {
				t.Errorf("%s(%+v, blood %+v) error = %v, want field %q and %q", fn, op, op.Blood, err, c.field, c.word)
			}
		}
	}
}

// The chart series with ultrafiltration are Evaluate's clearances and
// ceilings at every point, the QB range starts at max(25, 2 QF/w) by
// default, and a QB range that lets QF reach the blood-side flow is
// refused.
func TestSweepFiltration(t *testing.T) {
	for _, op := range []core.Operating{wholeBlood(), usedFiltered(30, 0.6, 0.1)} {
		s, err := core.Sweep(op, core.SweepSpec{Points: 21})
		if err != nil {
			t.Fatalf("Sweep(%+v) error: %v", op, err)
		}
		water := op.BloodSideFlow() / op.QB
		if want := math.Max(25, 2*op.QF/water); s.QB.X[0] != want {
			t.Errorf("Sweep(%+v).QB.X[0] = %.17g, want max(25, 2 QF/w) = %.17g", op, s.QB.X[0], want)
		}
		for axis, series := range map[string]core.Series{"qb": s.QB, "qd": s.QD, "koa": s.KoA} {
			for i, x := range series.X {
				at := op
				switch axis {
				case "qb":
					at.QB = x
				case "qd":
					at.QD = x
				case "koa":
					at.KoA = x
				}
				for _, c := range []struct {
					a             core.Arrangement
					got, gotLimit float64
				}{
					{core.Countercurrent, series.Countercurrent[i], series.CountercurrentCeiling[i]},
					{core.Cocurrent, series.Cocurrent[i], series.CocurrentCeiling[i]},
				} {
					p, err := core.Evaluate(c.a, at)
					if err != nil {
						t.Fatalf("Evaluate(%v, %+v) error: %v", c.a, at, err)
					}
					if c.got != p.Clearance || c.gotLimit != p.ClearanceCeiling {
						t.Errorf("Sweep(%+v) %s at %g, %v: %.17g and ceiling %.17g, want Evaluate's %.17g and %.17g", op, axis, x, c.a, c.got, c.gotLimit, p.Clearance, p.ClearanceCeiling)
					}
				}
			}
		}
		low := op.QF / water // QBW = QF here
		if _, err := core.Sweep(op, core.SweepSpec{QB: &core.Range{Min: low, Max: 600}}); fieldOf(err) != "sweep.qb" || !strings.Contains(err.Error(), "above qf") {
			t.Errorf("Sweep(%+v, QB from %g) error = %v, want field sweep.qb", op, low, err)
		}
		if _, err := core.Sweep(op, core.SweepSpec{QB: &core.Range{Min: low * 1.01, Max: 600}}); err != nil {
			t.Errorf("Sweep(%+v, QB from %g) error = %v, want nil", op, low*1.01, err)
		}
	}
}

// With S = 1 and fresh dialysate the series keep the order of the ideal
// model (sweep_property_test.go): every series rises along its axis,
// counter-current lies on or above co-current, and each lies at or below
// its ceiling. (With S < 1 TestTransferProperties shows why the order of
// the arrangements is not asserted.)
func TestSweepFiltrationOrder(t *testing.T) {
	r := newRand()
	for range 200 {
		op := randomOperating(r)
		op.QF = math.Max(core.MinFlow, logUniform(r, 1e-6, 0.45)*op.QB)
		op.Sieving = 1
		s, err := core.Sweep(op, core.SweepSpec{Points: 31})
		if err != nil {
			t.Fatalf("Sweep(%+v) error: %v", op, err)
		}
		for name, series := range map[string]core.Series{"qb": s.QB, "qd": s.QD, "koa": s.KoA} {
			for j, x := range series.X {
				cc, co := series.Countercurrent[j], series.Cocurrent[j]
				if co < 0 || !noDip(co, cc) || cc > series.CountercurrentCeiling[j] || co > series.CocurrentCeiling[j] {
					t.Errorf("Sweep(%+v) %s at %g: co %.17g, counter %.17g, ceilings %.17g and %.17g", op, name, x, co, cc, series.CocurrentCeiling[j], series.CountercurrentCeiling[j])
				}
				if j > 0 && (!noDip(series.Countercurrent[j-1], cc) || !noDip(series.Cocurrent[j-1], co)) {
					t.Errorf("Sweep(%+v) %s: from %g to %g clearance falls (counter %.17g to %.17g, co %.17g to %.17g)", op, name, series.X[j-1], x, series.Countercurrent[j-1], cc, series.Cocurrent[j-1], co)
				}
			}
		}
	}
}

// BenchmarkSweepFiltration is the page's chart request with QF > 0: 101
// points on 3 axes, both arrangements and their ceilings at each.
func BenchmarkSweepFiltration(b *testing.B) {
	op := routine
	op.Filtration = routineFiltration
	b.ReportAllocs()
	for b.Loop() {
		if _, err := core.Sweep(op, core.SweepSpec{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkCompareFiltration(b *testing.B) {
	op := wholeBlood()
	for b.Loop() {
		if _, err := core.Compare(op); err != nil {
			b.Fatal(err)
		}
	}
}
