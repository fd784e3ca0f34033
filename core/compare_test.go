package core_test

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"

	"clearkit/core"
)

// routine is a routine operating point (QB 300, QD 500 mL/min, a filter of
// KoA 800 mL/min, normalised solute, fresh dialysate; common practice, no
// source).
var routine = core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, CDi: 0}

func TestCompareRoutine(t *testing.T) {
	c, err := core.Compare(routine)
	if err != nil {
		t.Fatalf("Compare(%+v) error: %v", routine, err)
	}
	// Computed with Python 3's math.exp from the textbook forms
	// (REFERENCES): NTU = 8/3, Cr = 0.6, counter-current
	// 300 (1 - e^-x)/(1 - 0.6 e^-x) with x = 0.4 NTU, co-current
	// 300 (1 - e^-(1.6 NTU))/1.6. The RK4 check in integrate_test.go covers
	// the same point independently.
	for _, w := range []struct {
		name      string
		got, want float64
	}{
		{"Countercurrent.Clearance", c.Countercurrent.Clearance, 247.95456556655523},
		{"Cocurrent.Clearance", c.Cocurrent.Clearance, 184.86966246372467},
		{"Gain", c.Gain, 63.084903102830566},
		{"GainPercent", c.GainPercent, 34.12398890229442},
		{"NTU", c.NTU, 800.0 / 300},
		{"FlowRatio", c.FlowRatio, 0.6},
		// Ceilings by hand: min(300, 500) and 300 x 500/800.
		{"Countercurrent.ClearanceCeiling", c.Countercurrent.ClearanceCeiling, 300},
		{"Cocurrent.ClearanceCeiling", c.Cocurrent.ClearanceCeiling, 187.5},
	} {
		// The gain is a difference of two numbers four times its size, so
		// it may lose two bits more than the clearances.
		if !close(w.got, w.want) {
			t.Errorf("Compare(%+v).%s = %.17g, want %.17g", routine, w.name, w.got, w.want)
		}
	}
}

// Compare is Evaluate twice plus the derived numbers, to the last bit
// (it computes both arrangements at once); the derived numbers follow
// their definitions (compare.go doc comments) at every point of the
// random grid of property_test.go, with used dialysate, and whole blood at
// every fourth.
func TestCompareDefinitions(t *testing.T) {
	r := newRand()
	for i := range 4000 {
		op := randomOperating(r)
		op.CDi = 2 * op.CBi * r.Float64()
		if i%4 == 0 {
			b := core.DefaultWholeBlood(5 + 55*r.Float64())
			op.Blood = &b
		}
		c, err := core.Compare(op)
		if err != nil {
			t.Fatalf("Compare(%+v) error: %v", op, err)
		}
		cc, _ := core.Evaluate(core.Countercurrent, op)
		co, _ := core.Evaluate(core.Cocurrent, op)
		if !sameBits(c.Countercurrent, cc) || !sameBits(c.Cocurrent, co) {
			t.Errorf("Compare(%+v) = %+v, want the two Evaluate results %+v and %+v", op, c, cc, co)
		}
		if want := cc.Clearance - co.Clearance; c.Gain != want {
			t.Errorf("Compare(%+v).Gain = %.17g, want %.17g", op, c.Gain, want)
		}
		want := 0.0
		if co.Dialysance > 0 {
			want = 100 * (cc.Dialysance - co.Dialysance) / co.Dialysance
		}
		if !veryclose(c.GainPercent, want) {
			t.Errorf("Compare(%+v).GainPercent = %.17g, want %.17g", op, c.GainPercent, want)
		}
		qb := op.BloodSideFlow()
		cmin, cmax := math.Min(qb, op.QD), math.Max(qb, op.QD)
		if !veryclose(c.NTU, op.KoA/cmin) || !veryclose(c.FlowRatio, cmin/cmax) {
			t.Errorf("Compare(%+v): NTU %g, flow ratio %g, want %g and %g", op, c.NTU, c.FlowRatio, op.KoA/cmin, cmin/cmax)
		}
	}
}

