package core

import (
	"errors"
	"fmt"
	"math"
)

// Errors of FindRoot, wrapped in a *RootError that carries the interval.
var (
	// ErrNoBracket: f has the same sign at both ends of the interval, so
	// the interval is not known to hold a root.
	ErrNoBracket = errors.New("no sign change between the ends of the interval")
	// ErrNotConverged: the evaluation limit was reached before the bracket
	// shrank to the tolerance.
	ErrNotConverged = errors.New("did not converge within the evaluation limit")
	// ErrNotFinite: f returned NaN or an infinity.
	ErrNotFinite = errors.New("the function is not finite")
	// ErrBadInterval: the interval or the tolerance cannot be used (lo not
	// below hi, a bound not finite, tol not positive, no evaluations).
	ErrBadInterval = errors.New("the interval or the tolerance cannot be used")
)

// RootError is a failure of FindRoot. Err is one of ErrNoBracket,
// ErrNotConverged, ErrNotFinite or ErrBadInterval; Bracket is the last
// interval known (the starting one for ErrNoBracket), X the point at
// which f was not finite.
type RootError struct {
	Err         error
	Bracket     Bracket
	X           float64
	Evaluations int
}

func (e *RootError) Error() string {
	b := e.Bracket
	switch e.Err {
	case ErrNotFinite:
		return fmt.Sprintf("root: %v at x = %g", e.Err, e.X)
	case ErrBadInterval:
		return fmt.Sprintf("root: %v ([%g, %g])", e.Err, b.Lo, b.Hi)
	}
	return fmt.Sprintf("root: %v (f(%g) = %g, f(%g) = %g, %d evaluations)", e.Err, b.Lo, b.FLo, b.Hi, b.FHi, e.Evaluations)
}

func (e *RootError) Unwrap() error { return e.Err }

// Bracket is an interval [Lo, Hi] with the values of f at its ends.
type Bracket struct {
	Lo, Hi   float64
	FLo, FHi float64
}

// Root is a root found by FindRoot: X is the best estimate (the end of the
// final bracket where |f| is smaller), Bracket the final interval, which
// holds a sign change of f and is at most tol + 8 ulp(X) wide, or is the
// single point X when f(X) = 0 exactly.
type Root struct {
	X, FX       float64
	Bracket     Bracket
	Evaluations int
}

// FindRoot returns a root of f in [lo, hi] by Brent's method, to within
// tol in x. f must be finite on the interval and have opposite signs at
// lo and hi (or be 0 at one of them); f is evaluated at most maxEval
// times, the two ends included.
//
// Special cases are:
//
//	FindRoot(f, lo, hi, ...) with f(lo) = 0 or f(hi) = 0 returns that end
//	f(lo), f(hi) of the same sign: ErrNoBracket
//	f NaN or infinite at a point: ErrNotFinite
//	bracket still wider than the tolerance after maxEval: ErrNotConverged
//	lo >= hi, a bound not finite, tol <= 0 or maxEval < 2: ErrBadInterval
//
// The error is always a *RootError; FindRoot never panics and never
// returns a point it has not bracketed.
func FindRoot(f func(float64) float64, lo, hi, tol float64, maxEval int) (Root, error) {
	// Brent RP, Algorithms for Minimization without Derivatives,
	// Prentice-Hall 1973, chapter 4, procedure zero (from memory; the
	// netlib routine zeroin is a Fortran translation of it). Each step
	// takes inverse quadratic interpolation or the secant through the
	// last points when the step lands well inside the bracket and shrinks
	// fast enough, and bisects otherwise, so the bracket always shrinks
	// and the method never does much worse than bisection.
	if !(lo < hi) || math.IsInf(lo, 0) || math.IsInf(hi, 0) || !(tol > 0) || maxEval < 2 {
		return Root{}, &RootError{Err: ErrBadInterval, Bracket: Bracket{Lo: lo, Hi: hi}}
	}
	evals := 0
	eval := func(x float64) (float64, error) {
		evals++
		y := f(x)
		if math.IsNaN(y) || math.IsInf(y, 0) {
			return y, &RootError{Err: ErrNotFinite, X: x, Evaluations: evals}
		}
		return y, nil
	}
	a, b := lo, hi
	fa, err := eval(a)
	if err != nil {
		return Root{}, err
	}
	fb, err := eval(b)
	if err != nil {
		return Root{}, err
	}
	switch {
	case fa == 0:
		return Root{X: a, FX: fa, Bracket: Bracket{a, a, fa, fa}, Evaluations: evals}, nil
	case fb == 0:
		return Root{X: b, FX: fb, Bracket: Bracket{b, b, fb, fb}, Evaluations: evals}, nil
	case sameSign(fa, fb):
		return Root{}, &RootError{Err: ErrNoBracket, Bracket: Bracket{a, b, fa, fb}, Evaluations: evals}
	}
	const macheps = 0x1p-52
	c, fc := a, fa
	d := b - a
	e := d
	for {
		// Keep the root between b and c, with b the better end.
		if sameSign(fb, fc) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol1 := 2*macheps*math.Abs(b) + tol/2
		m := (c - b) / 2
		if fb == 0 {
			return Root{X: b, FX: fb, Bracket: Bracket{b, b, fb, fb}, Evaluations: evals}, nil
		}
		if math.Abs(m) <= tol1 {
			br := Bracket{Lo: b, Hi: c, FLo: fb, FHi: fc}
			if c < b {
				br = Bracket{Lo: c, Hi: b, FLo: fc, FHi: fb}
			}
			return Root{X: b, FX: fb, Bracket: br, Evaluations: evals}, nil
		}
		if evals >= maxEval {
			br := Bracket{Lo: b, Hi: c, FLo: fb, FHi: fc}
			if c < b {
				br = Bracket{Lo: c, Hi: b, FLo: fc, FHi: fb}
			}
			return Root{}, &RootError{Err: ErrNotConverged, Bracket: br, Evaluations: evals}
		}
		if math.Abs(e) >= tol1 && math.Abs(fa) > math.Abs(fb) {
			// Interpolate: p/q is the proposed step from b.
			var p, q float64
			s := fb / fa
			if a == c {
				p = 2 * m * s // secant
				q = 1 - s
			} else {
				q = fa / fc // inverse quadratic interpolation
				r := fb / fc
				p = s * (2*m*q*(q-r) - (b-a)*(r-1))
				q = (q - 1) * (r - 1) * (s - 1)
			}
			if p > 0 {
				q = -q
			} else {
				p = -p
			}
			if 2*p < 3*m*q-math.Abs(tol1*q) && p < math.Abs(e*q/2) {
				e = d
				d = p / q
			} else {
				d, e = m, m // the interpolation is not trusted: bisect
			}
		} else {
			d, e = m, m
		}
		a, fa = b, fb
		if math.Abs(d) > tol1 {
			b += d
		} else {
			b += math.Copysign(tol1, m)
		}
		if fb, err = eval(b); err != nil {
			return Root{}, err
		}
	}
}

// sameSign reports whether x and y are both positive or both negative.
func sameSign(x, y float64) bool {
	return (x > 0 && y > 0) || (x < 0 && y < 0)
}
