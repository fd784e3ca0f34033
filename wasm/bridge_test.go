//go:build js && wasm

package main

import (
	"encoding/json"
	"strings"
	"testing"

	"github.com/hack-pad/safejs"

	"clearkit/core"
	"clearkit/core/api"
	"clearkit/internal/badinput"
)

// These tests run under Node (GOOS=js GOARCH=wasm go test with
// go_js_wasm_exec from the Go toolchain) and call the published functions
// through JavaScript, as the page does.

func init() {
	entries := append([]api.Entry{
		{Name: "boom", Call: func([]byte) []byte { panic("forced for the test") }},
		echo,
	}, api.Entries...)
	if err := publish("clearkitTest", entries); err != nil {
		panic(err)
	}
}

// call invokes globalThis.clearkitTest[name](args...) and returns the string.
func call(t testing.TB, name string, args ...any) string {
	t.Helper()
	ck, err := safejs.Global().Get("clearkitTest")
	if err != nil {
		t.Fatal(err)
	}
	v, err := ck.Call(name, args...)
	if err != nil {
		t.Fatalf("%s threw: %v", name, err)
	}
	if v.Type() != safejs.TypeString {
		t.Fatalf("%s returned a %v, want a string", name, v.Type())
	}
	s, err := v.String()
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// jsString makes the JavaScript string whose UTF-8 form is b. A Go string
// passed as an argument would lose a leading byte order mark on the way
// (wasm_exec.js decodes with a TextDecoder that strips it); a page's
// strings have no such step.
func jsString(t testing.TB, b []byte) safejs.Value {
	t.Helper()
	bytes, err := safejs.Global().Get("Uint8Array")
	if err != nil {
		t.Fatal(err)
	}
	arr, err := bytes.New(len(b))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := safejs.CopyBytesToJS(arr, b); err != nil {
		t.Fatal(err)
	}
	decoderClass, err := safejs.Global().Get("TextDecoder")
	if err != nil {
		t.Fatal(err)
	}
	options, err := safejs.ValueOf(map[string]any{"ignoreBOM": true})
	if err != nil {
		t.Fatal(err)
	}
	decoder, err := decoderClass.New("utf-8", options)
	if err != nil {
		t.Fatal(err)
	}
	s, err := decoder.Call("decode", arr)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

type failure struct {
	OK    bool `json:"ok"`
	Error struct {
		Field   string `json:"field"`
		Message string `json:"message"`
	} `json:"error"`
}

func decodeFailure(t *testing.T, s string) failure {
	t.Helper()
	var f failure
	if err := json.Unmarshal([]byte(s), &f); err != nil {
		t.Fatalf("response %q is not JSON: %v", s, err)
	}
	if f.OK || f.Error.Message == "" {
		t.Fatalf("response %s: want ok:false with a message", s)
	}
	return f
}

func TestVersionPublished(t *testing.T) {
	ck, _ := safejs.Global().Get("clearkitTest")
	v, err := ck.Get("version")
	if err != nil || v.Type() != safejs.TypeString {
		t.Fatalf("clearkit.version is %v (%v), want a string", v.Type(), err)
	}
}

func TestCompareThroughJS(t *testing.T) {
	got := call(t, "compare", `{"qb":300,"qd":500,"koa":800}`)
	var resp struct {
		OK             bool             `json:"ok"`
		Countercurrent core.Performance `json:"countercurrent"`
		Cocurrent      core.Performance `json:"cocurrent"`
	}
	if err := json.Unmarshal([]byte(got), &resp); err != nil {
		t.Fatalf("compare: %v in %s", err, got)
	}
	// The bridge must hand back exactly what the API computes natively.
	want, err := core.Compare(core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1})
	if err != nil {
		t.Fatal(err)
	}
	if !resp.OK || resp.Countercurrent != want.Countercurrent || resp.Cocurrent != want.Cocurrent {
		t.Errorf("compare through JS = %s, want the values of core.Compare %+v", got, want)
	}
}

// Ultrafiltration and whole blood through JavaScript: the bridge hands
// back, byte for byte, what the API computes natively, and the numbers are
// core.Compare's at the blood-water flow (258.84 mL/min at a haematocrit
// of 32 %, bloodwater_test.go).
func TestCompareConditionsThroughJS(t *testing.T) {
	for _, req := range []string{
		`{"qb":300,"qd":500,"koa":800,"qf":10,"hct":32,"sweep":{}}`,
		`{"qb":"250","qd":"600,5","koa":"1100","qf":"20,5","sieving":"0,7","hct":"40","plasma_water":"0,94","red_cell_water":"0,7"}`,
	} {
		got := call(t, "compare", req)
		if native := string(api.Compare([]byte(req))); got != native {
			t.Errorf("compare(%s) through JS = %s, natively %s", req, got, native)
		}
	}
	got := call(t, "compare", `{"qb":300,"qd":500,"koa":800,"qf":10,"hct":32}`)
	var resp struct {
		OK bool `json:"ok"`
		core.Comparison
	}
	if err := json.Unmarshal([]byte(got), &resp); err != nil {
		t.Fatalf("compare: %v in %s", err, got)
	}
	b := core.DefaultWholeBlood(32)
	want, err := core.Compare(core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, Blood: &b, Filtration: core.Filtration{QF: 10, Sieving: 1}})
	if err != nil {
		t.Fatal(err)
	}
	if !resp.OK || resp.Comparison != want {
		t.Errorf("compare through JS = %s, want the values of core.Compare %+v", got, want)
	}
	f := decodeFailure(t, call(t, "compare", `{"qb":300,"qd":500,"koa":800,"qf":260,"hct":32}`))
	if f.Error.Field != "qf" || !strings.Contains(f.Error.Message, "blood-water flow") {
		t.Errorf("compare with qf above QBW: error %+v, want field qf about the blood-water flow", f.Error)
	}
}