// sameBits reports whether two Performances hold the same float64 bits in
// every field (== would take -0 for 0 and never NaN for NaN).
func sameBits(a, b core.Performance) bool {
	va, vb := reflect.ValueOf(a), reflect.ValueOf(b)
	for i := range va.NumField() {
		if math.Float64bits(va.Field(i).Float()) != math.Float64bits(vb.Field(i).Float()) {
			return false
		}
	}
	return true
}

// The gain percent is taken on dialysance, so it does not depend on the
// inlet concentrations; the gain in mL/min scales with (CBi - CDi)/CBi and
// changes sign when CDi > CBi (transfer into the blood).
func TestCompareGainWithUsedDialysate(t *testing.T) {
	fresh, _ := core.Compare(routine)
	for _, conc := range [][2]float64{{1, 0.25}, {40, 10}, {1, 1.5}, {2, 2}} {
		op := routine
		op.CBi, op.CDi = conc[0], conc[1]
		c, err := core.Compare(op)
		if err != nil {
			t.Fatalf("Compare(%+v) error: %v", op, err)
		}
		if !close(c.GainPercent, fresh.GainPercent) {
			t.Errorf("Compare(%+v).GainPercent = %.17g, want %.17g as with fresh dialysate", op, c.GainPercent, fresh.GainPercent)
		}
		f := (op.CBi - op.CDi) / op.CBi
		// 1e-14 relative, or exactly 0 when CDi = CBi.
		if want := fresh.Gain * f; !tolerance(c.Gain, want, 1e-14) {
			t.Errorf("Compare(%+v).Gain = %.17g, want %.17g", op, c.Gain, want)
		}
	}
}

// KoA = 0: nothing is transferred and the gain is 0 (documented special
// case of GainPercent).
func TestCompareZeroKoA(t *testing.T) {
	op := routine
	op.KoA = 0
	c, err := core.Compare(op)
	if err != nil {
		t.Fatalf("Compare(%+v) error: %v", op, err)
	}
	if c.Gain != 0 || c.GainPercent != 0 || c.NTU != 0 {
		t.Errorf("Compare(%+v): gain %g, gain percent %g, NTU %g, want 0, 0, 0", op, c.Gain, c.GainPercent, c.NTU)
	}
	for _, p := range []core.Performance{c.Countercurrent, c.Cocurrent} {
		if p.Clearance != 0 || p.BloodOutlet != op.CBi || p.DialysateOutlet != op.CDi || p.LogMeanDifference != op.CBi-op.CDi {
			t.Errorf("Compare(%+v) performance %+v, want no transfer", op, p)
		}
	}
}

// fieldOf returns the field of a *core.FieldError, or "<not a FieldError>".
func fieldOf(err error) string {
	var fe *core.FieldError
	if !errors.As(err, &fe) {
		return "<not a FieldError>"
	}
	return fe.Field
}

