package core_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"clearkit/core"
)

// Tests of the ultrafiltration model: its limits (closed forms at QF = 0,
// pure convection at KoA = 0, the ceilings as KoA grows), its properties
// over a seeded random grid, the in-vitro clearance formula on its outlets,
// and its differences from the published approximations. The comparison
// with an independent RK4 integration is in ultrafiltration_integrate_test.go.

// routineFiltration is QF 10 mL/min of urea (S = 1): QF 0-30 mL/min is
// routine (common practice, no source), S about 1 for urea (Jaffrin,
// Artif Organs; abstract).
var routineFiltration = core.Filtration{QF: 10, Sieving: 1}

// ufOp is the operating point of flows qb, qd with ultrafiltration f and
// fresh dialysate (CBi 1, CDi 0), KoA 0.
func ufOp(qb, qd float64, f core.Filtration) core.Operating {
	return core.Operating{QB: qb, QD: qd, CBi: 1, Filtration: f}
}

// evalUF is core.Evaluate at op with ultrafiltration f.
func evalUF(a core.Arrangement, op core.Operating, f core.Filtration) (core.Performance, error) {
	op.Filtration = f
	return core.Evaluate(a, op)
}

// randomFiltered draws an operating point over the whole accepted range:
// flows 1e-3 to 1e5 mL/min, KoA 0 (one in twenty) or 1e-3 to 1e8 mL/min,
// filtration fraction QF/QB log-uniform from 1e-8 to 0.99, S uniform on
// [0, 1] or exactly 1 (one in three).
func randomFiltered(r *rand.Rand) (core.Operating, core.Filtration) {
	op := core.Operating{QB: logUniform(r, 1e-3, 1e5), QD: logUniform(r, 1e-3, 1e5), CBi: 1}
	if r.IntN(20) != 0 {
		op.KoA = logUniform(r, 1e-3, 1e8)
	}
	f := core.Filtration{QF: math.Max(core.MinFlow, logUniform(r, 1e-8, 0.99)*op.QB), Sieving: r.Float64()}
	if r.IntN(3) == 0 {
		f.Sieving = 1
	}
	if op.QB-f.QF < core.MinFlow {
		f.QF = 0
	}
	return op, f
}

// As QF -> 0 the model must reduce to the closed forms of flow.go. With
// QF = 1e-13 min(QB, QD, KoA) the physical change is about 1e-13 relative;
// the measured worst difference over the whole accepted range is 1.1e-13,
// and the tolerance is 1e-12.
func TestTransferSmallQF(t *testing.T) {
	const rel = 1e-12
	r := newRand()
	for range propertyPoints {
		op, f := randomFiltered(r)
		if op.KoA == 0 {
			op.KoA = 1
		}
		f.QF = 1e-13 * math.Min(op.KoA, math.Min(op.QB, op.QD))
		for _, a := range core.Arrangements {
			k, d := core.Transfer(a, op.QB, op.QD, op.KoA, f)
			want := core.Dialysance(a, op.QB, op.QD, op.KoA)
			if !tolerance(k, want, rel) || !tolerance(d, want, rel) {
				t.Errorf("Transfer(%v, %g, %g, %g, %+v) = %.17g, %.17g, want Dialysance %.17g within %g", a, op.QB, op.QD, op.KoA, f, k, d, want, rel)
			}
		}
	}
	// QF = 0 is the closed form itself.
	for _, a := range core.Arrangements {
		k, d := core.Transfer(a, 300, 500, 800, core.Filtration{QF: 0, Sieving: 0.3})
		if want := core.Dialysance(a, 300, 500, 800); k != want || d != want {
			t.Errorf("Transfer(%v, 300, 500, 800, QF 0) = %.17g, %.17g, want %.17g twice", a, k, d, want)
		}
	}
}