// size and check with ultrafiltration and whole blood: the bridge hands
// back byte for byte what the API computes natively (core's numbers are
// the same on every platform: core/exp.go).
func TestSizeAndCheckConditionsThroughJS(t *testing.T) {
	for _, c := range []struct{ entry, request string }{
		{"size", `{"target_clearance":220,"qb":300,"qd":500,"hct":32,"qf":15,"k0":0.05,"filters":[{"koa":900}],"current_filter":{"koa":700},"sweep":{}}`},
		{"check", `{"qb":300,"qd":500,"qf":10,"sieving":0.9,"hct":32,"cbi":100,"cbo":22,"cdo":40,"koa":800,"concentration_uncertainty_percent":2}`},
		{"dialysance", `{"qd":500,"qf":10,"qb":300,"koa":800,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2}`},
	} {
		var native []byte
		for _, e := range api.Entries {
			if e.Name == c.entry {
				native = e.Call([]byte(c.request))
			}
		}
		if got := call(t, c.entry, c.request); got != string(native) || !strings.HasPrefix(got, `{"ok":true`) {
			t.Errorf("%s(%s) through JS = %s, natively %s", c.entry, c.request, got, native)
		}
	}
}

func TestErrorShapes(t *testing.T) {
	for _, tc := range []struct{ request, field string }{
		{`{"qb":-1,"qd":500,"koa":800}`, "qb"},
		{`{"qb":300,"qd":0,"koa":800}`, "qd"},
		{`{"qb":300,"qd":500}`, "koa"},
		{`{"qb":300,"qd":500,"koa":"x"}`, "koa"},
		{`{"qb":300,"qd":500,"koa":"Infinity"}`, "koa"},
		{`{"qb":300,`, ""},
	} {
		f := decodeFailure(t, call(t, "compare", tc.request))
		if f.Error.Field != tc.field {
			t.Errorf("compare(%s) field = %q, want %q", tc.request, f.Error.Field, tc.field)
		}
	}
}

// TestBadInputThroughJS runs the catalogue of bad input
// (testdata/bad-input.json) through the published functions, as the page
// would call them: each case gives its field and message, and the bridge
// returns exactly what the API returns natively.
func TestBadInputThroughJS(t *testing.T) {
	c, err := badinput.Load()
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range api.Entries {
		cases, err := c.Cases(e.Name)
		if err != nil {
			t.Fatal(err)
		}
		for _, cs := range cases {
			got := call(t, e.Name, jsString(t, cs.Body))
			f := decodeFailure(t, got)
			if f.Error.Field != cs.Field || !strings.Contains(f.Error.Message, cs.Message) {
				t.Errorf("%s, %s: %s through JS = %s, want field %q with %q", e.Name, cs.Name, e.Name, got, cs.Field, cs.Message)
			}
			if native := string(e.Call(cs.Body)); got != native {
				t.Errorf("%s, %s: through JS %s, natively %s", e.Name, cs.Name, got, native)
			}
		}
	}
}

func TestPanicBecomesFailure(t *testing.T) {
	f := decodeFailure(t, call(t, "boom", `{}`))
	if !strings.Contains(f.Error.Message, "forced for the test") {
		t.Errorf("boom message = %q, want the panic value", f.Error.Message)
	}
}

func TestBadArguments(t *testing.T) {
	decodeFailure(t, call(t, "compare"))
	decodeFailure(t, call(t, "compare", 42))
	decodeFailure(t, call(t, "compare", `{}`, `{}`))
}

