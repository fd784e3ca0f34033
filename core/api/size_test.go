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

// The contract of size, checked natively. Responses are decoded with the
// standard library's encoding/json (the API encodes with goccy/go-json),
// so the shape is checked by an independent decoder; float64 survives the
// JSON round trip exactly, so numbers must equal what core computes.

// sizeOK is the part of a successful response the tests read.
type sizeOK struct {
	OK    bool          `json:"ok"`
	Input api.SizeInput `json:"input"`
	core.Sizing
}

// sizeCall runs size on request and decodes the answer into a generic map
// and, when ok, into sizeOK.
func sizeCall(t *testing.T, request string) (map[string]any, sizeOK) {
	t.Helper()
	raw := api.Size([]byte(request))
	var generic map[string]any
	if err := json.Unmarshal(raw, &generic); err != nil {
		t.Fatalf("size(%s) = %s: not JSON: %v", request, raw, err)
	}
	var typed sizeOK
	if generic["ok"] == true {
		if err := json.Unmarshal(raw, &typed); err != nil {
			t.Fatalf("size(%s) = %s: %v", request, raw, err)
		}
	}
	return generic, typed
}

// sizeError checks that request fails on field and returns the error body.
func sizeError(t *testing.T, request, field string) map[string]any {
	t.Helper()
	generic, _ := sizeCall(t, request)
	e, _ := generic["error"].(map[string]any)
	if generic["ok"] != false || e == nil || e["field"] != field || e["message"] == "" {
		t.Errorf("size(%s) = %v, want ok:false with an error on %q", request, generic, field)
	}
	return e
}

func TestSizeIssueRequest(t *testing.T) {
	const request = `{"target_clearance":250,"qb":300,"qd":500,"flow":"countercurrent","k0":0.05}`
	generic, got := sizeCall(t, request)
	want, err := core.Size(core.SizeSpec{Target: 250, QB: 300, QD: 500, Flow: core.Countercurrent, K0: 0.05})
	if err != nil {
		t.Fatal(err)
	}
	if !got.OK || !reflect.DeepEqual(got.Sizing, want) {
		t.Errorf("size(%s) = %+v, want core.Size's %+v", request, got.Sizing, want)
	}
	if got.Input != (api.SizeInput{TargetClearance: 250, QB: 300, QD: 500, Sieving: core.DefaultSieving, Flow: "countercurrent", MarginPercent: 0}) {
		t.Errorf("size(%s).input = %+v", request, got.Input)
	}
	// The members the README documents are there, by name.
	for _, k := range []string{"ok", "input", "k0", "flow", "koa", "area_m2", "ntu", "clearance_ceiling", "countercurrent", "cocurrent"} {
		if _, ok := generic[k]; !ok {
			t.Errorf("size(%s) has no %q: %v", request, k, generic)
		}
	}
	for _, k := range []string{"choice", "current_filter", "sweep"} {
		if _, ok := generic[k]; ok {
			t.Errorf("size(%s) has %q, which was not asked for", request, k)
		}
	}
	co := generic["cocurrent"].(map[string]any)
	if co["reachable"] != false || co["koa"] != nil || co["area_m2"] != nil || !strings.Contains(co["message"].(string), "ceiling of 187.5") {
		t.Errorf("size(%s).cocurrent = %v, want unreachable with null KoA and area and a message", request, co)
	}
}

// Defaults: flow counter-current, margin 0, no K0 (no areas); numbers may
// be decimal strings with a comma.
func TestSizeDefaults(t *testing.T) {
	generic, got := sizeCall(t, `{"target_clearance":"250,0","qb":"300","qd":500}`)
	want, _ := core.RequiredKoA(core.Countercurrent, 300, 500, 250)
	if !got.OK || got.Flow != "countercurrent" || got.KoA != want || got.K0 != nil || got.AreaM2 != nil || got.Input.MarginPercent != 0 {
		t.Errorf("size(defaults) = %v, want counter-current KoA %g and no areas", generic, want)
	}
	if _, ok := generic["area_m2"]; ok {
		t.Errorf("size(no k0) has area_m2: %v", generic)
	}
	// An empty string or null counts as absent.
	_, got2 := sizeCall(t, `{"target_clearance":250,"qb":300,"qd":500,"k0":"","margin_percent":null,"flow":""}`)
	if !reflect.DeepEqual(got2.Sizing, got.Sizing) {
		t.Errorf("size with empty optional fields = %+v, want the defaults %+v", got2.Sizing, got.Sizing)
	}
}

