package core_test

import (
	"math"
	"testing"

	"clearkit/core"
)

// This file checks Evaluate against an independent numerical solution of
// the local balance on a membrane element (Michaels, Trans ASAIO 1966;
// equations from memory, as written in REFERENCES):
//
//	dW = K0 (CB - CD) dA = -QB dCB = ±QD dCD
//
// With s = A/Atotal in [0, 1] from the blood inlet, K0 A = KoA, and
// Delta = CB - CD:
//
//	dCB/ds = -(KoA/QB) Delta
//	dCD/ds = +(KoA/QD) Delta  co-current (dialysate enters at s = 0)
//	dCD/ds = -(KoA/QD) Delta  counter-current (dialysate enters at s = 1)
//	dW/ds  =   KoA     Delta
//
// computed here by classical fourth-order Runge-Kutta. W is integrated as
// its own state, so clearance needs no difference of concentrations.

// balance is the state integrated along the membrane.
type balance struct{ cb, cd, w float64 }

func (y balance) plus(k balance, h float64) balance {
	return balance{y.cb + h*k.cb, y.cd + h*k.cd, y.w + h*k.w}
}

// rk4 integrates dy/dsigma = f(y) from sigma = 0 to 1 in n steps.
func rk4(y balance, f func(balance) balance, n int) balance {
	return rk4Along(y, func(_ float64, y balance) balance { return f(y) }, n)
}

// rk4Along integrates dy/dsigma = f(sigma, y) from sigma = 0 to 1 in n
// steps (classical fourth-order Runge-Kutta).
func rk4Along(y balance, f func(float64, balance) balance, n int) balance {
	h := 1 / float64(n)
	for i := range n {
		s := float64(i) * h
		k1 := f(s, y)
		k2 := f(s+h/2, y.plus(k1, h/2))
		k3 := f(s+h/2, y.plus(k2, h/2))
		k4 := f(s+h, y.plus(k3, h))
		y = balance{
			y.cb + h/6*(k1.cb+2*k2.cb+2*k3.cb+k4.cb),
			y.cd + h/6*(k1.cd+2*k2.cd+2*k3.cd+k4.cd),
			y.w + h/6*(k1.w+2*k2.w+2*k3.w+k4.w),
		}
	}
	return y
}

// steps gives RK4 a step h with h * (KoA/QB + KoA/QD) <= 1/400. The
// global relative error of RK4 on this linear system is then about
// lambda (h lambda)^4 / 120, below 1e-11 on the grid used here.
func steps(op core.Operating) int {
	lambda := op.KoA/op.QB + op.KoA/op.QD
	return max(200, int(math.Ceil(400*lambda)))
}

// integrated holds the outlet concentrations and the transfer rate.
type integrated struct{ cbo, cdo, w float64 }

// integrate solves the balance for arrangement a at op.
//
// Co-current is an initial value problem from the blood inlet.
// Counter-current is a two-point boundary value problem (CB known at s = 0,
// CD at s = 1), solved by shooting on the unknown outlet concentration at
// one end and matching the known inlet at the other. The unknown is taken
// at the end from which Delta decays along the integration, so that errors
// are not amplified: d(Delta)/ds = -KoA (1/QB - 1/QD) Delta. For QB <= QD
// the integration runs from the blood inlet and shoots on CDo; for QB > QD
// it runs from the blood outlet (sigma = 1 - s) and shoots on CBo. The
// problem is linear, so the mismatch is affine in the guess and the secant
// method lands on the root in one step; a second step absorbs rounding.
func integrate(a core.Arrangement, op core.Operating) integrated {
	kb, kd, n := op.KoA/op.QB, op.KoA/op.QD, steps(op)
	if a == core.Cocurrent {
		f := func(y balance) balance {
			d := y.cb - y.cd
			return balance{-kb * d, kd * d, op.KoA * d}
		}
		y := rk4(balance{op.CBi, op.CDi, 0}, f, n)
		return integrated{y.cb, y.cd, y.w}
	}
	if op.QB <= op.QD {
		// From the blood inlet: CB(0) = CBi, CD(0) = CDo unknown, match
		// CD(1) = CDi.
		f := func(y balance) balance {
			d := y.cb - y.cd
			return balance{-kb * d, -kd * d, op.KoA * d}
		}
		run := func(cdo float64) balance { return rk4(balance{op.CBi, cdo, 0}, f, n) }
		miss := func(y balance) float64 { return y.cd - op.CDi }
		cdo, y := secant(op.CDi, op.CBi, run, miss)
		return integrated{y.cb, cdo, y.w}
	}
	// From the blood outlet: CB = CBo unknown, CD = CDi, match CB = CBi at
	// the blood inlet. Along sigma both concentrations rise.
	f := func(y balance) balance {
		d := y.cb - y.cd
		return balance{kb * d, kd * d, op.KoA * d}
	}
	run := func(cbo float64) balance { return rk4(balance{cbo, op.CDi, 0}, f, n) }
	miss := func(y balance) float64 { return y.cb - op.CBi }
	cbo, y := secant(op.CBi, op.CDi, run, miss)
	return integrated{cbo, y.cd, y.w}
}

// secant finds the guess g with miss(run(g)) = 0 from the starting guesses
// g0 and g1, returning g and run(g).
func secant(g0, g1 float64, run func(float64) balance, miss func(balance) float64) (float64, balance) {
	y0, y1 := run(g0), run(g1)
	f0, f1 := miss(y0), miss(y1)
	for range 3 {
		if f1 == 0 || f1 == f0 {
			break
		}
		g0, g1, f0 = g1, g1-f1*(g1-g0)/(f1-f0), f1
		y1 = run(g1)
		f1 = miss(y1)
	}
	return g1, y1
}

