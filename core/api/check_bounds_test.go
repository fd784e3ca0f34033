package api_test

import (
	"encoding/json"
	"fmt"
	"math"
	"slices"

	"clearkit/core"
	"clearkit/core/api"
)

// Physical bounds of the field checks' responses, for checkResponse
// (response_test.go), which every entry's successful response must keep.
func init() {
	physicalChecks["check"] = checkBounds
	physicalChecks["dialysance"] = dialysanceBounds
	physicalChecks["flowcheck"] = flowcheckBounds
}

var (
	levels   = []string{"pass", "note", "warn", "fail"}
	verdicts = []string{"as_rated", "below_rating", "fits_cocurrent", "above_rating", "beyond_ceiling", "not_rated"}
)

// checkBounds: the input obeys Measurement.Validate; the blood-side
// clearance lies in [0, QB] (K = QB - (QB - QF) CBo/CBi with 0 <= CBo <=
// CBi), the dialysate side in [0, QD + QF]; the mass balance error is at
// most 1 (the gain is not negative); each KoA is null exactly when the
// clearance is at or above the arrangement's clearance ceiling (the
// model's KoA -> infinity limit, with QF counted), else >= 0, with a
// sensitivity of at least 1 (the inverse relations are convex, check.go);
// the intervals are ordered; the words are from their lists.
// ptrString shows a *float64 for a failure message.
func ptrString(p *float64) string {
	if p == nil {
		return "null"
	}
	return fmt.Sprint(*p)
}

func checkBounds(response []byte) error {
	var r api.CheckResponse
	if err := json.Unmarshal(response, &r); err != nil {
		return err
	}
	m := r.Input
	if err := m.Validate(); err != nil {
		return fmt.Errorf("input %+v: %v", m, err)
	}
	if !within(r.Clearance, 0, m.QB) || !within(r.DialysateClearance, 0, m.QD+m.QF) || r.MassBalanceError > 1+boundSlack {
		return fmt.Errorf("clearance %g (0 to QB), dialysate side %g (0 to QD + QF), error %g (at most 1)", r.Clearance, r.DialysateClearance, r.MassBalanceError)
	}
	if r.MassBalanceOK != (math.Abs(r.MassBalanceError) <= r.MassBalanceTolerance) {
		return fmt.Errorf("mass balance ok %v with error %g and tolerance %g", r.MassBalanceOK, r.MassBalanceError, r.MassBalanceTolerance)
	}
	for i, fit := range []core.ArrangementFit{r.Countercurrent, r.Cocurrent} {
		// The model's own ceiling, with the ultrafiltration counted: at QF > 0
		// the QF = 0 limits min(QB, QD) and QB QD/(QB + QD) no longer apply.
		ceiling := fit.Ceiling
		if !within(ceiling, 0, m.QB) {
			return fmt.Errorf("arrangement %d: clearance ceiling %g outside 0 to QB", i, ceiling)
		}
		if (fit.KoA == nil) != (r.Clearance >= ceiling*(1-boundSlack)) && !within(r.Clearance, ceiling, ceiling) {
			return fmt.Errorf("arrangement %d: KoA %v with clearance %g and ceiling %g", i, ptrString(fit.KoA), r.Clearance, ceiling)
		}
		if fit.KoA != nil && *fit.KoA < 0 || fit.Sensitivity != nil && *fit.Sensitivity < 1-boundSlack {
			return fmt.Errorf("arrangement %d: KoA %v, sensitivity %v", i, *fit.KoA, *fit.Sensitivity)
		}
	}
	if !slices.Contains(verdicts, r.Verdict) || !slices.Contains(levels, r.Overall) || len(r.Findings) == 0 {
		return fmt.Errorf("verdict %q, overall %q, %d findings", r.Verdict, r.Overall, len(r.Findings))
	}
	if u := r.Uncertainty; u != nil {
		for name, iv := range map[string]core.Interval{"clearance": u.Clearance, "mass_balance_error": u.MassBalanceError,
			"koa_countercurrent": u.KoACountercurrent, "koa_cocurrent": u.KoACocurrent} {
			if iv.Low != nil && iv.High != nil && *iv.Low > *iv.High || iv.LinearLow != nil && *iv.LinearLow > *iv.LinearHigh ||
				iv.UnboundedFraction < 0 || iv.UnboundedFraction > 1 {
				return fmt.Errorf("interval %s: %+v", name, iv)
			}
		}
	}
	return nil
}

// dialysanceBounds: 0 <= De <= QD + QF (r in [0, 1]), Dd = De - QF, the
// inlet step at least the minimum step, the bound not negative.
func dialysanceBounds(response []byte) error {
	var r api.DialysanceResponse
	if err := json.Unmarshal(response, &r); err != nil {
		return err
	}
	qdo := r.Input.QD + r.Input.QF
	if !within(r.Dialysance, 0, qdo) || !within(r.DiffusiveDialysance, r.Dialysance-r.Input.QF, r.Dialysance-r.Input.QF) ||
		!within(r.OutletInletRatio, 0, 1) || math.Abs(r.InletStep) < r.MinimumStep*(1-1e-9) || r.ResolutionBound < 0 {
		return fmt.Errorf("dialysance %g (0 to %g), diffusive %g, ratio %g, step %g (minimum %g), bound %g",
			r.Dialysance, qdo, r.DiffusiveDialysance, r.OutletInletRatio, r.InletStep, r.MinimumStep, r.ResolutionBound)
	}
	if r.KoACountercurrent != nil && *r.KoACountercurrent < 0 {
		return fmt.Errorf("KoA %g < 0", *r.KoACountercurrent)
	}
	if !slices.Contains(verdicts, r.Verdict) || !slices.Contains(levels, r.Overall) || len(r.Findings) == 0 {
		return fmt.Errorf("verdict %q, overall %q, %d findings", r.Verdict, r.Overall, len(r.Findings))
	}
	if (r.Verdict == "not_rated") != (r.Deviation == nil) {
		return fmt.Errorf("verdict %q with deviation %v", r.Verdict, r.Deviation)
	}
	return nil
}

// flowcheckBounds: a positive flow, the deviation by its definition and
// the verdict by the tolerance.
func flowcheckBounds(response []byte) error {
	var r api.FlowCheckResponse
	if err := json.Unmarshal(response, &r); err != nil {
		return err
	}
	dev := (r.Flow - r.Input.SetFlow) / r.Input.SetFlow
	if !(r.Flow > 0) || !within(r.Deviation, dev, dev) || r.Within != (math.Abs(r.Deviation) <= r.Tolerance) || !slices.Contains(levels, r.Overall) {
		return fmt.Errorf("flow %g, deviation %g (want %g), within %v, tolerance %g, overall %q", r.Flow, r.Deviation, dev, r.Within, r.Tolerance, r.Overall)
	}
	return nil
}
