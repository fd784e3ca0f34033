package core

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The quadrature behind Transfer, run with QF = 0 (which Transfer itself
// sends to the closed forms), must reproduce the closed forms of flow.go:
// the effectiveness-NTU relations (Incropera & DeWitt ch. 11, from
// memory), themselves checked against published values in flow_test.go.
// This tests the integrating factor, the Gauss-Legendre rule, the panels
// and the counter-current superposition on their own, including the stiff
// cases (NTU up to 1e10) where the kernel is cut at e^-46. Measured worst
// relative error: about 7e-16; the tolerance is 1e-14.
func TestMembraneWithoutFiltration(t *testing.T) {
	const rel = 1e-14
	flows := []float64{1e-3, 0.5, 50, 200, 300, 300 * (1 + 1e-12), 500, 800, 1e4, 1e5}
	for _, qb := range flows {
		for _, qd := range flows {
			for _, koa := range []float64{1e-3, 10, 200, 800, 1500, 3000, 1e5, 1e7} {
				for _, a := range Arrangements {
					for _, s := range []float64{1, 0.5, 0} {
						m := newMembrane(a, qb, qd, koa, Filtration{QF: 0, Sieving: s})
						k, d := m.solve()
						want := Dialysance(a, qb, qd, koa)
						if math.Abs(k-want) > rel*want || math.Abs(d-want) > rel*want {
							t.Errorf("membrane(%v, %g, %g, %g, QF 0, S %g).solve() = %.17g, %.17g, want Dialysance %.17g", a, qb, qd, koa, s, k, d, want)
						}
					}
				}
			}
		}
	}
}

// A Gauss-Legendre rule with n nodes integrates every polynomial of degree
// up to 2n - 1 exactly (Abramowitz & Stegun ch. 25, from memory) and no
// rule with n nodes does so for degree 2n (its error there is above 1e-12 relative
// for n <= 20). The monomial x^j has integral
// 2/(j+1) over [-1, 1] for even j and 0 for odd j.
func TestLegendreRule(t *testing.T) {
	for _, n := range []int{1, 2, 3, 5, 8, 16, 20} {
		nodes, weights := legendreRule(n)
		for i := 1; i < n; i++ {
			if !(nodes[i-1] < nodes[i]) || weights[i] <= 0 {
				t.Errorf("legendreRule(%d): nodes %v, weights %v, want ascending nodes and positive weights", n, nodes, weights)
				break
			}
		}
		quad := func(j int) float64 {
			var sum float64
			for i, x := range nodes {
				sum += weights[i] * math.Pow(x, float64(j))
			}
			return sum
		}
		exact := func(j int) float64 {
			if j%2 == 1 {
				return 0
			}
			return 2 / float64(j+1)
		}
		for j := 0; j <= 2*n-1; j++ {
			if got, want := quad(j), exact(j); math.Abs(got-want) > 1e-15 {
				t.Errorf("legendreRule(%d) on x^%d = %.17g, want %.17g", n, j, got, want)
			}
		}
		if got, want := quad(2*n), exact(2*n); math.Abs(got-want) < 1e-12*want {
			t.Errorf("legendreRule(%d) on x^%d = %.17g: exact, but a %d-node rule cannot be", n, 2*n, got, n)
		}
	}
	// Two nodes: +-1/sqrt(3) with weights 1 (the classical two-point rule).
	nodes, weights := legendreRule(2)
	if math.Abs(nodes[1]-1/math.Sqrt(3)) > 3e-16 || math.Abs(weights[0]-1) > 1e-15 {
		t.Errorf("legendreRule(2) = %v, %v, want +-1/sqrt(3) and 1, 1", nodes, weights)
	}
}

// endMean is the log-mean of two end differences with the documented
// special cases of EvaluateFiltered. The log-mean of e and 1 is
// (e - 1)/ln e = e - 1 (by hand).
func TestEndMean(t *testing.T) {
	for _, c := range []struct{ x, y, want float64 }{
		{math.E, 1, math.E - 1},
		{1, math.E, math.E - 1},
		{2, 2, 2},
		{-math.E, -1, -(math.E - 1)},
		{1, 0, 0},
		{0, -3, 0},
		{1, -3, -1}, // opposite signs: the arithmetic mean
		{4, 4 * (1 + 1e-15), 4 * (1 + 0.5e-15)},
	} {
		if got := endMean(c.x, c.y); math.Abs(got-c.want) > 1e-15*math.Abs(c.want) {
			t.Errorf("endMean(%g, %g) = %.17g, want %.17g", c.x, c.y, got, c.want)
		}
	}
}

// The choice of a smaller Gauss-Legendre rule per panel (quadrature.go)
// must not cost accuracy: over a seeded random grid of the whole accepted
// range, Transfer with the chosen rules agrees with Transfer using the
// 16-point rule everywhere (which TestMembraneWithoutFiltration and the
// RK4 comparison validate) to quadratureAgreement.
func TestRuleChoice(t *testing.T) {
	const quadratureAgreement = 5e-15
	r := rand.New(rand.NewPCG(20240601, 9))
	logUniform := func(lo, hi float64) float64 { return math.Exp(math.Log(lo) + r.Float64()*(math.Log(hi)-math.Log(lo))) }
	worst := 0.0
	defer func() { forcedRule = nil }()
	for range 20000 {
		qb, qd := logUniform(1e-3, 1e5), logUniform(1e-3, 1e5)
		koa := logUniform(1e-3, 1e8)
		f := Filtration{QF: qb * logUniform(1e-8, 0.99), Sieving: r.Float64()}
		for _, a := range Arrangements {
			forcedRule = nil
			k, d := newMembraneSolve(a, qb, qd, koa, f)
			forcedRule = &gaussRules[len(gaussRules)-1]
			k16, d16 := newMembraneSolve(a, qb, qd, koa, f)
			// Relative to K: D <= K, and a D far below K matters only
			// as part of K - D CDi/CBi.
			e := math.Max(math.Abs(k-k16), math.Abs(d-d16)) / k16
			worst = math.Max(worst, e)
			if e > quadratureAgreement {
				t.Errorf("Transfer(%v, %g, %g, %g, %+v) = %.17g, %.17g with the chosen rules, %.17g, %.17g with 16 points", a, qb, qd, koa, f, k, d, k16, d16)
			}
		}
	}
	t.Logf("worst relative difference from the 16-point rule: %.2g", worst)
}

// The looser rules of the Monte Carlo draws (drawRules, aiming at 1e-12
// per panel) against the rules of Transfer (gaussRules, 1e-17), which
// TestRuleChoice, the closed forms at QF -> 0 and the RK4 comparison
// validate: over the same seeded random grid of the whole accepted range,
// and over routine points (QB 150-500, QD 300-800, KoA 300-1500, QF up to
// 60 mL/min), K and D agree to drawAgreement relative to K. That is the
// whole cost of the looser rules: a draw's KoA moves by drawAgreement
// times its sensitivity d ln KoA/d ln K, far below the 1e-3 the Monte
// Carlo's percentiles resolve.
func TestDrawRules(t *testing.T) {
	const drawAgreement = 5e-12
	r := rand.New(rand.NewPCG(20240601, 9))
	logUniform := func(lo, hi float64) float64 { return math.Exp(math.Log(lo) + r.Float64()*(math.Log(hi)-math.Log(lo))) }
	var worst, worstRoutine float64
	for i := range 40000 {
		routine := i%2 == 1
		qb, qd := logUniform(1e-3, 1e5), logUniform(1e-3, 1e5)
		koa := logUniform(1e-3, 1e8)
		f := Filtration{QF: qb * logUniform(1e-8, 0.99), Sieving: r.Float64()}
		if routine {
			qb, qd, koa = 150+350*r.Float64(), 300+500*r.Float64(), 300+1200*r.Float64()
			f = Filtration{QF: 60 * r.Float64(), Sieving: 0.5 + 0.5*r.Float64()}
		}
		for _, a := range Arrangements {
			k, d := transfer(a, qb, qd, koa, f, gaussRules)
			kq, dq := transfer(a, qb, qd, koa, f, drawRules)
			e := math.Max(math.Abs(k-kq), math.Abs(d-dq)) / k
			if routine {
				worstRoutine = math.Max(worstRoutine, e)
			} else {
				worst = math.Max(worst, e)
			}
			if e > drawAgreement {
				t.Errorf("transfer(%v, %g, %g, %g, %+v) = %.17g, %.17g with drawRules, %.17g, %.17g with gaussRules", a, qb, qd, koa, f, kq, dq, k, d)
			}
		}
	}
	t.Logf("drawRules against gaussRules: worst relative difference %.2g over the whole range, %.2g at routine points", worst, worstRoutine)
}

func newMembraneSolve(a Arrangement, qb, qd, koa float64, f Filtration) (k, d float64) {
	m := newMembrane(a, qb, qd, koa, f)
	return m.solve()
}

// invertClearance started from a hint (the secant path, used for the draws
// of an uncertainty analysis and for chart series) finds the same KoA as
// bracketing does, in a few evaluations when the hint is within 10 %; with
// used dialysate and S < 1 too.
func TestInvertClearanceHint(t *testing.T) {
	r := rand.New(rand.NewPCG(20240601, 13))
	var worst float64
	evals, n := 0, 0
	for range 3000 {
		m := Operating{QB: 50 + 450*r.Float64(), QD: 100 + 700*r.Float64(), CBi: 1, CDi: 0.5 * r.Float64()}
		m.Filtration = Filtration{QF: m.QB * 0.3 * r.Float64(), Sieving: r.Float64()}
		koa := 10 + 2990*r.Float64()
		for _, a := range Arrangements {
			m.KoA = koa
			k, _ := clearanceAt(a, m)
			cold := invertClearance(a, m, k, start{})
			warm := invertClearance(a, m, k, nearStart(koa*(0.9+0.2*r.Float64())))
			if cold.reach != found || warm.reach != found {
				continue // saturated: K does not tell KoA apart
			}
			// Both must give k back; the KoAs agree to 1e-13/e, e the
			// elasticity d ln K/d ln KoA, where e >= 1e-3 (otherwise K
			// does not determine KoA).
			m.KoA = warm.koa
			back, _ := clearanceAt(a, m)
			if math.Abs(back-k) > 4e-15*k {
				t.Errorf("invertClearance(%v, %+v, %.17g) from a hint = %.17g, which gives %.17g", a, m, k, warm.koa, back)
			}
			m.KoA = koa * 1.001
			up, _ := clearanceAt(a, m)
			if elasticity := (up - k) / k / 1e-3; elasticity >= 1e-3 {
				e := math.Abs(warm.koa-cold.koa) / cold.koa * elasticity
				worst = math.Max(worst, e)
				if e > 1e-13 {
					t.Errorf("invertClearance(%v, %+v, %.17g) from a hint: %.17g, bracketing: %.17g", a, m, k, warm.koa, cold.koa)
				}
			}
			evals += warm.evaluations
			n++
		}
	}
	if n < 3000 {
		t.Errorf("only %d inversions compared", n)
	}
	t.Logf("hint path: worst relative difference times elasticity %.2g, %.1f evaluations on average", worst, float64(evals)/float64(n))
}