// logMean is the log-mean of the end differences b and c,
// (c - b)/ln(c/b), written b u/log1p(u) with u = (c - b)/b so that it has
// no 0/0 when b = c (then it is b).
func logMean(b, c float64) float64 {
	u := (c - b) / b
	if u == 0 {
		return b
	}
	return b * u / math.Log1p(u)
}

// integrationGrid covers QB = QD (300, 500), QB < QD and QB > QD, fresh
// and used dialysate (CDi > 0) and KoA from 0 to 3000 mL/min.
func integrationGrid() []core.Operating {
	var ops []core.Operating
	for _, qb := range []float64{50, 200, 300, 500} {
		for _, qd := range []float64{100, 300, 500, 800} {
			for _, koa := range []float64{0, 10, 200, 800, 1500, 3000} {
				for _, c := range [][2]float64{{1, 0}, {1, 0.2}, {40, 3}} {
					ops = append(ops, core.Operating{QB: qb, QD: qd, KoA: koa, CBi: c[0], CDi: c[1]})
				}
			}
		}
	}
	return ops
}

// Tolerances of the comparison with the RK4 solution (computed here by
// RK4 integration of the local balance, see above).
const (
	// integrationRel is the relative agreement asked for.
	integrationRel = 1e-9
	// concentrationFloor, times CBi, is the absolute rounding a
	// concentration carries: Evaluate forms CBo = CBi - W/QB and
	// CDo = CDi + W/QD, and RK4 accumulates about 1e4 steps of rounding of
	// size ulp(CBi). It matters only for outlets far below CBi (deep
	// extraction), where relative agreement is not meaningful.
	concentrationFloor = 1e-13
	// logMeanFloor: the log-mean is compared where both end differences
	// exceed this fraction of CBi - CDi, so that the rounding of the
	// integrated outlets (concentrationFloor CBi) moves the reference by
	// less than about 1e-10 relative.
	logMeanFloor = 1e-4
)

func TestEvaluateMatchesIntegration(t *testing.T) {
	logMeans := 0
	ops := integrationGrid()
	for _, op := range ops {
		for _, a := range core.Arrangements {
			got, err := core.Evaluate(a, op)
			if err != nil {
				t.Fatalf("Evaluate(%v, %+v) error: %v", a, op, err)
			}
			ref := integrate(a, op)
			call := func(what string, g, w, floor float64) {
				t.Helper()
				if math.Abs(g-w) > integrationRel*math.Abs(w)+floor {
					t.Errorf("Evaluate(%v, %+v).%s = %.17g, want %.17g (RK4; rel err %.2g)", a, op, what, g, w, relErr(g, w))
				}
			}
			call("Clearance", got.Clearance, ref.w/op.CBi, 0)
			call("Dialysance", got.Dialysance, ref.w/(op.CBi-op.CDi), 0)
			call("TransferRate", got.TransferRate, ref.w, 0)
			call("ExtractionRatio", got.ExtractionRatio, ref.w/op.CBi/op.QB, 0)
			call("BloodOutlet", got.BloodOutlet, ref.cbo, concentrationFloor*op.CBi)
			call("DialysateOutlet", got.DialysateOutlet, ref.cdo, concentrationFloor*op.CBi)

			// End differences from the integrated outlets: counter-current
			// CBi - CDo and CBo - CDi, co-current CBi - CDi and CBo - CDo.
			ends := [2]float64{op.CBi - ref.cdo, ref.cbo - op.CDi}
			if a == core.Cocurrent {
				ends = [2]float64{op.CBi - op.CDi, ref.cbo - ref.cdo}
			}
			if math.Min(ends[0], ends[1]) < logMeanFloor*(op.CBi-op.CDi) {
				continue
			}
			logMeans++
			lm := logMean(ends[1], ends[0])
			call("LogMeanDifference", got.LogMeanDifference, lm, 0)
			// The integrated solution itself obeys W = KoA x log-mean
			// (the log-mean form of the balance, REFERENCES).
			if op.KoA > 0 && !tolerance(ref.w/op.KoA, lm, integrationRel) {
				t.Errorf("RK4 at %v %+v: W/KoA = %.17g, log-mean of end differences %.17g", a, op, ref.w/op.KoA, lm)
			}
		}
	}
	// Make sure the log-mean check did not fall away on most of the grid.
	if want := len(ops); logMeans < want {
		t.Errorf("log-mean compared at %d points of %d, want at least %d", logMeans, 2*len(ops), want)
	}
}

// The integration itself must conserve mass: what leaves the blood enters
// the dialysate and equals the integrated transfer (checked on the RK4
// solution, so that the reference is not trusted blindly).
func TestIntegrationConservesMass(t *testing.T) {
	for _, op := range integrationGrid() {
		for _, a := range core.Arrangements {
			ref := integrate(a, op)
			blood, dialysate := op.QB*(op.CBi-ref.cbo), op.QD*(ref.cdo-op.CDi)
			floor := 1e-12 * op.CBi * math.Max(op.QB, op.QD)
			if math.Abs(blood-ref.w) > integrationRel*ref.w+floor || math.Abs(dialysate-ref.w) > integrationRel*ref.w+floor {
				t.Errorf("RK4 at %v %+v: blood side %.17g, dialysate side %.17g, W %.17g", a, op, blood, dialysate, ref.w)
			}
		}
	}
}
