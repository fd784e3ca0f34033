package api_test

import (
	"encoding/json"
	"math"
	"reflect"
	"strings"
	"testing"

	"clearkit/core"
	"clearkit/core/api"
)

// The API contract of check, dialysance and flowcheck: response shape,
// defaults, decimal strings, and an error naming the field for each bad
// input. The numbers themselves are tested in core; here they must be
// exactly core's.

// wantFailure checks that response is ok:false naming field, with a
// message containing says, and keeps the response contract.
func wantFailure(t *testing.T, name, request string, response []byte, field, says string) {
	t.Helper()
	e := entry(t, name)
	env := checkResponse(t, e, []byte(request), response)
	if *env.OK || *env.Error.Field != field || !strings.Contains(env.Error.Message, says) {
		t.Errorf("%s(%s) = %s, want ok:false, field %q, message with %q", name, request, response, field, says)
	}
}

func entry(t *testing.T, name string) api.Entry {
	t.Helper()
	for _, e := range api.Entries {
		if e.Name == name {
			return e
		}
	}
	t.Fatalf("api.Entries has no %q", name)
	return api.Entry{}
}

func decodeAny(t *testing.T, b []byte) map[string]any {
	t.Helper()
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatalf("response %s is not JSON: %v", b, err)
	}
	return m
}

const checkRequest = `{"qb":300,"qd":500,"qf":10,"cbi":100,"cbo":19,"cdo":46.3,"koa":800}`

func TestCheckAPIShape(t *testing.T) {
	m := decodeAny(t, api.Check([]byte(checkRequest)))
	for _, key := range []string{"ok", "input", "clearance", "clearance_dialysate", "mass_balance_error", "mass_balance_ok",
		"koa_countercurrent", "koa_cocurrent", "countercurrent", "cocurrent", "verdict", "overall", "findings", "uncertainty"} {
		if _, ok := m[key]; !ok {
			t.Errorf("check response has no %q: %v", key, m)
		}
	}
	if m["ok"] != true || m["koa_cocurrent"] != nil || m["uncertainty"] != nil {
		t.Errorf("check response ok %v, koa_cocurrent %v, uncertainty %v; want true, null (beyond the co-current ceiling), null (none asked)",
			m["ok"], m["koa_cocurrent"], m["uncertainty"])
	}
	in := m["input"].(map[string]any)
	if in["cdi"] != 0.0 || in["qf"] != 10.0 {
		t.Errorf("input %v, want cdi 0 (default) and qf 10", in)
	}
}

// The findings give a number as the page's table shows it (format.js,
// toFixed). At the demo's flows the co-current ceiling is
// QB (QD + QF)/(QB + QD) = 300 x 510/800 = 191.25 mL/min exactly
// (TransferCeiling), a tie at one decimal: toFixed gives 191.3 (ECMA-262,
// 21.1.3.3: of two nearest, the larger), and so must the sentence (fmt's
// ties to even gave 191.2).
func TestCheckAPIFindingRounding(t *testing.T) {
	var got api.CheckResponse
	if err := json.Unmarshal(api.Check([]byte(checkRequest)), &got); err != nil {
		t.Fatal(err)
	}
	if got.Cocurrent.Ceiling != 191.25 {
		t.Fatalf("co-current ceiling %.17g, want 191.25 (300 x 510/800)", got.Cocurrent.Ceiling)
	}
	for _, f := range got.Findings {
		if f.Code == "not_cocurrent" {
			if !strings.Contains(f.Text, "above 191.3 mL/min") {
				t.Errorf("not_cocurrent finding %q, want the ceiling as 191.3", f.Text)
			}
			return
		}
	}
	t.Errorf("findings %+v: no not_cocurrent", got.Findings)
}

// The API returns exactly core.Check's result, with the request's
// percentages as fractions and the default seed.
func TestCheckAPIMatchesCore(t *testing.T) {
	req := `{"qb":"300","qd":"500,0","qf":10,"cbi":100,"cbo":"19","cdi":"","cdo":46.3,"koa":800,` +
		`"mass_balance_tolerance_percent":4,"clearance_tolerance_percent":"7,5","concentration_uncertainty_percent":2,` +
		`"concentration_uncertainty_floor":0.5,"flow_uncertainty_percent":3}`
	var got api.CheckResponse
	if err := json.Unmarshal(api.Check([]byte(req)), &got); err != nil {
		t.Fatal(err)
	}
	m := core.Measurement{QB: 300, QD: 500, QF: 10, Sieving: core.DefaultSieving, CBi: 100, CBo: 19, CDo: 46.3}
	want, err := core.Check(m, core.CheckOptions{RatedKoA: 800, MassBalanceTolerance: 0.04, ClearanceTolerance: 0.075,
		ConcentrationUncertainty: 0.02, ConcentrationFloor: 0.5, FlowUncertainty: 0.03, Seed: api.DefaultSeed})
	if err != nil {
		t.Fatal(err)
	}
	if !got.OK || got.Input != m || !reflect.DeepEqual(got.CheckResult, want) {
		t.Errorf("check(%s) =\n%+v\nwant core.Check's\n%+v", req, got, want)
	}
}