// KoA = 0 is pure convection. d(QB(s) CB)/ds = -S QF CB with
// QB(s) = QB - QF s gives K = QB (1 - (1 - QF/QB)^S) (derived here), which
// is S QF exactly when S = 1 (Jaffrin, Artif Organs, abstract: K = S QF)
// and S QF to first order in QF/QB otherwise. Expanding,
// K - S QF = QB (S(1-S)/2 f^2 + ...) with f = QF/QB and every term
// positive, bounded by QB S (1-S)/2 f^2/(1-f) (derived here). Nothing comes
// back from the dialysate, so D = 0. The quadrature at KoA = 1e-9 QF must
// give the same to 1e-8 QF (the change in K is a few KoA).
func TestTransferZeroKoA(t *testing.T) {
	for _, qb := range []float64{50, 300, 500} {
		for _, ff := range []float64{1e-4, 0.03, 0.1, 0.4, 0.9} {
			qf := ff * qb
			for _, s := range []float64{1, 0.9, 0.5, 0.1, 0} {
				f := core.Filtration{QF: qf, Sieving: s}
				// By math.Pow; 1 - (1 - f)^S loses about 1e-16/f relative.
				want := qb * (1 - math.Pow(1-qf/qb, s))
				rel := 1e-13 + 1e-15/ff
				for _, a := range core.Arrangements {
					k, d := core.Transfer(a, qb, 500, 0, f)
					if !tolerance(k, want, rel) || d != 0 {
						t.Errorf("Transfer(%v, %g, 500, 0, %+v) = %.17g, %g, want %.17g, 0", a, qb, f, k, d, want)
					}
					if s == 1 && k != qf {
						t.Errorf("Transfer(%v, %g, 500, 0, %+v) = %.17g, want QF = %g exactly", a, qb, f, k, qf)
					}
					excess := k - s*qf
					if bound := qb * s * (1 - s) / 2 * ff * ff / (1 - ff); excess < -1e-13*qf || excess > bound*(1+1e-12)+1e-13*qf {
						t.Errorf("Transfer(%v, %g, 500, 0, %+v) = %.17g: K - S QF = %.3g, want in [0, %.3g]", a, qb, f, k, excess, bound)
					}
					koa := 1e-9 * qf
					k, d = core.Transfer(a, qb, 500, koa, f)
					if math.Abs(k-want) > 1e-8*qf || d > 1e-8*qf {
						t.Errorf("Transfer(%v, %g, 500, %g, %+v) = %.17g, %g, want %.17g, ~0", a, qb, koa, f, k, d, want)
					}
				}
			}
		}
	}
}

// The ceilings, worked by hand from TransferCeiling's mass balances.
func TestTransferCeiling(t *testing.T) {
	for _, c := range []struct {
		a          core.Arrangement
		qb, qd, qf float64
		k, d       float64
	}{
		{core.Countercurrent, 300, 500, 10, 300, 290},    // QB <= QD + QF: K = QB, D = QB - QF
		{core.Countercurrent, 500, 300, 20, 320, 300},    // QB > QD + QF: K = QD + QF, D = QD
		{core.Countercurrent, 320, 300, 20, 320, 300},    // QB = QD + QF: both forms agree
		{core.Cocurrent, 300, 500, 10, 191.25, 181.25},   // 300 x 510/800, 500 x 290/800
		{core.Cocurrent, 400, 400, 40, 220, 180},         // 400 x 440/800, 400 x 360/800
		{core.Countercurrent, 300, 500, 0, 300, 300},     // QF = 0: Ceiling
		{core.Cocurrent, 300, 500, 0, 187.5, 187.5},      // QF = 0: Ceiling
		{core.Cocurrent, 1e5, 1e5, 5e4, 7.5e4, 2.5e4},    // the largest flows, no overflow
		{core.Countercurrent, 1e5, 1e-3, 1, 1.001, 1e-3}, // dialysate-limited
	} {
		k, d := core.TransferCeiling(c.a, c.qb, c.qd, c.qf)
		if !veryclose(k, c.k) || !veryclose(d, c.d) {
			t.Errorf("TransferCeiling(%v, %g, %g, %g) = %.17g, %.17g, want %g, %g", c.a, c.qb, c.qd, c.qf, k, d, c.k, c.d)
		}
	}
}

