package api_test

import (
	"encoding/json"
	"math"
	"reflect"
	"slices"
	"testing"

	"clearkit/core"
	"clearkit/core/api"
)

// The fields beyond the ideal model (api.Conditions: hct, plasma_water,
// red_cell_water, qf, sieving) on compare: defaults, echo, numbers equal to
// core's, errors by field. README, Calculation API, is the contract.

// wholeBloodRequest is routineRequest with whole blood of haematocrit 32 %
// and QF 10 mL/min.
const wholeBloodRequest = `{"qb":300,"qd":500,"koa":800,"hct":32,"qf":10}`

func TestCompareConditionsShape(t *testing.T) {
	resp := compare(t, wholeBloodRequest)
	if got, want := keys(t, resp, "input"), sorted(append(slices.Clone(inputKeys), "blood")...); !slices.Equal(got, want) {
		t.Errorf("Compare(%s) input members %v, want %v", wholeBloodRequest, got, want)
	}
	if got, want := keys(t, resp, "input", "blood"), sorted("hct", "plasma_water", "red_cell_water"); !slices.Equal(got, want) {
		t.Errorf("Compare(%s) input.blood members %v, want %v", wholeBloodRequest, got, want)
	}
	if got := keys(t, resp); !slices.Equal(got, topKeys) {
		t.Errorf("Compare(%s) members %v, want %v", wholeBloodRequest, got, topKeys)
	}
}

// Each request gives the operating point core computes with, defaults
// filled in: qf 0, sieving 1 (urea), no blood correction unless hct is
// given, then plasma water 0.93 and red-cell water 0.72.
func TestCompareConditionsNumbers(t *testing.T) {
	blood := func(hct, fp, fr float64) *core.WholeBlood {
		return &core.WholeBlood{Hct: hct, PlasmaWater: fp, RedCellWater: fr}
	}
	for _, c := range []struct {
		request string
		op      core.Operating
	}{
		{`{"qb":300,"qd":500,"koa":800,"qf":10}`, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, Filtration: core.Filtration{QF: 10, Sieving: 1}}},
		{`{"qb":300,"qd":500,"koa":800,"qf":"12,5","sieving":"0,8"}`, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, Filtration: core.Filtration{QF: 12.5, Sieving: 0.8}}},
		{`{"qb":300,"qd":500,"koa":800,"qf":0,"sieving":0.5}`, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, Filtration: core.Filtration{Sieving: 0.5}}},
		{wholeBloodRequest, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, Blood: blood(32, 0.93, 0.72), Filtration: core.Filtration{QF: 10, Sieving: 1}}},
		{`{"qb":300,"qd":500,"koa":800,"hct":0}`, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, Blood: blood(0, 0.93, 0.72), Filtration: core.Filtration{Sieving: 1}}},
		{`{"qb":300,"qd":500,"koa":800,"hct":"40","plasma_water":"0,94","red_cell_water":0.7,"qf":30,"sieving":1,"cbi":25,"cdi":2}`,
			core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 25, CDi: 2, Blood: blood(40, 0.94, 0.7), Filtration: core.Filtration{QF: 30, Sieving: 1}}},
		// Empty strings and null are absent fields.
		{`{"qb":300,"qd":500,"koa":800,"hct":"","plasma_water":null,"red_cell_water":"","qf":"","sieving":null}`, core.Operating{QB: 300, QD: 500, KoA: 800, CBi: 1, Filtration: core.Filtration{Sieving: 1}}},
	} {
		got := success(t, c.request)
		want, err := core.Compare(c.op)
		if err != nil {
			t.Fatalf("core.Compare(%+v) error: %v", c.op, err)
		}
		in := got.Input
		if in.Blood != nil && c.op.Blood != nil && *in.Blood == *c.op.Blood {
			in.Blood = c.op.Blood
		}
		if in != c.op {
			t.Errorf("Compare(%s).input = %+v (blood %v), want %+v (blood %v)", c.request, got.Input, got.Input.Blood, c.op, c.op.Blood)
		}
		if got.Comparison != want {
			t.Errorf("Compare(%s) = %+v, want core.Compare's %+v", c.request, got.Comparison, want)
		}
	}
}