func TestCheckAPIDefaults(t *testing.T) {
	var got api.CheckResponse
	if err := json.Unmarshal(api.Check([]byte(`{"qb":300,"qd":500,"cbi":100,"cbo":19,"cdo":48}`)), &got); err != nil {
		t.Fatal(err)
	}
	if got.MassBalanceTolerance != 0.05 || got.ClearanceTolerance != 0.10 || got.RatedKoA != nil || got.Verdict != "not_rated" || got.Uncertainty != nil {
		t.Errorf("defaults: tolerances %g %g, rated %v, verdict %q, uncertainty %v; want 0.05, 0.10, null, not_rated, null",
			got.MassBalanceTolerance, got.ClearanceTolerance, got.RatedKoA, got.Verdict, got.Uncertainty)
	}
	// A floor alone asks for the uncertainty; the seed defaults to 1.
	if err := json.Unmarshal(api.Check([]byte(`{"qb":300,"qd":500,"cbi":100,"cbo":19,"cdo":48,"concentration_uncertainty_floor":"0,5"}`)), &got); err != nil {
		t.Fatal(err)
	}
	if got.Uncertainty == nil || got.Uncertainty.Seed != 1 || got.Uncertainty.ConcentrationFloor != 0.5 {
		t.Errorf("floor only: uncertainty %+v, want seed 1 and floor 0.5", got.Uncertainty)
	}
}

func TestCheckAPIErrors(t *testing.T) {
	base := map[string]any{"qb": 300, "qd": 500, "qf": 10, "cbi": 100, "cbo": 19, "cdo": 46.3}
	for _, c := range []struct {
		set   map[string]any
		drop  string
		field string
		says  string
	}{
		{drop: "qb", field: "qb", says: "required"},
		{drop: "cbo", field: "cbo", says: "required"},
		{drop: "cdo", field: "cdo", says: "required"},
		{set: map[string]any{"qb": 0}, field: "qb", says: "greater than 0"},
		{set: map[string]any{"qd": -500}, field: "qd", says: "greater than 0"},
		{set: map[string]any{"qf": -2}, field: "qf", says: "negative"},
		{set: map[string]any{"cbi": "-100"}, field: "cbi", says: "greater than 0"},
		{set: map[string]any{"cbo": 120}, field: "cbo", says: "above the blood inlet"},
		{set: map[string]any{"cbo": 100, "qf": 0}, field: "cbo", says: "no removal"},
		{set: map[string]any{"cdo": 101}, field: "cdo", says: "above the blood inlet"},
		{set: map[string]any{"cdi": 3, "cdo": 2}, field: "cdo", says: "below the dialysate inlet"},
		{set: map[string]any{"cbo": "abc"}, field: "cbo", says: "must be a number"},
		{set: map[string]any{"koa": 0}, field: "koa", says: "greater than 0"},
		{set: map[string]any{"koa": -800}, field: "koa", says: "must not be negative"},
		{set: map[string]any{"mass_balance_tolerance_percent": 0}, field: "mass_balance_tolerance_percent", says: "greater than 0"},
		{set: map[string]any{"mass_balance_tolerance_percent": 150}, field: "mass_balance_tolerance_percent", says: "at most 100"},
		{set: map[string]any{"clearance_tolerance_percent": -5}, field: "clearance_tolerance_percent", says: "greater than 0"},
		{set: map[string]any{"concentration_uncertainty_percent": 60}, field: "concentration_uncertainty_percent", says: "at most 50"},
		{set: map[string]any{"flow_uncertainty_percent": -1}, field: "flow_uncertainty_percent", says: "negative"},
		{set: map[string]any{"concentration_uncertainty_floor": -1}, field: "concentration_uncertainty_floor", says: "negative"},
		{set: map[string]any{"seed": 1.5}, field: "seed", says: "whole number"},
		{set: map[string]any{"seed": -1}, field: "seed", says: "whole number"},
		{set: map[string]any{"sample": 3}, field: "sample", says: "not a field"},
	} {
		req := map[string]any{}
		for k, v := range base {
			req[k] = v
		}
		delete(req, c.drop)
		for k, v := range c.set {
			req[k] = v
		}
		b, _ := json.Marshal(req)
		wantFailure(t, "check", string(b), api.Check(b), c.field, c.says)
	}
	wantFailure(t, "check", "", api.Check(nil), "", "empty")
	wantFailure(t, "check", "[1]", api.Check([]byte("[1]")), "", "JSON object")
	// The first bad field in the order of the form.
	wantFailure(t, "check", `{"qd":500,"qf":"x","cbi":100,"cbo":19}`, api.Check([]byte(`{"qd":500,"qf":"x","cbi":100,"cbo":19}`)), "qb", "required")
	wantFailure(t, "check", `{"qb":300,"qd":500,"qf":"x","cbi":100,"cbo":19}`, api.Check([]byte(`{"qb":300,"qd":500,"qf":"x","cbi":100,"cbo":19}`)), "qf", "must be a number")
}

