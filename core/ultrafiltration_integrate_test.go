package core_test

import (
	"math"
	"testing"

	"clearkit/core"
)

// This file checks the ultrafiltration model (Transfer, EvaluateFiltered)
// against an independent numerical solution: classical fourth-order
// Runge-Kutta on the concentrations themselves, with shooting for the
// counter-current boundary problem, where core uses a mass-balance
// reduction to one unknown and Gauss-Legendre quadrature of its integrating
// factor.
//
// The local balances, with s in [0, 1] the fraction of membrane passed by
// the blood, QB(s) = QB - QF s, and the combined diffusion-convection flux
// per unit s (Villarroel, Klein and Holland 1977; Patlak et al. 1963; both
// from memory, as written in REFERENCES, with Jv A = QF and K0 A = KoA)
//
//	N = S QF (CB - CD e^-Pe)/(1 - e^-Pe),   Pe = S QF/KoA
//
// are
//
//	d(QB(s) CB)/ds = -N                               blood
//	d(QD(s) CD)/ds = +N, QD(s) = QD + QF s            co-current
//	d(QD(s) CD)/ds = -N, QD(s) = QD + QF (1 - s)      counter-current
//	dW/ds = N
//
// so that, with dQB/ds = -QF,
//
//	CB' = (QF CB - N)/QB(s)
//	CD' = (N - QF CD)/QD(s)    co-current
//	CD' = (QF CD - N)/QD(s)    counter-current

// ufCase is one operating point of the reference integration.
type ufCase struct {
	op core.Operating
	f  core.Filtration
}

// ufOutlets are what the reference integration gives.
type ufOutlets struct{ cbo, cdo, w float64 }

// ufSteps gives RK4 a step h with h (rates) <= 1/300, where the rates are
// the largest coefficients of the system: about lam/QB + lam/QD + QF/QB,
// lam <= KoA + S QF. The global relative error of RK4 is then about
// (h rate)^4 rate/120, below 1e-11 on the grid used here.
func ufSteps(c ufCase) int {
	lam := c.op.KoA + c.f.Sieving*c.f.QF
	qbMin := c.op.QB - c.f.QF
	rate := lam/qbMin + lam/c.op.QD + c.f.QF/qbMin
	return max(300, int(math.Ceil(300*rate)))
}

// ufIntegrate solves the balances for arrangement a. Co-current is an
// initial value problem from the blood inlet. Counter-current is a
// two-point boundary value problem (CB known at s = 0, CD at s = 1),
// solved by shooting on the unknown outlet at one end: the equations are
// linear, so the mismatch is affine in the guess and two runs fix it (a
// third run at the solution gives the outlets). The run starts at the end
// from which the blood-dialysate difference decays: from the blood inlet
// when QB(s) <= QD(s) (Delta = QD + QF - QB >= 0), otherwise from the
// blood outlet.
func ufIntegrate(a core.Arrangement, c ufCase) ufOutlets {
	op, qf, s := c.op, c.f.QF, c.f.Sieving
	n := ufSteps(c)
	// The flux N per unit s as written in REFERENCES, 1 - e^-Pe with
	// math.Expm1; Pe -> 0 (S QF = 0) is the pure diffusive KoA (CB - CD),
	// KoA = 0 the pure convective S QF CB.
	flux := func(cb, cd float64) float64 {
		sqf := s * qf
		switch {
		case sqf == 0:
			return op.KoA * (cb - cd)
		case op.KoA == 0:
			return sqf * cb
		}
		pe := sqf / op.KoA
		return sqf * (cb - cd*math.Exp(-pe)) / -math.Expm1(-pe)
	}
	qbAt := func(x float64) float64 { return op.QB - qf*x }
	if a == core.Cocurrent {
		f := func(x float64, y balance) balance {
			n := flux(y.cb, y.cd)
			return balance{(qf*y.cb - n) / qbAt(x), (n - qf*y.cd) / (op.QD + qf*x), n}
		}
		y := rk4Along(balance{op.CBi, op.CDi, 0}, f, n)
		return ufOutlets{y.cb, y.cd, y.w}
	}
	qdAt := func(x float64) float64 { return op.QD + qf*(1-x) }
	counter := func(x float64, y balance) balance {
		n := flux(y.cb, y.cd)
		return balance{(qf*y.cb - n) / qbAt(x), (qf*y.cd - n) / qdAt(x), n}
	}
	if op.QD+qf-op.QB >= 0 {
		// From the blood inlet: guess CDo, match CD(1) = CDi.
		run := func(g float64) balance { return rk4Along(balance{op.CBi, g, 0}, counter, n) }
		g := affineRoot(op.CDi, op.CBi, func(g float64) float64 { return run(g).cd - op.CDi })
		y := run(g)
		return ufOutlets{y.cb, g, y.w}
	}
	// From the blood outlet, sigma = 1 - s: guess CBo, match CB = CBi at
	// the blood inlet. W accumulates the same flux.
	back := func(x float64, y balance) balance {
		d := counter(1-x, y)
		return balance{-d.cb, -d.cd, d.w}
	}
	run := func(g float64) balance { return rk4Along(balance{g, op.CDi, 0}, back, n) }
	g := affineRoot(op.CDi, op.CBi, func(g float64) float64 { return run(g).cb - op.CBi })
	y := run(g)
	return ufOutlets{g, y.cd, y.w}
}

