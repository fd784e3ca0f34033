package core_test

import (
	"math"
	"testing"

	"clearkit/core"
)

// routineSamples are the samples of a KoA 800 filter at QB 300, QD 500,
// counter-current, CBi 100 (built with core.Evaluate).
func routineSamples(t testing.TB) core.Measurement {
	return measured(t, core.Countercurrent, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 100})
}

func TestUncertaintyOff(t *testing.T) {
	if r := check(t, routineSamples(t), core.CheckOptions{}); r.Uncertainty != nil {
		t.Errorf("Check without uncertainties: Uncertainty = %+v, want null", *r.Uncertainty)
	}
}

// A seed gives the same draws every time; another seed different draws
// whose interval agrees to the sampling error (about 1 % of the width).
func TestUncertaintySeed(t *testing.T) {
	m := routineSamples(t)
	o := core.CheckOptions{ConcentrationUncertainty: 0.02, FlowUncertainty: 0.03, Seed: 7}
	a, b := check(t, m, o), check(t, m, o)
	if *a.Uncertainty.KoACountercurrent.Low != *b.Uncertainty.KoACountercurrent.Low || *a.Uncertainty.Clearance.High != *b.Uncertainty.Clearance.High {
		t.Errorf("two runs with seed 7 differ: %+v and %+v", a.Uncertainty, b.Uncertainty)
	}
	o.Seed = 8
	c := check(t, m, o)
	la, lc := *a.Uncertainty.KoACountercurrent.Low, *c.Uncertainty.KoACountercurrent.Low
	width := *a.Uncertainty.KoACountercurrent.High - la
	if la == lc || math.Abs(la-lc) > 0.05*width {
		t.Errorf("KoA low end %.17g with seed 7, %.17g with seed 8: want different, within 5 %% of the width %g", la, lc, width)
	}
	if a.Uncertainty.Samples != core.UncertaintySamples || a.Uncertainty.Seed != 7 || a.Uncertainty.Coverage != 0.95 ||
		a.Uncertainty.ConcentrationPercent != 2 || a.Uncertainty.FlowPercent != 3 {
		t.Errorf("uncertainty settings %+v, want samples %d, seed 7, coverage 0.95, 2 %% and 3 %%", *a.Uncertainty, core.UncertaintySamples)
	}
}

// With only the flows uncertain, QF = 0 and CDi = 0, the clearance
// QB (CBi - CBo)/CBi is proportional to QB, which is drawn uniformly within
// ±a: the clearance is uniform on K (1 ± a), its p-quantile is
// K (1 + a (2p - 1)) and its standard uncertainty K a/sqrt(3) (properties of
// the uniform distribution). The Monte Carlo quantile of n draws has a
// sampling standard deviation sqrt(p (1 - p)/n) / density = sqrt(p (1 -
// p)/n) 2 a K (asymptotic distribution of a sample quantile); four of them
// are allowed. The linearised interval is exact for a linear function.
func TestUncertaintyUniformClearance(t *testing.T) {
	m := routineSamples(t)
	const a = 0.04
	r := check(t, m, core.CheckOptions{FlowUncertainty: a, Seed: 11})
	u := r.Uncertainty.Clearance
	k := r.Clearance
	n := float64(core.UncertaintySamples)
	for _, q := range []struct {
		name string
		p    float64
		got  *float64
	}{{"low", 0.025, u.Low}, {"high", 0.975, u.High}} {
		want := k * (1 + a*(2*q.p-1))
		sd := math.Sqrt(q.p*(1-q.p)/n) * 2 * a * k
		if math.Abs(*q.got-want) > 4*sd {
			t.Errorf("clearance %s = %.10g, want %.10g ± %.3g (uniform quantile)", q.name, *q.got, want, 4*sd)
		}
	}
	half := 2 * k * a / math.Sqrt(3)
	if !tolerance(*u.LinearLow, k-half, 1e-9) || !tolerance(*u.LinearHigh, k+half, 1e-9) {
		t.Errorf("linear clearance interval [%.12g, %.12g], want [%.12g, %.12g]", *u.LinearLow, *u.LinearHigh, k-half, k+half)
	}
	if u.UnboundedFraction != 0 {
		t.Errorf("clearance unbounded fraction %g, want 0", u.UnboundedFraction)
	}
}