// badOperating lists inputs that must be refused, with the field at fault
// and a word its message must contain. The limits are those of bounds.go.
var badOperating = []struct {
	change func(*core.Operating)
	field  string
	word   string
}{
	{func(o *core.Operating) { o.QB = 0 }, "qb", "greater than 0"},
	{func(o *core.Operating) { o.QB = -300 }, "qb", "greater than 0"},
	{func(o *core.Operating) { o.QB = math.Copysign(0, -1) }, "qb", "greater than 0"},
	{func(o *core.Operating) { o.QB = math.NaN() }, "qb", "finite"},
	{func(o *core.Operating) { o.QB = math.Inf(1) }, "qb", "finite"},
	{func(o *core.Operating) { o.QB = math.Inf(-1) }, "qb", "finite"},
	{func(o *core.Operating) { o.QB = 1e5 * (1 + 1e-15) }, "qb", "maximum"},
	{func(o *core.Operating) { o.QB = 1e9 }, "qb", "maximum"},
	{func(o *core.Operating) { o.QB = 1e-7 }, "qb", "too small"},
	{func(o *core.Operating) { o.QD = 0 }, "qd", "greater than 0"},
	{func(o *core.Operating) { o.QD = -1 }, "qd", "greater than 0"},
	{func(o *core.Operating) { o.QD = math.NaN() }, "qd", "finite"},
	{func(o *core.Operating) { o.QD = math.Inf(1) }, "qd", "finite"},
	{func(o *core.Operating) { o.QD = 2e5 }, "qd", "maximum"},
	{func(o *core.Operating) { o.QD = 5e-7 }, "qd", "too small"},
	{func(o *core.Operating) { o.KoA = -1 }, "koa", "negative"},
	{func(o *core.Operating) { o.KoA = -5e-324 }, "koa", "negative"},
	{func(o *core.Operating) { o.KoA = math.NaN() }, "koa", "finite"},
	{func(o *core.Operating) { o.KoA = math.Inf(1) }, "koa", "finite"},
	{func(o *core.Operating) { o.KoA = 2e8 }, "koa", "maximum"},
	{func(o *core.Operating) { o.CBi = 0 }, "cbi", "greater than 0"},
	{func(o *core.Operating) { o.CBi = -1 }, "cbi", "greater than 0"},
	{func(o *core.Operating) { o.CBi = math.NaN() }, "cbi", "finite"},
	{func(o *core.Operating) { o.CBi = 2e9 }, "cbi", "maximum"},
	{func(o *core.Operating) { o.CBi = 1e-31 }, "cbi", "too small"},
	{func(o *core.Operating) { o.CBi = 5e-324 }, "cbi", "too small"},
	{func(o *core.Operating) { o.CDi = -0.1 }, "cdi", "negative"},
	{func(o *core.Operating) { o.CDi = math.NaN() }, "cdi", "finite"},
	{func(o *core.Operating) { o.CDi = math.Inf(1) }, "cdi", "finite"},
	{func(o *core.Operating) { o.CDi = 2e9 }, "cdi", "maximum"},
	// Several bad fields: the first in request order is reported.
	{func(o *core.Operating) { o.QB, o.QD, o.CDi = 0, 0, -1 }, "qb", "greater than 0"},
	{func(o *core.Operating) { o.KoA, o.CBi = -1, 0 }, "koa", "negative"},
}

func TestValidateErrors(t *testing.T) {
	for _, c := range badOperating {
		op := routine
		c.change(&op)
		errs := map[string]error{"Validate": op.Validate()}
		_, errs["Evaluate"] = core.Evaluate(core.Countercurrent, op)
		_, errs["Compare"] = core.Compare(op)
		_, errs["Sweep"] = core.Sweep(op, core.SweepSpec{})
		for fn, err := range errs {
			if fieldOf(err) != c.field || !strings.Contains(err.Error(), c.word) {
				t.Errorf("%s(%+v) error = %v, want field %q and a message with %q", fn, op, err, c.field, c.word)
			}
			if err != nil && !strings.HasPrefix(err.Error(), c.field+": ") {
				t.Errorf("%s(%+v) error = %q, want it to start with %q", fn, op, err, c.field+": ")
			}
		}
	}
}

// The limits themselves are accepted (bounds.go).
func TestValidateLimits(t *testing.T) {
	for _, op := range []core.Operating{
		{QB: core.MinFlow, QD: core.MinFlow, KoA: 0, CBi: 1, CDi: 0},
		{QB: core.MaxFlow, QD: core.MaxFlow, KoA: core.MaxKoA, CBi: core.MaxConcentration, CDi: core.MaxConcentration},
		{QB: core.MinFlow, QD: core.MaxFlow, KoA: core.MaxKoA, CBi: core.MinConcentration, CDi: 0},
		// The largest ratio CDi/CBi: clearance is about -1e44 mL/min.
		{QB: core.MaxFlow, QD: core.MaxFlow, KoA: core.MaxKoA, CBi: core.MinConcentration, CDi: core.MaxConcentration},
		{QB: core.MaxFlow, QD: core.MinFlow, KoA: 5e-324, CBi: 1, CDi: 3},
	} {
		if err := op.Validate(); err != nil {
			t.Errorf("(%+v).Validate() = %v, want nil", op, err)
		}
		c, err := core.Compare(op)
		if err != nil || !allFinite(c) {
			t.Errorf("Compare(%+v) = %+v, %v, want finite numbers and no error", op, c, err)
		}
		s, err := core.Sweep(op, core.SweepSpec{})
		if err != nil || !finiteSeries(s.QB) || !finiteSeries(s.QD) || !finiteSeries(s.KoA) {
			t.Errorf("Sweep(%+v) error %v or a number not finite", op, err)
		}
	}
}

