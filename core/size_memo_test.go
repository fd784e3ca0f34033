package core_test

import (
	"math/rand/v2"
	"reflect"
	"testing"

	"clearkit/core"
)

// memoStep changes one input of a sizing question, as a user at the page
// does between two answers.
type memoStep struct {
	name   string
	change func(r *rand.Rand, s *core.SizeSpec)
}

var memoSteps = []memoStep{
	{"target", func(r *rand.Rand, s *core.SizeSpec) {
		s.Target = core.Ceiling(s.Flow, s.QB, s.QD) * (0.05 + 0.9*r.Float64())
	}},
	{"margin", func(r *rand.Rand, s *core.SizeSpec) { s.MarginPercent = 30 * r.Float64() }},
	{"filters", func(r *rand.Rand, s *core.SizeSpec) {
		s.Filters = []core.Filter{{Label: "a", KoA: logUniform(r, 100, 3000)}, {Label: "b", KoA: logUniform(r, 100, 3000)}}
	}},
	{"current filter", func(r *rand.Rand, s *core.SizeSpec) { s.Current = &core.Filter{KoA: logUniform(r, 100, 3000)} }},
	{"flow", func(r *rand.Rand, s *core.SizeSpec) { s.Flow = core.Arrangements[r.IntN(2)] }},
	{"qb", func(r *rand.Rand, s *core.SizeSpec) { s.QB = 100 + 400*r.Float64() }},
	{"qd", func(r *rand.Rand, s *core.SizeSpec) { s.QD = 200 + 600*r.Float64() }},
	{"k0", func(r *rand.Rand, s *core.SizeSpec) { s.K0 = []float64{0, 0.03, 0.05}[r.IntN(3)] }},
	{"qf", func(r *rand.Rand, s *core.SizeSpec) { s.QF = []float64{0, 10, 20}[r.IntN(3)] }},
	{"sieving", func(r *rand.Rand, s *core.SizeSpec) { s.Sieving = []float64{0.7, 1}[r.IntN(2)] }},
	{"blood", func(r *rand.Rand, s *core.SizeSpec) {
		if r.IntN(3) == 0 {
			s.Blood = nil
			return
		}
		b := core.DefaultWholeBlood(25 + 20*r.Float64())
		s.Blood = &b
	}},
	{"points", func(r *rand.Rand, s *core.SizeSpec) {
		s.Sweep = &core.SizeSweepSpec{Points: []int{0, 21, 101}[r.IntN(3)]}
	}},
	{"koa axis", func(r *rand.Rand, s *core.SizeSpec) {
		s.Sweep = &core.SizeSweepSpec{KoAMax: []float64{0, 1500, 4000}[r.IntN(3)]}
	}},
}

// TestSizeWithMemo asks a walk of sizing questions, each one input away
// from the last, with a memo and without: the answers must be equal in
// every member (the memo is exact, not an approximation), and the series
// must be the very ones of the last answer computed when what they are
// computed from is the same (the memo is used: a new target, margin or
// filter list, the KoA axis keeping its top), and new ones when it is not
// (the memo is not used wrongly). The expected answers are core.Size's
// own, computed afresh each time.
func TestSizeWithMemo(t *testing.T) {
	r := newRand()
	spec := core.SizeSpec{Target: 230, QB: 300, QD: 500, Flow: core.Countercurrent, K0: 0.05, MarginPercent: 10,
		Filtration: core.Filtration{Sieving: 1}, Sweep: &core.SizeSweepSpec{}}
	var memo core.SweepMemo
	var last *core.SizeSweep
	var lastInputs [10]float64
	reused, fresh := 0, 0
	for i := range 3000 {
		step := memoSteps[r.IntN(len(memoSteps))]
		if i%2 == 0 {
			step = memoSteps[0] // half the steps a new target, as typing one is
		}
		step.change(r, &spec)
		want, wantErr := core.Size(spec)
		got, err := core.SizeWith(spec, &memo)
		if !reflect.DeepEqual(got, want) || !reflect.DeepEqual(err, wantErr) {
			t.Fatalf("step %d (%s): SizeWith(%+v) = %+v, %v; Size gives %+v, %v", i, step.name, spec, got, err, want, wantErr)
		}
		if err != nil {
			continue
		}
		switch in := seriesInputs(spec, got); {
		case last != nil && in == lastInputs:
			if got.Sweep != last {
				t.Fatalf("step %d (%s): the series were computed again; the memo holds them", i, step.name)
			}
			reused++
		default:
			if got.Sweep == last {
				t.Fatalf("step %d (%s): the series of the last answer were given again", i, step.name)
			}
			fresh++
		}
		last, lastInputs = got.Sweep, seriesInputs(spec, got)
	}
	if reused < 1000 || fresh < 500 {
		t.Errorf("the walk reused the series %d times and computed them %d times: it tests too little", reused, fresh)
	}
	// Without a memo, every answer has series of its own.
	a, _ := core.SizeWith(spec, nil)
	b, _ := core.SizeWith(spec, nil)
	if a.Sweep == b.Sweep {
		t.Error("SizeWith(s, nil) shares its series")
	}
}

// seriesInputs lists what a size answer's series are computed from: the
// flows, K0, the filtration, the blood's fractions (-1 for an aqueous
// solution), the top of the KoA axis and the points (0 asks for the
// default).
func seriesInputs(s core.SizeSpec, answer core.Sizing) [10]float64 {
	in := [10]float64{s.QB, s.QD, s.K0, s.QF, s.Sieving, -1, -1, -1, answer.Sweep.KoAMax, float64(s.Sweep.Points)}
	if s.Blood != nil {
		in[5], in[6], in[7] = s.Blood.Hct, s.Blood.PlasmaWater, s.Blood.RedCellWater
	}
	if in[9] == 0 {
		in[9] = core.DefaultSweepPoints
	}
	return in
}

// BenchmarkSizeNewTarget is the page's size keystroke: the same question
// with another target each time, 230 to 269 mL/min, answered with a memo
// (7 of the 40 targets need a KoA above 1000 mL/min and move the KoA
// axis, so that the series are computed again).
func BenchmarkSizeNewTarget(b *testing.B) {
	spec := filtersSpec(10)
	spec.Current = &core.Filter{KoA: 700}
	spec.Sweep = &core.SizeSweepSpec{}
	var memo core.SweepMemo
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		spec.Target = 230 + float64(i%40)
		i++
		if _, err := core.SizeWith(spec, &memo); err != nil {
			b.Fatal(err)
		}
	}
}
