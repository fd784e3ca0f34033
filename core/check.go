package core

import "math"

// Defaults of a clearance check.
const (
	// DefaultMassBalanceTolerance is the largest mass balance error
	// accepted: Kuhlmann U, Goldau R et al., Nephrol Dial Transplant
	// 2001;16:1053-1058 accepted reference values only when the error was
	// at most 5 %.
	DefaultMassBalanceTolerance = 0.05
	// DefaultClearanceTolerance is how far a measured clearance may be from
	// the one the rated KoA gives: the haemodialyser standard ISO 8637-1
	// expects labelled clearance within ±10 % of measured (from memory).
	// It is set on clearance, not on KoA, because KoA is ill-conditioned
	// near the ceiling: a clearance within ±10 % can mean a KoA far off.
	DefaultClearanceTolerance = 0.10
	// illConditioned is the KoA sensitivity (per cent of KoA per per cent
	// of clearance) above which a note says KoA is poorly determined: at 5,
	// a ±2 % concentration reading becomes ±10 % in KoA.
	illConditioned = 5
)

// Measurement is what a clearance test in front of a machine records:
// the set flows and the four sample concentrations.
type Measurement struct {
	QB float64 `json:"qb"` // blood inlet flow, mL/min, > 0
	QD float64 `json:"qd"` // dialysate inlet flow, mL/min, > 0
	QF float64 `json:"qf"` // ultrafiltration rate, mL/min, 0 <= QF < QBW
	// Sieving is the sieving coefficient of the solute, 0 to 1 (1 for
	// urea, the API's default); it matters only with QF > 0.
	Sieving float64 `json:"sieving"`
	// Blood, when not nil, says the test ran on whole blood: the blood
	// side then counts the blood-water flow QBW (BloodWaterFlow) in place
	// of QB. Nil is an aqueous test solution.
	Blood *WholeBlood `json:"blood,omitempty"`
	CBi   float64     `json:"cbi"` // blood inlet concentration, > 0
	CBo   float64     `json:"cbo"` // blood outlet concentration
	CDi   float64     `json:"cdi"` // dialysate inlet concentration (0 for fresh)
	CDo   float64     `json:"cdo"` // dialysate outlet concentration
}

// BloodSideFlow returns the blood-side flow the check counts, mL/min: QB
// for an aqueous solution, the blood-water flow for whole blood.
func (m Measurement) BloodSideFlow() float64 {
	if m.Blood == nil {
		return m.QB
	}
	return m.QB * m.Blood.WaterFraction()
}

// model returns the operating point of the flow model at the measured
// flows and inlet concentrations (KoA 0), as the model sees it.
func (m Measurement) model() Operating {
	return Operating{QB: m.BloodSideFlow(), QD: m.QD, CBi: m.CBi, CDi: m.CDi, Filtration: Filtration{QF: m.QF, Sieving: m.Sieving}}
}