// BenchmarkEmptyCall is the floor: a string in and out through js/wasm.
func BenchmarkEmptyCall(b *testing.B) {
	for b.Loop() {
		call(b, "echo", `{"qb":300,"qd":500,"koa":800}`)
	}
}

func BenchmarkBridgeCompare(b *testing.B) {
	for b.Loop() {
		call(b, "compare", `{"qb":300,"qd":500,"koa":800}`)
	}
}

func BenchmarkBridgeCompareWithSweep(b *testing.B) {
	for b.Loop() {
		call(b, "compare", `{"qb":300,"qd":500,"koa":800,"sweep":{}}`)
	}
}

func TestSizeThroughJS(t *testing.T) {
	got := call(t, "size", `{"target_clearance":250,"qb":300,"qd":500,"flow":"countercurrent","k0":0.05}`)
	var resp struct {
		OK     bool    `json:"ok"`
		KoA    float64 `json:"koa"`
		AreaM2 float64 `json:"area_m2"`
	}
	if err := json.Unmarshal([]byte(got), &resp); err != nil {
		t.Fatalf("size: %v in %s", err, got)
	}
	// The bridge must hand back exactly what core computes natively.
	want, err := core.Size(core.SizeSpec{Target: 250, QB: 300, QD: 500, Flow: core.Countercurrent, K0: 0.05})
	if err != nil {
		t.Fatal(err)
	}
	if !resp.OK || resp.KoA != want.KoA || resp.AreaM2 != *want.AreaM2 {
		t.Errorf("size through JS = %s, want KoA %v and area %v as core.Size gives", got, want.KoA, *want.AreaM2)
	}
}

func TestSizeErrorsThroughJS(t *testing.T) {
	for _, tc := range []struct {
		request, field string
		limit          float64 // 0: no limit
	}{
		// The co-current ceiling at QB 300, QD 500 is 300 x 500/800 = 187.5 (by hand).
		{`{"target_clearance":250,"qb":300,"qd":500,"flow":"cocurrent"}`, "target_clearance", 187.5},
		{`{"target_clearance":250,"qb":300,"qd":500,"flow":"sideways"}`, "flow", 0},
		{`{"target_clearance":250,"qb":300,"qd":500,"filters":[{"label":"a"}]}`, "filters[0].koa", 0},
		{`{"target_clearance":250,"qb":300}`, "qd", 0},
	} {
		s := call(t, "size", tc.request)
		f := decodeFailure(t, s)
		var withLimit struct {
			Error struct {
				Limit *float64 `json:"limit"`
			} `json:"error"`
		}
		if err := json.Unmarshal([]byte(s), &withLimit); err != nil {
			t.Fatal(err)
		}
		if f.Error.Field != tc.field {
			t.Errorf("size(%s) field = %q, want %q", tc.request, f.Error.Field, tc.field)
		}
		if l := withLimit.Error.Limit; (tc.limit == 0) != (l == nil) || (l != nil && *l != tc.limit) {
			t.Errorf("size(%s) limit = %v, want %g (0: none)", tc.request, l, tc.limit)
		}
	}
}

// BenchmarkBridgeSize is one input on the sizing view: five filters, the
// filter in use with both flow solves, and the chart series, in one call.
func BenchmarkBridgeSize(b *testing.B) {
	const request = `{"target_clearance":"250","qb":"300","qd":"500","flow":"countercurrent","k0":"0.05","margin_percent":"10",
		"filters":[{"label":"F14","area_m2":"1.4"},{"label":"F16","area_m2":"1.6"},{"label":"F18","area_m2":"1.8"},{"label":"H","koa":"1100"},{"label":"F21","area_m2":"2.1"}],
		"current_filter":{"koa":"700"},"sweep":{}}`
	for b.Loop() {
		call(b, "size", request)
	}
}

// The field checks through JavaScript: each answer must be exactly what
// the API computes natively from the same request.

const (
	checkRequest       = `{"qb":300,"qd":500,"qf":10,"cbi":100,"cbo":"19,0","cdo":46.3,"koa":800}`
	checkUncertainty   = `{"qb":300,"qd":500,"qf":10,"cbi":100,"cbo":19,"cdo":46.3,"koa":800,"concentration_uncertainty_percent":2,"concentration_uncertainty_floor":0.5,"flow_uncertainty_percent":3}`
	dialysanceRequest  = `{"qd":500,"qf":10,"cdi1":15,"cdo1":14.6,"cdi2":14,"cdo2":14.2,"qb":300,"koa":800}`
	flowcheckRequest   = `{"set_flow":300,"seconds":60,"volume":"296","tolerance_percent":10,"circuit":"blood"}`
	flowcheckByMass    = `{"set_flow":500,"seconds":300,"mass":2490,"density":"0,99333","tolerance_percent":5,"circuit":"dialysate"}`
	checkBadBloodOut   = `{"qb":300,"qd":500,"cbi":100,"cbo":120,"cdo":46.3}`
	dialysanceSameStep = `{"qd":500,"cdi1":15,"cdo1":14.6,"cdi2":15,"cdo2":14.2}`
)

