package api

import (
	"fmt"

	"clearkit/core"
)

// CheckRequest asks for the verdict of a clearance test.
type CheckRequest struct {
	QB Number `json:"qb"` // required, mL/min
	QD Number `json:"qd"` // required, mL/min
	QF Number `json:"qf"` // optional, default 0, mL/min
	// Sieving is the solute's sieving coefficient, 0 to 1; optional,
	// default 1 (urea).
	Sieving Number `json:"sieving"`
	// The blood, when the test ran on whole blood (hct given).
	WholeBloodFields
	CBi Number `json:"cbi"` // required, any one concentration unit
	CBo Number `json:"cbo"` // required
	CDi Number `json:"cdi"` // optional, default 0
	CDo Number `json:"cdo"` // required
	// KoA is the filter's rated KoA, mL/min; optional.
	KoA Number `json:"koa"`
	// Tolerances in per cent; defaults 5 (mass balance) and 10 (clearance
	// against the rating).
	MassBalanceTolerancePercent Number `json:"mass_balance_tolerance_percent"`
	ClearanceTolerancePercent   Number `json:"clearance_tolerance_percent"`
	// Uncertainties, ± per cent of each reading and an absolute floor for
	// concentrations (concentration unit); all default 0 (none).
	ConcentrationUncertaintyPercent Number `json:"concentration_uncertainty_percent"`
	ConcentrationUncertaintyFloor   Number `json:"concentration_uncertainty_floor"`
	FlowUncertaintyPercent          Number `json:"flow_uncertainty_percent"`
	// Seed of the Monte Carlo draws, a whole number; default 1.
	Seed Number `json:"seed"`
}

// DefaultSeed seeds the Monte Carlo when a request gives none.
const DefaultSeed = 1

// CheckResponse is a successful check.
type CheckResponse struct {
	OK    bool             `json:"ok"`
	Input core.Measurement `json:"input"` // the values used, defaults filled in
	core.CheckResult
}

// Check answers a CheckRequest.
func Check(request []byte) []byte {
	var req CheckRequest
	if err := decode(request, &req); err != nil {
		return failure(err)
	}
	m, o, err := req.read()
	if err != nil {
		return failure(err)
	}
	r, err := core.Check(m, o)
	return respond(&CheckResponse{OK: true, Input: m, CheckResult: r}, err)
}

func (req CheckRequest) read() (m core.Measurement, o core.CheckOptions, err error) {
	// In the order of the form, so that the first bad field reported is
	// the first a person meets.
	for _, f := range []struct {
		n        Number
		field    string
		v        *float64
		optional bool
	}{
		{req.QB, "qb", &m.QB, false}, {req.QD, "qd", &m.QD, false}, {req.QF, "qf", &m.QF, true},
		{req.Sieving, "sieving", &m.Sieving, true}, {Number{}, "", nil, false},
		{req.CBi, "cbi", &m.CBi, false}, {req.CBo, "cbo", &m.CBo, false},
		{req.CDi, "cdi", &m.CDi, true}, {req.CDo, "cdo", &m.CDo, false},
	} {
		switch {
		case f.v == nil: // the blood fields, in their place in the form
			m.Blood, err = req.WholeBloodFields.read()
		case f.field == "sieving":
			*f.v, err = f.n.Optional(f.field, core.DefaultSieving)
		case f.optional:
			*f.v, err = f.n.Optional(f.field, 0)
		default:
			*f.v, err = f.n.Required(f.field)
		}
		if err != nil {
			return m, o, err
		}
	}
	// Validate the measurement first, so that its errors come in the
	// order of the form, before the settings below it.
	if err = m.Validate(); err != nil {
		return m, o, err
	}
	if o.RatedKoA, err = positive("koa", req.KoA, "mL/min"); err != nil {
		return m, o, err
	}
	if o.MassBalanceTolerance, err = percent(req.MassBalanceTolerancePercent, "mass_balance_tolerance_percent", 100*core.DefaultMassBalanceTolerance, false); err != nil {
		return m, o, err
	}
	if o.ClearanceTolerance, err = percent(req.ClearanceTolerancePercent, "clearance_tolerance_percent", 100*core.DefaultClearanceTolerance, false); err != nil {
		return m, o, err
	}
	if o.ConcentrationUncertainty, err = percent(req.ConcentrationUncertaintyPercent, "concentration_uncertainty_percent", 0, true); err != nil {
		return m, o, err
	}
	if o.ConcentrationFloor, err = req.ConcentrationUncertaintyFloor.Optional("concentration_uncertainty_floor", 0); err != nil {
		return m, o, err
	}
	if o.FlowUncertainty, err = percent(req.FlowUncertaintyPercent, "flow_uncertainty_percent", 0, true); err != nil {
		return m, o, err
	}
	seed, err := whole(req.Seed, "seed", DefaultSeed, core.MaxSeed)
	o.Seed = uint64(seed)
	return m, o, err
}

// percent reads an optional percentage and returns it as a fraction.
// Unless zero is allowed, an explicit 0 is refused (core reads a zero
// tolerance as "use the default").
func percent(n Number, field string, def float64, zero bool) (float64, error) {
	v, ok, err := n.value(field)
	switch {
	case err != nil:
		return 0, err
	case !ok:
		v = def
	case v == 0 && !zero:
		return 0, fieldErr(field, "must be greater than 0 %")
	}
	return v / 100, nil
}

// whole reads an optional whole number from 0 to max.
func whole(n Number, field string, def, max float64) (float64, error) {
	v, err := n.Optional(field, def)
	switch {
	case err != nil:
		return 0, err
	case v < 0 || v > max:
		return 0, fieldErr(field, fmt.Sprintf("must be a whole number from 0 to %g (got %g)", max, v))
	case v != float64(int64(v)):
		return 0, fieldErr(field, "must be a whole number")
	}
	return v, nil
}