// Validate reports the first measurement that cannot be right, by its API
// name. Beyond the bounds of each value it refuses what no dialyzer can
// produce: blood leaving with more solute than it brought, or with less
// than the fresh dialysate; dialysate leaving with less than it brought or
// with more than the blood entering; no removal at all without
// ultrafiltration (nothing to measure).
func (m Measurement) Validate() error {
	if err := checkFlow("qb", m.QB); err != nil {
		return err
	}
	if err := checkFlow("qd", m.QD); err != nil {
		return err
	}
	if err := checkUltrafiltration(m.QF, 0); err != nil {
		return err
	}
	if s := m.Sieving; math.IsNaN(s) || s < 0 || s > 1 {
		return fieldErrorf("sieving", "must be from 0 to 1 (got %g); 1 for urea", s)
	}
	flow := "blood flow QB"
	if m.Blood != nil {
		if err := m.Blood.Validate(); err != nil {
			return err
		}
		flow = "blood-water flow QBW"
		if qbw := m.BloodSideFlow(); qbw < MinFlow {
			return fieldErrorf("qb", "gives a blood-water flow of %g mL/min, too small to compute with (minimum %g)", qbw, MinFlow)
		}
	}
	if err := (Filtration{QF: m.QF, Sieving: m.Sieving}).validate(m.BloodSideFlow(), flow); err != nil {
		return err
	}
	if err := checkConcentration("cbi", m.CBi, true); err != nil {
		return err
	}
	if err := checkConcentration("cbo", m.CBo, false); err != nil {
		return err
	}
	switch {
	case m.CBo > m.CBi:
		return fieldErrorf("cbo", "is above the blood inlet CBi (%g > %g): blood cannot leave with more solute than it brought; check that the samples are not swapped", m.CBo, m.CBi)
	case m.CBo == m.CBi && m.QF == 0:
		return fieldErrorf("cbo", "equals the blood inlet CBi with no ultrafiltration: there is no removal to measure; check the samples and that dialysate flows")
	}
	if err := checkConcentration("cdi", m.CDi, false); err != nil {
		return err
	}
	if m.CDi >= m.CBi {
		return fieldErrorf("cdi", "must be below the blood inlet CBi (%g >= %g): nothing can diffuse out of the blood", m.CDi, m.CBi)
	}
	if m.CBo < m.CDi {
		return fieldErrorf("cbo", "is below the dialysate inlet CDi (%g < %g): blood cannot be cleared below the fresh dialysate", m.CBo, m.CDi)
	}
	if err := checkConcentration("cdo", m.CDo, false); err != nil {
		return err
	}
	switch {
	case m.CDo < m.CDi:
		return fieldErrorf("cdo", "is below the dialysate inlet CDi (%g < %g): dialysate cannot lose solute while the blood loses it", m.CDo, m.CDi)
	case m.CDo > m.CBi:
		return fieldErrorf("cdo", "is above the blood inlet CBi (%g > %g): dialysate cannot become richer than the blood entering; check that the samples are not swapped", m.CDo, m.CBi)
	}
	return nil
}

// checkUltrafiltration validates QF: zero or positive and below QB, so that
// blood still leaves the filter; qb = 0 means QB is not known.
func checkUltrafiltration(qf, qb float64) error {
	switch {
	case math.IsNaN(qf) || math.IsInf(qf, 0):
		return fieldErrorf("qf", "must be a finite number")
	case qf < 0:
		return fieldErrorf("qf", "must not be negative (got %g mL/min)", qf)
	case qf > MaxFlow:
		return fieldErrorf("qf", "is beyond any dialysis flow (maximum %g mL/min, got %g)", MaxFlow, qf)
	case qb != 0 && qf >= qb:
		return fieldErrorf("qf", "must be below the blood flow QB (%g >= %g mL/min)", qf, qb)
	}
	return nil
}

// CheckOptions are the settings of a clearance check; the zero value means
// "no rated KoA" and default tolerances, without uncertainty.
type CheckOptions struct {
	// RatedKoA is the filter's rated KoA, mL/min; 0 when unknown.
	RatedKoA float64
	// MassBalanceTolerance and ClearanceTolerance are fractions; 0 takes
	// the defaults above.
	MassBalanceTolerance, ClearanceTolerance float64
	// ConcentrationUncertainty and FlowUncertainty are the ± limits of each
	// reading, as fractions of the reading (0.02 is ±2 %), and
	// ConcentrationFloor an absolute part of each concentration's limit, in
	// the concentration unit (the analyser's last digit, say); all 0 means
	// no uncertainty analysis. See uncertainty.go.
	ConcentrationUncertainty, FlowUncertainty, ConcentrationFloor float64
	// Seed seeds the Monte Carlo draws (the same seed, the same interval).
	Seed uint64
}

// Bounds on the options.
const (
	MaxUncertainty = 0.5 // a reading uncertain by more than ±50 % is no reading
	MaxSeed        = 1 << 53
)

// Validate reports the first option that cannot be used; field names are
// those of the check request.
func (o CheckOptions) Validate() error {
	if o.RatedKoA != 0 {
		if err := checkKoA("koa", o.RatedKoA); err != nil {
			return err
		}
	}
	if err := checkFraction("mass_balance_tolerance_percent", o.MassBalanceTolerance, 0, 1, false); err != nil {
		return err
	}
	if err := checkFraction("clearance_tolerance_percent", o.ClearanceTolerance, 0, 1, false); err != nil {
		return err
	}
	if err := checkFraction("concentration_uncertainty_percent", o.ConcentrationUncertainty, 0, MaxUncertainty, true); err != nil {
		return err
	}
	if err := checkFraction("flow_uncertainty_percent", o.FlowUncertainty, 0, MaxUncertainty, true); err != nil {
		return err
	}
	if err := checkConcentration("concentration_uncertainty_floor", o.ConcentrationFloor, false); err != nil {
		return err
	}
	if o.Seed > MaxSeed {
		return fieldErrorf("seed", "must be a whole number from 0 to 2^53 (got %d)", o.Seed)
	}
	return nil
}