// As KoA grows the clearance approaches its ceiling from below. At
// KoA = 1e7 mL/min the NTU is above 1e4 here and the remaining gap is
// below 1e-3 relative (counter-current at balanced flows QB = QD + QF
// closes like 1/NTU, as at Cr = 1 without ultrafiltration).
func TestTransferLargeKoA(t *testing.T) {
	for _, qb := range []float64{200, 300, 500} {
		for _, qd := range []float64{300, 490, 800} {
			for _, f := range []core.Filtration{routineFiltration, {QF: 30, Sieving: 0.6}} {
				for _, a := range core.Arrangements {
					ceiling, _ := core.TransferCeiling(a, qb, qd, f.QF)
					k, _ := core.Transfer(a, qb, qd, 1e7, f)
					if k > ceiling || !tolerance(k, ceiling, 1e-3) {
						t.Errorf("Transfer(%v, %g, %g, 1e7, %+v) = %.17g, want at most the ceiling %.17g and within 1e-3 of it", a, qb, qd, f, k, ceiling)
					}
				}
			}
		}
	}
}

// Properties over the whole accepted range (seeded):
//   - every result finite;
//   - 0 <= D <= K <= the clearance ceiling <= QB: K <= QB because the
//     blood cannot lose more solute than it brings, K >= D because with
//     CDi = CBi the ultrafiltrate still carries solute out;
//   - K rises with QF and with KoA, and is at least its KoA = 0 value;
//   - with S = 1, K - D = QF: with CDi = CBi the concentrations stay
//     equal along the membrane, no diffusion occurs and W = QF CBi
//     (derived here);
//   - with S = 1, counter-current clears at least as much as co-current;
//   - with S = 1, the total is less than diffusive clearance plus
//     ultrafiltrate clearance, K <= KD + QF with KD the clearance at
//     QF = 0 (Jaffrin et al., J Biomech Eng 1981;103(4):261, abstract).
//
// The last two do not hold for every S < 1 and are not asserted there: at
// KoA = 0 already K = QB (1 - (1 - QF/QB)^S) > S QF, and with a dialysate
// flow far below QF co-current can clear more than counter-current (RK4
// confirms it, TestCocurrentAheadRK4).
//
// The dialysance ceiling is a limit, not a bound: with S < 1 the blood
// leaves concentrated by the water it lost, and D passes D's ceiling by
// about (1 - S) QF/KoA relative at large KoA (checked in
// TestDialysanceAboveCeiling).
func TestTransferProperties(t *testing.T) {
	const slack = 1e-12 // relative, for rounding near equalities
	r := newRand()
	for range propertyPoints {
		op, f := randomFiltered(r)
		if f.QF == 0 {
			continue
		}
		var counterK float64
		for _, a := range core.Arrangements {
			k, d := core.Transfer(a, op.QB, op.QD, op.KoA, f)
			kc, _ := core.TransferCeiling(a, op.QB, op.QD, f.QF)
			call := fmt.Sprintf("Transfer(%v, %g, %g, %g, %+v) = %.17g, %.17g", a, op.QB, op.QD, op.KoA, f, k, d)
			if math.IsNaN(k) || math.IsInf(k, 0) || math.IsNaN(d) || math.IsInf(d, 0) {
				t.Fatalf("%s, want finite", call)
			}
			if d < 0 || d > k*(1+slack) || k > kc*(1+slack) || kc > op.QB*(1+slack) {
				t.Errorf("%s, want 0 <= D <= K <= ceiling %.17g <= QB", call, kc)
			}
			if f.Sieving == 1 && math.Abs((k-d)-f.QF) > slack*k+1e-15*op.QB {
				t.Errorf("%s: K - D = %.17g, want QF = %g (S = 1)", call, k-d, f.QF)
			}
			up := core.Filtration{QF: math.Min(f.QF*(1+r.Float64()), op.QB-core.MinFlow), Sieving: f.Sieving}
			if k2, _ := core.Transfer(a, op.QB, op.QD, op.KoA, up); k2 < k*(1-slack) {
				t.Errorf("%s, but with QF %g K = %.17g, want K to rise with QF", call, up.QF, k2)
			}
			if k2, _ := core.Transfer(a, op.QB, op.QD, op.KoA*(1+r.Float64())+1e-3, f); k2 < k*(1-slack) {
				t.Errorf("%s, but with more KoA K = %.17g, want K to rise with KoA", call, k2)
			}
			if k0, _ := core.Transfer(a, op.QB, op.QD, 0, f); k < k0*(1-slack) {
				t.Errorf("%s, want at least the KoA = 0 value %.17g", call, k0)
			}
			if f.Sieving != 1 {
				continue
			}
			kd := core.Dialysance(a, op.QB, op.QD, op.KoA)
			if k > (kd+f.QF)*(1+slack) {
				t.Errorf("%s, want at most KD + QF = %.17g (Jaffrin et al. 1981)", call, kd+f.QF)
			}
			if a == core.Countercurrent {
				counterK = k
			} else if k > counterK*(1+slack) {
				t.Errorf("%s, want at most the counter-current clearance %.17g", call, counterK)
			}
		}
	}
}

