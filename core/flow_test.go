package core_test

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"clearkit/core"
)

// Tolerance helpers, named by strictness. Each compares the relative error
// of got against want; want = 0 asks for got = 0 exactly.

// tolerance reports whether |got - want| <= rel |want|.
func tolerance(got, want, rel float64) bool {
	if got == want {
		return true
	}
	if math.IsNaN(got) || math.IsNaN(want) || math.IsInf(got, 0) || math.IsInf(want, 0) {
		return false
	}
	return math.Abs(got-want) <= rel*math.Abs(want)
}

// veryclose allows a few units in the last place (2^-52 is 2.2e-16).
func veryclose(got, want float64) bool { return tolerance(got, want, 4e-16) }

// close allows the rounding of a short chain of operations.
func close(got, want float64) bool { return tolerance(got, want, 1e-14) }

// relErr is |got - want|/|want|, for messages.
func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// effectivenessCase is one entry of an Effectiveness table. The flows are
// chosen so that NTU = KoA/min(QB, QD) and Cr = min/max take the values of
// the reference.
type effectivenessCase struct {
	a           core.Arrangement
	qb, qd, koa float64
	want        float64
	source      string
}

// Published check values (see each source line). NTU = 5, Cr = 0.7 is
// QB = 350, QD = 500 (or the other way round), KoA = 1750 mL/min.
var effectivenessTable = []effectivenessCase{
	// The heat-transfer library ht, effectiveness_from_NTU in ht/hx.py
	// (documented example values; the library cites Bergman/Incropera 6th
	// ed., Shah & Sekulic and Holman).
	{core.Countercurrent, 350, 500, 1750, 0.9206703686051108, "ht effectiveness_from_NTU, counterflow, NTU=5 Cr=0.7"},
	{core.Countercurrent, 500, 350, 1750, 0.9206703686051108, "ht effectiveness_from_NTU, counterflow, NTU=5 Cr=0.7 (QD the smaller flow)"},
	{core.Cocurrent, 350, 500, 1750, 0.5881156068417585, "ht effectiveness_from_NTU, parallel, NTU=5 Cr=0.7"},
	{core.Cocurrent, 500, 350, 1750, 0.5881156068417585, "ht effectiveness_from_NTU, parallel, NTU=5 Cr=0.7 (QD the smaller flow)"},
	// ht's tests invert Cr = 1, eps = 0.9 to NTU = 9 (NTU/(1+NTU) = 9/10).
	{core.Countercurrent, 400, 400, 3600, 0.9, "ht tests, counterflow, Cr=1 eps=0.9 <-> NTU=9"},
}

func TestEffectivenessPublished(t *testing.T) {
	for _, c := range effectivenessTable {
		got := core.Effectiveness(c.a, c.qb, c.qd, c.koa)
		// The reference evaluates the same closed form in another order;
		// agreement to the rounding of a few operations is expected.
		if !close(got, c.want) {
			t.Errorf("Effectiveness(%v, %g, %g, %g) = %.17g, want %.17g (%s; rel err %.2g)",
				c.a, c.qb, c.qd, c.koa, got, c.want, c.source, relErr(got, c.want))
		}
	}
}