// The ceiling refusal: field target_clearance, the ceiling in limit.
func TestSizeUnreachable(t *testing.T) {
	for _, c := range []struct {
		request string
		limit   float64
		word    string
	}{
		// Ceilings by hand: co-current 300 x 500/800 = 187.5, counter-current min(300, 500).
		{`{"target_clearance":250,"qb":300,"qd":500,"flow":"cocurrent","k0":0.05}`, 187.5, "counter-current flow (ceiling 300 mL/min)"},
		{`{"target_clearance":300,"qb":300,"qd":500}`, 300, "QB above 300.0 mL/min"},
		{`{"target_clearance":1e6,"qb":300,"qd":500}`, 300, "ceiling of 300"},
	} {
		e := sizeError(t, c.request, "target_clearance")
		if e == nil {
			continue
		}
		if e["limit"] != c.limit || !strings.Contains(e["message"].(string), c.word) {
			t.Errorf("size(%s) error %v, want limit %g and %q", c.request, e, c.limit, c.word)
		}
	}
}

// Each field's errors, in request order.
func TestSizeFieldErrors(t *testing.T) {
	for _, c := range []struct{ request, field string }{
		{`{"qb":300,"qd":500}`, "target_clearance"},
		{`{"target_clearance":0,"qb":300,"qd":500}`, "target_clearance"},
		{`{"target_clearance":"NaN","qb":300,"qd":500}`, "target_clearance"},
		{`{"target_clearance":250,"qd":500}`, "qb"},
		{`{"target_clearance":250,"qb":-300,"qd":500}`, "qb"},
		{`{"target_clearance":250,"qb":300}`, "qd"},
		{`{"target_clearance":250,"qb":300,"qd":"1e9"}`, "qd"},
		{`{"target_clearance":250,"qb":300,"qd":500,"flow":"parallel"}`, "flow"},
		{`{"target_clearance":250,"qb":300,"qd":500,"flow":"Countercurrent"}`, "flow"},
		{`{"target_clearance":250,"qb":300,"qd":500,"flow":1}`, "flow"},
		{`{"target_clearance":250,"qb":300,"qd":500,"k0":0}`, "k0"},
		{`{"target_clearance":250,"qb":300,"qd":500,"k0":-0.05}`, "k0"},
		{`{"target_clearance":250,"qb":300,"qd":500,"k0":50}`, "k0"},
		{`{"target_clearance":250,"qb":300,"qd":500,"reference":{"koa":800}}`, "reference.area_m2"},
		{`{"target_clearance":250,"qb":300,"qd":500,"reference":{"area_m2":1.6}}`, "reference.koa"},
		{`{"target_clearance":250,"qb":300,"qd":500,"reference":{"koa":0,"area_m2":1.6}}`, "reference.koa"},
		{`{"target_clearance":250,"qb":300,"qd":500,"reference":{"koa":800,"area_m2":1.6},"k0":0.05}`, "reference"},
		{`{"target_clearance":250,"qb":300,"qd":500,"reference":{"koa":800,"area_m2":1.6,"label":"x"}}`, "reference.label"},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":[{"koa":800},{"koa":900,"kob":1}]}`, "filters[1].kob"},
		{`{"target_clearance":250,"qb":300,"qd":500,"qd":600}`, "qd"},
		{`{"target_clearance":250,"qb":300,"qd":500,"margin_percent":-5}`, "margin_percent"},
		{`{"target_clearance":250,"qb":300,"qd":500,"margin_percent":"ten"}`, "margin_percent"},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":{}}`, "filters"},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":[{"label":"a"}]}`, "filters[0].koa"},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":[{"koa":800},{"koa":"x"}]}`, "filters[1].koa"},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":[{"koa":800},{"koa":0}]}`, "filters[1].koa"},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":[{"area_m2":1.4}]}`, "filters[0].area_m2"},
		{`{"target_clearance":250,"qb":300,"qd":500,"k0":0.05,"filters":[{"area_m2":0}]}`, "filters[0].area_m2"},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":[{"koa":800,"label":"` + strings.Repeat("é", 81) + `"}]}`, "filters[0].label"},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":[` + strings.Repeat(`{"koa":800},`, 100) + `{"koa":800}]}`, "filters"},
		{`{"target_clearance":250,"qb":300,"qd":500,"current_filter":{}}`, "current_filter.koa"},
		{`{"target_clearance":250,"qb":300,"qd":500,"current_filter":{"area_m2":1.4}}`, "current_filter.area_m2"},
		{`{"target_clearance":250,"qb":300,"qd":500,"current_filter":{"koa":700},"qd_range":[100]}`, "qd_range"},
		{`{"target_clearance":250,"qb":300,"qd":500,"current_filter":{"koa":700},"qd_range":[800,100]}`, "qd_range"},
		{`{"target_clearance":250,"qb":300,"qd":500,"current_filter":{"koa":700},"qb_range":[0,100]}`, "qb_range"},
		{`{"target_clearance":250,"qb":300,"qd":500,"sweep":{"points":1}}`, "sweep.points"},
		{`{"target_clearance":250,"qb":300,"qd":500,"sweep":{"points":10.5}}`, "sweep.points"},
		{`{"target_clearance":250,"qb":300,"qd":500,"sweep":{"koa_max":0}}`, "sweep.koa_max"},
		{`{"target_clearance":250,"qb":300,"qd":500,"sweep":{"koa_max":-1}}`, "sweep.koa_max"},
		{`{"target_clearance":250,"qb":300,"qd":500,"koa":800}`, "koa"}, // not a size field
		{`{"target_clearance":250,"qb":300,"qd":500,"margin":10}`, "margin"},
		{`{"target_clearance":250,"qb":300,`, ""},
		{``, ""},
		{`[1]`, ""},
		// The first bad field in request order is reported.
		{`{"target_clearance":250,"qb":0,"qd":500,"k0":-1}`, "qb"},
		{`{"target_clearance":250,"qb":300,"qd":500,"k0":-1,"margin_percent":-1}`, "k0"},
	} {
		sizeError(t, c.request, c.field)
	}
}

