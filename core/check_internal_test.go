package core

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The draws of an uncertainty analysis with ultrafiltration start their
// in-situ KoA from the closed form scaled to the central value (drawHint)
// and stop at drawTolerance, with the model evaluated by drawRules. Over
// perturbed measurements like the Monte Carlo's (±5 % on every reading),
// the KoA so found agrees with the one found without a hint, to the
// model's accuracy, to 1e-8 relative, and the reach (whether any filter
// gives the clearance) is the same.
func TestDrawHint(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	base := []Measurement{
		{QB: 300, QD: 500, QF: 10, Sieving: 1, CBi: 100, CBo: 19, CDo: 46.3},
		{QB: 250, QD: 800, QF: 30, Sieving: 0.8, CBi: 80, CBo: 10, CDi: 2, CDo: 24},
		{QB: 400, QD: 400, QF: 20, Sieving: 1, CBi: 50, CBo: 12, CDo: 35, Blood: &WholeBlood{Hct: 35, PlasmaWater: 0.93, RedCellWater: 0.72}},
	}
	for _, m := range base {
		hint := newDrawHint(m, solve(m, noHint))
		hint.quick = true // as the Monte Carlo draws are solved
		if hint.ratio[0] == 0 {
			t.Fatalf("%+v: no counter-current hint", m)
		}
		for range 300 {
			d := m
			values, _ := d.readings()
			for _, v := range values {
				*v *= 1 + 0.05*(2*r.Float64()-1)
			}
			warm, cold := solve(d, hint), solve(d, noHint)
			for i := range Arrangements {
				if warm.reach[i] != cold.reach[i] {
					t.Errorf("%+v, arrangement %d: reach %v with the hint, %v without", d, i, warm.reach[i], cold.reach[i])
					continue
				}
				if cold.reach[i] && math.Abs(warm.koa[i]-cold.koa[i]) > 1e-8*cold.koa[i] {
					t.Errorf("%+v, arrangement %d: KoA %.17g with the hint, %.17g without", d, i, warm.koa[i], cold.koa[i])
				}
			}
		}
	}
}

// The in-situ KoA with ultrafiltration starts its secant at the closed form
// without ultrafiltration on the diffusive dialysance (solve). Over random
// measurements (QF up to 40 % of QB, sieving, whole blood, CDi above 0)
// it agrees with the KoA found by bracketing and Brent's method from no
// start (an independent search: FindRoot) to 1e-12 relative, with the
// same reach, and takes fewer evaluations of the model on the whole.
func TestClosedFormStart(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 17))
	var warmEvaluations, coldEvaluations, solved int
	for range 400 {
		qb := 100 + 400*r.Float64()
		m := Measurement{
			QB: qb, QD: 300 + 500*r.Float64(), QF: qb * 0.4 * r.Float64(), Sieving: 0.5 + 0.5*r.Float64(),
			CBi: 100, CBo: 5 + 60*r.Float64(), CDi: 2 * r.Float64(),
		}
		if r.IntN(3) == 0 {
			m.Blood = &WholeBlood{Hct: 20 + 25*r.Float64(), PlasmaWater: 0.93, RedCellWater: 0.72}
		}
		s := solve(m, noHint)
		op := m.model()
		for i, a := range Arrangements {
			g, ok := inSituKoA(a, op.QB, m.QD, s.dd)
			if !ok || g <= 0 {
				continue
			}
			warm := invertClearance(a, op, s.k, nearStart(g))
			cold := invertClearance(a, op, s.k, start{})
			if warm.reach != cold.reach || s.reach[i] != (cold.reach == found) {
				t.Errorf("%+v %v: reach %v from the closed form, %v by bracketing, solve %v", m, a, warm.reach, cold.reach, s.reach[i])
				continue
			}
			if cold.reach != found {
				continue
			}
			solved++
			warmEvaluations += warm.evaluations
			coldEvaluations += cold.evaluations
			if math.Abs(warm.koa-cold.koa) > 1e-12*cold.koa || s.koa[i] != warm.koa {
				t.Errorf("%+v %v: KoA %.17g from the closed form (solve %.17g), %.17g by bracketing", m, a, warm.koa, s.koa[i], cold.koa)
			}
		}
	}
	if solved < 200 || warmEvaluations >= coldEvaluations {
		t.Errorf("%d solved: %d evaluations from the closed form, %d by bracketing", solved, warmEvaluations, coldEvaluations)
	}
	t.Logf("%d solved: %.1f evaluations each from the closed form, %.1f by bracketing", solved, float64(warmEvaluations)/float64(solved), float64(coldEvaluations)/float64(solved))
}