// checkFraction validates a fraction entered as a percentage: within
// (lo, hi], or [lo, hi] when zero is allowed. Messages speak in per cent.
func checkFraction(field string, v, lo, hi float64, zero bool) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf(field, "must be a finite number")
	case v < lo || (v == lo && !zero):
		if zero {
			return fieldErrorf(field, "must not be negative (got %g %%)", 100*v)
		}
		return fieldErrorf(field, "must be greater than 0 %% (got %g %%)", 100*v)
	case v > hi:
		return fieldErrorf(field, "must be at most %g %% (got %g %%)", 100*hi, 100*v)
	}
	return nil
}

// Finding is one plain sentence about a check, with its level: "pass",
// "note", "warn" or "fail".
type Finding struct {
	Level string `json:"level"`
	Code  string `json:"code"`
	Text  string `json:"text"`
}

// levels orders finding levels from best to worst.
var levels = map[string]int{"pass": 0, "note": 1, "warn": 2, "fail": 3}

// worst returns the worst level among findings ("pass" when none).
func worst(findings []Finding) string {
	w := "pass"
	for _, f := range findings {
		if levels[f.Level] > levels[w] {
			w = f.Level
		}
	}
	return w
}

// ArrangementFit is what a measured clearance says about one arrangement.
type ArrangementFit struct {
	// KoA is the in-situ KoA, mL/min: the filter that gives the measured
	// clearance in this arrangement at the measured flows; null when the
	// clearance is at or above the arrangement's ceiling.
	KoA *float64 `json:"koa"`
	// Ceiling is the most clearance any filter gives in this arrangement
	// at the measured flows, with the ultrafiltration counted, mL/min.
	Ceiling float64 `json:"clearance_ceiling"`
	// Sensitivity is d ln KoA / d ln K at the measured flows: the per cent
	// change of KoA per per cent of clearance. It grows without bound as
	// the clearance approaches the ceiling. Null when KoA is null or 0.
	Sensitivity *float64 `json:"sensitivity"`
	// SensitivityUnbounded is true when the clearance is so close to the
	// ceiling that the sensitivity overflows (Sensitivity is then null).
	SensitivityUnbounded bool `json:"sensitivity_unbounded,omitempty"`
	// With a rated KoA: the clearance the rated filter gives in this
	// arrangement, the measured clearance's deviation from it and the
	// in-situ KoA's deviation from the rating (fractions); otherwise null.
	Expected           *float64 `json:"expected_clearance"`
	ClearanceDeviation *float64 `json:"clearance_deviation"`
	KoADeviation       *float64 `json:"koa_deviation"`
}

