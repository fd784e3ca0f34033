package core

import (
	"math"
	"strconv"
)

// Conductivity dialysance.
//
// The ion mass balance on the dialysate side: what leaves equals what came
// in plus what crossed from the blood,
//
//	QDo Cdo = QD Cdi + J,   QDo = QD + QF.
//
// Two inlet levels 1 and 2 a few minutes apart see the same blood (Cbi
// unchanged), so whatever in J does not depend on Cdi cancels from the
// difference. How the ultrafiltrate is counted decides what is called
// dialysance:
//
//   - effective dialysance, the published form De = (QD + QF)(1 - ΔCdo/ΔCdi)
//     (Goldau R et al., Artif Organs 2002; authors from memory, form read in
//     an abstract), writes J = De (Cbi - Cdi) + QF Cdi: the ultrafiltrate's
//     ions are part of the dialysance. A filter that only filters (no
//     diffusion, sieving 1, J = QF Cbi) has De = QF, as its clearance is
//     QF: De is the one to compare with a measured clearance.
//   - diffusive dialysance, from J = Dd (Cbi - Cdi) + QF Cbi, the form
//     D = QDi - QDo ΔCdo/ΔCdi of the ion mass balance: the ultrafiltrate
//     carries blood-level ions, which cancel. It is the dialysance D of
//     the flow model (Transfer, D = -dW/dCDi), and so the one the in-situ
//     KoA inverts.
//
// The two differ by exactly QF: Dd = De - QF. With QF = 0 they are the same.
// ConductivityDialysance takes De as its headline "dialysance" and reports Dd beside it.

// DefaultResolution is the conductivity meter's resolution assumed when
// none is given: a reading to 0.01 mS/cm (common practice, no source). It
// is in the unit of the readings; set it when they are in another unit.
const DefaultResolution = 0.01

// resolutionSteps is the smallest inlet step, in resolution units, that
// ConductivityDialysance accepts. Each reading may be off by half a resolution unit, so
// each step by one unit, and De = QDo (1 - r), r = ΔCdo/ΔCdi, by up to
// QDo (1 + r) res/|ΔCdi|: at 20 units, at most 10 % of QDo.
const resolutionSteps = 20

// decimalSlack forgives the binary rounding of decimal readings at the
// minimum step: 14.2 - 14.0 is 0.19999999999999929 in float64.
const decimalSlack = 1e-9

// Levels are the dialysate conductivities at two inlet levels, in any one
// unit (mS/cm usually).
type Levels struct {
	Cdi1 float64 `json:"cdi1"` // inlet, level 1
	Cdo1 float64 `json:"cdo1"` // outlet, level 1
	Cdi2 float64 `json:"cdi2"` // inlet, level 2
	Cdo2 float64 `json:"cdo2"` // outlet, level 2
}

// DialysanceSetting is what else a conductivity dialysance needs.
type DialysanceSetting struct {
	QD float64 `json:"qd"` // dialysate inlet flow, mL/min, > 0
	QF float64 `json:"qf"` // ultrafiltration rate, mL/min, >= 0
	// Resolution is the meter's resolution in the unit of the readings;
	// 0 takes DefaultResolution.
	Resolution float64 `json:"resolution"`
	// QB and RatedKoA are optional (0 when unknown): with QB the in-situ
	// KoA is found, with both the dialysance the rated filter gives.
	QB       float64 `json:"qb"`
	RatedKoA float64 `json:"koa"`
	// Tolerance is the deviation from the rated filter's dialysance
	// accepted, a fraction; 0 takes DefaultClearanceTolerance (check.go).
	Tolerance float64 `json:"tolerance"`
}

