package core_test

import (
	"strings"
	"testing"

	"clearkit/core"
)

// Timed collections worked by hand: flow = volume/time (x 60 s/min), or
// mass/density/time. Water is 0.99333 g/mL at 37 °C (CRC Handbook of
// Chemistry and Physics, density of water table; from memory).
func TestTimedFlowByHand(t *testing.T) {
	for _, c := range []struct {
		name   string
		c      core.Collection
		flow   float64
		dev    float64
		within bool
		code   string
	}{
		// 296 mL in 60 s is 296 mL/min, -4/300.
		{"blood pump by volume", core.Collection{SetFlow: 300, Seconds: 60, Volume: 296, Tolerance: 0.1, Circuit: "blood"}, 296, -4.0 / 300, true, "flow_within"},
		// 1012 mL in 120 s is 506 mL/min, +6/500.
		{"dialysate by volume", core.Collection{SetFlow: 500, Seconds: 120, Volume: 1012, Tolerance: 0.05, Circuit: "dialysate"}, 506, 6.0 / 500, true, "flow_within"},
		// 2490 g of water at 37 °C in 300 s: 2490/0.99333/5 = 501.3439...
		{"dialysate by mass", core.Collection{SetFlow: 500, Seconds: 300, Mass: 2490, Density: 0.99333, Tolerance: 0.05}, 2490 / 0.99333 / 5, (2490/0.99333/5 - 500) / 500, true, "flow_within"},
		// 330 mL in 60 s against 300 is exactly +10 %: the tolerance is inclusive.
		{"at the tolerance", core.Collection{SetFlow: 300, Seconds: 60, Volume: 330, Tolerance: 0.1}, 330, 0.1, true, "flow_within"},
		// 331 mL is +10.33 %: outside.
		{"past the tolerance", core.Collection{SetFlow: 300, Seconds: 60, Volume: 331, Tolerance: 0.1, Circuit: "blood"}, 331, 31.0 / 300, false, "flow_outside"},
		// 250 mL in 45 s is 333.33 mL/min against 400: -1/6.
		{"slow pump", core.Collection{SetFlow: 400, Seconds: 45, Volume: 250, Tolerance: 0.1}, 250.0 / 45 * 60, (250.0/45*60 - 400) / 400, false, "flow_outside"},
	} {
		r, err := core.TimedFlow(c.c)
		if err != nil {
			t.Fatalf("%s: TimedFlow(%+v) error: %v", c.name, c.c, err)
		}
		// The deviation is a difference of nearly equal flows, which
		// amplifies the rounding of the flow by flow/|flow - set|.
		if !close(r.Flow, c.flow) || !tolerance(r.Deviation, c.dev, 1e-12) || r.Within != c.within || r.Tolerance != c.c.Tolerance {
			t.Errorf("%s: TimedFlow(%+v) = flow %.17g, deviation %.17g, within %v; want %.17g, %.17g, %v", c.name, c.c, r.Flow, r.Deviation, r.Within, c.flow, c.dev, c.within)
		}
		if len(r.Findings) == 0 || r.Findings[0].Code != c.code {
			t.Errorf("%s: findings %+v, want %s first", c.name, r.Findings, c.code)
		}
		want := map[bool]string{true: "pass", false: "fail"}[c.within]
		if r.Overall != want {
			t.Errorf("%s: overall %q, want %q", c.name, r.Overall, want)
		}
	}
}

// The sentences name what was checked, and a short collection gets a note
// with its stopwatch share (0.5 s in 20 s is 2.5 %).
func TestTimedFlowWording(t *testing.T) {
	r, _ := core.TimedFlow(core.Collection{SetFlow: 300, Seconds: 60, Volume: 299, Tolerance: 0.1, Circuit: "blood"})
	if !strings.HasPrefix(r.Findings[0].Text, "The blood pump measures 299.0 mL/min against 300 set") {
		t.Errorf("blood pump sentence %q", r.Findings[0].Text)
	}
	r, _ = core.TimedFlow(core.Collection{SetFlow: 500, Seconds: 20, Volume: 166, Tolerance: 0.05, Circuit: "dialysate"})
	if !strings.HasPrefix(r.Findings[0].Text, "The dialysate flow measures 498.0 mL/min") || len(r.Findings) != 2 ||
		r.Findings[1].Code != "short_collection" || !strings.Contains(r.Findings[1].Text, "2.5 %") || r.Overall != "note" {
		t.Errorf("short dialysate collection: findings %+v, overall %q", r.Findings, r.Overall)
	}
}

func TestTimedFlowErrors(t *testing.T) {
	good := core.Collection{SetFlow: 300, Seconds: 60, Volume: 296, Tolerance: 0.1}
	for _, c := range []struct {
		name  string
		edit  func(*core.Collection)
		field string
		says  string
	}{
		{"zero set flow", func(c *core.Collection) { c.SetFlow = 0 }, "set_flow", "greater than 0"},
		{"zero time", func(c *core.Collection) { c.Seconds = 0 }, "seconds", "greater than 0"},
		{"negative time", func(c *core.Collection) { c.Seconds = -60 }, "seconds", "greater than 0"},
		{"more than a day", func(c *core.Collection) { c.Seconds = 90000 }, "seconds", "out of range"},
		{"under a second", func(c *core.Collection) { c.Seconds = 0.5 }, "seconds", "too short"},
		{"negative volume", func(c *core.Collection) { c.Volume = -296 }, "volume", "greater than 0"},
		{"nothing collected", func(c *core.Collection) { c.Volume = 0 }, "volume", "required"},
		{"volume and mass", func(c *core.Collection) { c.Mass = 296 }, "mass", "not both"},
		{"density with volume", func(c *core.Collection) { c.Density = 1 }, "density", "only used with a mass"},
		{"mass without density", func(c *core.Collection) { c.Volume, c.Mass = 0, 296 }, "density", "required"},
		{"implausible density", func(c *core.Collection) { c.Volume, c.Mass, c.Density = 0, 296, 7.8 }, "density", "from 0.5 to 2"},
		{"negative mass", func(c *core.Collection) { c.Volume, c.Mass, c.Density = 0, -296, 1 }, "mass", "greater than 0"},
		{"zero tolerance", func(c *core.Collection) { c.Tolerance = 0 }, "tolerance_percent", "greater than 0"},
		{"tolerance above 100 %", func(c *core.Collection) { c.Tolerance = 1.5 }, "tolerance_percent", "at most 100"},
		{"unknown circuit", func(c *core.Collection) { c.Circuit = "arterial" }, "circuit", "\"blood\" or \"dialysate\""},
	} {
		col := good
		c.edit(&col)
		_, err := core.TimedFlow(col)
		if fieldOf(err) != c.field || !strings.Contains(err.Error(), c.says) {
			t.Errorf("%s: TimedFlow(%+v) error %v, want field %q saying %q", c.name, col, err, c.field, c.says)
		}
	}
}
