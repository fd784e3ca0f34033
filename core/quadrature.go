package core

import "math"

// gaussPoints is the number of nodes of the Gauss-Legendre rule used along
// the membrane. An n-point rule integrates polynomials of degree 2n - 1
// exactly; for e^(c t) over a panel of width h its error is about
// (c h)^(2n) (n!)^4 / ((2n+1) ((2n)!)^3) relative (from the remainder term
// of Gauss-Legendre quadrature, Abramowitz & Stegun ch. 25, from memory),
// about 1e-16 for n = 16 and c h = 16.
const gaussPoints = 16

// gaussNodes and gaussWeights are the rule on [-1, 1].
var gaussNodes, gaussWeights = legendreRule(gaussPoints)

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