// With one stream unchanged (Cr = 0) both arrangements give
// eps = 1 - e^-NTU (effectiveness-NTU relations, Incropera & DeWitt ch. 11,
// from memory; REFERENCES: NTU = 1 -> 0.63212). Cr = 0 itself is out of
// reach with finite flows, so QB = 1e-3 and QD = 1e5 mL/min (the largest
// accepted) give Cr = 1e-8. The slope of eps in Cr at Cr = 0 is
// e^-NTU (1 - e^-NTU - NTU) counter-current and NTU e^-NTU - (1 - e^-NTU)
// co-current (derived here); both are at most 1 - e^-NTU in size, so eps
// moves by at most Cr relative and the tolerance is 2e-8 relative.
func TestEffectivenessCrZero(t *testing.T) {
	const (
		qb     = 1e-3
		qd     = 1e5
		relTol = 2e-8
	)
	// 1 - e^-NTU at NTU = 1 to five digits, from REFERENCES (Cr = 0 limit).
	if got := core.Effectiveness(core.Countercurrent, qb, qd, 1*qb); math.Abs(got-0.63212) > 5e-6 {
		t.Errorf("Effectiveness(%v, %g, %g, %g) = %g, want 0.63212 (Cr = 0 limit, NTU = 1)", core.Countercurrent, qb, qd, qb, got)
	}
	for _, ntu := range []float64{1e-6, 0.1, 0.5, 1, 2, 5, 20} {
		// 1 - e^-NTU from the Go standard library (math.Expm1).
		want := -math.Expm1(-ntu)
		for _, a := range core.Arrangements {
			got := core.Effectiveness(a, qb, qd, ntu*qb)
			if !tolerance(got, want, relTol) {
				t.Errorf("Effectiveness(%v, %g, %g, %g) = %.17g, want %.17g (1 - e^-NTU, NTU = %g; rel err %.2g > %g)",
					a, qb, qd, ntu*qb, got, want, ntu, relErr(got, want), relTol)
			}
			// The same with the blood as the larger stream.
			got = core.Effectiveness(a, qd, qb, ntu*qb)
			if !tolerance(got, want, relTol) {
				t.Errorf("Effectiveness(%v, %g, %g, %g) = %.17g, want %.17g (1 - e^-NTU, NTU = %g; rel err %.2g > %g)",
					a, qd, qb, ntu*qb, got, want, ntu, relErr(got, want), relTol)
			}
		}
	}
}

// At Cr = 1 the counter-current relation is eps = NTU/(1+NTU) and the
// co-current one (1 - e^-2NTU)/2 (effectiveness-NTU relations, Incropera &
// DeWitt ch. 11, from memory; REFERENCES gives both forms).
var equalFlowNTU = []float64{1e-9, 1e-3, 0.1, 0.5, 1, 2, 3, 9, 30, 1e3, 1e6}

func TestEffectivenessEqualFlows(t *testing.T) {
	const q = 300.0
	for _, ntu := range equalFlowNTU {
		koa := ntu * q
		want := ntu / (1 + ntu)
		if got := core.Effectiveness(core.Countercurrent, q, q, koa); !veryclose(got, want) {
			t.Errorf("Effectiveness(%v, %g, %g, %g) = %.17g, want %.17g (NTU/(1+NTU))", core.Countercurrent, q, q, koa, got, want)
		}
		want = -math.Expm1(-2*ntu) / 2
		if got := core.Effectiveness(core.Cocurrent, q, q, koa); !veryclose(got, want) {
			t.Errorf("Effectiveness(%v, %g, %g, %g) = %.17g, want %.17g ((1 - e^-2NTU)/2)", core.Cocurrent, q, q, koa, got, want)
		}
	}
}

// Flows equal to 1e-12 relative must give the Cr = 1 value to about 1e-12:
// the slope of counter-current eps in Cr at Cr = 1 is
// -NTU^2/(2 (1+NTU)^2), below 1/2 in size (derived here from the phi form
// by expanding phi(x) = 1 - x/2 + ...). A formula with 0/0 at Cr = 1 would
// jump here by far more.
func TestEffectivenessNearEqualFlows(t *testing.T) {
	const q = 300.0
	for _, ntu := range equalFlowNTU {
		want := ntu / (1 + ntu) // NTU/(1+NTU), the Cr = 1 relation
		for _, other := range []float64{q * (1 + 1e-12), q * (1 - 1e-12), math.Nextafter(q, 0), math.Nextafter(q, 1e9)} {
			koa := ntu * math.Min(q, other)
			for _, flows := range [][2]float64{{q, other}, {other, q}} {
				got := core.Effectiveness(core.Countercurrent, flows[0], flows[1], koa)
				if !tolerance(got, want, 1e-12) {
					t.Errorf("Effectiveness(%v, %.17g, %.17g, %.17g) = %.17g, want %.17g (Cr = 1 relation within 1e-12; rel err %.2g)",
						core.Countercurrent, flows[0], flows[1], koa, got, want, relErr(got, want))
				}
			}
		}
	}
}