// qbw is 300 (0.93 x 0.68 + 0.72 x 0.32) = 258.84 mL/min at a haematocrit of
// 32 % (worked by hand; fractions from memory, Lim, Flanigan and Depner).
func TestCompareConditionsBloodWater(t *testing.T) {
	got := success(t, wholeBloodRequest)
	if math.Abs(got.QBW-258.84) > 1e-12 {
		t.Errorf("Compare(%s).qbw = %.17g, want 258.84", wholeBloodRequest, got.QBW)
	}
	if got := success(t, routineRequest); got.QBW != 300 {
		t.Errorf("Compare(%s).qbw = %g, want QB", routineRequest, got.QBW)
	}
}

func TestCompareConditionsErrors(t *testing.T) {
	base := `"qb":300,"qd":500,"koa":800`
	for _, c := range []struct{ extra, field, word string }{
		{`"qf":-1`, "qf", "negative"},
		{`"qf":"abc"`, "qf", "must be a number"},
		{`"qf":300`, "qf", "below the blood flow QB, 300"},
		{`"qf":"299,9999999"`, "qf", "leaving at least a millionth"},
		{`"qf":260,"hct":32`, "qf", "blood-water flow QBW, 258.84"},
		{`"qf":true`, "qf", "got true or false"},
		{`"sieving":1.2`, "sieving", "from 0 to 1"},
		{`"sieving":-0.1`, "sieving", "from 0 to 1"},
		{`"sieving":"NaN"`, "sieving", "must be a number"},
		{`"hct":0.32`, "hct", "enter 32"},
		{`"hct":-5`, "hct", "negative"},
		{`"hct":85`, "hct", "maximum 80"},
		{`"hct":[32]`, "hct", "got a list"},
		{`"plasma_water":0.93`, "plasma_water", "whole blood only"},
		{`"red_cell_water":0.72`, "red_cell_water", "whole blood only"},
		{`"plasma_water":"x"`, "plasma_water", "must be a number"},
		{`"hct":32,"plasma_water":93`, "plasma_water", "at most 1"},
		{`"hct":32,"red_cell_water":0`, "red_cell_water", "above 0"},
		// Order: the operating point, then the blood, then the filtration.
		{`"hct":-1,"qf":-1`, "hct", "negative"},
		{`"qf":-1,"sieving":2`, "qf", "negative"},
		{`"cdi":-1,"qf":-1`, "cdi", "negative"},
		// An unknown relative of the new fields.
		{`"hematocrit":32`, "hematocrit", "is not a field"},
		{`"qf":10,"QF":20`, "qf", "more than once"},
	} {
		fails(t, "{"+base+","+c.extra+"}", c.field, c.word)
	}
	// The limit of qf leaves a millionth of the blood-side flow.
	env := checkResponse(t, api.Entries[0], []byte(`{`+base+`,"qf":400}`), api.Compare([]byte(`{`+base+`,"qf":400}`)))
	if env.Error == nil || env.Error.Limit == nil || *env.Error.Limit != 300*(1-1e-6) {
		t.Errorf("Compare with qf 400: error %+v, want limit %g", env.Error, 300*(1-1e-6))
	}
	// Any positive QF below that is accepted, however small.
	success(t, `{`+base+`,"qf":1e-9}`)
}

// The chart's QB range starts at max(25, 2 QF/w) by default; a range whose
// low end leaves no blood after the ultrafiltration is refused.
func TestCompareConditionsSweep(t *testing.T) {
	for _, c := range []struct {
		request string
		start   float64
	}{
		{`{"qb":300,"qd":500,"koa":800,"qf":10,"sweep":{}}`, 25},
		{`{"qb":300,"qd":500,"koa":800,"qf":30,"sweep":{}}`, 60},
		{`{"qb":300,"qd":500,"koa":800,"qf":30,"hct":32,"sweep":{}}`, 60 / (0.93*0.68 + 0.72*0.32)},
	} {
		got := success(t, c.request)
		if got.Sweeps == nil || math.Abs(got.Sweeps.QB.X[0]-c.start) > 1e-12*c.start {
			t.Errorf("Compare(%s): QB sweep starts at %v, want %g", c.request, got.Sweeps.QB.X[:1], c.start)
		}
	}
	fails(t, `{"qb":300,"qd":500,"koa":800,"qf":30,"sweep":{"qb":[30,600]}}`, "sweep.qb", "above qf 30")
	success(t, `{"qb":300,"qd":500,"koa":800,"qf":30,"sweep":{"qb":[31,600]}}`)
}