// With S < 1 and a large KoA the blood leaves the counter-current filter
// slightly above the dialysate inlet concentration: where the two meet,
// the flux S QF CB(...) balances the water loss, CB = CD (1 + (1-S) QF/lam)
// to first order (derived here from the balance QF CB = N at the blood
// outlet), so D exceeds its limit QB - QF by about (QB - QF)(1-S) QF/KoA.
// The RK4 integration of ultrafiltration_integrate_test.go confirms the
// same effect independently at one point (TestDialysanceAboveCeilingRK4).
func TestDialysanceAboveCeiling(t *testing.T) {
	const qb, qd, koa = 300.0, 800.0, 1e5
	for _, s := range []float64{0.2, 0.6, 0.9} {
		f := core.Filtration{QF: 20, Sieving: s}
		_, d := core.Transfer(core.Countercurrent, qb, qd, koa, f)
		_, dc := core.TransferCeiling(core.Countercurrent, qb, qd, f.QF)
		want := dc * (1 - s) * f.QF / koa
		if excess := d - dc; !tolerance(excess, want, 0.05) {
			t.Errorf("Transfer(%v, %g, %g, %g, %+v): D - ceiling = %.6g, want about %.6g", core.Countercurrent, qb, qd, koa, f, excess, want)
		}
	}
}

// The published approximations differ from the model, and the test
// reports by how much rather than forcing agreement. Over routine points
// (QB 200-400, QD 500-800, KoA 500-1200, QF 5-60 mL/min, S = 1):
//   - K = KD + 0.46 QF (Jaffrin et al., J Biomech Eng 1990;112(2):212,
//     abstract) lies above the model: the model's slope (K - KD)/QF is
//     about 0.18-0.33 counter-current and 0.30-0.39 co-current;
//   - K = KD + QF (1 - KD/QB) (from memory) is close co-current (within
//     0.4 mL/min up to QF 60) and below the model counter-current (by
//     0.5 to 7 mL/min);
//   - both stay below KD + QF, as the model does (Jaffrin et al. 1981).
//
// The bounds asserted are the measured ranges widened by 0.05, so that a
// change to the model that moves them is noticed.
func TestTransferApproximations(t *testing.T) {
	var lines []string
	for _, p := range [][3]float64{{300, 500, 800}, {200, 500, 600}, {400, 800, 1200}, {250, 500, 500}} {
		qb, qd, koa := p[0], p[1], p[2]
		for _, qf := range []float64{5, 10, 20, 30, 60} {
			for _, a := range core.Arrangements {
				k, _ := core.Transfer(a, qb, qd, koa, core.Filtration{QF: qf, Sieving: 1})
				kd := core.Dialysance(a, qb, qd, koa)
				slope := (k - kd) / qf
				jaffrin := kd + 0.46*qf
				common := kd + qf*(1-kd/qb)
				lines = append(lines, fmt.Sprintf("%-14v QB %3g QD %3g KoA %4g QF %2g: K %7.3f KD %7.3f slope %.3f; K - (KD + 0.46 QF) %+7.3f; K - (KD + QF(1 - KD/QB)) %+6.3f",
					a, qb, qd, koa, qf, k, kd, slope, k-jaffrin, k-common))
				lo, hi := 0.13, 0.38
				if a == core.Cocurrent {
					lo, hi = 0.25, 0.42
				}
				if slope < lo || slope > hi || k >= jaffrin || k >= kd+qf {
					t.Errorf("Transfer(%v, %g, %g, %g, QF %g) = %.6g: slope (K - KD)/QF = %.4f, want in [%g, %g] and K below KD + 0.46 QF = %.6g", a, qb, qd, koa, qf, k, slope, lo, hi, jaffrin)
				}
				diff := k - common
				if a == core.Cocurrent && math.Abs(diff) > 0.45 || a == core.Countercurrent && (diff < 0.45 || diff > 7.2) {
					t.Errorf("Transfer(%v, %g, %g, %g, QF %g) = %.6g: K - (KD + QF(1 - KD/QB)) = %.4f, outside the measured range", a, qb, qd, koa, qf, k, diff)
				}
			}
		}
	}
	t.Log("model against the approximations:\n" + strings.Join(lines, "\n"))
}