// CheckResult is the verdict of a clearance test.
type CheckResult struct {
	// Clearance is the blood-side clearance, mL/min:
	// K = QB (CBi - CBo)/CBi + QF CBo/CBi.
	Clearance float64 `json:"clearance"`
	// DialysateClearance is the dialysate-side clearance, mL/min:
	// K = ((QD + QF) CDo - QD CDi)/CBi.
	DialysateClearance float64 `json:"clearance_dialysate"`
	// BloodRemoval and DialysateGain are the solute transfer rates each
	// side shows, in the concentration unit times mL/min.
	BloodRemoval  float64 `json:"blood_removal"`
	DialysateGain float64 `json:"dialysate_gain"`
	// MassBalanceError is (BloodRemoval - DialysateGain)/BloodRemoval, a
	// fraction: positive when the dialysate gained less than the blood
	// lost.
	MassBalanceError     float64 `json:"mass_balance_error"`
	MassBalanceTolerance float64 `json:"mass_balance_tolerance"`
	MassBalanceOK        bool    `json:"mass_balance_ok"`
	// ExtractionRatio is (CBi - CBo)/CBi.
	ExtractionRatio float64 `json:"extraction_ratio"`
	// QBW is the blood-side flow counted, mL/min: QB for an aqueous test
	// solution, the blood-water flow for whole blood. QB below stands for
	// it.
	QBW float64 `json:"qbw"`
	// DiffusiveClearance is the clearance with the ultrafiltration's share
	// taken out by the common approximation K = KD + QF (1 - KD/QB) (from
	// memory), KD = QB (K - QF)/(QB - QF) = QB (CBi - CBo)/CBi, and
	// DiffusiveDialysance is KD CBi/(CBi - CDi): what the extraction ratio
	// says without ultrafiltration. With QF = 0 the in-situ KoA inverts the
	// latter; with QF > 0 it inverts the ultrafiltration model instead
	// (Transfer), which these two only approximate.
	DiffusiveClearance  float64 `json:"diffusive_clearance"`
	DiffusiveDialysance float64 `json:"diffusive_dialysance"`
	// KoACountercurrent and KoACocurrent repeat the in-situ KoA of each
	// arrangement (null where it cannot reach the measured clearance).
	KoACountercurrent *float64       `json:"koa_countercurrent"`
	KoACocurrent      *float64       `json:"koa_cocurrent"`
	Countercurrent    ArrangementFit `json:"countercurrent"`
	Cocurrent         ArrangementFit `json:"cocurrent"`
	// RatedKoA is the rating compared against (null when none was given)
	// and ClearanceTolerance the fraction allowed around it.
	RatedKoA           *float64 `json:"rated_koa"`
	ClearanceTolerance float64  `json:"clearance_tolerance"`
	// Verdict on the rating: "as_rated", "below_rating", "fits_cocurrent",
	// "above_rating", "beyond_ceiling" or "not_rated".
	Verdict string `json:"verdict"`
	// Overall is the worst level of Findings: "pass", "note", "warn" or
	// "fail".
	Overall  string    `json:"overall"`
	Findings []Finding `json:"findings"`
	// Uncertainty is null unless an uncertainty was set.
	Uncertainty *Uncertainty `json:"uncertainty"`
}

// Check turns a clearance test into clearance, mass balance, in-situ KoA
// and a verdict.
//
// Blood side, with ultrafiltration (the in-vitro clearance test of the
// haemodialyser standard ISO 8637-1; the formula is from memory of it):
//
//	K = QB (CBi - CBo)/CBi + QF CBo/CBi = (QBi CBi - QBo CBo)/CBi, QBo = QB - QF
//
// Dialysate side, with QDo = QD + QF leaving: K = (QDo CDo - QD CDi)/CBi.
// Mass balance error = (blood-side removal - dialysate-side gain) /
// blood-side removal (Kuhlmann et al., NDT 2001;16:1053-1058).
//
// The in-situ KoA is the KoA at which the flow model gives the measured
// clearance at the measured flows and inlet concentrations: without
// ultrafiltration the effectiveness-NTU relations (Michaels 1966) inverted
// in closed form on D = K CBi/(CBi - CDi); with it the ultrafiltration
// model (Transfer: the diffusion-convection flux along the membrane, with
// the sieving coefficient), inverted by root finding (KoAForClearance).
// The expected clearance of a rated filter and the ceilings come from the
// same model. With whole blood QB is the blood-water flow throughout, on
// both the measured and the model side.
//
// Special cases are:
//
//	K at or above an arrangement's ceiling: its KoA is null
//	CBo = CBi with QF > 0 (K = QF): no diffusion shows; KoA = 0 in both
//	  arrangements, with a finding
//	rated KoA 0 (unknown): Verdict "not_rated"
//	no uncertainty set: Uncertainty null
func Check(m Measurement, o CheckOptions) (CheckResult, error) {
	if err := m.Validate(); err != nil {
		return CheckResult{}, err
	}
	if o.MassBalanceTolerance == 0 {
		o.MassBalanceTolerance = DefaultMassBalanceTolerance
	}
	if o.ClearanceTolerance == 0 {
		o.ClearanceTolerance = DefaultClearanceTolerance
	}
	if err := o.Validate(); err != nil {
		return CheckResult{}, err
	}
	r := CheckResult{
		MassBalanceTolerance: o.MassBalanceTolerance,
		ClearanceTolerance:   o.ClearanceTolerance,
		ExtractionRatio:      (m.CBi - m.CBo) / m.CBi,
	}
	s := solve(m, noHint)
	r.QBW = m.BloodSideFlow()
	r.Clearance, r.BloodRemoval, r.DialysateGain = s.k, s.removal, s.gain
	r.DialysateClearance = s.gain / m.CBi
	r.MassBalanceError = s.balance
	r.MassBalanceOK = math.Abs(s.balance) <= o.MassBalanceTolerance
	r.DiffusiveClearance, r.DiffusiveDialysance = s.kd, s.dd
	op := m.model()
	for i, a := range Arrangements {
		fit := &r.Countercurrent
		if a == Cocurrent {
			fit = &r.Cocurrent
		}
		_, fit.Ceiling = clearanceAt(a, op)
		if s.reach[i] {
			fit.KoA = ptr(s.koa[i])
			if s.koa[i] > 0 {
				// The sensitivity is at least 1 (the inverse relations are
				// convex; 1e-6 allows for rounding where K is small and the
				// sensitivity near 1). At the edge of the ceiling its derivative
				// overflows or drowns in rounding (values below 1, even
				// negative, were found by fuzzing); it is then reported as
				// unbounded, with Sensitivity null, rather than as a number.
				if sens := koaSensitivity(a, op, s.k, s.dd, s.koa[i]); sens >= 1-1e-6 && !math.IsInf(sens, 0) {
					fit.Sensitivity = ptr(sens)
				} else {
					fit.SensitivityUnbounded = true
				}
			}
		}
		if o.RatedKoA > 0 {
			rated := op
			rated.KoA = o.RatedKoA
			expected, _ := clearanceAt(a, rated)
			fit.Expected = ptr(expected)
			fit.ClearanceDeviation = ptr((s.k - expected) / expected)
			if fit.KoA != nil {
				fit.KoADeviation = ptr((*fit.KoA - o.RatedKoA) / o.RatedKoA)
			}
		}
	}
	r.KoACountercurrent, r.KoACocurrent = r.Countercurrent.KoA, r.Cocurrent.KoA
	if o.RatedKoA > 0 {
		r.RatedKoA = ptr(o.RatedKoA)
	}
	if o.ConcentrationUncertainty > 0 || o.FlowUncertainty > 0 || o.ConcentrationFloor > 0 {
		u := propagate(m, o)
		r.Uncertainty = &u
	}
	r.Verdict, r.Findings = judge(m, o, r)
	r.Overall = worst(r.Findings)
	return r, nil
}