func finiteSeries(s core.Series) bool {
	for _, xs := range [][]float64{s.X, s.Countercurrent, s.Cocurrent, s.CountercurrentCeiling, s.CocurrentCeiling} {
		for _, x := range xs {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return false
			}
		}
	}
	return true
}

// checkSeries checks a series of n points from lo to hi against Evaluate
// at each point, with set putting x into the operating point.
func checkSeries(t *testing.T, name string, s core.Series, n int, lo, hi float64, op core.Operating, set func(*core.Operating, float64)) {
	t.Helper()
	for _, xs := range [][]float64{s.X, s.Countercurrent, s.Cocurrent, s.CountercurrentCeiling, s.CocurrentCeiling} {
		if len(xs) != n {
			t.Fatalf("Sweep %s: a slice has %d points, want %d", name, len(xs), n)
		}
	}
	if s.X[0] != lo || s.X[n-1] != hi {
		t.Errorf("Sweep %s: from %g to %g, want %g to %g", name, s.X[0], s.X[n-1], lo, hi)
	}
	for i, x := range s.X {
		// Equal steps: x_i = lo + i (hi - lo)/(n - 1).
		if want := lo + float64(i)*(hi-lo)/float64(n-1); !tolerance(x, want, 1e-15) && math.Abs(x-want) > 1e-12*(hi-lo) {
			t.Errorf("Sweep %s: x[%d] = %.17g, want %.17g", name, i, x, want)
		}
		o := op
		set(&o, x)
		cc, err := core.Evaluate(core.Countercurrent, o)
		if err != nil {
			t.Fatalf("Evaluate(%v, %+v) error: %v", core.Countercurrent, o, err)
		}
		co, _ := core.Evaluate(core.Cocurrent, o)
		if !veryclose(s.Countercurrent[i], cc.Clearance) || !veryclose(s.Cocurrent[i], co.Clearance) ||
			!veryclose(s.CountercurrentCeiling[i], cc.ClearanceCeiling) || !veryclose(s.CocurrentCeiling[i], co.ClearanceCeiling) {
			t.Errorf("Sweep %s at x = %g: (%g, %g, %g, %g), want Evaluate's (%g, %g, %g, %g)", name, x,
				s.Countercurrent[i], s.Cocurrent[i], s.CountercurrentCeiling[i], s.CocurrentCeiling[i],
				cc.Clearance, co.Clearance, cc.ClearanceCeiling, co.ClearanceCeiling)
		}
	}
}

func setQB(o *core.Operating, x float64)  { o.QB = x }
func setQD(o *core.Operating, x float64)  { o.QD = x }
func setKoA(o *core.Operating, x float64) { o.KoA = x }

// Default ranges (sweep.go): QB 25 to max(600, 2 QB), QD 50 to
// max(1000, 2 QD), KoA 0 to max(2000, 2 KoA), 101 points.
func TestSweepDefaults(t *testing.T) {
	for _, op := range []core.Operating{
		routine,
		{QB: 450, QD: 700, KoA: 1300, CBi: 12, CDi: 1.5},
		{QB: 20, QD: 30, KoA: 10, CBi: 1},
	} {
		for _, spec := range []core.SweepSpec{{}, {Points: core.DefaultSweepPoints}} {
			s, err := core.Sweep(op, spec)
			if err != nil {
				t.Fatalf("Sweep(%+v, %+v) error: %v", op, spec, err)
			}
			n := 101
			checkSeries(t, "qb", s.QB, n, 25, math.Max(600, 2*op.QB), op, setQB)
			checkSeries(t, "qd", s.QD, n, 50, math.Max(1000, 2*op.QD), op, setQD)
			checkSeries(t, "koa", s.KoA, n, 0, math.Max(2000, 2*op.KoA), op, setKoA)
		}
	}
	// Large values move the default ends up.
	op := core.Operating{QB: 700, QD: 900, KoA: 2500, CBi: 1}
	s, err := core.Sweep(op, core.SweepSpec{})
	if err != nil {
		t.Fatalf("Sweep(%+v) error: %v", op, err)
	}
	if s.QB.X[100] != 1400 || s.QD.X[100] != 1800 || s.KoA.X[100] != 5000 {
		t.Errorf("Sweep(%+v) ends %g, %g, %g, want 1400, 1800, 5000", op, s.QB.X[100], s.QD.X[100], s.KoA.X[100])
	}
}

