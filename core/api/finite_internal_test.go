package api

import (
	"math"
	"testing"
)

// TestFinite: finite finds an infinity or a NaN at every position of
// slices of 0 to 40 values (both sides of its eight-value step), and
// passes finite values of either sign up to the series' magnitudes. That
// Inf*0 and NaN*0 are NaN and x*0 is ±0 for finite x is IEEE 754
// arithmetic (IEEE 754-2019, 7.2; from memory).
func TestFinite(t *testing.T) {
	for n := range 41 {
		xs := make([]float64, n)
		for i := range xs {
			xs[i] = float64(i)*1e8 - 3e8
		}
		if !finite(xs) {
			t.Fatalf("finite(%v) = false", xs)
		}
		for i := range xs {
			for _, bad := range []float64{math.Inf(1), math.Inf(-1), math.NaN()} {
				good := xs[i]
				xs[i] = bad
				if finite(xs) {
					t.Errorf("finite: %v at %d of %d values not found", bad, i, n)
				}
				xs[i] = good
			}
		}
	}
}