// solution is the arithmetic of a check, shared with the uncertainty
// analysis, which runs it on perturbed measurements without validation.
type solution struct {
	k, removal, gain, balance float64
	kd, dd                    float64
	koa                       [2]float64 // by Arrangements; +Inf where unreachable
	reach                     [2]bool
}

// drawHint speeds up the in-situ KoA of the draws of an uncertainty
// analysis with ultrafiltration. Each draw's KoA starts at the closed-form
// KoA g of its diffusive dialysance (the approximation of
// DiffusiveDialysance, inSituKoA) times ratio, the model's KoA over that
// closed form at the central values; the two move alike with the
// readings, so the start is off by the product of the readings' spread and
// the ultrafiltration's effect (5e-4 relative in the median draw of the
// demo check, 2.4e-3 at worst). A Newton step follows, with the closed
// form's own slope dD/dKoA at the draw times slopeRatio, the model's
// dK/dKoA over that slope at the centre: it leaves the KoA within 3e-7 in
// the median draw (2e-5 with the central slope unscaled), and one secant
// step then ends most draws in two model evaluations. Draws are solved to
// drawTolerance; a zero ratio (central KoA unknown) means no hint.
type drawHint struct {
	ratio, slopeRatio [2]float64
	// quick evaluates the model with drawRules: for the Monte Carlo draws,
	// not for the central differences of the linearised interval.
	quick bool
}

// newDrawHint returns the hint for the draws around m, whose in-situ KoA
// without a hint is central; no hint without ultrafiltration.
func newDrawHint(m Measurement, central solution) drawHint {
	var hint drawHint
	if m.QF == 0 {
		return hint
	}
	qb := m.BloodSideFlow()
	for i, a := range Arrangements {
		g, ok := inSituKoA(a, qb, m.QD, central.dd)
		if !ok || g <= 0 || !central.reach[i] || central.koa[i] <= 0 {
			continue
		}
		hint.ratio[i] = central.koa[i] / g
		// dK/dKoA = (K/KoA)/(d ln KoA/d ln K) at the centre, over the
		// closed form's slope there.
		if s := koaSensitivity(a, m.model(), central.k, central.dd, central.koa[i]); s > 0 {
			hint.slopeRatio[i] = central.k / central.koa[i] / s / closedSlope(a, qb, m.QD, central.dd, g)
		}
	}
	return hint
}