// The model's outlets give back its clearance through the in-vitro formula
// K = QB (CBi - CBo)/CBi + QF CBo/CBi (blood side) and, with fresh
// dialysate, K = (QD + QF) CDo/CBi (dialysate side) (REFERENCES; the
// formula from memory of ISO 8637-1), and its dialysance through what two
// dialysate inlet levels 1 and 2 measure, D = QDi - QDo (CDo1 - CDo2) /
// (CDi1 - CDi2) (the ion mass balance in REFERENCES), while the published
// form (QD + QF)(1 - (CDo1 - CDo2)/(CDi1 - CDi2)) (Goldau et al., Artif
// Organs 2002, abstract; authors from memory) gives D + QF.
func TestEvaluateFiltrationInVitro(t *testing.T) {
	r := newRand()
	for range 1000 {
		op, f := randomFiltered(r)
		if f.QF == 0 {
			continue
		}
		op.CBi = logUniform(r, 1e-2, 1e2)
		for _, a := range core.Arrangements {
			fresh, err := evalUF(a, op, f)
			if err != nil {
				t.Fatalf("Evaluate(%v, %+v, %+v) error: %v", a, op, f, err)
			}
			call := fmt.Sprintf("Evaluate(%v, %+v, %+v)", a, op, f)
			qbo, qdo := op.QB-f.QF, op.QD+f.QF
			// Each formula below forms a difference of outlet terms whose
			// rounding is about 1e-16 of QB CBi.
			floor := 1e-14 * op.QB
			if got := op.QB*(op.CBi-fresh.BloodOutlet)/op.CBi + f.QF*fresh.BloodOutlet/op.CBi; math.Abs(got-fresh.Clearance) > 1e-13*fresh.Clearance+floor {
				t.Errorf("%s: in-vitro blood-side clearance %.17g, want %.17g", call, got, fresh.Clearance)
			}
			if got := qdo * fresh.DialysateOutlet / op.CBi; math.Abs(got-fresh.Clearance) > 1e-13*fresh.Clearance {
				t.Errorf("%s: dialysate-side clearance %.17g, want %.17g", call, got, fresh.Clearance)
			}
			if er := (op.CBi - fresh.BloodOutlet) / op.CBi; math.Abs(er-fresh.ExtractionRatio) > 1e-13*math.Abs(er)+floor/qbo {
				t.Errorf("%s: extraction ratio %.17g, want (CBi - CBo)/CBi = %.17g", call, fresh.ExtractionRatio, er)
			}
			// Two dialysate inlet levels.
			used := op
			used.CDi = 0.5 * op.CBi
			p2, err := evalUF(a, used, f)
			if err != nil {
				t.Fatalf("Evaluate(%v, %+v, %+v) error: %v", a, used, f, err)
			}
			// Both forms are differences of two terms of size QD.
			ratio := (p2.DialysateOutlet - fresh.DialysateOutlet) / (used.CDi - op.CDi)
			floor = 1e-13 * qdo
			if got := op.QD - qdo*ratio; math.Abs(got-fresh.Dialysance) > 1e-12*fresh.Clearance+floor {
				t.Errorf("%s: QDi - QDo dCDo/dCDi = %.17g, want D = %.17g", call, got, fresh.Dialysance)
			}
			if got := qdo * (1 - ratio); math.Abs(got-(fresh.Dialysance+f.QF)) > 1e-12*fresh.Clearance+floor {
				t.Errorf("%s: (QD + QF)(1 - dCDo/dCDi) = %.17g, want D + QF = %.17g", call, got, fresh.Dialysance+f.QF)
			}
			if p2.Dialysance != fresh.Dialysance {
				t.Errorf("%s: dialysance %.17g with CDi = %g, want %.17g as with fresh dialysate", call, p2.Dialysance, used.CDi, fresh.Dialysance)
			}
			// W = K CBi - D CDi.
			if want := fresh.Clearance*op.CBi - fresh.Dialysance*used.CDi; math.Abs(p2.TransferRate-want) > 1e-13*math.Abs(fresh.TransferRate) {
				t.Errorf("%s: W = %.17g with CDi = %g, want K CBi - D CDi = %.17g", call, p2.TransferRate, used.CDi, want)
			}
		}
	}
}