// The slope of eps in Cr at Cr = 1, checked by a difference quotient with
// Cr = 1 - 1e-6: d eps/d(1-Cr) = NTU^2/(2 (1+NTU)^2) (derived here, see
// above). The quotient carries an O(1e-6) truncation error and the rounding
// of eps (1e-16) divided by 1e-6, so the tolerance is 1e-5 relative.
func TestEffectivenessSlopeAtEqualFlows(t *testing.T) {
	const (
		qb = 300.0
		h  = 1e-6
	)
	qd := qb / (1 - h)
	c := (qd - qb) / qd // 1 - Cr as the flows give it
	for _, ntu := range []float64{0.5, 1, 2, 5, 10} {
		koa := ntu * qb
		at1 := core.Effectiveness(core.Countercurrent, qb, qb, koa)
		slope := (core.Effectiveness(core.Countercurrent, qb, qd, koa) - at1) / c
		want := ntu * ntu / (2 * (1 + ntu) * (1 + ntu))
		if !tolerance(slope, want, 1e-5) {
			t.Errorf("(Effectiveness(%v, %g, %.17g, %g) - Effectiveness(%v, %g, %g, %g))/%.3g = %.10g, want %.10g (NTU^2/(2(1+NTU)^2))",
				core.Countercurrent, qb, qd, koa, core.Countercurrent, qb, qb, koa, c, slope, want)
		}
	}
}

// The textbook forms of both relations (REFERENCES; Incropera & DeWitt
// ch. 11, from memory), evaluated directly away from Cr = 1 where they have
// no cancellation, across Cr and NTU.
func TestEffectivenessTextbookForm(t *testing.T) {
	const qd = 500.0
	for _, cr := range []float64{1e-3, 0.1, 0.3, 0.6, 0.9, 0.99} {
		qb := cr * qd
		for _, ntu := range []float64{0.01, 0.3, 1, 2.5, 5, 12} {
			koa := ntu * qb
			crFlows := qb / qd
			x := ntu * (1 - crFlows)
			e := math.Exp(-x)
			want := (1 - e) / (1 - crFlows*e)
			// 1 - e loses digits when x is small; 1e-12 covers x >= 1e-5.
			if got := core.Effectiveness(core.Countercurrent, qb, qd, koa); !tolerance(got, want, 1e-12) {
				t.Errorf("Effectiveness(%v, %g, %g, %g) = %.17g, want %.17g (textbook counter-current form)", core.Countercurrent, qb, qd, koa, got, want)
			}
			want = (1 - math.Exp(-ntu*(1+crFlows))) / (1 + crFlows)
			if got := core.Effectiveness(core.Cocurrent, qb, qd, koa); !tolerance(got, want, 1e-12) {
				t.Errorf("Effectiveness(%v, %g, %g, %g) = %.17g, want %.17g (textbook co-current form)", core.Cocurrent, qb, qd, koa, got, want)
			}
		}
	}
}

// Round trip through the inverse relations of REFERENCES (KoA from a
// clearance; Incropera & DeWitt ch. 11, from memory), written here:
// counter-current NTU = (log1p(y)/y) eps/(1-eps) with y = eps(1-Cr)/(1-eps),
// co-current NTU = -log1p(-eps(1+Cr))/(1+Cr). The inverse amplifies the
// rounding of eps by about 1/((1-eps) |log(1-eps)|), so NTU stays at or
// below 5 and the tolerance is 1e-12 relative.
func TestEffectivenessRoundTrip(t *testing.T) {
	const qd = 800.0
	for _, qb := range []float64{100, 250, 400, 799.9, 800} {
		cr := qb / qd
		for _, ntu := range []float64{1e-4, 0.05, 0.4, 1, 2, 3.5, 5} {
			koa := ntu * qb
			eps := core.Effectiveness(core.Countercurrent, qb, qd, koa)
			y := eps * (1 - cr) / (1 - eps)
			back := eps / (1 - eps)
			if y != 0 {
				back *= math.Log1p(y) / y
			}
			if !tolerance(back, ntu, 1e-12) {
				t.Errorf("inverse of Effectiveness(%v, %g, %g, %g) = %.17g gives NTU %.17g, want %g", core.Countercurrent, qb, qd, koa, eps, back, ntu)
			}
			eps = core.Effectiveness(core.Cocurrent, qb, qd, koa)
			back = -math.Log1p(-eps*(1+cr)) / (1 + cr)
			if !tolerance(back, ntu, 1e-12) {
				t.Errorf("inverse of Effectiveness(%v, %g, %g, %g) = %.17g gives NTU %.17g, want %g", core.Cocurrent, qb, qd, koa, eps, back, ntu)
			}
		}
	}
}