// closedSlope is dD/dKoA of the closed form at dialysance d, KoA koa > 0:
// (D/KoA)/(d ln KoA/d ln D) (dialysanceSensitivity).
func closedSlope(a Arrangement, qb, qd, d, koa float64) float64 {
	return d / koa / dialysanceSensitivity(a, qb, qd, d, koa)
}

// noHint asks solve to find the in-situ KoA without a starting point, to
// the model's own accuracy.
var noHint drawHint

// drawTolerance is the relative step at which a draw's KoA stops; the
// secant converges superlinearly, so the KoA is then far nearer than that
// (TestDrawHint: within 1e-8 of the KoA found without a hint), and far
// closer than any interval the Monte Carlo can resolve (its percentiles
// move by about 1e-3 relative between seeds).
const drawTolerance = 1e-6

// solve computes a check's numbers. With ultrafiltration the in-situ KoA
// of each arrangement is found by root finding, started as hint says for
// the draws of an uncertainty analysis. It needs only positive flows; a
// perturbed measurement may break the other rules, and then the numbers
// say so: +Inf for everything when the blood inlet reads 0 or less, a
// balance of +Inf when the blood side shows no removal, a KoA of +Inf when
// no filter reaches the clearance or the dialysate inlet is at or above
// the blood inlet. It never returns NaN.
func solve(m Measurement, hint drawHint) solution {
	var s solution
	if !(m.CBi > 0) {
		// A draw whose blood inlet reads 0 or less: nothing is defined.
		inf := math.Inf(1)
		return solution{k: inf, removal: inf, gain: inf, balance: inf, kd: inf, dd: inf, koa: [2]float64{inf, inf}}
	}
	// Each side as flow times a difference of inputs, then the
	// ultrafiltrate's share: the differences are exact for close samples.
	qb := m.BloodSideFlow()
	s.removal = qb*(m.CBi-m.CBo) + m.QF*m.CBo
	s.gain = m.QD*(m.CDo-m.CDi) + m.QF*m.CDo
	s.k = s.removal / m.CBi
	s.balance = math.Inf(1)
	if s.removal > 0 {
		s.balance = (s.removal - s.gain) / s.removal
	}
	// KD = QB (K - QF)/(QB - QF) is QB (CBi - CBo)/CBi exactly (see Check),
	// and this form has no difference of computed numbers.
	s.kd = qb * (m.CBi - m.CBo) / m.CBi
	switch {
	case s.kd <= 0:
		// No diffusion shows: the model's KoA is 0 in both arrangements.
		if m.CDi < m.CBi {
			s.dd = s.kd * m.CBi / (m.CBi - m.CDi)
		}
		s.reach = [2]bool{true, true}
	case m.CDi >= m.CBi:
		s.dd = math.Inf(1)
		s.koa = [2]float64{math.Inf(1), math.Inf(1)}
	default:
		s.dd = s.kd * m.CBi / (m.CBi - m.CDi)
		for i, a := range Arrangements {
			if m.QF == 0 {
				s.koa[i], s.reach[i] = inSituKoA(a, qb, m.QD, s.dd)
			} else {
				// The closed form without ultrafiltration, on the same
				// dialysance, is near the answer (within some per cent for
				// QF a few per cent of QB): the secant starts there, and
				// bracketing takes over should it not settle. An uncertainty
				// draw starts nearer still, from the central value's ratio
				// to it (hint).
				st := start{}
				if g, ok := inSituKoA(a, qb, m.QD, s.dd); ok && g > 0 {
					st = nearStart(g)
					if r := hint.ratio[i]; r > 0 {
						st = start{koa: g * r, offset: 1e-4, tol: drawTolerance, quick: hint.quick}
						if sr := hint.slopeRatio[i]; sr > 0 {
							st.slope = sr * closedSlope(a, qb, m.QD, s.dd, g)
						}
					}
				}
				s.koa[i], s.reach[i] = filteredKoA(a, m, s.k, st)
			}
			if !s.reach[i] {
				s.koa[i] = math.Inf(1)
			}
		}
	}
	return s
}