func TestFieldChecksThroughJS(t *testing.T) {
	for _, c := range []struct {
		name, request string
		native        func([]byte) []byte
	}{
		{"check", checkRequest, api.Check},
		{"check", checkUncertainty, api.Check},
		{"dialysance", dialysanceRequest, api.Dialysance},
		{"flowcheck", flowcheckRequest, api.FlowCheck},
		{"flowcheck", flowcheckByMass, api.FlowCheck},
	} {
		got := call(t, c.name, c.request)
		want := string(c.native([]byte(c.request)))
		if got != want || !strings.HasPrefix(got, `{"ok":true`) {
			t.Errorf("%s(%s) through JS = %s, want %s", c.name, c.request, got, want)
		}
	}
	var resp struct {
		KoA  *float64 `json:"koa_countercurrent"`
		None *float64 `json:"koa_cocurrent"`
	}
	if err := json.Unmarshal([]byte(call(t, "check", checkRequest)), &resp); err != nil || resp.KoA == nil || resp.None != nil {
		t.Errorf("check through JS: KoA %v and %v (%v); want a number and null", resp.KoA, resp.None, err)
	}
}

func TestFieldCheckErrorsThroughJS(t *testing.T) {
	for _, c := range []struct{ name, request, field string }{
		{"check", checkBadBloodOut, "cbo"},
		{"check", `{"qb":300}`, "qd"},
		{"dialysance", dialysanceSameStep, "cdi2"},
		{"flowcheck", `{"set_flow":300,"seconds":60,"tolerance_percent":10}`, "volume"},
		{"flowcheck", `{"set_flow":300,"seconds":"1,2,3","volume":2,"tolerance_percent":10}`, "seconds"},
	} {
		f := decodeFailure(t, call(t, c.name, c.request))
		if f.Error.Field != c.field {
			t.Errorf("%s(%s) field = %q, want %q", c.name, c.request, f.Error.Field, c.field)
		}
	}
}

func BenchmarkBridgeCheck(b *testing.B) {
	for b.Loop() {
		call(b, "check", checkRequest)
	}
}

// BenchmarkBridgeCheckWithUncertainty includes the 4000-draw Monte Carlo.
func BenchmarkBridgeCheckWithUncertainty(b *testing.B) {
	for b.Loop() {
		call(b, "check", checkUncertainty)
	}
}

func BenchmarkBridgeDialysance(b *testing.B) {
	for b.Loop() {
		call(b, "dialysance", dialysanceRequest)
	}
}

func BenchmarkBridgeFlowCheck(b *testing.B) {
	for b.Loop() {
		call(b, "flowcheck", flowcheckByMass)
	}
}

// BenchmarkBridgeCompareFiltrationWithSweep is the page's chart request
// with ultrafiltration and whole blood: compare plus 3 sweeps of 101
// points, both arrangements, through JavaScript.
func BenchmarkBridgeCompareFiltrationWithSweep(b *testing.B) {
	for b.Loop() {
		call(b, "compare", `{"qb":300,"qd":500,"koa":800,"qf":10,"hct":32,"sweep":{}}`)
	}
}

// BenchmarkBridgeCheckFiltrationUncertainty is a check with QF > 0 and
// the uncertainty analysis (4000 Monte Carlo draws, each with its in-situ
// KoA by the ultrafiltration model), through JavaScript.
func BenchmarkBridgeCheckFiltrationUncertainty(b *testing.B) {
	for b.Loop() {
		call(b, "check", `{"qb":300,"qd":500,"qf":10,"cbi":100,"cbo":19,"cdo":46.3,"koa":800,"concentration_uncertainty_percent":2,"concentration_uncertainty_floor":0.5,"flow_uncertainty_percent":3}`)
	}
}

// BenchmarkBridgeSizeConditions is one input on the sizing view with
// ultrafiltration and whole blood: 3 filters, the filter in use with both
// flow solves, and the chart series.
func BenchmarkBridgeSizeConditions(b *testing.B) {
	for b.Loop() {
		call(b, "size", `{"target_clearance":220,"qb":300,"qd":500,"hct":32,"qf":15,"k0":0.05,"filters":[{"koa":500},{"koa":900},{"koa":1400}],"current_filter":{"koa":700},"sweep":{}}`)
	}
}
