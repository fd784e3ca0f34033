package api_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"
	"testing"

	"clearkit/core"
	"clearkit/core/api"
)

// The contract of the compare call (package doc of api and README): what
// a request may hold, what a response looks like. Responses are read with
// encoding/json from the standard library, not with the encoder that wrote
// them.

const routineRequest = `{"qb":300,"qd":500,"koa":800}`

// routine is routineRequest with the defaults filled in (cbi 1, cdi 0).
var routine = core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, CDi: 0, Filtration: core.Filtration{Sieving: core.DefaultSieving}}

// failure is the failed response.
type failure struct {
	OK    *bool `json:"ok"`
	Error *struct {
		Field   *string  `json:"field"`
		Message *string  `json:"message"`
		Limit   *float64 `json:"limit"`
	} `json:"error"`
}

// compare calls api.Compare and checks that the answer is one JSON object
// with a boolean "ok".
func compare(t *testing.T, request string) []byte {
	t.Helper()
	resp := api.Compare([]byte(request))
	var probe struct {
		OK *bool `json:"ok"`
	}
	if err := json.Unmarshal(resp, &probe); err != nil || probe.OK == nil {
		t.Fatalf("Compare(%s) = %s, want a JSON object with ok (%v)", clip(request), resp, err)
	}
	return resp
}

// success calls Compare and decodes a successful response.
func success(t *testing.T, request string) api.CompareResponse {
	t.Helper()
	resp := compare(t, request)
	var got api.CompareResponse
	dec := json.NewDecoder(bytes.NewReader(resp))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&got); err != nil {
		t.Fatalf("Compare(%s) = %s, cannot decode: %v", clip(request), resp, err)
	}
	if !got.OK {
		t.Fatalf("Compare(%s) = %s, want ok", clip(request), resp)
	}
	return got
}

// fails calls Compare and checks a failed response naming field, with a
// message containing word.
func fails(t *testing.T, request, field, word string) {
	t.Helper()
	resp := compare(t, request)
	var f failure
	dec := json.NewDecoder(bytes.NewReader(resp))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&f); err != nil || f.Error == nil || f.Error.Field == nil || f.Error.Message == nil {
		t.Fatalf("Compare(%s) = %s, want {\"ok\":false,\"error\":{\"field\":...,\"message\":...}} (%v)", clip(request), resp, err)
	}
	if *f.OK || *f.Error.Field != field || !strings.Contains(*f.Error.Message, word) || strings.TrimSpace(*f.Error.Message) == "" {
		t.Errorf("Compare(%s) = %s, want ok false, field %q, a message with %q", clip(request), resp, field, word)
	}
}

func clip(s string) string {
	if len(s) > 120 {
		return s[:120] + "..."
	}
	return s
}

// keys returns the sorted keys of the JSON object at path in resp.
func keys(t *testing.T, resp []byte, path ...string) []string {
	t.Helper()
	var v any
	if err := json.Unmarshal(resp, &v); err != nil {
		t.Fatal(err)
	}
	for _, p := range path {
		m, ok := v.(map[string]any)
		if !ok {
			t.Fatalf("%s: %v is not an object", strings.Join(path, "."), v)
		}
		v = m[p]
	}
	m, ok := v.(map[string]any)
	if !ok {
		t.Fatalf("%s: %v is not an object", strings.Join(path, "."), v)
	}
	return slices.Sorted(maps.Keys(m))
}

func sorted(s ...string) []string { return slices.Sorted(slices.Values(s)) }

// The member names are the README's API section and the json tags of
// core (compare.go, sweep.go).
var (
	topKeys         = sorted("ok", "input", "countercurrent", "cocurrent", "countercurrent_gain", "countercurrent_gain_percent", "ntu", "flow_ratio", "qbw")
	inputKeys       = sorted("qb", "qd", "koa", "cbi", "cdi", "qf", "sieving")
	performanceKeys = sorted("clearance", "dialysance", "extraction_ratio", "cbo", "cdo", "transfer_rate", "log_mean_difference", "clearance_ceiling", "dialysance_ceiling")
	sweepsKeys      = sorted("qb", "qd", "koa")
	seriesKeys      = sorted("x", "countercurrent", "cocurrent", "countercurrent_ceiling", "cocurrent_ceiling")
)