// flowGrid is a log-spaced grid of flows from 1e-3 to 1e4 mL/min, four
// points a decade, and koaGrid a grid of KoA from 0 to 1e7 mL/min.
var flowGrid, koaGrid = func() (flows, koas []float64) {
	for e := -3.0; e <= 4; e += 0.25 {
		flows = append(flows, math.Pow(10, e))
	}
	koas = []float64{0}
	for e := -3.0; e <= 7; e += 0.5 {
		koas = append(koas, math.Pow(10, e))
	}
	return flows, koas
}()

// KoA = 0: no membrane, no transfer (special case of Effectiveness).
func TestEffectivenessZeroKoA(t *testing.T) {
	for _, a := range core.Arrangements {
		for _, qb := range flowGrid {
			for _, qd := range flowGrid {
				if got := core.Effectiveness(a, qb, qd, 0); got != 0 || math.Signbit(got) {
					t.Errorf("Effectiveness(%v, %g, %g, %g) = %g, want +0", a, qb, qd, 0.0, got)
				}
			}
		}
	}
}

// The ceilings, worked by hand: counter-current min(QB, QD), co-current
// QB QD/(QB+QD) (REFERENCES; the KoA -> infinity limits of the
// effectiveness-NTU relations).
var ceilingTable = []struct {
	qb, qd         float64
	counter, cocur float64
}{
	{300, 500, 300, 187.5},                       // 150000/800
	{500, 300, 300, 187.5},                       // symmetric
	{400, 400, 400, 200},                         // q/2 at equal flows
	{200, 800, 200, 160},                         // 160000/1000
	{250, 1000, 250, 200},                        // 250000/1250
	{1e-3, 1e4, 1e-3, 1e-3 * 1e4 / (1e4 + 1e-3)}, // by the formula
	{1e5, 1e5, 1e5, 5e4},                         // the largest accepted flows
}

func TestCeiling(t *testing.T) {
	for _, c := range ceilingTable {
		if got := core.Ceiling(core.Countercurrent, c.qb, c.qd); got != c.counter {
			t.Errorf("Ceiling(%v, %g, %g) = %.17g, want %.17g", core.Countercurrent, c.qb, c.qd, got, c.counter)
		}
		if got := core.Ceiling(core.Cocurrent, c.qb, c.qd); !veryclose(got, c.cocur) {
			t.Errorf("Ceiling(%v, %g, %g) = %.17g, want %.17g", core.Cocurrent, c.qb, c.qd, got, c.cocur)
		}
	}
}

