package core

import (
	"math"
	"math/rand/v2"
	"testing"
)

// dialysancePair must give what Dialysance and Ceiling give one at a time,
// bit for bit (the chart series and the compare answer then agree to the
// last digit), at seeded random points over the whole valid range and at
// the special cases of Effectiveness.
func TestDialysancePairMatchesDialysance(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	logUniform := func(lo, hi float64) float64 {
		return math.Exp(math.Log(lo) + rng.Float64()*(math.Log(hi)-math.Log(lo)))
	}
	type point struct{ qb, qd, koa float64 }
	points := []point{
		{300, 500, 800}, {400, 400, 800}, {300, 500, 0}, {300, 500, math.Inf(1)},
		{MinFlow, MaxFlow, MaxKoA}, {MaxFlow, MinFlow, 1e-300}, {250, 250 * (1 + 1e-15), 900},
	}
	for range 100000 {
		points = append(points, point{logUniform(MinFlow, MaxFlow), logUniform(MinFlow, MaxFlow), logUniform(1e-3, MaxKoA)})
	}
	for _, p := range points {
		got := dialysancePair(p.qb, p.qd, p.koa)
		want := pair{
			counter:        Dialysance(Countercurrent, p.qb, p.qd, p.koa),
			co:             Dialysance(Cocurrent, p.qb, p.qd, p.koa),
			counterCeiling: Ceiling(Countercurrent, p.qb, p.qd),
			coCeiling:      Ceiling(Cocurrent, p.qb, p.qd),
		}
		if got != want {
			t.Fatalf("dialysancePair(%v, %v, %v) = %+v, want %+v (Dialysance and Ceiling)", p.qb, p.qd, p.koa, got, want)
		}
		// Ceiling is Dialysance at KoA = +Inf, rounding for rounding.
		for _, a := range Arrangements {
			if c, d := Ceiling(a, p.qb, p.qd), Dialysance(a, p.qb, p.qd, math.Inf(1)); c != d {
				t.Fatalf("Ceiling(%v, %v, %v) = %v, Dialysance at KoA = +Inf = %v", a, p.qb, p.qd, c, d)
			}
		}
	}
}