// Evaluate with QF = 0 is the ideal model; with a tiny QF its log-mean
// difference tends to the ideal model's (W/KoA there).
func TestEvaluateFiltrationContinuity(t *testing.T) {
	for _, op := range []core.Operating{routine, {QB: 450, QD: 700, KoA: 1300, CBi: 12, CDi: 1.5}, {QB: 250, QD: 250, KoA: 500, CBi: 1}} {
		for _, a := range core.Arrangements {
			want, _ := core.Evaluate(a, op)
			got, err := evalUF(a, op, core.Filtration{QF: 0, Sieving: 1})
			if err != nil || got != want {
				t.Errorf("Evaluate(%v, %+v, QF 0) = %+v, %v, want Evaluate's %+v", a, op, got, err, want)
			}
			got, err = evalUF(a, op, core.Filtration{QF: core.MinFlow, Sieving: 1})
			if err != nil {
				t.Fatal(err)
			}
			// QF = 1e-6 mL/min moves every number by about QF/QB = 4e-9.
			for _, c := range []struct {
				what      string
				got, want float64
			}{
				{"Clearance", got.Clearance, want.Clearance},
				{"Dialysance", got.Dialysance, want.Dialysance},
				{"BloodOutlet", got.BloodOutlet, want.BloodOutlet},
				{"DialysateOutlet", got.DialysateOutlet, want.DialysateOutlet},
				{"ExtractionRatio", got.ExtractionRatio, want.ExtractionRatio},
				{"LogMeanDifference", got.LogMeanDifference, want.LogMeanDifference},
				{"ClearanceCeiling", got.ClearanceCeiling, want.ClearanceCeiling},
				{"DialysanceCeiling", got.DialysanceCeiling, want.DialysanceCeiling},
			} {
				if !tolerance(c.got, c.want, 2e-8) {
					t.Errorf("Evaluate(%v, %+v, QF 1e-6).%s = %.17g, want %.17g within 2e-8", a, op, c.what, c.got, c.want)
				}
			}
		}
	}
}

func TestFiltrationValidate(t *testing.T) {
	for _, c := range []struct {
		f            core.Filtration
		field, word  string
		limit        float64
		limitPresent bool
	}{
		{core.Filtration{QF: -1, Sieving: 1}, "qf", "negative", 0, false},
		{core.Filtration{QF: math.NaN(), Sieving: 1}, "qf", "finite", 0, false},
		{core.Filtration{QF: math.Inf(1), Sieving: 1}, "qf", "finite", 0, false},
		{core.Filtration{QF: 300, Sieving: 1}, "qf", "below the blood flow", 300 * (1 - 1e-6), true},
		{core.Filtration{QF: 400, Sieving: 1}, "qf", "below the blood flow", 300 * (1 - 1e-6), true},
		{core.Filtration{QF: 300 * (1 - 0.9e-6), Sieving: 1}, "qf", "a millionth", 300 * (1 - 1e-6), true},
		{core.Filtration{QF: 10, Sieving: -0.1}, "sieving", "from 0 to 1", 0, false},
		{core.Filtration{QF: 10, Sieving: 1.01}, "sieving", "from 0 to 1", 0, false},
		{core.Filtration{QF: 10, Sieving: math.NaN()}, "sieving", "finite", 0, false},
		{core.Filtration{QF: 0, Sieving: 2}, "sieving", "from 0 to 1", 0, false},
	} {
		err := c.f.Validate(300)
		if fieldOf(err) != c.field || !strings.Contains(err.Error(), c.word) {
			t.Errorf("%+v.Validate(300) = %v, want field %q and a message with %q", c.f, err, c.field, c.word)
			continue
		}
		fe := err.(*core.FieldError)
		if c.limitPresent != (fe.Limit != nil) || c.limitPresent && *fe.Limit != c.limit {
			t.Errorf("%+v.Validate(300) limit %v, want %v (present %v)", c.f, fe.Limit, c.limit, c.limitPresent)
		}
		if _, err := evalUF(core.Countercurrent, routine, c.f); fieldOf(err) != c.field {
			t.Errorf("Evaluate(%+v, %+v) error = %v, want field %q", routine, c.f, err, c.field)
		}
	}
	for _, f := range []core.Filtration{{0, 1}, {0, 0}, {core.MinFlow, 1}, {1e-9, 1}, {300 * (1 - 2e-6), 0}, {150, 0.5}} {
		if err := f.Validate(300); err != nil {
			t.Errorf("%+v.Validate(300) = %v, want nil", f, err)
		}
	}
	// The operating point is checked first.
	bad := routine
	bad.QB = 0
	if _, err := evalUF(core.Cocurrent, bad, routineFiltration); fieldOf(err) != "qb" {
		t.Errorf("Evaluate(%+v, %+v) error = %v, want field qb", bad, routineFiltration, err)
	}
}