// The whole answer with every part: the filter list, the filter in use
// with a failing QD solve (reported in its part) and the chart series,
// equal to what core computes.
func TestSizeAllParts(t *testing.T) {
	const request = `{"target_clearance":250,"qb":300,"qd":500,
		"reference":{"koa":800,"area_m2":1.6},"margin_percent":"10",
		"filters":[{"label":"small","area_m2":1.4},{"label":"large","koa":1100},{"area_m2":"2,0"}],
		"current_filter":{"koa":700},"qd_range":[100,700],
		"sweep":{"points":11}}`
	generic, got := sizeCall(t, request)
	want, err := core.Size(core.SizeSpec{
		Target: 250, QB: 300, QD: 500, Reference: &core.Filter{KoA: 800, AreaM2: 1.6}, MarginPercent: 10,
		Filters: []core.Filter{{Label: "small", AreaM2: 1.4}, {Label: "large", KoA: 1100}, {AreaM2: 2}},
		Current: &core.Filter{KoA: 700}, QDRange: &core.Range{Min: 100, Max: 700},
		Sweep: &core.SizeSweepSpec{Points: 11},
	})
	if err != nil {
		t.Fatal(err)
	}
	if !got.OK || !reflect.DeepEqual(got.Sizing, want) {
		t.Fatalf("size(all parts) = %+v, want core.Size's %+v", got.Sizing, want)
	}
	// K0 from the reference: 800/16000 cm^2 = 0.05 cm/min (by hand).
	if got.K0 == nil || math.Abs(*got.K0-0.05) > 1e-17 {
		t.Errorf("size(all parts).k0 = %v, want 0.05", got.K0)
	}
	ch := generic["choice"].(map[string]any)
	if ch["chosen"] != 2.0 || len(ch["filters"].([]any)) != 3 {
		t.Errorf("size(all parts).choice = %v, want filter 2 (KoA 1000) of 3", ch)
	}
	if label := ch["filters"].([]any)[2].(map[string]any)["label"]; label != "filter 3" {
		t.Errorf("size(all parts): unlabelled filter is %q, want \"filter 3\"", label)
	}
	cur := generic["current_filter"].(map[string]any)
	qd, qb := cur["qd"].(map[string]any), cur["qb"].(map[string]any)
	if qd["ok"] != false || qd["error"].(map[string]any)["field"] != "qd_range" || qd["flow"] != nil {
		t.Errorf("size(all parts).current_filter.qd = %v, want ok:false on qd_range with no flow", qd)
	}
	if qb["ok"] != true || qb["flow"] == nil || qb["error"] != nil {
		t.Errorf("size(all parts).current_filter.qb = %v, want ok:true with a flow", qb)
	}
	sw := generic["sweep"].(map[string]any)
	for _, a := range []string{"countercurrent", "cocurrent"} {
		s := sw[a].(map[string]any)
		if len(s["target"].([]any)) != 11 || len(s["koa"].([]any)) != 11 || len(s["area_m2"].([]any)) != 11 {
			t.Errorf("size(all parts).sweep.%s = %v, want 11 points of target, koa and area_m2", a, s)
		}
	}
}

