package core

import "math"

// Filtration is the ultrafiltration at an operating point: the water taken
// from the blood across the membrane, and how freely the solute follows it.
type Filtration struct {
	// QF is the ultrafiltration rate, mL/min: 0 <= QF, and the blood leaves
	// the filter at QB - QF, which must stay at least 1e-6 QB.
	QF float64 `json:"qf"`
	// Sieving is the sieving coefficient S, from 0 (the solute stays in the
	// blood) to 1 (it passes with the water, as urea does). Used only when
	// QF > 0.
	Sieving float64 `json:"sieving"`
}

// minOutletShare is the smallest share of the blood-side flow that must
// leave the filter: QB - QF >= 1e-6 QB keeps the quadrature's panels
// towards the blood outlet few (about 20 at most).
const minOutletShare = 1e-6

// DefaultSieving is the sieving coefficient of urea: about 1 (Jaffrin,
// Convective mass transfer in hemodialysis, Artif Organs; abstract).
const DefaultSieving = 1

// Validate reports the first field of f that cannot be used at blood flow
// qb (a valid flow), by its API name.
func (f Filtration) Validate(qb float64) error { return f.validate(qb, "blood flow") }

// validate is Validate with the name of the blood-side flow for messages.
func (f Filtration) validate(qb float64, flow string) error {
	switch v := f.QF; {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf("qf", "must be a finite number")
	case v < 0:
		return fieldErrorf("qf", "must not be negative (got %g mL/min); 0 means no ultrafiltration", v)
	case qb-v < minOutletShare*qb:
		e := fieldErrorf("qf", "must stay below the %s, %.6g mL/min, leaving at least a millionth of it at the filter outlet (got %g)", flow, qb, v)
		limit := qb * (1 - minOutletShare)
		e.Limit = &limit
		return e
	}
	switch s := f.Sieving; {
	case math.IsNaN(s) || math.IsInf(s, 0):
		return fieldErrorf("sieving", "must be a finite number")
	case s < 0 || s > 1:
		return fieldErrorf("sieving", "must be from 0 to 1 (got %g); 1 for urea", s)
	}
	return nil
}

// Transfer returns the clearance K and the dialysance D, in mL/min, of
// arrangement a with ultrafiltration: QB falls to QB - QF along the
// membrane and the dialysate rises from QD to QD + QF. They are the two
// coefficients of the transfer rate,
//
//	W = K CBi - D CDi,
//
// so that K is the clearance with fresh dialysate and D = -dW/dCDi, what
// two dialysate inlet levels measure (D = QDi - QDo dCDo/dCDi). With
// QF = 0 both equal Dialysance(a, qb, qd, koa); with QF > 0, K >= D and the
// clearance at inlet concentrations CBi, CDi is K - D CDi/CBi.
//
// # Model
//
// Solute crosses each element of membrane dA by the combined diffusion and
// convection flux of Villarroel, Klein and Holland (Trans ASAIO
// 1977;23:225-233) and Patlak, Goldstein and Hoffman (J Theor Biol
// 1963;5:426), both from memory:
//
//	Js = S Jv (CB - CD e^-Pe) / (1 - e^-Pe),   Pe = S Jv / K0,
//
// with a uniform filtration flux Jv = QF/A, so Pe = S QF/KoA is the same
// everywhere. Per unit of the fraction s of membrane passed by the blood
// the transfer is KoA/phi(Pe) (CB - e^-Pe CD), with phi(x) = (1 - e^-x)/x:
// pure diffusion KoA (CB - CD) at Pe = 0, pure convection S QF CB as
// KoA -> 0.
//
// The method is described at membrane below.
//
// Inputs are assumed valid (see Operating.Validate and Filtration.Validate).
//
// Special cases are:
//
//	Transfer(a, qb, qd, koa, {0, s}) = Dialysance(a, qb, qd, koa) twice
//	Transfer(a, qb, qd, 0, {qf, s}) = qb (1 - (1 - qf/qb)^s), 0
//	Transfer(a, qb, qd, 0, {qf, 1}) = qf, 0
func Transfer(a Arrangement, qb, qd, koa float64, f Filtration) (k, d float64) {
	return transfer(a, qb, qd, koa, f, gaussRules)
}