// KoAForClearance inverts Transfer: KoA -> K -> KoA round trips. The
// forward model is accurate to about 1e-13 and the inverse amplifies that
// by 1/e, e = d ln K/d ln KoA (here by a central difference), so the KoA
// must come back to 1e-13/e relative. Where e < 1e-4 K hardly depends on
// KoA (saturated near the ceiling, or swamped by convection when
// S QF >> KoA, where e^-Pe makes diffusion negligible) and the point is
// skipped: no measurement could tell those KoA apart either.
func TestKoAForClearanceRoundTrip(t *testing.T) {
	checked := 0
	for _, qb := range []float64{50, 200, 300, 500} {
		for _, qd := range []float64{300, 500, 800} {
			for _, koa := range []float64{1, 50, 400, 800, 1500, 3000} {
				for _, f := range []core.Filtration{{0, 1}, routineFiltration, {QF: 30, Sieving: 0.6}, {QF: 0.4 * qb, Sieving: 1}} {
					for _, a := range core.Arrangements {
						k, _ := core.Transfer(a, qb, qd, koa, f)
						up, _ := core.Transfer(a, qb, qd, koa*1.01, f)
						down, _ := core.Transfer(a, qb, qd, koa/1.01, f)
						e := (up - down) / (k * 2 * math.Log(1.01))
						if e < 1e-4 {
							continue
						}
						checked++
						back, err := core.KoAForClearance("clearance", a, ufOp(qb, qd, f), k)
						if err != nil {
							t.Errorf("KoAForClearance(%v, %g, %g, %+v, %.17g) error: %v (from KoA %g)", a, qb, qd, f, k, err, koa)
							continue
						}
						if rel := 1e-13 / e; !tolerance(back, koa, rel) {
							t.Errorf("KoAForClearance(%v, %g, %g, %+v, %.17g) = %.17g, want %g within %.2g (d ln K/d ln KoA = %.3g)", a, qb, qd, f, k, back, koa, rel, e)
						}
					}
				}
			}
		}
	}
	if checked < 300 {
		t.Errorf("only %d round trips checked, want at least 300 of 576", checked)
	}
}

// At QF = 0 the root finder must agree with the closed-form inverses of
// REFERENCES (Incropera & DeWitt ch. 11, from memory), written here:
// counter-current NTU = (log1p(y)/y) eps/(1-eps) with
// y = eps (1-Cr)/(1-eps), co-current NTU = -log1p(-eps (1+Cr))/(1+Cr).
func TestKoAForClearanceClosedForm(t *testing.T) {
	for _, qb := range []float64{100, 250, 400} {
		for _, qd := range []float64{300, 500, 800} {
			cmin, cmax := math.Min(qb, qd), math.Max(qb, qd)
			cr := cmin / cmax
			for _, frac := range []float64{0.05, 0.3, 0.6, 0.9} {
				for _, a := range core.Arrangements {
					k := frac * core.Ceiling(a, qb, qd)
					eps := k / cmin
					var ntu float64
					if a == core.Countercurrent {
						y := eps * (1 - cr) / (1 - eps)
						ntu = eps / (1 - eps)
						if y != 0 {
							ntu *= math.Log1p(y) / y
						}
					} else {
						ntu = -math.Log1p(-eps*(1+cr)) / (1 + cr)
					}
					got, err := core.KoAForClearance("target", a, ufOp(qb, qd, core.Filtration{Sieving: 1}), k)
					if err != nil || !tolerance(got, ntu*cmin, 1e-12) {
						t.Errorf("KoAForClearance(%v, %g, %g, QF 0, %g) = %.17g, %v, want %.17g", a, qb, qd, k, got, err, ntu*cmin)
					}
				}
			}
		}
	}
}