// Round trip through the API: the clearance compare reports, sized,
// gives back compare's KoA to 1e-9 (the core test covers the grid).
func TestSizeRoundTripThroughCompare(t *testing.T) {
	for _, koa := range []float64{50, 800, 3000} {
		for _, flows := range [][2]float64{{300, 500}, {400, 400}, {500, 300}} {
			var c struct {
				Countercurrent, Cocurrent struct {
					Clearance float64 `json:"clearance"`
				}
			}
			req, _ := json.Marshal(map[string]float64{"qb": flows[0], "qd": flows[1], "koa": koa})
			if err := json.Unmarshal(api.Compare(req), &c); err != nil {
				t.Fatal(err)
			}
			for a, k := range map[string]float64{"countercurrent": c.Countercurrent.Clearance, "cocurrent": c.Cocurrent.Clearance} {
				sreq, _ := json.Marshal(map[string]any{"target_clearance": k, "qb": flows[0], "qd": flows[1], "flow": a})
				_, got := sizeCall(t, string(sreq))
				if !got.OK || math.Abs(got.KoA-koa) > 1e-9*koa {
					t.Errorf("size(%s) KoA = %.17g, want compare's %g", sreq, got.KoA, koa)
				}
			}
		}
	}
}

func TestSizeListed(t *testing.T) {
	for _, e := range api.Entries {
		if e.Name == "size" {
			return
		}
	}
	t.Error(`api.Entries has no "size"`)
}

// sizeBenchRequest is what the sizing view sends on each input: a list of
// filters, the filter in use (both flow solves) and the chart series.
const sizeBenchRequest = `{"target_clearance":"250","qb":"300","qd":"500","flow":"countercurrent","k0":"0.05","margin_percent":"10",
	"filters":[{"label":"F14","area_m2":"1.4"},{"label":"F16","area_m2":"1.6"},{"label":"F18","area_m2":"1.8"},{"label":"H","koa":"1100"},{"label":"F21","area_m2":"2.1"}],
	"current_filter":{"koa":"700"},"sweep":{}}`

func BenchmarkSize(b *testing.B) {
	req := []byte(sizeBenchRequest)
	b.ReportAllocs()
	for b.Loop() {
		if out := api.Size(req); !strings.HasPrefix(string(out), `{"ok":true`) {
			b.Fatal(string(out))
		}
	}
}
