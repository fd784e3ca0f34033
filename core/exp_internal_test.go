package core

import (
	"math"
	"math/rand/v2"
	"testing"
)

// expPortable against the standard library's math.Exp (a reference
// library; on amd64 an assembly version): within 2 ulp over the range the
// model uses and beyond, exact at 0, and the documented special cases;
// e^709.7 = 1.6549840276802644e308 (Python 3's math.exp) is finite, 709.78
// being the log of the largest float64.
func TestExpPortable(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for i := range 200000 {
		x := (r.Float64()*2 - 1) * 60
		if i%4 == 0 {
			// Below e^700: the assembly math.Exp of amd64 returns +Inf
			// from about 709.4, short of the float64 limit 709.78.
			x = r.Float64()*1445 - 745
		}
		got, want := expPortable(x), math.Exp(x)
		if want == 0 || math.IsInf(want, 0) {
			if got != want {
				t.Errorf("expPortable(%g) = %g, want %g", x, got, want)
			}
			continue
		}
		// Subnormal results carry fewer significant bits.
		ulp := math.Max(math.Abs(want)*0x1p-52, 5e-324)
		if math.Abs(got-want) > 2*ulp {
			t.Errorf("expPortable(%.17g) = %.17g, want %.17g (math.Exp), %.2g ulp off", x, got, want, math.Abs(got-want)/ulp)
		}
	}
	for _, c := range []struct{ x, want float64 }{
		{0, 1}, {1, math.E}, {709.7, 1.6549840276802644e308}, {math.Ln2, 2}, {-747, 0}, {711, math.Inf(1)}, {math.Inf(-1), 0}, {math.Inf(1), math.Inf(1)},
	} {
		if got := expPortable(c.x); got != c.want && math.Abs(got-c.want) > 2e-16*c.want {
			t.Errorf("expPortable(%g) = %.17g, want %.17g", c.x, got, c.want)
		}
	}
	if got := expPortable(math.NaN()); !math.IsNaN(got) {
		t.Errorf("expPortable(NaN) = %g, want NaN", got)
	}
	// The split of ln 2: ln2Hi has its low 20 bits of mantissa clear, and
	// the two parts add up to math.Ln2.
	if math.Float64bits(ln2Hi)&(1<<20-1) != 0 || ln2Hi+ln2Lo != math.Ln2 {
		t.Errorf("ln2Hi %x, ln2Lo %g: want 20 clear low bits and a sum of math.Ln2", math.Float64bits(ln2Hi), ln2Lo)
	}
}