func TestCompareShape(t *testing.T) {
	resp := compare(t, routineRequest)
	if got := keys(t, resp); !slices.Equal(got, topKeys) {
		t.Errorf("Compare(%s) members %v, want %v", routineRequest, got, topKeys)
	}
	if got := keys(t, resp, "input"); !slices.Equal(got, inputKeys) {
		t.Errorf("Compare(%s) input members %v, want %v", routineRequest, got, inputKeys)
	}
	for _, a := range core.Arrangements {
		if got := keys(t, resp, a.String()); !slices.Equal(got, performanceKeys) {
			t.Errorf("Compare(%s) %s members %v, want %v", routineRequest, a, got, performanceKeys)
		}
	}

	req := `{"qb":300,"qd":500,"koa":800,"sweep":{}}`
	resp = compare(t, req)
	if got, want := keys(t, resp), sorted(append(slices.Clone(topKeys), "sweeps")...); !slices.Equal(got, want) {
		t.Errorf("Compare(%s) members %v, want %v", req, got, want)
	}
	if got := keys(t, resp, "sweeps"); !slices.Equal(got, sweepsKeys) {
		t.Errorf("Compare(%s) sweeps members %v, want %v", req, got, sweepsKeys)
	}
	for _, axis := range sweepsKeys {
		if got := keys(t, resp, "sweeps", axis); !slices.Equal(got, seriesKeys) {
			t.Errorf("Compare(%s) sweeps.%s members %v, want %v", req, axis, got, seriesKeys)
		}
	}
	// "sweep": null is an absent sweep.
	resp = compare(t, `{"qb":300,"qd":500,"koa":800,"sweep":null}`)
	if got := keys(t, resp); !slices.Equal(got, topKeys) {
		t.Errorf("Compare with sweep null: members %v, want %v", got, topKeys)
	}
}

// The numbers are exactly core.Compare's: JSON numbers written in the
// shortest form read back to the same float64.
func TestCompareNumbers(t *testing.T) {
	for _, c := range []struct {
		request string
		op      core.Operating
	}{
		{routineRequest, routine},
		{`{"qb":450,"qd":700,"koa":1300,"cbi":12,"cdi":1.5}`, core.Operating{QB: 450, QD: 700, KoA: 1300, CBi: 12, CDi: 1.5}},
		{`{"qb":400,"qd":400,"koa":0}`, core.Operating{QB: 400, QD: 400, KoA: 0, CBi: 1}},
		{`{"qb":1e-6,"qd":1e5,"koa":1e8,"cbi":1e9,"cdi":1e9}`, core.Operating{QB: 1e-6, QD: 1e5, KoA: 1e8, CBi: 1e9, CDi: 1e9}},
		{`{"qb":250,"qd":500,"koa":700,"cbi":1,"cdi":3}`, core.Operating{QB: 250, QD: 500, KoA: 700, CBi: 1, CDi: 3}},
	} {
		c.op.Sieving = core.DefaultSieving // the default, echoed
		got := success(t, c.request)
		want, err := core.Compare(c.op)
		if err != nil {
			t.Fatalf("core.Compare(%+v) error: %v", c.op, err)
		}
		if got.Input != c.op {
			t.Errorf("Compare(%s).input = %+v, want %+v", c.request, got.Input, c.op)
		}
		if got.Comparison != want {
			t.Errorf("Compare(%s) = %+v, want core.Compare's %+v", c.request, got.Comparison, want)
		}
		if got.Sweeps != nil {
			t.Errorf("Compare(%s) has sweeps, want none", c.request)
		}
	}
}