// filteredKoA is inSituKoA with ultrafiltration: the KoA at which
// arrangement a gives the clearance k of m by the ultrafiltration model,
// 0 when k is at or below what the ultrafiltration alone clears, false
// when no filter (up to MaxKoA) reaches k. m's flows must be positive and
// QF below the blood-side flow; a draw of an uncertainty analysis that
// breaks that has no KoA.
func filteredKoA(a Arrangement, m Measurement, k float64, st start) (float64, bool) {
	op := m.model()
	if !(op.QF < op.QB-MinFlow) || !(m.CBi > 0) || !(m.Sieving >= 0 && m.Sieving <= 1) {
		return 0, false
	}
	inv := invertClearance(a, op, k, st)
	switch inv.reach {
	case found:
		return inv.koa, true
	case atFloor:
		return 0, true
	}
	return 0, false
}

// koaSensitivity returns d ln KoA / d ln K at the measured flows for the
// in-situ KoA koa > 0 of clearance k: without ultrafiltration from the
// closed form (dialysanceSensitivity, on the dialysance d), with it from a
// central difference of the model's clearance in KoA, of relative step
// 1e-6 (truncation and rounding both near 1e-11 relative).
func koaSensitivity(a Arrangement, op Operating, k, d, koa float64) float64 {
	if op.QF == 0 {
		return dialysanceSensitivity(a, op.QB, op.QD, d, koa)
	}
	h := 1e-6 * koa
	op.KoA = koa + h
	up, _ := clearanceAt(a, op)
	op.KoA = koa - h
	down, _ := clearanceAt(a, op)
	return k / koa / ((up - down) / (2 * h))
}

// inSituKoA returns the KoA at which arrangement a has dialysance d at
// flows qb and qd, and false when d is at or above the arrangement's
// ceiling, where no finite KoA reaches it. d must be >= 0. The inverse
// itself is requiredKoA of size.go (the effectiveness-NTU relations
// inverted in closed form); here only the reach is decided.
func inSituKoA(a Arrangement, qb, qd, d float64) (float64, bool) {
	if d == 0 {
		return 0, true
	}
	if d >= Ceiling(a, qb, qd) {
		return 0, false
	}
	koa := requiredKoA(a, qb, qd, d)
	if math.IsInf(koa, 0) || math.IsNaN(koa) {
		// d so close to the ceiling that KoA overflows: no finite filter.
		return 0, false
	}
	return koa, true
}

// dialysanceSensitivity returns d ln KoA / d ln D at fixed flows for the
// in-situ KoA koa > 0 of dialysance d, from the derivatives of the inverse
// relations (derived here): counter-current dNTU/deps =
// 1/((1 - eps Cr)(1 - eps)), co-current dNTU/deps = 1/(1 - eps (1 + Cr)),
// so that
//
//	counter-current: S = d Cmax Cmin / (KoA (Cmax - d)(Cmin - d))
//	co-current:      S = d Dmax / (KoA (Dmax - d))
//
// S tends to 1 as d -> 0 and grows without bound at the ceiling.
func dialysanceSensitivity(a Arrangement, qb, qd, d, koa float64) float64 {
	cmin, cmax, _ := capacities(qb, qd)
	if a == Cocurrent {
		ceiling := Ceiling(Cocurrent, qb, qd)
		return d / koa * (ceiling / (ceiling - d))
	}
	return d / koa * (cmax / (cmax - d)) * (cmin / (cmin - d))
}

func ptr(v float64) *float64 { return &v }