// Valid-looking requests across the whole accepted range keep the
// response contract and the physical bounds (checkResponse): fuzzing from
// valid requests (go test -fuzz FuzzCheck ./core/api). FuzzAPI covers
// arbitrary bytes.
func FuzzCheck(f *testing.F) {
	f.Add(300.0, 500.0, 10.0, 100.0, 19.0, 0.0, 46.3, 800.0, 2.0, 0.5)
	f.Add(50.0, 800.0, 0.0, 1.0, 1e-9, 0.0, 0.06, 3000.0, 50.0, 0.0)
	f.Add(400.0, 100.0, 30.0, 14.0, 13.9, 0.1, 14.0, 1.0, 0.0, 3.0)
	f.Fuzz(func(t *testing.T, qb, qd, qf, cbi, cbo, cdi, cdo, koa, u, floor float64) {
		req, err := json.Marshal(map[string]float64{"qb": qb, "qd": qd, "qf": qf, "cbi": cbi, "cbo": cbo, "cdi": cdi, "cdo": cdo,
			"koa": koa, "concentration_uncertainty_percent": u, "flow_uncertainty_percent": u, "concentration_uncertainty_floor": floor})
		if err != nil {
			t.Skip() // NaN or infinity cannot be written in JSON
		}
		checkResponse(t, entry(t, "check"), req, api.Check(req))
	})
}

func TestDialysanceAPI(t *testing.T) {
	req := `{"qd":"500","qf":"10","cdi1":"15,0","cdo1":14.6,"cdi2":14,"cdo2":"14,2","qb":300,"koa":800}`
	var got api.DialysanceResponse
	if err := json.Unmarshal(api.Dialysance([]byte(req)), &got); err != nil {
		t.Fatal(err)
	}
	lv := core.Levels{Cdi1: 15, Cdo1: 14.6, Cdi2: 14, Cdo2: 14.2}
	st := core.DialysanceSetting{QD: 500, QF: 10, QB: 300, RatedKoA: 800}
	want, err := core.ConductivityDialysance(lv, st)
	if err != nil {
		t.Fatal(err)
	}
	st.Resolution, st.Tolerance = core.DefaultResolution, core.DefaultClearanceTolerance
	if !got.OK || got.Input.Levels != lv || got.Input.DialysanceSetting != st || !reflect.DeepEqual(got.DialysanceResult, want) {
		t.Errorf("dialysance(%s) = %+v, want core's %+v with input %+v %+v", req, got, want, lv, st)
	}
	m := decodeAny(t, api.Dialysance([]byte(`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2}`)))
	if m["dialysance"] != m["diffusive_dialysance"] || m["koa_countercurrent"] != nil || m["expected_dialysance"] != nil {
		t.Errorf("QF absent: %v; want dialysance = diffusive_dialysance, null KoA and expected", m)
	}
}