// Numbers may be strings with a decimal point or comma; an empty string or
// null is an absent field (api package doc).
func TestCompareNumberForms(t *testing.T) {
	for _, c := range []struct {
		qd   string // the JSON value of qd
		want float64
	}{
		{`"500,5"`, 500.5},
		{`"500.5"`, 500.5},
		{`" 500,5 "`, 500.5},
		{`"500"`, 500},
		{`"+500"`, 500},
		{`"500."`, 500},
		{`"5e2"`, 500},
		{`"5,005E2"`, 500.5},
		{`",5"`, 0.5},
		{`"0,000001"`, 1e-6},
		{`500.5`, 500.5},
		{`5.005e+2`, 500.5},
		{`"\u0035\u0030\u0030"`, 500}, // "500" with JSON escapes
	} {
		req := `{"qb":300,"qd":` + c.qd + `,"koa":800}`
		if got := success(t, req); got.Input.QD != c.want {
			t.Errorf("Compare(%s).input.qd = %g, want %g", req, got.Input.QD, c.want)
		}
	}
	// Defaults: cbi 1, cdi 0, whether absent, null or "".
	for _, req := range []string{
		routineRequest,
		`{"qb":300,"qd":500,"koa":800,"cbi":null,"cdi":null}`,
		`{"qb":300,"qd":500,"koa":800,"cbi":"","cdi":""}`,
		`{"qb":300,"qd":500,"koa":800,"cbi":"  ","cdi":" "}`,
	} {
		if got := success(t, req); got.Input != routine {
			t.Errorf("Compare(%s).input = %+v, want %+v", req, got.Input, routine)
		}
	}
	req := `{"qb":"300","qd":"500","koa":"800,0","cbi":"2,5","cdi":"0,5"}`
	want := core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 2.5, CDi: 0.5, Filtration: core.Filtration{Sieving: 1}}
	if got := success(t, req); got.Input != want {
		t.Errorf("Compare(%s).input = %+v, want %+v", req, got.Input, want)
	}
}

// Every field refuses what is not a usable number, and says which field.
func TestCompareFieldErrors(t *testing.T) {
	valid := map[string]string{"qb": "300", "qd": "500", "koa": "800", "cbi": "1", "cdi": "0"}
	order := []string{"qb", "qd", "koa", "cbi", "cdi"}
	build := func(field, value string) string {
		var parts []string
		for _, f := range order {
			v := valid[f]
			if f == field {
				if value == "" {
					continue // absent
				}
				v = value
			}
			parts = append(parts, fmt.Sprintf("%q:%s", f, v))
		}
		return "{" + strings.Join(parts, ",") + "}"
	}
	// Refused by every field.
	common := []struct{ value, word string }{
		{`-1`, ""},
		{`"-1"`, ""},
		{`"abc"`, "number"},
		{`"NaN"`, "number"},
		{`"Infinity"`, "number"},
		{`"-Inf"`, "number"},
		{`"0x1p3"`, "number"},
		{`"1 000"`, "number"},
		{`"1,5,0"`, "number"},
		{`1e999`, "finite"},
		{`-1e999`, "finite"},
		{`"1e999"`, "finite"},
		{`true`, "number"},
		{`false`, "number"},
		{`{}`, "number"},
		{`{"value":300}`, "number"},
		{`[300]`, "number"},
		{`1e10`, "maximum"},
	}
	for _, field := range order {
		for _, c := range common {
			fails(t, build(field, c.value), field, c.word)
		}
	}
	for _, field := range []string{"qb", "qd", "koa"} {
		fails(t, build(field, ""), field, "required")
		fails(t, build(field, `null`), field, "required")
		fails(t, build(field, `""`), field, "required")
	}
	for _, field := range []string{"qb", "qd", "cbi"} {
		fails(t, build(field, `0`), field, "greater than 0")
		fails(t, build(field, `"0,0"`), field, "greater than 0")
	}
	fails(t, build("qb", `1e-7`), "qb", "too small")
	fails(t, build("koa", `-0.001`), "koa", "negative")
	fails(t, build("cdi", `-0.001`), "cdi", "negative")
	// Zero is a valid KoA and CDi.
	for _, field := range []string{"koa", "cdi"} {
		success(t, build(field, `0`))
	}
}