// SweepInto gives Sweep's values, bit for bit, whatever its storage held
// (NaN here, as if from an earlier answer), computing into that storage
// when it has room and leaving storage too small untouched; with
// ultrafiltration too, which takes the other loop of the series.
func TestSweepInto(t *testing.T) {
	filtered := routine
	filtered.QF, filtered.Sieving = 10, 1
	for _, op := range []core.Operating{routine, filtered} {
		for _, spec := range []core.SweepSpec{{}, {Points: 7}, {Points: core.MaxSweepPoints}} {
			want, err := core.Sweep(op, spec)
			if err != nil {
				t.Fatalf("Sweep(%+v, %+v) error: %v", op, spec, err)
			}
			size := len(want.Packed())
			for _, room := range []int{size, size + 5, size - 1} {
				storage := make([]float64, room)
				for i := range storage {
					storage[i] = math.NaN()
				}
				got, err := core.SweepInto(storage[:0], op, spec)
				if err != nil {
					t.Fatalf("SweepInto(%d values, %+v, %+v) error: %v", room, op, spec, err)
				}
				for i, x := range got.Packed() {
					if math.Float64bits(x) != math.Float64bits(want.Packed()[i]) {
						t.Fatalf("SweepInto(%d values, %+v, %+v) value %d = %v, Sweep gives %v", room, op, spec, i, x, want.Packed()[i])
					}
				}
				shared := room > 0 && &got.Packed()[0] == &storage[0]
				if shared != (room >= size) {
					t.Errorf("SweepInto(%d values for %d): computed into the storage %v, want %v", room, size, shared, room >= size)
				}
				if room < size && !math.IsNaN(storage[0]) {
					t.Errorf("SweepInto(%d values for %d) wrote into storage without room", room, size)
				}
				if got.QB.X[0] != want.QB.X[0] || got.KoA.Cocurrent[len(got.KoA.Cocurrent)-1] != want.KoA.Cocurrent[len(want.KoA.Cocurrent)-1] {
					t.Errorf("SweepInto(%d values, %+v, %+v): the series are not windows of its values", room, op, spec)
				}
			}
		}
	}
}

func TestSweepRanges(t *testing.T) {
	for _, spec := range []core.SweepSpec{
		{Points: core.MinSweepPoints, QB: &core.Range{Min: 100, Max: 400}},
		{Points: 7, QD: &core.Range{Min: 300, Max: 800}, KoA: &core.Range{Min: 500, Max: 1500}},
		{Points: core.MaxSweepPoints, QB: &core.Range{Min: core.MinFlow, Max: core.MaxFlow}, KoA: &core.Range{Min: 0, Max: core.MaxKoA}},
	} {
		s, err := core.Sweep(routine, spec)
		if err != nil {
			t.Fatalf("Sweep(%+v) error: %v", spec, err)
		}
		pick := func(r *core.Range, lo, hi float64) (float64, float64) {
			if r == nil {
				return lo, hi
			}
			return r.Min, r.Max
		}
		lo, hi := pick(spec.QB, 25, 600)
		checkSeries(t, "qb", s.QB, spec.Points, lo, hi, routine, setQB)
		lo, hi = pick(spec.QD, 50, 1000)
		checkSeries(t, "qd", s.QD, spec.Points, lo, hi, routine, setQD)
		lo, hi = pick(spec.KoA, 0, 2000)
		checkSeries(t, "koa", s.KoA, spec.Points, lo, hi, routine, setKoA)
	}
}

