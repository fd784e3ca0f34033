package core

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// selectRank against sorting (the definition of rank), on seeded random
// data with many ties and infinities, as the Monte Carlo draws have.
func TestSelectRank(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for trial := range 300 {
		n := 1 + r.IntN(300)
		v := make([]float64, n)
		for i := range v {
			switch r.IntN(4) {
			case 0:
				v[i] = math.Inf(1)
			case 1:
				v[i] = float64(r.IntN(3)) // ties
			default:
				v[i] = r.NormFloat64()
			}
		}
		sorted := slices.Sorted(slices.Values(v))
		for _, k := range []int{0, n / 40, n / 2, n - 1 - n/40, n - 1} {
			w := slices.Clone(v)
			got := selectRank(w, k)
			if got != sorted[k] {
				t.Fatalf("trial %d: selectRank(n=%d, k=%d) = %g, want %g", trial, n, k, got, sorted[k])
			}
			for i := range w {
				if (i < k && w[i] > got) || (i > k && w[i] < got) {
					t.Fatalf("trial %d: selectRank(n=%d, k=%d) left v[%d] = %g on the wrong side of %g", trial, n, k, i, w[i], got)
				}
			}
		}
	}
}