// judge gives the verdict on the rating and the plain sentences.
func judge(m Measurement, o CheckOptions, r CheckResult) (string, []Finding) {
	var out []Finding
	add := func(level, code, format string, args ...any) {
		out = append(out, Finding{Level: level, Code: code, Text: sentence(format, args...)})
	}
	pct := func(x float64) float64 { return 100 * x }
	if r.MassBalanceOK {
		add("pass", "mass_balance_ok", "Mass balance error %+.1f %%, within ±%g %%: the blood-side and dialysate-side results agree.",
			pct(r.MassBalanceError), pct(o.MassBalanceTolerance))
	} else {
		add("fail", "mass_balance_off", "Mass balance error %+.1f %%, outside ±%g %%: the blood side and the dialysate side disagree, so the clearance is not reliable. Check sample handling and timing, the flows and for leaks, then repeat the test.",
			pct(r.MassBalanceError), pct(o.MassBalanceTolerance))
	}
	if r.DiffusiveClearance <= 0 {
		add("fail", "no_diffusion", "The blood outlet equals the inlet: only the ultrafiltration, %.1f mL/min, clears and no diffusion shows. Check that dialysate flows through the filter, for clotting, and the samples.",
			m.QF)
	}
	cc, co := r.Countercurrent, r.Cocurrent
	verdict := "not_rated"
	switch {
	case cc.KoA == nil:
		verdict = "beyond_ceiling"
		add("fail", verdict, "The clearance, %.1f mL/min, is at or above %.1f mL/min, the most any filter can give at these flows: check the flows, the sample handling and the concentrations entered.",
			r.Clearance, cc.Ceiling)
	case r.RatedKoA == nil:
		add("note", verdict, "Enter the filter's rated KoA to compare the clearance with its rating.")
	default:
		rated, tol := *r.RatedKoA, o.ClearanceTolerance
		devCC, devCO := *cc.ClearanceDeviation, *co.ClearanceDeviation
		switch {
		case math.Abs(devCC) <= tol:
			verdict = "as_rated"
			add("pass", verdict, "The clearance, %.1f mL/min, is within ±%g %% of the %.1f mL/min a KoA %g mL/min filter gives counter-current at these flows (%+.1f %%).",
				r.Clearance, pct(tol), *cc.Expected, rated, pct(devCC))
			if math.Abs(devCO) <= tol {
				add("note", "arrangements_alike", "At these flows this filter gives nearly the same clearance co-current (%.1f mL/min), so this test cannot show whether the dialysate lines are reversed.",
					*co.Expected)
			}
		case devCC > tol:
			verdict = "above_rating"
			add("warn", verdict, "The clearance, %.1f mL/min, is %.1f %% above the %.1f mL/min a KoA %g mL/min filter gives counter-current at these flows: check the flows, the sample handling and the rated KoA entered.",
				r.Clearance, pct(devCC), *cc.Expected, rated)
		case math.Abs(devCO) <= tol:
			verdict = "fits_cocurrent"
			add("fail", verdict, "The clearance, %.1f mL/min, fits co-current flow (%.1f mL/min expected at the rated KoA) and is %.1f %% below counter-current (%.1f mL/min): check whether the dialysate lines are connected the wrong way round. If they are right, the filter is far below its rating (fouling, clotting, or a different filter).",
				r.Clearance, *co.Expected, -pct(devCC), *cc.Expected)
		default:
			verdict = "below_rating"
			add("fail", verdict, "The clearance, %.1f mL/min, is %.1f %% below the %.1f mL/min a KoA %g mL/min filter gives counter-current at these flows; the in-situ KoA, %.0f mL/min, is %.0f %% below rating: fouling, clotting, or a different filter than entered.",
				r.Clearance, -pct(devCC), *cc.Expected, rated, *cc.KoA, -pct(*cc.KoADeviation))
		}
	}
	if cc.KoA != nil && co.KoA == nil {
		add("note", "not_cocurrent", "The clearance is above %.1f mL/min, the most co-current flow can give at these flows, so the dialysate runs counter-current.",
			co.Ceiling)
	}
	if cc.SensitivityUnbounded {
		add("note", "koa_sensitive", "KoA is not determined here: the clearance is so close to the counter-current ceiling that any error in it moves the KoA without bound. A lower blood flow, or a higher dialysate flow, measures KoA more precisely.")
	}
	if cc.Sensitivity != nil && *cc.Sensitivity > illConditioned {
		add("note", "koa_sensitive", "KoA is poorly determined here: 1 %% in clearance moves the counter-current KoA by %.0f %%. A lower blood flow, or a higher dialysate flow, measures KoA more precisely.",
			*cc.Sensitivity)
	}
	if u := r.Uncertainty; u != nil && cc.KoA != nil && u.KoACountercurrent.High == nil && u.KoACountercurrent.Low != nil {
		add("note", "koa_unbounded", "Within the measurement uncertainty the clearance may reach the counter-current ceiling, so the KoA has no upper bound: the test shows only that it is at least %.0f mL/min.",
			*u.KoACountercurrent.Low)
	}
	return verdict, out
}
