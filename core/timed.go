package core

import "math"

// Bounds of a timed collection.
const (
	MinSeconds       = 1     // s; a shorter collection cannot be timed by hand (and keeps the flow finite)
	MaxSeconds       = 86400 // one day
	MaxCollected     = 1e6   // mL or g: far more than any container on a service call
	MinDensity       = 0.5   // g/mL; water is 0.99-1.00 and dialysate a little more
	MaxDensity       = 2.0   // g/mL
	shortCollection  = 30    // s; below this a note warns of stopwatch error (common practice, no source)
	stopwatchSeconds = 0.5   // s, the timing error the note speaks of
)

// Collection is a timed collection: fluid from the blood pump or the
// dialysate line caught in a graduated cylinder (volume) or on a scale
// (mass and density) over a timed interval.
type Collection struct {
	SetFlow float64 `json:"set_flow"` // the machine's set flow, mL/min
	Seconds float64 `json:"seconds"`  // collection time, s
	Volume  float64 `json:"volume"`   // collected volume, mL (0 when weighed)
	Mass    float64 `json:"mass"`     // collected mass, g (0 when measured by volume)
	Density float64 `json:"density"`  // the fluid's density, g/mL (with mass)
	// Tolerance is the deviation accepted, a fraction of the set flow.
	Tolerance float64 `json:"tolerance"`
	// Circuit names what was checked, for the sentence: "blood",
	// "dialysate" or "" (unnamed).
	Circuit string `json:"circuit"`
}

// FlowCheck is the result of a timed collection.
type FlowCheck struct {
	// Flow is the actual flow, collected volume over time, mL/min.
	Flow float64 `json:"flow"`
	// Volume is the collected volume, mL (mass/density when weighed).
	Volume float64 `json:"volume"`
	// Deviation is (Flow - SetFlow)/SetFlow, a fraction.
	Deviation float64 `json:"deviation"`
	Tolerance float64 `json:"tolerance"`
	// Within is |Deviation| <= Tolerance.
	Within   bool      `json:"within"`
	Overall  string    `json:"overall"`
	Findings []Finding `json:"findings"`
}

// TimedFlow returns the actual flow of a timed collection and its verdict:
// flow = volume / time, with volume = mass / density when the collection
// was weighed (the definition of flow and density; common practice, no
// source).
//
// Special cases are:
//
//	both volume and mass given, or neither: refused
//	mass without density: refused (no default: the fluid's density is the engineer's to state)
//	|Deviation| equal to the tolerance: within
func TimedFlow(c Collection) (FlowCheck, error) {
	if err := c.validate(); err != nil {
		return FlowCheck{}, err
	}
	v := c.Volume
	if c.Mass > 0 {
		v = c.Mass / c.Density
	}
	flow := v / c.Seconds * 60
	r := FlowCheck{Flow: flow, Volume: v, Deviation: (flow - c.SetFlow) / c.SetFlow, Tolerance: c.Tolerance}
	r.Within = math.Abs(r.Deviation) <= c.Tolerance
	what := map[string]string{"blood": "The blood pump", "dialysate": "The dialysate flow", "": "The flow"}[c.Circuit]
	if r.Within {
		r.Findings = append(r.Findings, Finding{Level: "pass", Code: "flow_within", Text: sentence(
			"%s measures %.1f mL/min against %g set (%+.1f %%), within ±%g %%.", what, flow, c.SetFlow, 100*r.Deviation, 100*c.Tolerance)})
	} else {
		r.Findings = append(r.Findings, Finding{Level: "fail", Code: "flow_outside", Text: sentence(
			"%s measures %.1f mL/min against %g set (%+.1f %%), outside ±%g %%: repeat the collection, then calibrate or service it by the manufacturer's procedure.", what, flow, c.SetFlow, 100*r.Deviation, 100*c.Tolerance)})
	}
	if c.Seconds < shortCollection {
		r.Findings = append(r.Findings, Finding{Level: "note", Code: "short_collection", Text: sentence(
			"The collection took %g s: each %g s of stopwatch error is %.1f %% of the flow. Collect for a minute or more.", c.Seconds, stopwatchSeconds, 100*stopwatchSeconds/c.Seconds)})
	}
	r.Overall = worst(r.Findings)
	return r, nil
}

func (c Collection) validate() error {
	if err := checkFlow("set_flow", c.SetFlow); err != nil {
		return err
	}
	if err := checkBounded("seconds", c.Seconds, MaxSeconds, "s"); err != nil {
		return err
	}
	if c.Seconds < MinSeconds {
		return fieldErrorf("seconds", "is too short to time by hand (minimum %g s, got %g)", float64(MinSeconds), c.Seconds)
	}
	switch {
	case c.Volume != 0 && c.Mass != 0:
		return fieldErrorf("mass", "give the collected volume or its mass, not both")
	case c.Volume == 0 && c.Mass == 0:
		return fieldErrorf("volume", "is required (or the collected mass with its density)")
	case c.Volume != 0:
		if err := checkBounded("volume", c.Volume, MaxCollected, "mL"); err != nil {
			return err
		}
		if c.Density != 0 {
			return fieldErrorf("density", "is only used with a mass; the volume was measured directly")
		}
	default:
		if err := checkBounded("mass", c.Mass, MaxCollected, "g"); err != nil {
			return err
		}
		switch {
		case math.IsNaN(c.Density) || math.IsInf(c.Density, 0):
			return fieldErrorf("density", "must be a finite number")
		case c.Density == 0:
			return fieldErrorf("density", "is required with a mass (water is about 0.993 g/mL at 37 °C)")
		case c.Density < MinDensity || c.Density > MaxDensity:
			return fieldErrorf("density", "must be from %g to %g g/mL (got %g)", MinDensity, MaxDensity, c.Density)
		}
	}
	if err := checkFraction("tolerance_percent", c.Tolerance, 0, 1, false); err != nil {
		return err
	}
	switch c.Circuit {
	case "", "blood", "dialysate":
		return nil
	}
	return fieldErrorf("circuit", "must be \"blood\" or \"dialysate\" (got %q)", c.Circuit)
}

// checkBounded validates a strictly positive quantity up to max.
func checkBounded(field string, v, max float64, unit string) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf(field, "must be a finite number")
	case v <= 0:
		return fieldErrorf(field, "must be greater than 0 %s (got %g)", unit, v)
	case v > max:
		return fieldErrorf(field, "is out of range (maximum %g %s, got %g)", max, unit, v)
	}
	return nil
}