// BenchmarkAPICompareFiltrationWithSweep is the page's chart request with
// QF > 0 and whole blood: the default 101 points on 3 axes, encoded.
func BenchmarkAPICompareFiltrationWithSweep(b *testing.B) {
	req := []byte(`{"qb":300,"qd":500,"koa":800,"qf":10,"hct":32,"sweep":{}}`)
	b.ReportAllocs()
	for b.Loop() {
		if resp := api.Compare(req); resp[6] != 't' {
			b.Fatalf("Compare(%s) = %s", req, resp)
		}
	}
}

// check takes sieving (default 1) and the whole-blood fields: the input
// echoes them, qbw is the blood-water flow, and the result is core.Check's.
func TestCheckConditions(t *testing.T) {
	for _, c := range []struct {
		request string
		m       core.Measurement
	}{
		{`{"qb":300,"qd":500,"qf":10,"cbi":100,"cbo":19,"cdo":46.3,"koa":800}`,
			core.Measurement{QB: 300, QD: 500, QF: 10, Sieving: 1, CBi: 100, CBo: 19, CDo: 46.3}},
		{`{"qb":300,"qd":500,"qf":10,"sieving":"0,9","hct":32,"cbi":100,"cbo":22,"cdo":40,"koa":800}`,
			core.Measurement{QB: 300, QD: 500, QF: 10, Sieving: 0.9, Blood: &core.WholeBlood{Hct: 32, PlasmaWater: 0.93, RedCellWater: 0.72}, CBi: 100, CBo: 22, CDo: 40}},
	} {
		var got api.CheckResponse
		if err := json.Unmarshal(api.Check([]byte(c.request)), &got); err != nil || !got.OK {
			t.Fatalf("check(%s): %v %+v", c.request, err, got)
		}
		want, err := core.Check(c.m, core.CheckOptions{RatedKoA: 800, Seed: api.DefaultSeed})
		if err != nil {
			t.Fatal(err)
		}
		in := got.Input
		if (in.Blood == nil) != (c.m.Blood == nil) || in.Blood != nil && *in.Blood != *c.m.Blood {
			t.Errorf("check(%s).input.blood = %v, want %v", c.request, in.Blood, c.m.Blood)
		}
		in.Blood = c.m.Blood
		if in != c.m || !reflect.DeepEqual(got.CheckResult, want) {
			t.Errorf("check(%s) = %+v, want input %+v and core.Check's %+v", c.request, got, c.m, want)
		}
		if got.QBW != c.m.BloodSideFlow() {
			t.Errorf("check(%s).qbw = %g, want %g", c.request, got.QBW, c.m.BloodSideFlow())
		}
	}
}

// size takes the same fields: echoed in input, qbw the blood-water flow,
// and the answer is core.Size's.
func TestSizeConditions(t *testing.T) {
	req := `{"target_clearance":220,"qb":"300","qd":500,"hct":"32","qf":"15","sieving":"0,9","k0":0.05}`
	var got api.SizeResponse
	if err := json.Unmarshal(api.Size([]byte(req)), &got); err != nil || !got.OK {
		t.Fatalf("size(%s): %v %+v", req, err, got)
	}
	b := core.DefaultWholeBlood(32)
	want, err := core.Size(core.SizeSpec{Target: 220, QB: 300, QD: 500, Blood: &b, Filtration: core.Filtration{QF: 15, Sieving: 0.9}, K0: 0.05})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got.Sizing, want) {
		t.Errorf("size(%s) = %+v, want core.Size's %+v", req, got.Sizing, want)
	}
	if in := got.Input; in.Blood == nil || *in.Blood != b || in.QF != 15 || in.Sieving != 0.9 || got.QBW != 300*b.WaterFraction() {
		t.Errorf("size(%s).input = %+v (blood %v), qbw %g", req, in, in.Blood, got.QBW)
	}
	// Defaults: no blood, QF 0, sieving 1.
	var plain api.SizeResponse
	if err := json.Unmarshal(api.Size([]byte(`{"target_clearance":220,"qb":300,"qd":500}`)), &plain); err != nil || plain.Input.Blood != nil || plain.Input.QF != 0 || plain.Input.Sieving != 1 || plain.QBW != 300 {
		t.Errorf("size defaults: %+v, %v", plain.Input, err)
	}
}