func TestKoAForClearanceErrors(t *testing.T) {
	f := routineFiltration
	for _, c := range []struct {
		a          core.Arrangement
		qb, qd, k  float64
		f          core.Filtration
		word       string
		limit      float64
		checkLimit bool
	}{
		// Ultrafiltration alone clears QF = 10 mL/min (S = 1).
		{core.Countercurrent, 300, 500, 10, f, "ultrafiltration alone", 10, true},
		{core.Countercurrent, 300, 500, 5, f, "ultrafiltration alone", 10, true},
		{core.Cocurrent, 300, 500, -1, f, "ultrafiltration alone", 10, true},
		// Counter-current ceiling QB = 300 (QB <= QD + QF).
		{core.Countercurrent, 300, 500, 300, f, "ceiling", 300, true},
		{core.Countercurrent, 300, 500, 301, f, "ceiling", 300, true},
		// Co-current ceiling 300 x 510/800 = 191.25.
		{core.Cocurrent, 300, 500, 191.25, f, "ceiling", 191.25, true},
		// Balanced counter-current flows close on the ceiling like 1/NTU:
		// 1 - 1e-9 of it needs a KoA near 1e5 x 1e9.
		{core.Countercurrent, 1e5, 1e5, 1e5 * (1 - 1e-9), core.Filtration{Sieving: 1}, "above 1e+08", 0, false},
		{core.Countercurrent, 300, 500, math.NaN(), f, "finite", 0, false},
		{core.Countercurrent, 300, 500, math.Inf(1), f, "finite", 0, false},
	} {
		_, err := core.KoAForClearance("target", c.a, ufOp(c.qb, c.qd, c.f), c.k)
		if fieldOf(err) != "target" || !strings.Contains(err.Error(), c.word) {
			t.Errorf("KoAForClearance(%v, %g, %g, %+v, %g) error = %v, want field target and %q", c.a, c.qb, c.qd, c.f, c.k, err, c.word)
			continue
		}
		if fe := err.(*core.FieldError); c.checkLimit && (fe.Limit == nil || !veryclose(*fe.Limit, c.limit)) {
			t.Errorf("KoAForClearance(%v, %g, %g, %+v, %g) limit %v, want %g", c.a, c.qb, c.qd, c.f, c.k, fe.Limit, c.limit)
		}
	}
}

func ExampleTransfer() {
	// QB 300, QD 500 mL/min, a KoA 800 filter, urea (S = 1), with and
	// without ultrafiltration.
	for _, qf := range []float64{0, 10, 30} {
		f := core.Filtration{QF: qf, Sieving: core.DefaultSieving}
		k, d := core.Transfer(core.Countercurrent, 300, 500, 800, f)
		fmt.Printf("QF %2.0f: K %.1f D %.1f mL/min\n", qf, k, d)
	}
	// Output:
	// QF  0: K 248.0 D 248.0 mL/min
	// QF 10: K 251.0 D 241.0 mL/min
	// QF 30: K 257.0 D 227.0 mL/min
}

func ExampleKoAForClearance() {
	// A filter measured at 251 mL/min with QB 300, QD 500, QF 10 mL/min.
	koa, err := core.KoAForClearance("clearance", core.Countercurrent, ufOp(300, 500, core.Filtration{QF: 10, Sieving: 1}), 251)
	fmt.Printf("KoA %.0f mL/min, %v\n", koa, err)
	// Output:
	// KoA 800 mL/min, <nil>
}

func BenchmarkTransfer(b *testing.B) {
	for _, a := range core.Arrangements {
		b.Run(a.String(), func(b *testing.B) {
			for b.Loop() {
				core.Transfer(a, 300, 500, 800, routineFiltration)
			}
		})
	}
}

func BenchmarkKoAForClearance(b *testing.B) {
	for b.Loop() {
		if _, err := core.KoAForClearance("clearance", core.Countercurrent, ufOp(300, 500, routineFiltration), 251); err != nil {
			b.Fatal(err)
		}
	}
}