// transfer is Transfer with the quadrature's rules: gaussRules, or
// drawRules where a looser accuracy is enough (see drawHint).
func transfer(a Arrangement, qb, qd, koa float64, f Filtration, rules []gaussRule) (k, d float64) {
	if f.QF == 0 {
		d := Dialysance(a, qb, qd, koa)
		return d, d
	}
	if koa == 0 {
		// Pure convection: d(QB CB)/ds = -S QF CB with QB(s) = QB - QF s
		// gives QB(1) CBo = QB CBi (1 - QF/QB)^S; nothing comes back from
		// the dialysate (e^-Pe = 0). K = S QF exactly when S = 1.
		if f.Sieving == 1 {
			return f.QF, 0
		}
		return -qb * math.Expm1(f.Sieving*math.Log1p(-f.QF/qb)), 0
	}
	m := newMembrane(a, qb, qd, koa, f)
	m.rules = rules
	k, d = m.solve()
	// Near saturation the quadrature can round to an ulp above the
	// ceiling, which no filter reaches; the ceiling is exact. (D has no
	// such bound when S < 1: see TransferCeiling.)
	kc, _ := TransferCeiling(a, qb, qd, f.QF)
	return math.Min(k, kc), d
}

// TransferCeiling returns the clearance and dialysance that Transfer
// approaches as KoA grows without bound. Blood and dialysate then share one
// concentration across the membrane (e^-Pe -> 1), except at the one end
// where the smaller stream is exhausted; by mass balance:
//
//	counter-current, QB <= QD + QF: K = QB,             D = QB - QF
//	counter-current, QB >  QD + QF: K = QD + QF,        D = QD
//	co-current:  K = QB (QD + QF)/(QB + QD),  D = QD (QB - QF)/(QB + QD)
//
// (derived here; at QF = 0 they are Ceiling(a, qb, qd)). No filter
// reaches the clearance ceiling at these flows. The dialysance one is the
// limit only: with S < 1 the blood leaves concentrated by the water it
// lost, slightly above the dialysate inlet, and D passes QB - QF by about
// (QB - QF)(1 - S) QF/KoA at large KoA.
func TransferCeiling(a Arrangement, qb, qd, qf float64) (k, d float64) {
	if qf == 0 {
		c := Ceiling(a, qb, qd)
		return c, c
	}
	if a == Cocurrent {
		// Written with QD/(QB + QD) first so that QB QD cannot overflow.
		r := qd / (qb + qd)
		return qb * (r + qf/(qb+qd)), r * (qb - qf)
	}
	if qb <= qd+qf {
		return qb, qb - qf
	}
	return qd + qf, qd
}

// Method. Mass balance reduces the two concentrations to one unknown, the
// solute u(s) removed from the blood by the fraction s: the blood carries
// QB CBi - u, the dialysate QD CDi + u co-current and QD CDi + W - u
// counter-current (W = u(1), the total). Then u' = -alpha(s) u + f(s), a
// linear equation whose integrating factor e^A, A(s) = integral of alpha,
// has a closed form (logarithms of the flows, taken with log1p). So u(1)
// is a quadrature of e^(A(s) - A(1)) f(s), done by Gauss-Legendre rules of
// 6 to 16 points (quadrature.go) on panels over which A changes by at most
// 16 and the flows by at most a factor 2, where e^A is within e^-46 of its largest
// value (the rest adds less than 1e-19 relative). Counter-current the
// unknown W enters f linearly: one quadrature for the blood inlet, one per
// unit of W, and superposition (W = u(1)) give it exactly, the two-point
// boundary problem needing no shooting. A is measured from its maximum so
// that nothing overflows however large KoA is.
//
// Accuracy, measured by the tests: run at QF = 0 the quadrature gives the
// closed forms to 7e-16; with QF = 1e-13 min(QB, QD, KoA) Transfer is
// within 1.1e-13 of them over the whole accepted range; against RK4
// integration of the local balances (another integrator on another
// formulation, with shooting) the worst difference on a grid of routine
// and extreme points is 5e-13.
//
// The local balance. Along the fraction s of the membrane passed by the
// blood (0 at the blood inlet):
//
//	QB(s) = QB - QF s
//	QD(s) = QD + QF s          co-current (dialysate enters at s = 0)
//	QD(s) = QD + QF (1 - s)    counter-current (dialysate enters at s = 1)
//	u'(s) = lam (CB - E CD),   lam = KoA/phi(Pe),  E = e^-Pe,
//
// so lam (1 - E) = S QF. With b0 = QB CBi, CB = (b0 - u)/QB(s), and
//
//	co-current:      CD = (QD CDi + u)/QD(s)
//	counter-current: CD = (QD CDi + W - u)/QD(s)
//
// the equation is u' = -alpha u + f with
//
//	co-current:      alpha = lam/QB(s) + lam E/QD(s)
//	counter-current: alpha = lam/QB(s) - lam E/QD(s)
//	               = lam c(s)/(QB(s) QD(s)),  c(s) = Delta + (1 - E) QB(s)
//
// where Delta = QD + QF - QB = QD(s) - QB(s) counter-current, a constant.
// c falls along s, so counter-current alpha changes sign at most once and
// A has one maximum, at tr; co-current alpha > 0 and tr = 1.
type membrane struct {
	counter    bool
	qb, qd, qf float64
	lam, lamE  float64     // lam and lam E
	sqf        float64     // S QF = lam (1 - E)
	delta      float64     // counter-current QD + QF - QB
	tr         float64     // where A is largest; offsets tau = s - tr
	qbr, qdr   float64     // QB(tr), QD(tr)
	rules      []gaussRule // the quadrature's rules (gaussRules by default)
}