// DialysanceResult is a conductivity dialysance.
type DialysanceResult struct {
	// Dialysance is the effective dialysance De = (QD + QF)(1 - r), mL/min.
	Dialysance float64 `json:"dialysance"`
	// DiffusiveDialysance is Dd = QD - (QD + QF) r = De - QF, mL/min.
	DiffusiveDialysance float64 `json:"diffusive_dialysance"`
	// OutletInletRatio r = ΔCdo/ΔCdi, with ΔC = C(level 1) - C(level 2).
	OutletInletRatio float64 `json:"outlet_inlet_ratio"`
	InletStep        float64 `json:"inlet_step"`
	OutletStep       float64 `json:"outlet_step"`
	// ResolutionBound is how far the meter's resolution alone may move the
	// dialysance: ± QDo (1 + r) resolution/|ΔCdi|, mL/min.
	ResolutionBound float64 `json:"resolution_bound"`
	// MinimumStep is the smallest inlet step accepted, 20 resolution units.
	MinimumStep float64 `json:"minimum_step"`
	Resolution  float64 `json:"resolution"`
	// With QB: the in-situ counter-current KoA from the diffusive
	// dialysance, by the ultrafiltration model with sieving 1 (null when
	// no filter reaches it, or Dd < 0).
	KoACountercurrent *float64 `json:"koa_countercurrent"`
	// With QB and a rated KoA: the effective dialysance the rated filter
	// gives counter-current (Dd from the ultrafiltration model, plus QF)
	// and the measured one's deviation from it (a fraction).
	Expected  *float64 `json:"expected_dialysance"`
	Deviation *float64 `json:"deviation"`
	// Verdict on the rating: "as_rated", "below_rating", "above_rating",
	// or "not_rated" without QB and a rated KoA; Overall the worst level of
	// Findings, plain sentences as in a clearance check.
	Verdict  string    `json:"verdict"`
	Overall  string    `json:"overall"`
	Findings []Finding `json:"findings"`
}

// ConductivityDialysance returns the conductivity dialysance from the dialysate
// conductivities at two inlet levels; see the notes above for the two
// forms and why De is the headline.
//
// Special cases are:
//
//	ΔCdi = 0, or |ΔCdi| below 20 resolution units: refused (cdi2)
//	r outside [0, 1] (outlet step larger than, or against, the inlet step): refused (cdo2)
//	r = 0: De = QD + QF (the outlet does not follow the inlet at all)
//	r = 1: De = 0 (the outlet follows the inlet entirely)
func ConductivityDialysance(lv Levels, st DialysanceSetting) (DialysanceResult, error) {
	if err := st.validate(); err != nil {
		return DialysanceResult{}, err
	}
	for _, c := range []struct {
		field string
		v     float64
	}{{"cdi1", lv.Cdi1}, {"cdo1", lv.Cdo1}, {"cdi2", lv.Cdi2}, {"cdo2", lv.Cdo2}} {
		if err := checkConcentration(c.field, c.v, true); err != nil {
			return DialysanceResult{}, err
		}
	}
	res := st.Resolution
	if res == 0 {
		res = DefaultResolution
	}
	in, out := lv.Cdi1-lv.Cdi2, lv.Cdo1-lv.Cdo2
	minimum := resolutionSteps * res
	switch {
	case in == 0:
		return DialysanceResult{}, fieldErrorf("cdi2", "equals the level 1 inlet (%g): two different inlet levels are needed", lv.Cdi2)
	case math.Abs(in) < minimum*(1-decimalSlack):
		return DialysanceResult{}, fieldErrorf("cdi2", "is too close to the level 1 inlet to resolve: the step %g is below %g, 20 times the meter resolution %g; make the inlet step larger", math.Abs(in), minimum, res)
	}
	r := out / in
	switch {
	case r > 1:
		return DialysanceResult{}, fieldErrorf("cdo2", "the outlet step (%g) is larger than the inlet step (%g): the outlet cannot follow the inlet by more than it moved; check the readings", math.Abs(out), math.Abs(in))
	case r < 0:
		return DialysanceResult{}, fieldErrorf("cdo2", "the outlet moved against the inlet (outlet step %g, inlet step %g): check the readings and that each level had settled", out, in)
	}
	qdo := st.QD + st.QF
	// 1 - r is taken from the steps, (ΔCdi - ΔCdo)/ΔCdi, not from r, so
	// that a dialysance small beside QDo keeps its digits.
	de := qdo * ((in - out) / in)
	d := DialysanceResult{
		Dialysance:          de,
		DiffusiveDialysance: de - st.QF,
		OutletInletRatio:    r,
		InletStep:           in,
		OutletStep:          out,
		ResolutionBound:     qdo * (1 + r) * res / math.Abs(in),
		MinimumStep:         minimum,
		Resolution:          res,
	}
	// The model side: the ultrafiltration model with a sieving coefficient
	// of 1 (small ions pass the membrane freely with the water: common
	// practice, no source), whose dialysance D = -dW/dCDi is exactly the
	// diffusive dialysance Dd the two levels measure.
	f := Filtration{QF: st.QF, Sieving: 1}
	if st.QB > 0 && d.DiffusiveDialysance >= 0 {
		if koa, ok := koaForDialysance(Countercurrent, st.QB, st.QD, f, d.DiffusiveDialysance); ok {
			d.KoACountercurrent = ptr(koa)
		}
	}
	if st.QB > 0 && st.RatedKoA > 0 {
		_, dd := Transfer(Countercurrent, st.QB, st.QD, st.RatedKoA, f)
		expected := dd + st.QF
		d.Expected = ptr(expected)
		d.Deviation = ptr((de - expected) / expected)
	}
	d.Verdict, d.Findings = judgeDialysance(d, st)
	d.Overall = worst(d.Findings)
	return d, nil
}