func TestDialysanceAPIErrors(t *testing.T) {
	for _, c := range []struct{ req, field, says string }{
		{`{"qf":10,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2}`, "qd", "required"},
		{`{"qd":0,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2}`, "qd", "greater than 0"},
		{`{"qd":500,"qf":-1,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2}`, "qf", "negative"},
		{`{"qd":500,"cdo1":14.6,"cdi2":14,"cdo2":14.2}`, "cdi1", "required"},
		{`{"qd":500,"cdi1":15,"cdo1":-14.6,"cdi2":14,"cdo2":14.2}`, "cdo1", "greater than 0"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":15,"cdo2":14.2}`, "cdi2", "two different inlet levels"},
		{`{"qd":500,"cdi1":14.1,"cdo1":14.05,"cdi2":14,"cdo2":14.0}`, "cdi2", "too close"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":13}`, "cdo2", "larger than the inlet step"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.8}`, "cdo2", "against the inlet"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2,"resolution":0}`, "resolution", "greater than 0"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2,"koa":800}`, "qb", "needed"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2,"qb":0}`, "qb", "greater than 0"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2,"level":3}`, "level", "not a field"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2,"tolerance_percent":0}`, "tolerance_percent", "greater than 0"},
		{`{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2,"tolerance_percent":101}`, "tolerance_percent", "at most 100"},
	} {
		wantFailure(t, "dialysance", c.req, api.Dialysance([]byte(c.req)), c.field, c.says)
	}
}

func TestFlowCheckAPI(t *testing.T) {
	req := `{"set_flow":"500","seconds":"300","mass":"2490","density":"0,99333","tolerance_percent":"5","circuit":"dialysate"}`
	var got api.FlowCheckResponse
	if err := json.Unmarshal(api.FlowCheck([]byte(req)), &got); err != nil {
		t.Fatal(err)
	}
	c := core.Collection{SetFlow: 500, Seconds: 300, Mass: 2490, Density: 0.99333, Tolerance: 0.05, Circuit: "dialysate"}
	want, err := core.TimedFlow(c)
	if err != nil {
		t.Fatal(err)
	}
	if !got.OK || got.Input != c || !reflect.DeepEqual(got.FlowCheck, want) {
		t.Errorf("flowcheck(%s) = %+v, want core's %+v with input %+v", req, got, want, c)
	}
	if math.Abs(got.Flow-501.34396424149077) > 1e-12 {
		t.Errorf("flow %.17g, want 2490/0.99333/5 = 501.343964241491 (hand arithmetic)", got.Flow)
	}
}

func TestFlowCheckAPIErrors(t *testing.T) {
	for _, c := range []struct{ req, field, says string }{
		{`{"seconds":60,"volume":296,"tolerance_percent":10}`, "set_flow", "required"},
		{`{"set_flow":300,"volume":296,"tolerance_percent":10}`, "seconds", "required"},
		{`{"set_flow":300,"seconds":0,"volume":296,"tolerance_percent":10}`, "seconds", "greater than 0"},
		{`{"set_flow":300,"seconds":60,"tolerance_percent":10}`, "volume", "required"},
		{`{"set_flow":300,"seconds":60,"volume":0,"tolerance_percent":10}`, "volume", "greater than 0"},
		{`{"set_flow":300,"seconds":60,"volume":296,"mass":296,"tolerance_percent":10}`, "mass", "not both"},
		{`{"set_flow":300,"seconds":60,"mass":296,"tolerance_percent":10}`, "density", "required"},
		{`{"set_flow":300,"seconds":60,"mass":296,"density":-1,"tolerance_percent":10}`, "density", "from 0.5 to 2"},
		{`{"set_flow":300,"seconds":60,"volume":296}`, "tolerance_percent", "required"},
		{`{"set_flow":300,"seconds":60,"volume":296,"tolerance_percent":0}`, "tolerance_percent", "greater than 0"},
		{`{"set_flow":300,"seconds":60,"volume":296,"tolerance_percent":10,"circuit":"venous"}`, "circuit", "blood"},
		{`{"set_flow":300,"seconds":60,"volume":296,"tolerance_percent":10,"circuit":3}`, "circuit", "wrong type"},
	} {
		wantFailure(t, "flowcheck", c.req, api.FlowCheck([]byte(c.req)), c.field, c.says)
	}
}

// Every entry is listed once, and the field checks under the names the
// README documents.
func TestFieldCheckEntries(t *testing.T) {
	seen := map[string]bool{}
	for _, e := range api.Entries {
		if seen[e.Name] || e.Call == nil {
			t.Errorf("entry %q listed twice or without a function", e.Name)
		}
		seen[e.Name] = true
	}
	for _, name := range []string{"check", "dialysance", "flowcheck"} {
		if !seen[name] {
			t.Errorf("api.Entries has no %q", name)
		}
	}
}