func newMembrane(a Arrangement, qb, qd, koa float64, f Filtration) membrane {
	m := membrane{counter: a == Countercurrent, qb: qb, qd: qd, qf: f.QF, sqf: f.Sieving * f.QF, rules: gaussRules}
	// lam = KoA/phi(Pe) = S QF/(1 - e^-Pe): the first form is accurate for
	// small Pe, the second for large Pe (KoA -> 0 gives Pe = +Inf and
	// lam = S QF).
	pe := m.sqf / koa
	oneMinusE := -math.Expm1(-pe)
	if pe <= 1 {
		m.lam = koa / phi(pe)
	} else {
		m.lam = m.sqf / oneMinusE
	}
	m.lamE = m.lam * expPortable(-pe)
	m.tr = 1
	if m.counter {
		m.delta = qd + f.QF - qb
		c0 := m.delta + oneMinusE*qb        // c(0)
		c1 := m.delta + oneMinusE*(qb-f.QF) // c(1)
		switch {
		case c1 >= 0:
			m.tr = 1
		case c0 <= 0:
			m.tr = 0
		default:
			// c(tr) = 0: QB(tr) = -Delta/(1 - E).
			m.tr = math.Min(1, math.Max(0, (qb+m.delta/oneMinusE)/f.QF))
		}
	}
	m.qbr = qb - f.QF*m.tr
	if m.counter {
		m.qdr = qd + f.QF*(1-m.tr)
	} else {
		m.qdr = qd + f.QF*m.tr
	}
	return m
}

// Integration limits and panel sizes (see Transfer).
const (
	// kernelCut: e^A below e^-kernelCut times its largest value is left
	// out of the quadrature.
	kernelCut = 46
	// panelSpread bounds the change of A over one panel.
	panelSpreadDefault = 16
)

// blood and dialysate return QB and QD at offset tau from tr.
func (m *membrane) blood(tau float64) float64 { return m.qbr - m.qf*tau }

func (m *membrane) dialysate(tau float64) float64 {
	if m.counter {
		return m.qdr - m.qf*tau
	}
	return m.qdr + m.qf*tau
}

// exponent returns A(tr + tau) - A(tr), at most 0.
func (m *membrane) exponent(tau float64) float64 {
	if !m.counter {
		return m.lam*inverseIntegral(m.qbr, -m.qf, tau) + m.lamE*inverseIntegral(m.qdr, m.qf, tau)
	}
	// lam/QB - lam E/QD = lam (1 - E)/QD + lam Delta/(QB QD), each part
	// integrated in closed form, so that nothing cancels when QB(s) and
	// QD(s) are close:
	//   integral of Delta/(QB QD) from tr to tr + tau
	//     = (1/QF) log(QB(tr) QD(tr + tau) / (QB(tr + tau) QD(tr)))
	//     = (1/QF) log1p(Delta QF tau / (QB(tr + tau) QD(tr))).
	x := m.delta * tau / (m.blood(tau) * m.qdr)
	return m.sqf*inverseIntegral(m.qdr, -m.qf, tau) + m.lam*x*log1pRatio(m.qf*x)
}