// affineRoot returns the root of an affine function miss from its values
// at g0 and g1 != g0.
func affineRoot(g0, g1 float64, miss func(float64) float64) float64 {
	if g0 == g1 {
		g1 = g0 + 1
	}
	f0, f1 := miss(g0), miss(g1)
	return g1 - f1*(g1-g0)/(f1-f0)
}

// ufGrid covers blood flows below and above the dialysate flow, KoA from 0
// to 1500 mL/min, QF from 1 to 40 % of QB, S of 1 (urea) and 0.6, fresh and
// used dialysate.
func ufGrid() []ufCase {
	var cases []ufCase
	for _, qb := range []float64{50, 200, 300, 500} {
		for _, qd := range []float64{100, 300, 500, 800} {
			for _, koa := range []float64{0, 10, 200, 800, 1500} {
				for _, ff := range []float64{0.01, 0.1, 0.4} {
					for _, s := range []float64{1, 0.6} {
						for _, conc := range [][2]float64{{1, 0}, {40, 3}} {
							cases = append(cases, ufCase{
								core.Operating{QB: qb, QD: qd, KoA: koa, CBi: conc[0], CDi: conc[1]},
								core.Filtration{QF: ff * qb, Sieving: s},
							})
						}
					}
				}
			}
		}
	}
	return cases
}

// Tolerance of the comparison with the RK4 solution: the measured worst
// relative difference on the grid is 5e-13, RK4's own error being about
// 1e-12 at the stiffest points.
const (
	ufIntegrationRel = 1e-11
	// ufConcentrationFloor, times CBi, is the absolute rounding the
	// outlets carry (as concentrationFloor in integrate_test.go).
	ufConcentrationFloor = 1e-12
)