// judgeDialysance compares the dialysance with the rated filter's, with
// the tolerance a clearance check uses (the ±10 % of ISO 8637-1, from
// memory): ionic dialysance tracks urea clearance closely in vitro
// (recirculation-corrected ionic dialysance minus urea clearance
// 0.6 ± 16.9 mL/min in patients, Mercadal et al., NDT 2002).
func judgeDialysance(d DialysanceResult, st DialysanceSetting) (string, []Finding) {
	tol := st.Tolerance
	if tol == 0 {
		tol = DefaultClearanceTolerance
	}
	var out []Finding
	add := func(level, code, format string, args ...any) {
		out = append(out, Finding{Level: level, Code: code, Text: sentence(format, args...)})
	}
	verdict := "not_rated"
	switch {
	case d.Deviation == nil:
		add("note", verdict, "Enter the blood flow and the filter's rated KoA to compare the dialysance with its rating.")
	case math.Abs(*d.Deviation) <= tol:
		verdict = "as_rated"
		add("pass", verdict, "The dialysance, %.1f mL/min, is within ±%g %% of the %.1f mL/min a KoA %g mL/min filter gives counter-current at these flows (%+.1f %%).",
			d.Dialysance, 100*tol, *d.Expected, st.RatedKoA, 100**d.Deviation)
	case *d.Deviation < 0:
		verdict = "below_rating"
		add("fail", verdict, "The dialysance, %.1f mL/min, is %.1f %% below the %.1f mL/min a KoA %g mL/min filter gives counter-current at these flows: fouling, clotting, reversed dialysate lines or a different filter; confirm with a clearance test.",
			d.Dialysance, -100**d.Deviation, *d.Expected, st.RatedKoA)
	default:
		verdict = "above_rating"
		add("warn", verdict, "The dialysance, %.1f mL/min, is %.1f %% above the %.1f mL/min a KoA %g mL/min filter gives counter-current at these flows: check the flows, the readings and the rated KoA entered.",
			d.Dialysance, 100**d.Deviation, *d.Expected, st.RatedKoA)
	}
	add("note", "resolution", "The meter's resolution alone may move the dialysance by ±%.1f mL/min (%s resolution over a %g inlet step).",
		d.ResolutionBound, strconv.FormatFloat(d.Resolution, 'g', -1, 64), math.Abs(d.InletStep))
	return verdict, out
}

func (st DialysanceSetting) validate() error {
	if err := checkFlow("qd", st.QD); err != nil {
		return err
	}
	if err := checkUltrafiltration(st.QF, 0); err != nil {
		return err
	}
	if st.Resolution != 0 {
		if err := checkConcentration("resolution", st.Resolution, true); err != nil {
			return err
		}
	}
	if st.QB != 0 {
		if err := checkFlow("qb", st.QB); err != nil {
			return err
		}
		if err := checkUltrafiltration(st.QF, st.QB); err != nil {
			return err
		}
		if err := (Filtration{QF: st.QF, Sieving: 1}).Validate(st.QB); err != nil {
			return err
		}
	}
	if err := checkFraction("tolerance_percent", st.Tolerance, 0, 1, true); err != nil {
		return err
	}
	if st.RatedKoA != 0 {
		if st.QB == 0 {
			return fieldErrorf("qb", "is needed with a rated KoA, to know what the filter should give")
		}
		if err := checkKoA("koa", st.RatedKoA); err != nil {
			return err
		}
	}
	return nil
}