func TestSweepErrors(t *testing.T) {
	r := func(lo, hi float64) *core.Range { return &core.Range{Min: lo, Max: hi} }
	for _, c := range []struct {
		spec  core.SweepSpec
		field string
		word  string
	}{
		{core.SweepSpec{Points: 1}, "sweep.points", "from 2 to 1001"},
		{core.SweepSpec{Points: -3}, "sweep.points", "from 2 to 1001"},
		{core.SweepSpec{Points: 1002}, "sweep.points", "from 2 to 1001"},
		{core.SweepSpec{QB: r(400, 400)}, "sweep.qb", "below maximum"},
		{core.SweepSpec{QB: r(600, 100)}, "sweep.qb", "below maximum"},
		{core.SweepSpec{QB: r(0, 100)}, "sweep.qb", "greater than 0"},
		{core.SweepSpec{QB: r(10, 2e5)}, "sweep.qb", "maximum"},
		{core.SweepSpec{QB: r(math.NaN(), 100)}, "sweep.qb", "finite"},
		{core.SweepSpec{QD: r(-1, 100)}, "sweep.qd", "greater than 0"},
		{core.SweepSpec{QD: r(10, math.Inf(1))}, "sweep.qd", "finite"},
		{core.SweepSpec{QD: r(800, 300)}, "sweep.qd", "below maximum"},
		{core.SweepSpec{KoA: r(-1, 100)}, "sweep.koa", "negative"},
		{core.SweepSpec{KoA: r(0, 0)}, "sweep.koa", "below maximum"},
		{core.SweepSpec{KoA: r(0, 1e9)}, "sweep.koa", "maximum"},
		// The points are checked before the ranges.
		{core.SweepSpec{Points: 1, QB: r(5, 1)}, "sweep.points", "from 2 to 1001"},
	} {
		_, err := core.Sweep(routine, c.spec)
		if fieldOf(err) != c.field || !strings.Contains(err.Error(), c.word) {
			t.Errorf("Sweep(%+v, %+v) error = %v, want field %q and a message with %q", routine, c.spec, err, c.field, c.word)
		}
	}
}

// The routine point of TestCompareRoutine, as a reader would print it.
// The numbers are those of TestCompareRoutine (textbook forms worked with
// Python's math module; RK4 in integrate_test.go).
func ExampleCompare() {
	c, err := core.Compare(core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, CDi: 0})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("counter-current clearance %.2f mL/min (ceiling %.2f)\n", c.Countercurrent.Clearance, c.Countercurrent.ClearanceCeiling)
	fmt.Printf("co-current clearance      %.2f mL/min (ceiling %.2f)\n", c.Cocurrent.Clearance, c.Cocurrent.ClearanceCeiling)
	fmt.Printf("gain %.2f mL/min, %.2f %%\n", c.Gain, c.GainPercent)
	fmt.Printf("NTU %.2f, flow ratio %.2f\n", c.NTU, c.FlowRatio)
	// Output:
	// counter-current clearance 247.95 mL/min (ceiling 300.00)
	// co-current clearance      184.87 mL/min (ceiling 187.50)
	// gain 63.08 mL/min, 34.12 %
	// NTU 2.67, flow ratio 0.60
}

// A missing field is reported by its API name.
func ExampleOperating_Validate() {
	err := core.Operating{QB: 300, QD: 0, KoA: 800, CBi: 1}.Validate()
	fmt.Println(err)
	// Output:
	// qd: must be greater than 0 mL/min (got 0)
}

func BenchmarkCompare(b *testing.B) {
	for b.Loop() {
		if _, err := core.Compare(routine); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkEvaluate(b *testing.B) {
	for _, a := range core.Arrangements {
		b.Run(a.String(), func(b *testing.B) {
			for b.Loop() {
				if _, err := core.Evaluate(a, routine); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkSweep is the default chart request: 101 points on 3 axes, both
// arrangements and their ceilings at each.
func BenchmarkSweep(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		if _, err := core.Sweep(routine, core.SweepSpec{}); err != nil {
			b.Fatal(err)
		}
	}
}
