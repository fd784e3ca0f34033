package api

import "clearkit/core"

// DialysanceRequest asks for the conductivity dialysance from two inlet
// levels.
type DialysanceRequest struct {
	QD   Number `json:"qd"`   // required, mL/min
	QF   Number `json:"qf"`   // optional, default 0, mL/min
	Cdi1 Number `json:"cdi1"` // required: inlet conductivity, level 1
	Cdo1 Number `json:"cdo1"` // required: outlet conductivity, level 1
	Cdi2 Number `json:"cdi2"` // required: inlet conductivity, level 2
	Cdo2 Number `json:"cdo2"` // required: outlet conductivity, level 2
	// Resolution of the meter, in the unit of the readings; default 0.01.
	Resolution Number `json:"resolution"`
	// QB (mL/min) adds the in-situ KoA; QB and the rated KoA add the
	// dialysance the rated filter gives. Both optional.
	QB  Number `json:"qb"`
	KoA Number `json:"koa"`
	// TolerancePercent is the deviation from the rated filter's dialysance
	// accepted, per cent; default 10.
	TolerancePercent Number `json:"tolerance_percent"`
}

// DialysanceInput echoes the values used.
type DialysanceInput struct {
	core.Levels
	core.DialysanceSetting
}

// DialysanceResponse is a successful dialysance.
type DialysanceResponse struct {
	OK    bool            `json:"ok"`
	Input DialysanceInput `json:"input"`
	core.DialysanceResult
}

// Dialysance answers a DialysanceRequest.
func Dialysance(request []byte) []byte {
	var req DialysanceRequest
	if err := decode(request, &req); err != nil {
		return failure(err)
	}
	in, err := req.read()
	if err != nil {
		return failure(err)
	}
	d, err := core.ConductivityDialysance(in.Levels, in.DialysanceSetting)
	in.Resolution = d.Resolution
	return respond(&DialysanceResponse{OK: true, Input: in, DialysanceResult: d}, err)
}

func (req DialysanceRequest) read() (in DialysanceInput, err error) {
	if in.QD, err = req.QD.Required("qd"); err != nil {
		return in, err
	}
	if in.QF, err = req.QF.Optional("qf", 0); err != nil {
		return in, err
	}
	for _, f := range []struct {
		n     Number
		field string
		v     *float64
	}{
		{req.Cdi1, "cdi1", &in.Cdi1}, {req.Cdo1, "cdo1", &in.Cdo1},
		{req.Cdi2, "cdi2", &in.Cdi2}, {req.Cdo2, "cdo2", &in.Cdo2},
	} {
		if *f.v, err = f.n.Required(f.field); err != nil {
			return in, err
		}
	}
	if in.Resolution, err = positive("resolution", req.Resolution, ""); err != nil {
		return in, err
	}
	if in.QB, err = positive("qb", req.QB, "mL/min"); err != nil {
		return in, err
	}
	if in.RatedKoA, err = positive("koa", req.KoA, "mL/min"); err != nil {
		return in, err
	}
	in.Tolerance, err = percent(req.TolerancePercent, "tolerance_percent", 100*core.DefaultClearanceTolerance, false)
	return in, err
}