func TestCompareRequestErrors(t *testing.T) {
	for _, c := range []struct {
		request, field, word string
	}{
		// Unknown and misspelt fields are refused by name.
		{`{"qb":300,"qd":500,"koa":800,"uf":10}`, "uf", "not a field"},
		{`{"qb":300,"qd":500,"koa":800,"cdl":0.5}`, "cdl", "not a field"},
		// Malformed JSON: the request as a whole.
		{`{"qb":300,"qd":500,"koa":800`, "", "not valid JSON"},
		{`{"qb":300,"qd":500,"koa":800,}`, "", "not valid JSON"},
		{`{"qb":NaN,"qd":500,"koa":800}`, "", "not valid JSON"},
		{`{qb:300}`, "", "not valid JSON"},
		// JSON, but not an object.
		{`[300,500,800]`, "", "must be a JSON object"},
		{`300`, "", "must be a JSON object"},
		{`"qb=300"`, "", "must be a JSON object"},
		{`null`, "", "must be a JSON object"},
		{"\xff", "", "not valid JSON"},
		// Empty.
		{``, "", "empty"},
		{" \n\t ", "", "empty"},
		// Trailing data.
		{routineRequest + ` {}`, "", "after the JSON object"},
		{routineRequest + `}`, "", "after the JSON object"},
		{routineRequest + `]`, "", "after the JSON object"},
		{routineRequest + ` x`, "", "after the JSON object"},
		{routineRequest + routineRequest, "", "after the JSON object"},
		// A sweep that is not an object.
		{`{"qb":300,"qd":500,"koa":800,"sweep":5}`, "sweep", "wrong type"},
		{`{"qb":300,"qd":500,"koa":800,"sweep":[]}`, "sweep", "wrong type"},
	} {
		fails(t, c.request, c.field, c.word)
	}
	// A request with surrounding white space is fine.
	success(t, "\n "+routineRequest+" \n")
}

// MaxRequestBytes (64 KiB) is the largest request read.
func TestCompareRequestSize(t *testing.T) {
	pad := func(n int) string {
		return routineRequest[:len(routineRequest)-1] + strings.Repeat(" ", n-len(routineRequest)) + "}"
	}
	if api.MaxRequestBytes != 64<<10 {
		t.Errorf("MaxRequestBytes = %d, want %d (64 KiB, api package doc)", api.MaxRequestBytes, 64<<10)
	}
	success(t, pad(api.MaxRequestBytes))
	fails(t, pad(api.MaxRequestBytes+1), "", "too large")
	fails(t, pad(1<<20), "", "too large")
}