// For small uncertainties, where KoA is nearly linear in the readings, the
// Monte Carlo and linearised intervals must agree. For a sum of independent
// uniform terms the 97.5 % point lies between 1.645 sigma (one term
// dominates) and 1.96 sigma (many terms: the normal distribution), so the
// Monte Carlo half-width over the linear one, 2 sigma, lies between 0.82
// and 0.98 (quantiles of the uniform and normal distributions); 0.04 is
// added each side for sampling error and curvature.
func TestUncertaintyMonteCarloMatchesLinear(t *testing.T) {
	for _, c := range []struct {
		a    core.Arrangement
		op   core.Operating
		u, q float64
	}{
		{core.Countercurrent, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 100}, 0.005, 0.005},
		{core.Countercurrent, core.Operating{QB: 250, QD: 700, KoA: 600, CBi: 40}, 0.01, 0},
		{core.Countercurrent, core.Operating{QB: 400, QD: 500, KoA: 1000, CBi: 100}, 0, 0.01},
		{core.Cocurrent, core.Operating{QB: 300, QD: 500, KoA: 300, CBi: 100}, 0.005, 0.005},
		// With ultrafiltration, where each draw inverts the
		// ultrafiltration model (drawHint, drawRules).
		{core.Countercurrent, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 100, Filtration: core.Filtration{QF: 10, Sieving: 1}}, 0.005, 0.005},
		{core.Countercurrent, core.Operating{QB: 250, QD: 800, KoA: 700, CBi: 80, CDi: 2, Filtration: core.Filtration{QF: 30, Sieving: 0.8}}, 0.01, 0.005},
		{core.Cocurrent, core.Operating{QB: 300, QD: 500, KoA: 300, CBi: 100, Filtration: core.Filtration{QF: 20, Sieving: 1}}, 0.005, 0.005},
	} {
		m := measured(t, c.a, c.op)
		r := check(t, m, core.CheckOptions{ConcentrationUncertainty: c.u, FlowUncertainty: c.q, Seed: 3})
		iv := r.Uncertainty.KoACountercurrent
		koa := *r.KoACountercurrent
		if c.a == core.Cocurrent {
			iv, koa = r.Uncertainty.KoACocurrent, *r.KoACocurrent
		}
		mc := (*iv.High - *iv.Low) / 2
		lin := (*iv.LinearHigh - *iv.LinearLow) / 2
		if ratio := mc / lin; ratio < 0.78 || ratio > 1.02 {
			t.Errorf("%v %+v ±%g %% ±%g %%: Monte Carlo half-width %.4g, linear %.4g (ratio %.3f), want 0.78 to 1.02", c.a, c.op, 100*c.u, 100*c.q, mc, lin, ratio)
		}
		if !(*iv.Low < koa && koa < *iv.High) || !close(*iv.LinearLow+lin, koa) {
			t.Errorf("%v %+v: KoA %g, Monte Carlo [%g, %g], linear centre %g; want the KoA inside and at the linear centre", c.a, c.op, koa, *iv.Low, *iv.High, *iv.LinearLow+lin)
		}
	}
}

