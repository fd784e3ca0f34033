package core

import (
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"testing"
)

// Numbers in sentences are rounded as the page's tables round them,
// Number.prototype.toFixed (ECMA-262, 21.1.3.3: of two nearest, the
// larger n, on the magnitude). Expected texts: ECMA-262's rule worked by
// hand on exact binary values, and the examples MDN gives for toFixed
// (2.35 to "2.4", 2.55 to "2.5": 2.55 is stored below the tie; from
// memory); fmt would give 191.2, 0.2, 2 and -0.2 for the first four.
func TestSentenceRoundsAsThePage(t *testing.T) {
	for _, c := range []struct {
		format string
		x      float64
		want   string
	}{
		{"%.1f", 191.25, "191.3"}, // 765/4, an exact tie (co-current ceiling 300 x 510/800)
		{"%.1f", 0.25, "0.3"},
		{"%.0f", 2.5, "3"},
		{"%.1f", -0.25, "-0.3"},
		{"%+.1f", 0.25, "+0.3"},
		{"%+.1f", -2.25, "-2.3"},
		{"%+.1f", 0, "0.0"},     // format.js writes no + before 0
		{"%.2f", 2.675, "2.67"}, // stored below the tie: 2.67499999999999982236431605997495353221893310546875
		{"%.1f", 2.35, "2.4"},   // MDN; stored above the tie
		{"%.1f", 2.55, "2.5"},   // MDN; stored below the tie
		{"%.0f", 0.5, "1"},
		{"%.0f", 1.5, "2"},
		{"%.3f", 1.0625, "1.063"}, // 17/16: a tie at 3 decimals
		{"%g", 191.25, "191.25"},  // other verbs are fmt's
		{"%6.1f", 191.25, " 191.3"},
	} {
		if got := sentence(c.format, c.x); got != c.want {
			t.Errorf("sentence(%q, %v) = %q, want %q", c.format, c.x, got, c.want)
		}
	}
	if got := sentence("%s %d %.1f", "KoA", 3, 191.25); got != "KoA 3 191.3" {
		t.Errorf("sentence with other arguments = %q, want %q", got, "KoA 3 191.3")
	}
}

// Against exact rational arithmetic (math/big): over seeded random values,
// half of them exact ties (k + 1/2)/10^p or multiples of 2^-j, %.pf through
// sentence equals floor(|x| 10^p + 1/2) / 10^p with x's sign, the
// definition of toFixed's rounding.
func TestSentenceRoundingExact(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 8))
	for range 20000 {
		p := r.IntN(4)
		var x float64
		switch r.IntN(3) {
		case 0:
			x = (float64(r.IntN(200000)) + 0.5) / math.Pow(10, float64(p)) // a tie when exact
		case 1:
			x = float64(r.IntN(1<<20)) / float64(int(1)<<r.IntN(8))
		default:
			x = r.NormFloat64() * 300
		}
		if r.IntN(2) == 0 {
			x = -x
		}
		exact := new(big.Rat).SetFloat64(math.Abs(x))
		scale := new(big.Rat).SetInt(new(big.Int).Exp(big.NewInt(10), big.NewInt(int64(p)), nil))
		exact.Mul(exact, scale).Add(exact, big.NewRat(1, 2))
		n := new(big.Int).Quo(exact.Num(), exact.Denom()) // floor: both positive
		want := new(big.Rat).SetFrac(n, scale.Num()).FloatString(p)
		if x < 0 {
			want = "-" + want
		}
		if got := sentence(fmt.Sprintf("%%.%df", p), x); got != want {
			t.Fatalf("sentence(%%.%df, %.17g) = %q, want %q", p, x, got, want)
		}
	}
}

// upTenth rounds up to a tenth, with one decimal, and takes a value a
// rounding error above a tenth as that tenth. Reference: the decimal
// values themselves (worked by hand).
func TestUpTenth(t *testing.T) {
	for _, c := range []struct {
		x    float64
		want string
	}{
		{985.7142857142857, "985.8"}, {426.0, "426.0"}, {300, "300.0"}, {0.1 * 3, "0.3"},
		{600.0000000000001, "600.0"}, {600.00001, "600.1"}, {249.01, "249.1"}, {0, "0.0"},
	} {
		if got := upTenth(c.x); got != c.want {
			t.Errorf("upTenth(%v) = %q, want %q", c.x, got, c.want)
		}
	}
}