func TestCompareSweep(t *testing.T) {
	req := `{"qb":300,"qd":500,"koa":800,"sweep":{}}`
	got := success(t, req)
	want, err := core.Sweep(routine, core.SweepSpec{})
	if err != nil {
		t.Fatal(err)
	}
	if got.Sweeps == nil || !sweepsEqual(*got.Sweeps, want) {
		t.Errorf("Compare(%s).sweeps differ from core.Sweep's", req)
	}
	if n := len(got.Sweeps.KoA.X); n != core.DefaultSweepPoints {
		t.Errorf("Compare(%s): %d points, want %d", req, n, core.DefaultSweepPoints)
	}

	req = `{"qb":300,"qd":500,"koa":800,"sweep":{"points":"11","qb":[100,"400,5"],"qd":null,"koa":[0,3000]}}`
	got = success(t, req)
	want, err = core.Sweep(routine, core.SweepSpec{Points: 11, QB: &core.Range{Min: 100, Max: 400.5}, KoA: &core.Range{Min: 0, Max: 3000}})
	if err != nil {
		t.Fatal(err)
	}
	if got.Sweeps == nil || !sweepsEqual(*got.Sweeps, want) {
		t.Errorf("Compare(%s).sweeps differ from core.Sweep's", req)
	}
	if s := got.Sweeps.QB; len(s.X) != 11 || s.X[0] != 100 || s.X[10] != 400.5 {
		t.Errorf("Compare(%s).sweeps.qb.x = %v, want 11 points from 100 to 400.5", req, s.X)
	}
	// Points given as 2 and 1001, the limits.
	for _, n := range []int{core.MinSweepPoints, core.MaxSweepPoints} {
		req := fmt.Sprintf(`{"qb":300,"qd":500,"koa":800,"sweep":{"points":%d}}`, n)
		if got := success(t, req); len(got.Sweeps.QD.Cocurrent) != n {
			t.Errorf("Compare(%s): %d points, want %d", req, len(got.Sweeps.QD.Cocurrent), n)
		}
	}
}

func sweepsEqual(a, b core.Sweeps) bool {
	for _, p := range [][2]core.Series{{a.QB, b.QB}, {a.QD, b.QD}, {a.KoA, b.KoA}} {
		x, y := p[0], p[1]
		if !slices.Equal(x.X, y.X) || !slices.Equal(x.Countercurrent, y.Countercurrent) || !slices.Equal(x.Cocurrent, y.Cocurrent) ||
			!slices.Equal(x.CountercurrentCeiling, y.CountercurrentCeiling) || !slices.Equal(x.CocurrentCeiling, y.CocurrentCeiling) {
			return false
		}
	}
	return true
}

func TestCompareSweepErrors(t *testing.T) {
	for _, c := range []struct {
		sweep, field, word string
	}{
		{`{"points":1}`, "sweep.points", "from 2 to 1001"},
		{`{"points":0}`, "sweep.points", "from 2 to 1001"},
		{`{"points":-5}`, "sweep.points", "from 2 to 1001"},
		{`{"points":1002}`, "sweep.points", "from 2 to 1001"},
		{`{"points":1e300}`, "sweep.points", "from 2 to 1001"},
		{`{"points":2.5}`, "sweep.points", "whole number"},
		{`{"points":"abc"}`, "sweep.points", "number"},
		{`{"points":true}`, "sweep.points", "number"},
		{`{"points":1e999}`, "sweep.points", "finite"},
		{`{"qb":[400,100]}`, "sweep.qb", "below maximum"},
		{`{"qb":[100,100]}`, "sweep.qb", "below maximum"},
		{`{"qb":[0,100]}`, "sweep.qb", "greater than 0"},
		{`{"qb":[10,1e6]}`, "sweep.qb", "maximum"},
		{`{"qb":[100]}`, "sweep.qb", "[minimum, maximum]"},
		{`{"qb":[]}`, "sweep.qb", "[minimum, maximum]"},
		{`{"qb":[1,2,3]}`, "sweep.qb", "[minimum, maximum]"},
		{`{"qb":[1,"x"]}`, "sweep.qb", "number"},
		{`{"qb":[null,100]}`, "sweep.qb", "required"},
		{`{"qb":["",100]}`, "sweep.qb", "required"},
		{`{"qb":100}`, "sweep.qb", "wrong type"},
		{`{"qb":"100-400"}`, "sweep.qb", "wrong type"},
		{`{"qd":[-1,100]}`, "sweep.qd", "greater than 0"},
		{`{"qd":[800,300]}`, "sweep.qd", "below maximum"},
		{`{"koa":[-1,100]}`, "sweep.koa", "negative"},
		{`{"koa":[0,1e9]}`, "sweep.koa", "maximum"},
		{`{"koa":{"min":0,"max":100}}`, "sweep.koa", "wrong type"},
	} {
		fails(t, `{"qb":300,"qd":500,"koa":800,"sweep":`+c.sweep+`}`, c.field, c.word)
	}
	// An unknown member of sweep is refused by its full path.
	fails(t, `{"qb":300,"qd":500,"koa":800,"sweep":{"steps":10}}`, "sweep.steps", "not a field")
	// The operating point is checked before the sweep.
	fails(t, `{"qb":0,"qd":500,"koa":800,"sweep":{"points":1}}`, "qb", "greater than 0")
}