// inverseIntegral returns the integral of 1/(q0 + slope x) over x from 0
// to tau, written (tau/q0) log1p(y)/y with y = slope tau/q0.
func inverseIntegral(q0, slope, tau float64) float64 {
	return tau / q0 * log1pRatio(slope*tau/q0)
}

// log1pRatio returns log1p(y)/y for y > -1, with log1pRatio(0) = 1.
func log1pRatio(y float64) float64 {
	if y == 0 {
		return 1
	}
	return math.Log1p(y) / y
}

// rate bounds |alpha| over the offsets [t0, t1].
func (m *membrane) rate(t0, t1 float64) float64 {
	if !m.counter {
		return m.lam/m.blood(t1) + m.lamE/m.dialysate(t0)
	}
	// lam c = lam Delta + S QF QB, linear in tau, so largest at an end;
	// QB and QD fall along s, so the product is smallest at t1.
	lc := func(tau float64) float64 { return math.Abs(m.lam*m.delta + m.sqf*m.blood(tau)) }
	return math.Max(lc(t0), lc(t1)) / (m.blood(t1) * m.dialysate(t1))
}

// solve returns K and D.
func (m *membrane) solve() (k, d float64) {
	lo, hi := -m.tr, 1-m.tr
	if m.exponent(lo) < -kernelCut {
		lo = m.cutoff(lo)
	}
	if m.exponent(hi) < -kernelCut {
		hi = m.cutoff(hi)
	}
	var ib, iw float64
	for _, piece := range [2][2]float64{{lo, 0}, {0, hi}} {
		b, w := m.integrate(piece[0], piece[1])
		ib += b
		iw += w
	}
	ib *= m.lam * m.qb // the blood inlet term f = lam QB CBi/QB(s) per unit CBi
	iw *= m.lamE       // the dialysate term lam E/QD(s) per unit of solute flow
	if !m.counter {
		return ib, m.qd * iw
	}
	// W (e^(A(1) - A(tr)) + Iw) = CBi Ib - QD CDi Iw.
	den := expPortable(m.exponent(1-m.tr)) + iw
	return ib / den, m.qd * iw / den
}

// cutoff returns the offset between end and 0 where A - A(tr) crosses
// -kernelCut, rounded towards end (so that nothing that matters is left
// out). A is monotone between tr and either end.
func (m *membrane) cutoff(end float64) float64 {
	out, in := end, 0.0
	for range 200 {
		mid := (out + in) / 2
		if mid == out || mid == in || math.Abs(in-out) <= 1e-3*math.Abs(in) {
			break
		}
		if m.exponent(mid) < -kernelCut {
			out = mid
		} else {
			in = mid
		}
	}
	return out
}

// integrate returns the integrals of e^(A - A(tr))/QB and e^(A - A(tr))/QD
// over the offsets [t0, t1], a piece on which A is monotone.
func (m *membrane) integrate(t0, t1 float64) (ib, iw float64) {
	// Where the flows would reach zero, past the ends: QB at
	// tau = QB(tr)/QF, QD counter-current at QD(tr)/QF, co-current at
	// -QD(tr)/QF. A panel stays at least its own width away, so the
	// integrand is analytic well around it.
	right := m.qbr / m.qf
	left := math.Inf(-1)
	if m.counter {
		right = math.Min(right, m.qdr/m.qf)
	} else {
		left = -m.qdr / m.qf
	}
	for t := t0; t < t1; {
		w := math.Min(t1-t, math.Min((right-t)/2, t-left))
		if r := m.rate(t, t+w); r*w > panelSpread {
			w = panelSpread / r
		}
		end := t + w
		if end >= t1 || t1-end <= 1e-15*math.Abs(t1-t0) || !(end > t) {
			end = t1
		}
		b, d := m.panel(m.rule(t, end, left, right), t, end)
		ib += b
		iw += d
		t = end
	}
	return ib, iw
}

