package api_test

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"clearkit/core"
	"clearkit/core/api"
)

// checkPacked: an entry's Packed answer is its Call answer (full) with the
// chart series moved out of the JSON: the same bytes when there are no
// series (a failure, or no sweep asked for); otherwise the same members
// but "sweeps", a "packed" member naming the series in core.PackedSeries
// order, and the values bit for bit (JSON's shortest form reads back
// exactly, so the comparison is exact).
func checkPacked(t *testing.T, e api.Entry, request, full []byte) {
	t.Helper()
	resp, series := e.Packed(nil, nil, request)
	var fullMembers map[string]json.RawMessage
	if err := json.Unmarshal(full, &fullMembers); err != nil {
		t.Fatalf("%s(%q) = %s: %v", e.Name, request, full, err)
	}
	sweeps, hasSweeps := fullMembers["sweeps"]
	if !hasSweeps {
		if !bytes.Equal(resp, full) || series != nil {
			t.Fatalf("packed %s(%q) = %s with %d series values, want %s and none", e.Name, request, resp, len(series), full)
		}
		return
	}
	var members map[string]json.RawMessage
	if err := json.Unmarshal(resp, &members); err != nil {
		t.Fatalf("packed %s(%q) = %s: %v", e.Name, request, resp, err)
	}
	if _, ok := members["sweeps"]; ok {
		t.Fatalf("packed %s(%q) = %s, still with sweeps", e.Name, request, resp)
	}
	for k, v := range fullMembers {
		if k != "sweeps" && !bytes.Equal(members[k], v) {
			t.Fatalf("packed %s(%q): %s = %s, want %s", e.Name, request, k, members[k], v)
		}
	}
	var packing api.Packing
	if err := json.Unmarshal(members["packed"], &packing); err != nil {
		t.Fatalf("packed %s(%q): packed = %s: %v", e.Name, request, members["packed"], err)
	}
	if len(members) != len(fullMembers) {
		t.Fatalf("packed %s(%q) has members %d, want %d (sweeps replaced by packed)", e.Name, request, len(members), len(fullMembers))
	}
	if len(packing.Series) != len(core.PackedSeries) || len(series) != packing.Points*len(packing.Series) {
		t.Fatalf("packed %s(%q): %d series of %d points and %d values, want %d series", e.Name, request, len(packing.Series), packing.Points, len(series), len(core.PackedSeries))
	}
	var want map[string]map[string][]float64
	if err := json.Unmarshal(sweeps, &want); err != nil {
		t.Fatal(err)
	}
	for k, name := range packing.Series {
		if name != core.PackedSeries[k] {
			t.Fatalf("packed series %d is %q, want %q", k, name, core.PackedSeries[k])
		}
		axis, member, _ := strings.Cut(name, ".")
		values := want[axis][member]
		got := series[k*packing.Points : (k+1)*packing.Points]
		if len(values) != len(got) {
			t.Fatalf("packed %s(%q): %s has %d points, JSON %d", e.Name, request, name, len(got), len(values))
		}
		for i := range values {
			if math.Float64bits(got[i]) != math.Float64bits(values[i]) {
				t.Fatalf("packed %s(%q): %s[%d] = %v, JSON %v", e.Name, request, name, i, got[i], values[i])
			}
		}
	}
}

func TestComparePacked(t *testing.T) {
	entry := api.Entry{Name: "compare", Call: api.Compare, Packed: api.ComparePacked}
	for _, request := range []string{
		// The compare view's request, as its form sends it (site/js/compare-view.js).
		`{"qb":"300","qd":"500","koa":"800","cbi":"","cdi":"","qf":"","sieving":"","hct":"","plasma_water":"","red_cell_water":"","sweep":{}}`,
		`{"qb":"300","qd":"500","koa":"800"}`,
		`{"qb":450,"qd":"700,5","koa":1300,"cbi":12,"cdi":1.5,"sweep":{"points":7,"koa":[100,900]}}`,
		`{"qb":300,"qd":500,"koa":800,"qf":15,"hct":0.32,"sweep":{"points":11}}`,
		`{"qb":300,"qd":500,"koa":800,"sweep":{"points":1}}`,
		`{"qb":-1,"qd":500,"koa":800,"sweep":{}}`,
	} {
		checkPacked(t, entry, []byte(request), api.Compare([]byte(request)))
	}
	resp, series := api.ComparePacked(nil, nil, []byte(`{"qb":300,"qd":500,"koa":800,"sweep":{}}`))
	if !bytes.Contains(resp, []byte(`"packed":{"points":101,"series":["qb.x",`)) || len(series) != 15*101 {
		t.Errorf("ComparePacked with sweep {} = %s and %d values, want 101 points of the 15 series", resp, len(series))
	}
	// The default QB range is 25 to max(600, 2 QB) mL/min (core.SweepSpec).
	if series[0] != 25 || series[100] != 600 {
		t.Errorf("packed qb.x runs from %v to %v, want 25 to 600", series[0], series[100])
	}
}