func TestEntries(t *testing.T) {
	for _, e := range api.Entries {
		if e.Name == "compare" {
			if got, want := e.Call([]byte(routineRequest)), api.Compare([]byte(routineRequest)); !bytes.Equal(got, want) {
				t.Errorf("Entries[compare](%s) = %s, want %s", routineRequest, got, want)
			}
			return
		}
	}
	t.Errorf("api.Entries has no \"compare\"")
}

// FuzzCompare: whatever the request, the answer is a JSON object with ok;
// on success every number is finite and the input is valid.
func FuzzCompare(f *testing.F) {
	for _, s := range []string{
		routineRequest,
		`{"qb":"500,5","qd":"","koa":800,"cbi":2,"cdi":0.3,"sweep":{"points":5,"qb":[1,2]}}`,
		`{"qb":1e-6,"qd":1e5,"koa":1e8}`,
		`{"qb":300,"qd":500,"koa":800}}`,
		`{"qb":true}`, ``, `null`, `[]`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, request []byte) {
		resp := api.Compare(request)
		var v map[string]any
		if err := json.Unmarshal(resp, &v); err != nil {
			t.Fatalf("Compare(%q) = %s, not a JSON object: %v", request, resp, err)
		}
		ok, isBool := v["ok"].(bool)
		if !isBool {
			t.Fatalf("Compare(%q) = %s, want a boolean ok", request, resp)
		}
		if !ok {
			return
		}
		var got api.CompareResponse
		if err := json.Unmarshal(resp, &got); err != nil {
			t.Fatalf("Compare(%q) = %s: %v", request, resp, err)
		}
		if err := got.Input.Validate(); err != nil {
			t.Errorf("Compare(%q) succeeded with input %+v: %v", request, got.Input, err)
		}
		if c, err := core.Compare(got.Input); err != nil || c != got.Comparison {
			t.Errorf("Compare(%q) = %+v, want core.Compare's %+v", request, got.Comparison, c)
		}
		// encoding/json refuses NaN and Inf, so decoding already proved
		// the numbers finite; check the magnitudes stay sensible.
		// Dialysance is bounded by the flows; clearance is not (it is
		// dialysance times (CBi - CDi)/CBi, -8 D at CDi = 9 CBi: seed
		// used-dialysate-clearance-beyond-flow).
		if math.Abs(got.Countercurrent.Dialysance) > core.MaxFlow {
			t.Errorf("Compare(%q): dialysance %g beyond any flow", request, got.Countercurrent.Dialysance)
		}
	})
}

func BenchmarkAPICompare(b *testing.B) {
	req := []byte(routineRequest)
	b.ReportAllocs()
	for b.Loop() {
		if resp := api.Compare(req); !bytes.HasPrefix(resp, []byte(`{"ok":true`)) {
			b.Fatalf("Compare(%s) = %s", req, resp)
		}
	}
}

// BenchmarkAPICompareWithSweep is the page's chart request: the default
// 101 points on 3 axes, encoded as JSON.
func BenchmarkAPICompareWithSweep(b *testing.B) {
	req := []byte(`{"qb":300,"qd":500,"koa":800,"sweep":{}}`)
	b.ReportAllocs()
	var size int
	for b.Loop() {
		resp := api.Compare(req)
		if !bytes.HasPrefix(resp, []byte(`{"ok":true`)) {
			b.Fatalf("Compare(%s) = %s", req, resp)
		}
		size = len(resp)
	}
	b.ReportMetric(float64(size), "response-bytes")
}
