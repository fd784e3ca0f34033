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