// The model against RK4 on the grid; and the RK4 outlets, put through the
// in-vitro formula K = QB (CBi - CBo)/CBi + QF CBo/CBi (REFERENCES; from
// memory of ISO 8637-1) and the dialysate-side balance
// K = (QDo CDo - QD CDi)/CBi, give the model's clearance; two RK4 runs at
// dialysate inlets CDi and 0 give the model's dialysance
// D = -(W(CDi) - W(0))/CDi.
func TestTransferMatchesIntegration(t *testing.T) {
	for _, c := range ufGrid() {
		for _, a := range core.Arrangements {
			got, err := evalUF(a, c.op, c.f)
			if err != nil {
				t.Fatalf("Evaluate(%v, %+v, %+v) error: %v", a, c.op, c.f, err)
			}
			ref := ufIntegrate(a, c)
			check := func(what string, g, w, floor float64) {
				t.Helper()
				if math.Abs(g-w) > ufIntegrationRel*math.Abs(w)+floor {
					t.Errorf("Evaluate(%v, %+v, %+v).%s = %.17g, want %.17g (RK4; rel err %.2g)", a, c.op, c.f, what, g, w, relErr(g, w))
				}
			}
			op, qf := c.op, c.f.QF
			floor := ufConcentrationFloor * op.CBi
			check("TransferRate", got.TransferRate, ref.w, 0)
			check("Clearance", got.Clearance, ref.w/op.CBi, 0)
			check("BloodOutlet", got.BloodOutlet, ref.cbo, floor)
			check("DialysateOutlet", got.DialysateOutlet, ref.cdo, floor)
			inVitro := op.QB*(op.CBi-ref.cbo)/op.CBi + qf*ref.cbo/op.CBi
			check("Clearance (in-vitro formula on RK4 outlets)", got.Clearance, inVitro, floor*op.QB/op.CBi)
			dialysateSide := ((op.QD+qf)*ref.cdo - op.QD*op.CDi) / op.CBi
			check("Clearance (dialysate side on RK4 outlets)", got.Clearance, dialysateSide, floor*op.QD/op.CBi)
			if op.CDi > 0 {
				fresh := c
				fresh.op.CDi = 0
				d := -(ref.w - ufIntegrate(a, fresh).w) / op.CDi
				check("Dialysance (two RK4 runs)", got.Dialysance, d, 1e-11*got.Clearance)
			}
		}
	}
}

// The counter-current dialysance passes its KoA -> infinity limit
// QB - QF when S < 1 (see TestDialysanceAboveCeiling): the RK4 solution
// shows the blood leaving above the dialysate inlet concentration, by
// about (1 - S) QF/KoA relative.
func TestDialysanceAboveCeilingRK4(t *testing.T) {
	c := ufCase{core.Operating{QB: 300, QD: 800, KoA: 2e4, CBi: 0, CDi: 1}, core.Filtration{QF: 20, Sieving: 0.6}}
	ref := ufIntegrate(core.Countercurrent, c)
	want := 1 + (1-c.f.Sieving)*c.f.QF/c.op.KoA
	if !tolerance(ref.cbo, want, 1e-6) {
		t.Errorf("RK4 at %+v %+v: CBo = %.12g with CDi = 1, want about %.12g", c.op, c.f, ref.cbo, want)
	}
	_, d := core.Transfer(core.Countercurrent, c.op.QB, c.op.QD, c.op.KoA, c.f)
	if dRef := -ref.w; !tolerance(d, dRef, ufIntegrationRel) || d <= c.op.QB-c.f.QF {
		t.Errorf("Transfer(%v, %+v, %+v) D = %.17g, want RK4's %.17g, above QB - QF = %g", core.Countercurrent, c.op, c.f, d, dRef, c.op.QB-c.f.QF)
	}
}

// With S < 1 and a dialysate flow far below QF, co-current clears more
// than counter-current (TestTransferProperties leaves that property to
// S = 1). RK4 shows the same at QB 300, QD 2, KoA 100, QF 50 mL/min,
// S 0.3: about 40.28 against 39.72 mL/min.
func TestCocurrentAheadRK4(t *testing.T) {
	c := ufCase{core.Operating{QB: 300, QD: 2, KoA: 100, CBi: 1}, core.Filtration{QF: 50, Sieving: 0.3}}
	var k [2]float64
	for i, a := range core.Arrangements {
		k[i], _ = core.Transfer(a, c.op.QB, c.op.QD, c.op.KoA, c.f)
		if ref := ufIntegrate(a, c).w / c.op.CBi; !tolerance(k[i], ref, ufIntegrationRel) {
			t.Errorf("Transfer(%v, %+v, %+v) = %.17g, want RK4's %.17g", a, c.op, c.f, k[i], ref)
		}
	}
	if !(k[1] > k[0]+0.5) {
		t.Errorf("at %+v %+v: co-current %.6g, counter-current %.6g, want co-current ahead by more than 0.5 mL/min", c.op, c.f, k[1], k[0])
	}
}
