package core_test

import (
	"errors"
	"math"
	"testing"

	"clearkit/core"
)

// cardano returns the real root of x^3 + p x + q = 0 when
// (q/2)^2 + (p/3)^3 > 0 (one real root), by Cardano's formula: an
// independent method for the cubic below.
func cardano(p, q float64) float64 {
	d := math.Sqrt(q*q/4 + p*p*p/27)
	return math.Cbrt(-q/2+d) + math.Cbrt(-q/2-d)
}

// rootCases are functions with a known root in [lo, hi]. maxEval is a
// ceiling on the evaluations Brent's method may take: bisection needs
// log2((hi - lo)/tol) evaluations, and the superlinear steps of Brent's
// method must land well below that on smooth functions.
var rootCases = []struct {
	name    string
	f       func(float64) float64
	lo, hi  float64
	want    float64
	source  string
	maxEval int
}{
	{"x^2 - 2", func(x float64) float64 { return x*x - 2 }, 0, 2, math.Sqrt2, "math.Sqrt2, Go standard library", 12},
	{"e^x - 2", func(x float64) float64 { return math.Exp(x) - 2 }, -1, 3, math.Ln2, "math.Ln2, Go standard library", 14},
	{"cos x - x", func(x float64) float64 { return math.Cos(x) - x }, 0, 1, 0.7390851332151607, "the fixed point of cos (Dottie number, OEIS A003957; from memory)", 12},
	// Wallis's cubic, the classic test equation of root finding.
	{"x^3 - 2x - 5", func(x float64) float64 { return x*x*x - 2*x - 5 }, 2, 3, cardano(-2, -5), "computed here by Cardano's formula", 12},
	// A root far from the middle of a wide interval.
	{"x - 1e-3", func(x float64) float64 { return x - 1e-3 }, 0, 1e3, 1e-3, "by construction", 10},
	// Flat at the root (triple root): interpolation is poor, so Brent's
	// method must fall back on bisection and still converge.
	{"(x - 1)^3", func(x float64) float64 { return (x - 1) * (x - 1) * (x - 1) }, 0, 3, 1, "by construction", 200},
	// A jump, not a root: the bracket closes on the discontinuity.
	{"sign(x - 1/3)", func(x float64) float64 {
		if x < 1.0/3 {
			return -1
		}
		return 1
	}, 0, 1, 1.0 / 3, "by construction", 60},
}

func TestFindRootKnownRoots(t *testing.T) {
	for _, c := range rootCases {
		for _, tol := range []float64{1e-6, 1e-12, 1e-15} {
			r, err := core.FindRoot(c.f, c.lo, c.hi, tol, 500)
			if err != nil {
				t.Errorf("FindRoot(%s, %g, %g, %g) error: %v", c.name, c.lo, c.hi, tol, err)
				continue
			}
			// The final bracket is at most 2 (tol/2 + 2 ulp(X)) wide each
			// side, and holds the root (for the triple root, the flat
			// region around it where f rounds to 0 or changes sign).
			slack := tol + 8*0x1p-52*math.Abs(r.X)
			if math.Abs(r.X-c.want) > slack {
				t.Errorf("FindRoot(%s, %g, %g, %g) = %.17g, want %.17g within %.2g (%s)", c.name, c.lo, c.hi, tol, r.X, c.want, slack, c.source)
			}
			b := r.Bracket
			if b.Hi-b.Lo > slack || !(b.Lo <= r.X && r.X <= b.Hi) {
				t.Errorf("FindRoot(%s, %g, %g, %g) bracket [%.17g, %.17g] around %.17g, want at most %.2g wide around X", c.name, c.lo, c.hi, tol, b.Lo, b.Hi, r.X, slack)
			}
			if b.FLo != c.f(b.Lo) || b.FHi != c.f(b.Hi) || (b.FLo*b.FHi > 0) {
				t.Errorf("FindRoot(%s, %g, %g, %g) bracket %+v: want f at its ends, of opposite signs", c.name, c.lo, c.hi, tol, b)
			}
			if math.Abs(r.FX) > math.Min(math.Abs(b.FLo), math.Abs(b.FHi)) {
				t.Errorf("FindRoot(%s, %g, %g, %g): |f(X)| = %g, want the smaller of the bracket's ends", c.name, c.lo, c.hi, tol, r.FX)
			}
			if r.Evaluations > c.maxEval {
				t.Errorf("FindRoot(%s, %g, %g, %g) took %d evaluations, want at most %d", c.name, c.lo, c.hi, tol, r.Evaluations, c.maxEval)
			}
		}
	}
}

// Random monotone functions a (x - r) |x - r|^(k-1) + ... with a seeded
// root r: the bracket returned always holds r (FindRoot never returns a
// point it has not bracketed).
func TestFindRootAlwaysBrackets(t *testing.T) {
	rnd := newRand()
	for range 2000 {
		root := rnd.Float64()*20 - 10
		k := 1 + rnd.Float64()*4
		scale := logUniform(rnd, 1e-6, 1e6)
		f := func(x float64) float64 {
			d := x - root
			return scale * math.Copysign(math.Pow(math.Abs(d), k), d)
		}
		lo, hi := root-logUniform(rnd, 1e-3, 1e3), root+logUniform(rnd, 1e-3, 1e3)
		const tol = 1e-10
		r, err := core.FindRoot(f, lo, hi, tol, 500)
		if err != nil {
			t.Fatalf("FindRoot(scale %g, power %g, root %g, [%g, %g]) error: %v", scale, k, root, lo, hi, err)
		}
		b := r.Bracket
		if b.FLo > 0 || b.FHi < 0 || !(b.Lo <= root && root <= b.Hi) && f(b.Lo) != 0 && f(b.Hi) != 0 {
			t.Errorf("FindRoot(power %g, root %.17g) bracket %+v does not hold the root", k, root, b)
		}
		if b.Hi-b.Lo > tol+8*0x1p-52*math.Abs(r.X) {
			t.Errorf("FindRoot(power %g, root %.17g) bracket %+v wider than the tolerance", k, root, b)
		}
	}
}