// KoA's ill-conditioning as the clearance approaches QB: at QB 300,
// QD 800, flows ±2 % and concentrations ±(2 % + 0.5) in mg/dL (an
// analyser reporting whole mg/dL; invented figures), filters of rising
// KoA (built forward with core.Evaluate) give counter-current KoA
// intervals that widen relative to the KoA, until the upper end is lost
// and a note says so. The sensitivity rises with them. (Below KoA 600 the
// relative width falls instead: there the clearance itself is poorly
// measured, as the extraction is small.)
func TestUncertaintyIllConditioning(t *testing.T) {
	lastWidth, lastS := 0.0, 0.0
	unbounded := false
	for _, koa := range []float64{600, 1200, 1800, 2400, 3600, 4800} {
		m := measured(t, core.Countercurrent, core.Operating{QB: 300, QD: 800, KoA: koa, CBi: 100})
		r := check(t, m, core.CheckOptions{ConcentrationUncertainty: 0.02, ConcentrationFloor: 0.5, FlowUncertainty: 0.02, RatedKoA: koa})
		iv := r.Uncertainty.KoACountercurrent
		s := *r.Countercurrent.Sensitivity
		t.Logf("KoA %g: CBo %.3g, sensitivity %.3g, interval %v to %v, unbounded %.3f", koa, m.CBo, s, deref(iv.Low), deref(iv.High), iv.UnboundedFraction)
		if s <= lastS {
			t.Errorf("KoA %g: sensitivity %g, want above %g (the previous filter)", koa, s, lastS)
		}
		lastS = s
		if iv.High == nil {
			unbounded = true
			if iv.UnboundedFraction <= 0.025 || !hasFinding(r, "koa_unbounded", "note") {
				t.Errorf("KoA %g: no upper end with unbounded fraction %g, findings %+v; want above 0.025 and a koa_unbounded note", koa, iv.UnboundedFraction, r.Findings)
			}
			continue
		}
		if unbounded {
			t.Errorf("KoA %g: upper end %g returned after a smaller filter lost it", koa, *iv.High)
		}
		width := (*iv.High - *iv.Low) / koa
		if width <= lastWidth {
			t.Errorf("KoA %g: relative interval width %.4g, want above %.4g (the previous filter)", koa, width, lastWidth)
		}
		lastWidth = width
	}
	if !unbounded {
		t.Errorf("no filter up to KoA 4800 lost its upper end at QB 300: the ill-conditioning does not show")
	}
}

// Without a floor, a relative error of a small CBo barely moves the KoA:
// the same filters keep a bounded interval (see uncertainty.go), which is
// why the floor is there.
func TestUncertaintyRelativeOnly(t *testing.T) {
	m := measured(t, core.Countercurrent, core.Operating{QB: 300, QD: 800, KoA: 4800, CBi: 100})
	r := check(t, m, core.CheckOptions{ConcentrationUncertainty: 0.02, FlowUncertainty: 0.02})
	if iv := r.Uncertainty.KoACountercurrent; iv.High == nil || iv.UnboundedFraction != 0 {
		t.Errorf("KoA 4800, ±2 %% readings only: interval %v to %v, unbounded %g; want bounded", deref(iv.Low), deref(iv.High), iv.UnboundedFraction)
	}
}

func deref(p *float64) any {
	if p == nil {
		return "null"
	}
	return *p
}

// A balanced test with ±2 % readings: the mass balance interval spans 0
// and is about ±4 % wide (four readings of ±2 %, combined in quadrature
// and doubled, derived here: 2 x 2 % x sqrt(4/3) = 4.6 %, less the
// correlation through CBi).
func TestUncertaintyMassBalance(t *testing.T) {
	r := check(t, routineSamples(t), core.CheckOptions{ConcentrationUncertainty: 0.02})
	iv := r.Uncertainty.MassBalanceError
	if !(*iv.Low < 0 && 0 < *iv.High) || *iv.High > 0.06 || *iv.Low < -0.06 || *iv.High < 0.02 {
		t.Errorf("mass balance interval [%g, %g], want it to span 0 within ±2 %% to ±6 %%", *iv.Low, *iv.High)
	}
	// Co-current is out of reach at this clearance: its interval is null.
	co := r.Uncertainty.KoACocurrent
	if co.Low != nil || co.High != nil || co.LinearLow != nil || co.UnboundedFraction < 0.99 {
		t.Errorf("co-current KoA interval %+v, want null ends and nearly every draw unbounded", co)
	}
}
