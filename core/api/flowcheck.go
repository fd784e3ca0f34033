package api

import (
	"strings"

	"clearkit/core"
)

// FlowCheckRequest asks for the verdict of a timed collection.
type FlowCheckRequest struct {
	SetFlow Number `json:"set_flow"` // required, mL/min
	Seconds Number `json:"seconds"`  // required, s
	Volume  Number `json:"volume"`   // mL; or mass and density
	Mass    Number `json:"mass"`     // g
	Density Number `json:"density"`  // g/mL, with mass
	// TolerancePercent is the deviation accepted, per cent; required.
	TolerancePercent Number `json:"tolerance_percent"`
	// Circuit is "blood", "dialysate" or absent, for the sentence.
	Circuit *string `json:"circuit"`
}

// FlowCheckResponse is a successful flow check.
type FlowCheckResponse struct {
	OK    bool            `json:"ok"`
	Input core.Collection `json:"input"` // the values used; tolerance as a fraction
	core.FlowCheck
}

// FlowCheck answers a FlowCheckRequest.
func FlowCheck(request []byte) []byte {
	var req FlowCheckRequest
	if err := decode(request, &req); err != nil {
		return failure(err)
	}
	c, err := req.read()
	if err != nil {
		return failure(err)
	}
	r, err := core.TimedFlow(c)
	return respond(&FlowCheckResponse{OK: true, Input: c, FlowCheck: r}, err)
}

func (req FlowCheckRequest) read() (c core.Collection, err error) {
	if c.SetFlow, err = req.SetFlow.Required("set_flow"); err != nil {
		return c, err
	}
	if c.Seconds, err = req.Seconds.Required("seconds"); err != nil {
		return c, err
	}
	// Absent volume, mass and density read as 0, which core takes as "not
	// given"; an explicit 0 is refused here, as core cannot tell.
	if c.Volume, err = positive("volume", req.Volume, "mL"); err != nil {
		return c, err
	}
	if c.Mass, err = positive("mass", req.Mass, "g"); err != nil {
		return c, err
	}
	if c.Density, err = positive("density", req.Density, "g/mL"); err != nil {
		return c, err
	}
	tol, err := req.TolerancePercent.Required("tolerance_percent")
	if err != nil {
		return c, err
	}
	if tol == 0 {
		return c, fieldErr("tolerance_percent", "must be greater than 0 %")
	}
	c.Tolerance = tol / 100
	if req.Circuit != nil {
		c.Circuit = strings.TrimSpace(*req.Circuit)
	}
	return c, nil
}