func TestFindRootAtAnEnd(t *testing.T) {
	f := func(x float64) float64 { return x - 2 }
	for _, c := range []struct{ lo, hi float64 }{{2, 5}, {-1, 2}} {
		r, err := core.FindRoot(f, c.lo, c.hi, 1e-12, 10)
		if err != nil || r.X != 2 || r.FX != 0 || r.Evaluations != 2 {
			t.Errorf("FindRoot(x - 2, %g, %g) = %+v, %v, want X = 2 exactly after 2 evaluations", c.lo, c.hi, r, err)
		}
	}
}

// rootFailure checks that err is a *RootError wrapping want.
func rootFailure(t *testing.T, call string, err, want error) *core.RootError {
	t.Helper()
	var re *core.RootError
	if !errors.As(err, &re) || !errors.Is(err, want) {
		t.Errorf("%s error = %v, want a *RootError wrapping %q", call, err, want)
		return nil
	}
	if err.Error() == "" {
		t.Errorf("%s error has no message", call)
	}
	return re
}

func TestFindRootNoBracket(t *testing.T) {
	for _, c := range []struct {
		name   string
		f      func(float64) float64
		lo, hi float64
	}{
		{"x^2 + 1", func(x float64) float64 { return x*x + 1 }, -1, 1}, // no root
		{"x^2 - 1", func(x float64) float64 { return x*x - 1 }, -2, 2}, // two roots, same sign at the ends
		{"x - 5", func(x float64) float64 { return x - 5 }, 0, 4},      // root outside
	} {
		_, err := core.FindRoot(c.f, c.lo, c.hi, 1e-12, 100)
		re := rootFailure(t, "FindRoot("+c.name+")", err, core.ErrNoBracket)
		if re != nil && (re.Bracket.Lo != c.lo || re.Bracket.Hi != c.hi || re.Bracket.FLo != c.f(c.lo) || re.Bracket.FHi != c.f(c.hi) || re.Evaluations != 2) {
			t.Errorf("FindRoot(%s) error carries %+v after %d evaluations, want the interval and f at its ends after 2", c.name, re.Bracket, re.Evaluations)
		}
	}
}

func TestFindRootNotConverged(t *testing.T) {
	f := func(x float64) float64 { return math.Cos(x) - x }
	const maxEval = 4
	_, err := core.FindRoot(f, 0, 1, 1e-15, maxEval)
	re := rootFailure(t, "FindRoot(cos x - x, maxEval 4)", err, core.ErrNotConverged)
	if re == nil {
		return
	}
	b := re.Bracket
	const dottie = 0.7390851332151607 // as in rootCases
	if re.Evaluations != maxEval || !(b.Lo < dottie && dottie < b.Hi) || b.FLo*b.FHi > 0 {
		t.Errorf("not converged: %+v after %d evaluations, want the last bracket around the root after %d", b, re.Evaluations, maxEval)
	}
}

func TestFindRootNotFinite(t *testing.T) {
	for _, c := range []struct {
		name   string
		f      func(float64) float64
		lo, hi float64
		at     float64 // where f is first not finite; NaN: anywhere inside
	}{
		{"sqrt(x) - 1", func(x float64) float64 { return math.Sqrt(x) - 1 }, -1, 4, -1},
		{"1/(x - 4) at hi", func(x float64) float64 { return 1 / (x - 4) }, 0, 4, 4},
		{"NaN near the root", func(x float64) float64 {
			if x > 0.9 && x < 1.1 {
				return math.NaN()
			}
			return x - 1
		}, 0, 3, math.NaN()},
	} {
		_, err := core.FindRoot(c.f, c.lo, c.hi, 1e-12, 100)
		re := rootFailure(t, "FindRoot("+c.name+")", err, core.ErrNotFinite)
		if re == nil {
			continue
		}
		if v := c.f(re.X); !math.IsNaN(v) && !math.IsInf(v, 0) || (!math.IsNaN(c.at) && re.X != c.at) {
			t.Errorf("FindRoot(%s) not finite at %g (f = %g), want a point where f is not finite (%g)", c.name, re.X, v, c.at)
		}
	}
}

func TestFindRootBadInterval(t *testing.T) {
	f := func(x float64) float64 { return x }
	nan, inf := math.NaN(), math.Inf(1)
	for _, c := range []struct {
		lo, hi, tol float64
		maxEval     int
	}{
		{1, 1, 1e-12, 10}, {2, 1, 1e-12, 10}, {nan, 1, 1e-12, 10}, {-1, nan, 1e-12, 10},
		{-inf, 1, 1e-12, 10}, {-1, inf, 1e-12, 10}, {-1, 1, 0, 10}, {-1, 1, -1, 10},
		{-1, 1, nan, 10}, {-1, 1, 1e-12, 1}, {-1, 1, 1e-12, 0},
	} {
		calls := 0
		_, err := core.FindRoot(func(x float64) float64 { calls++; return f(x) }, c.lo, c.hi, c.tol, c.maxEval)
		rootFailure(t, "FindRoot(x, bad interval)", err, core.ErrBadInterval)
		if calls != 0 {
			t.Errorf("FindRoot(x, %g, %g, %g, %d) evaluated f %d times, want 0", c.lo, c.hi, c.tol, c.maxEval, calls)
		}
	}
}