// rule chooses the Gauss-Legendre rule for the panel [t0, t1] (ruleFor).
// The exponent's change is bounded by the rate over the panel widened by
// its half-width on each side, which allows for the curvature of A near a
// singularity of the flows (and for the reach of the Bernstein ellipse
// into the complex plane); forcedRule, when set, overrides the choice.
func (m *membrane) rule(t0, t1, left, right float64) *gaussRule {
	if forcedRule != nil {
		return forcedRule
	}
	hw := (t1 - t0) / 2
	lo, hi := t0-hw, t1+hw
	if hi >= right || lo <= left {
		return &m.rules[len(m.rules)-1]
	}
	return ruleFor(m.rules, 2*hw*m.rate(lo, hi), math.Min(right-t1, t0-left), hw)
}

var panelSpread = float64(panelSpreadDefault)

// forcedRule, for tests, makes every panel use one rule.
var forcedRule *gaussRule

// panel applies the Gauss-Legendre rule over the offsets [t0, t1].
func (m *membrane) panel(rule *gaussRule, t0, t1 float64) (ib, iw float64) {
	h, c := (t1-t0)/2, (t0+t1)/2
	for i, x := range rule.nodes {
		tau := c + h*x
		k := rule.weights[i] * expPortable(m.exponent(tau))
		ib += k / m.blood(tau)
		iw += k / m.dialysate(tau)
	}
	return h * ib, h * iw
}

// evaluateFiltered returns the performance of arrangement a at op (valid,
// as the model sees it: Operating.model) with ultrafiltration f, QF > 0.
// The transfer rate is W = K CBi - D CDi with K and D from Transfer; then
//
//	Clearance K = W/CBi, as the in-vitro formula gives it from the outlets:
//	  K = QB (CBi - CBo)/CBi + QF CBo/CBi
//	Dialysance D = -dW/dCDi (see Transfer)
//	CBo = (QB CBi - W)/(QB - QF),   CDo = (QD CDi + W)/(QD + QF)
//	ExtractionRatio (CBi - CBo)/CBi = (K - QF)/(QB - QF)
//	LogMeanDifference: the log-mean of the two end differences
//	  (counter-current CBi - CDo and CBo - CDi, co-current CBi - CDi and
//	  CBo - CDo)
//	ClearanceCeiling and DialysanceCeiling from TransferCeiling.
//
// Special cases are:
//
//	LogMeanDifference = 0 if an end difference is 0
//	LogMeanDifference = the arithmetic mean of the end differences if
//	  they differ in sign (possible only with ultrafiltration, where
//	  convection can carry solute against the concentration difference)
func evaluateFiltered(a Arrangement, op Operating, f Filtration) Performance {
	op.Filtration = f
	k, ceiling := clearanceAt(a, op)
	_, d := Transfer(a, op.QB, op.QD, op.KoA, f)
	_, dc := TransferCeiling(a, op.QB, op.QD, f.QF)
	w := k * op.CBi
	p := Performance{
		Clearance:         k,
		Dialysance:        d,
		TransferRate:      w,
		BloodOutlet:       (op.QB*op.CBi - w) / (op.QB - f.QF),
		DialysateOutlet:   (op.QD*op.CDi + w) / (op.QD + f.QF),
		ClearanceCeiling:  ceiling,
		DialysanceCeiling: dc,
	}
	p.ExtractionRatio = (p.Clearance - f.QF) / (op.QB - f.QF)
	ends := [2]float64{op.CBi - p.DialysateOutlet, p.BloodOutlet - op.CDi}
	if a == Cocurrent {
		ends = [2]float64{op.CBi - op.CDi, p.BloodOutlet - p.DialysateOutlet}
	}
	p.LogMeanDifference = endMean(ends[0], ends[1])
	return p
}

// endMean returns the log-mean of x and y, (x - y)/ln(x/y) written
// y u/log1p(u) with u = (x - y)/y (no 0/0 when x = y), with the special
// cases of EvaluateFiltered.
func endMean(x, y float64) float64 {
	switch {
	case x == 0 || y == 0:
		return 0
	case (x < 0) != (y < 0):
		return (x + y) / 2
	}
	u := (x - y) / y
	return y / log1pRatio(u)
}
