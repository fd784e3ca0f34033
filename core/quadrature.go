package core

import "math"

// Gauss-Legendre rules for the quadrature along the membrane. An n-point
// rule integrates polynomials of degree 2n - 1 exactly. Each panel takes
// the smallest rule whose error is below a target (1e-17 for gaussRules,
// looser for drawRules) for two features of the integrand e^A g:
//
//   - the exponential: for e^(c t) over a panel of width h the relative
//     error is about (c h)^(2n) (n!)^4 / ((2n+1) ((2n)!)^3) (from the
//     remainder term of Gauss-Legendre quadrature, Abramowitz & Stegun
//     ch. 25, from memory), with c h the change of A across the panel;
//   - the nearest singularity of the flows 1/QB, 1/QD: for a function
//     analytic inside the Bernstein ellipse of parameter rho around the
//     panel the error falls like rho^(-2n) (Trefethen, Approximation
//     Theory and Approximation Practice, ch. 19; from memory), times a
//     factor that grows without bound as the singularity nears, where e^A
//     has a branch point of high order. The rule asks rho^(-n) <= target,
//     the square of the bare estimate: TestRuleChoice finds errors up to
//     1e-13 with rho^(-1.5 n) and none beyond 1e-15 with rho^(-n).
//
// The largest rule, 16 points, is used when no smaller one meets both; the
// panels are sized so that it always does (see membrane.integrate).
var gaussRules = makeRules(logTarget)

// drawRules aim at drawTarget, for the draws of an uncertainty analysis
// (drawHint): at routine points they use 6 nodes where gaussRules use 12.
// TestDrawRules bounds what that costs in K and D.
var drawRules = makeRules(drawTarget * math.Ln10)

// The relative error each panel's rule aims at, 1e-17, and its logarithm;
// drawTarget is the decimal exponent of the target of drawRules.
const (
	logTarget  = -17 * math.Ln10
	drawTarget = -12
)

// makeRules returns the rules of 6, 8, 12 and 16 points with their limits
// for the relative error e^logTarget.
func makeRules(logTarget float64) []gaussRule {
	var rules []gaussRule
	for _, n := range []int{6, 8, 12, 16} {
		nodes, weights := legendreRule(n)
		// log of (n!)^4 / ((2n+1) ((2n)!)^3), with logarithms by log1p
		// (see exp.go: the same on every platform).
		logFactorial := func(m int) (s float64) {
			for k := 2; k <= m; k++ {
				s += math.Log1p(float64(k - 1))
			}
			return s
		}
		logK := 4*logFactorial(n) - math.Log1p(2*float64(n)) - 3*logFactorial(2*n)
		rules = append(rules, gaussRule{
			nodes:     nodes,
			weights:   weights,
			maxSpread: expPortable((logTarget - logK) / (2 * float64(n))),
			minRho:    expPortable(-logTarget / float64(n)),
		})
	}
	return rules
}

// gaussRule is an n-point rule on [-1, 1] with the largest change of the
// exponent (maxSpread = c h) and the smallest Bernstein parameter (minRho)
// at which its error estimates stay below the target of its set.
type gaussRule struct {
	nodes, weights    []float64
	maxSpread, minRho float64
}

// ruleFor returns the smallest rule of rules for a panel across which the
// exponent changes by spread and whose nearest singularity lies at
// distance d from the panel, of half-width hw.
func ruleFor(rules []gaussRule, spread, d, hw float64) *gaussRule {
	// The Bernstein ellipse through a point on the real axis at distance d
	// beyond an end: rho = delta + sqrt(delta^2 - 1), delta = 1 + d/hw.
	delta := 1 + d/hw
	rho := delta + math.Sqrt(delta*delta-1)
	for i := range rules[:len(rules)-1] {
		if r := &rules[i]; spread <= r.maxSpread && rho >= r.minRho {
			return r
		}
	}
	return &rules[len(rules)-1]
}

// legendreRule returns the n-point Gauss-Legendre nodes (ascending) and
// weights on [-1, 1]. Each node is a root of the Legendre polynomial P_n,
// found by Newton's method from the estimate cos(pi (i + 3/4)/(n + 1/2)),
// with P_n and its derivative from the three-term recurrence
// k P_k = (2k - 1) z P_(k-1) - (k - 1) P_(k-2); the weight is
// 2 / ((1 - z^2) P_n'(z)^2).
func legendreRule(n int) (nodes, weights []float64) {
	nodes, weights = make([]float64, n), make([]float64, n)
	for i := range (n + 1) / 2 {
		z := math.Cos(math.Pi * (float64(i) + 0.75) / (float64(n) + 0.5))
		for range 100 {
			p, dp := legendre(n, z)
			dz := p / dp
			z -= dz
			if math.Abs(dz) <= 1e-16 {
				break
			}
		}
		_, dp := legendre(n, z)
		w := 2 / ((1 - z*z) * dp * dp)
		nodes[i], nodes[n-1-i] = -z, z
		weights[i], weights[n-1-i] = w, w
	}
	if n%2 == 1 {
		nodes[n/2] = 0 // the middle root is 0 exactly
	}
	return nodes, weights
}

// legendre returns P_n(z) and P_n'(z) for |z| < 1.
func legendre(n int, z float64) (p, dp float64) {
	p0, p1 := 1.0, z
	if n == 0 {
		return 1, 0
	}
	for k := 2; k <= n; k++ {
		p0, p1 = p1, ((2*float64(k)-1)*z*p1-(float64(k)-1)*p0)/float64(k)
	}
	return p1, float64(n) * (z*p1 - p0) / (z*z - 1)
}