// KoA = 1e7 mL/min is NTU >= 1e3 on the grid below: counter-current eps is
// 1 - O(e^-(NTU(1-Cr))) or 1 - 1/(1+NTU) at Cr = 1, co-current eps is
// 1/(1+Cr) - O(e^-NTU). The special cases at KoA = +Inf are exact.
func TestEffectivenessLargeKoA(t *testing.T) {
	for _, c := range ceilingTable[:5] {
		for _, a := range core.Arrangements {
			ceiling := core.Ceiling(a, c.qb, c.qd)
			got := core.Dialysance(a, c.qb, c.qd, 1e7)
			// At equal flows counter-current stays 1/(1+NTU) = 4e-5 below.
			rel := 1e-15
			if a == core.Countercurrent && c.qb == c.qd {
				ntu := 1e7 / c.qb
				rel = 1.0001 / (1 + ntu)
			}
			if !tolerance(got, ceiling, rel) || got > ceiling {
				t.Errorf("Dialysance(%v, %g, %g, %g) = %.17g, want at most %.17g and within %.2g of it", a, c.qb, c.qd, 1e7, got, ceiling, rel)
			}
			if got := core.Dialysance(a, c.qb, c.qd, math.Inf(1)); got != ceiling {
				t.Errorf("Dialysance(%v, %g, %g, %g) = %.17g, want %.17g", a, c.qb, c.qd, math.Inf(1), got, ceiling)
			}
		}
		if got, want := core.Effectiveness(core.Countercurrent, c.qb, c.qd, math.Inf(1)), 1.0; got != want {
			t.Errorf("Effectiveness(%v, %g, %g, %g) = %g, want %g", core.Countercurrent, c.qb, c.qd, math.Inf(1), got, want)
		}
		cr := math.Min(c.qb, c.qd) / math.Max(c.qb, c.qd)
		if got, want := core.Effectiveness(core.Cocurrent, c.qb, c.qd, math.Inf(1)), 1/(1+cr); got != want {
			t.Errorf("Effectiveness(%v, %g, %g, %g) = %g, want %g", core.Cocurrent, c.qb, c.qd, math.Inf(1), got, want)
		}
	}
}

// Every flow pair from 1e-3 to 1e4 mL/min and every KoA from 0 to 1e7:
// eps finite and in [0, 1], co-current at most 1/(1+Cr) (definition of
// effectiveness as a fraction of the largest transfer; common practice,
// no source).
func TestEffectivenessRange(t *testing.T) {
	for _, qb := range flowGrid {
		for _, qd := range flowGrid {
			cr := math.Min(qb, qd) / math.Max(qb, qd)
			for _, koa := range koaGrid {
				for _, a := range core.Arrangements {
					got := core.Effectiveness(a, qb, qd, koa)
					upper := 1.0
					if a == core.Cocurrent {
						upper = 1 / (1 + cr)
					}
					if math.IsNaN(got) || got < 0 || got > upper {
						t.Errorf("Effectiveness(%v, %g, %g, %g) = %g, want in [0, %g]", a, qb, qd, koa, got, upper)
					}
				}
			}
		}
	}
}

// Dialysance depends on the flows only through min and max (the
// effectiveness-NTU relations are symmetric in the two streams): swapping
// QB and QD must give the identical number.
func TestDialysanceSymmetric(t *testing.T) {
	for _, qb := range flowGrid {
		for _, qd := range flowGrid {
			for _, koa := range koaGrid {
				for _, a := range core.Arrangements {
					d1, d2 := core.Dialysance(a, qb, qd, koa), core.Dialysance(a, qd, qb, koa)
					if d1 != d2 {
						t.Errorf("Dialysance(%v, %g, %g, %g) = %.17g, want Dialysance(%v, %g, %g, %g) = %.17g", a, qb, qd, koa, d1, a, qd, qb, koa, d2)
					}
				}
			}
		}
	}
}

func TestArrangementNames(t *testing.T) {
	for _, a := range core.Arrangements {
		got, err := core.ParseArrangement("arrangement", a.String())
		if err != nil || got != a {
			t.Errorf("ParseArrangement(%q, %q) = %v, %v, want %v, nil", "arrangement", a.String(), got, err, a)
		}
	}
	for _, s := range []string{"", "Countercurrent", "counter-current", "parallel"} {
		_, err := core.ParseArrangement("arrangement", s)
		var fe *core.FieldError
		if !errors.As(err, &fe) || fe.Field != "arrangement" {
			t.Errorf("ParseArrangement(%q, %q) error = %v, want a *FieldError for %q", "arrangement", s, err, "arrangement")
		}
	}
}

func ExampleEffectiveness() {
	// NTU = 1750/350 = 5 and Cr = 350/500 = 0.7.
	for _, a := range core.Arrangements {
		fmt.Printf("%s %.4f\n", a, core.Effectiveness(a, 350, 500, 1750))
	}
	// Output:
	// countercurrent 0.9207
	// cocurrent 0.5881
}
