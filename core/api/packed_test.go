package api_test

import (
	"bytes"
	"encoding/json"
	"math"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"clearkit/core"
	"clearkit/core/api"
)

// checkPacked: an entry's Packed answer is its Call answer (full) with the
// chart series moved out of the JSON: the same bytes when there are no
// series (a failure, or no sweep asked for); otherwise the same answer
// but for the series, named in a "packed" member (api.Packing) as paths
// within its "into" member and laid end to end, bit for bit the JSON's
// (JSON's shortest form reads back exactly, so the comparison is exact),
// and the objects that held nothing else left out.
func checkPacked(t *testing.T, e api.Entry, request, full []byte) {
	t.Helper()
	resp, series := e.Packed(nil, nil, request)
	var want, got map[string]any
	if err := json.Unmarshal(full, &want); err != nil {
		t.Fatalf("%s(%q) = %s: %v", e.Name, request, full, err)
	}
	_, sweeps := want["sweeps"]
	_, sweep := want["sweep"]
	if !sweeps && !sweep {
		if !bytes.Equal(resp, full) || series != nil {
			t.Fatalf("packed %s(%q) = %s with %d series values, want %s and none", e.Name, request, resp, len(series), full)
		}
		return
	}
	if err := json.Unmarshal(resp, &got); err != nil {
		t.Fatalf("packed %s(%q) = %s: %v", e.Name, request, resp, err)
	}
	raw, _ := json.Marshal(got["packed"])
	var packing api.Packing
	if err := json.Unmarshal(raw, &packing); err != nil || packing.Into == "" {
		t.Fatalf("packed %s(%q) = %s: no packing (%v)", e.Name, request, resp, err)
	}
	if packing.Lengths != nil && (packing.Points != 0 || len(packing.Lengths) != len(packing.Series)) {
		t.Fatalf("packed %s(%q): packing %s gives points %d and %d lengths for %d series", e.Name, request, raw, packing.Points, len(packing.Lengths), len(packing.Series))
	}
	delete(got, "packed")
	at := 0
	for k, name := range packing.Series {
		n := packing.Points
		if packing.Lengths != nil {
			n = packing.Lengths[k]
		}
		if n < 0 || at+n > len(series) {
			t.Fatalf("packed %s(%q): series %s runs past the %d values", e.Name, request, name, len(series))
		}
		path := append([]string{packing.Into}, strings.Split(name, ".")...)
		values, ok := take(want, path).([]any)
		if !ok || len(values) != n {
			t.Fatalf("packed %s(%q): %s has %d values, the JSON answer %d", e.Name, request, name, n, len(values))
		}
		for i, v := range values {
			if x := series[at+i]; math.Float64bits(x) != math.Float64bits(v.(float64)) {
				t.Fatalf("packed %s(%q): %s[%d] = %v, JSON %v", e.Name, request, name, i, x, v)
			}
		}
		at += n
	}
	if at != len(series) {
		t.Fatalf("packed %s(%q): %d values, the series name %d", e.Name, request, len(series), at)
	}
	if !reflect.DeepEqual(got, want) {
		g, _ := json.Marshal(got)
		w, _ := json.Marshal(want)
		t.Fatalf("packed %s(%q) without its series = %s,\nthe JSON answer without them %s", e.Name, request, g, w)
	}
}

// take removes the value at path from the objects under m and returns it;
// an object left empty on the way goes too.
func take(m map[string]any, path []string) any {
	v, ok := m[path[0]]
	if !ok {
		return nil
	}
	if len(path) == 1 {
		delete(m, path[0])
		return v
	}
	inner, ok := v.(map[string]any)
	if !ok {
		return nil
	}
	v = take(inner, path[1:])
	if len(inner) == 0 {
		delete(m, path[0])
	}
	return v
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
	if !bytes.Contains(resp, []byte(`"packed":{"into":"sweeps","points":101,"series":["qb.x",`)) || len(series) != 15*101 {
		t.Errorf("ComparePacked with sweep {} = %s and %d values, want 101 points of the 15 series", resp, len(series))
	}
	// The default QB range is 25 to max(600, 2 QB) mL/min (core.SweepSpec).
	if series[0] != 25 || series[100] != 600 {
		t.Errorf("packed qb.x runs from %v to %v, want 25 to 600", series[0], series[100])
	}
}

// TestSizePacked: size's packed answer is its JSON answer with the series
// apart, for the size requests of every kind (sizeRequests' variants: with
// and without areas, series of their own lengths near the ceiling, whole
// blood, failures); the view's request packs 6 series and keeps the axis
// tops and ceilings in "sweep".
func TestSizePacked(t *testing.T) {
	entry := api.Entry{Name: "size", Call: api.Size, Packed: api.SizePacked}
	packedSome := 0
	for _, request := range api.SizeRequestsForTest() {
		full := api.Size([]byte(request))
		checkPacked(t, entry, []byte(request), full)
		if _, series := api.SizePacked(nil, nil, []byte(request)); len(series) > 0 {
			packedSome++
		}
	}
	if packedSome < 20 {
		t.Errorf("only %d size answers had packed series", packedSome)
	}
	// The size view's request (site/js/size-view.js, its demo).
	view := `{"target_clearance":"250","qb":"300","qd":"500","flow":"countercurrent","qf":"","sieving":"","hct":"","plasma_water":"","red_cell_water":"","k0":"0.05","margin_percent":"10","sweep":{},"current_filter":{"koa":"700","area_m2":""},"qd_range":["300","800"],"qb_range":["150","450"],"filters":[{"label":"Shelf A","area_m2":"1.4","koa":""},{"label":"Shelf B","area_m2":"1.8","koa":""},{"label":"Shelf C","area_m2":"2.1","koa":""}]}`
	checkPacked(t, entry, []byte(view), api.Size([]byte(view)))
	// Typed a digit at a time and then stepped, as at the page, at one QB
	// and then at another: SizePacked keeps the series of its last answer
	// (core.SweepMemo) and takes them again when only the target changed,
	// so every answer is compared with Size's, which computes them afresh:
	// targets whose KoA axis stays at 2000 mL/min (below about 260 mL/min
	// here), targets that move it, one out of reach, and the same request
	// twice.
	for _, qb := range []string{"300", "320"} {
		for _, k := range []string{"2", "25", "250", "251", "258", "264", "270", "299", "301", "264", "250", "250", "26"} {
			request := strings.NewReplacer(`"target_clearance":"250"`, `"target_clearance":"`+k+`"`, `"qb":"300"`, `"qb":"`+qb+`"`).Replace(view)
			checkPacked(t, entry, []byte(request), api.Size([]byte(request)))
		}
	}
	resp, series := api.SizePacked([]byte("kept"), nil, []byte(view))
	if !bytes.HasPrefix(resp, []byte(`kept{"ok":true`)) || !bytes.Contains(resp, []byte(`"packed":{"into":"sweep","lengths":[`)) ||
		!bytes.Contains(resp, []byte(`,"series":["countercurrent.target","countercurrent.koa","countercurrent.area_m2","cocurrent.target","cocurrent.koa","cocurrent.area_m2"]}}`)) {
		t.Errorf("SizePacked(the view's request) = %s", resp)
	}
	if len(series) < 6*90 || 8*len(series) > api.MaxPackedBytes {
		t.Errorf("SizePacked(the view's request) gives %d values, want 6 series of about 101 within %d bytes", len(series), api.MaxPackedBytes)
	}
	// The packing is what the general encoder writes of an api.Packing.
	var answer struct{ Packed json.RawMessage }
	if err := json.Unmarshal(resp[len("kept"):], &answer); err != nil {
		t.Fatal(err)
	}
	var p api.Packing
	if err := json.Unmarshal(answer.Packed, &p); err != nil {
		t.Fatal(err)
	}
	if again, _ := json.Marshal(p); !bytes.Equal(again, answer.Packed) {
		t.Errorf("packed = %s, an api.Packing encodes as %s", answer.Packed, again)
	}
}

// TestMaxPackedBytes: the page's buffer holds size's largest packed series
// (six series of core.MaxSweepPoints each).
func TestMaxPackedBytes(t *testing.T) {
	request := `{"target_clearance":250,"qb":300,"qd":500,"k0":0.05,"sweep":{"points":` + strconv.Itoa(core.MaxSweepPoints) + `}}`
	_, series := api.SizePacked(nil, nil, []byte(request))
	if len(series) == 0 || 8*len(series) > api.MaxPackedBytes {
		t.Errorf("size with %d points packs %d values (%d bytes), the page's buffer holds %d", core.MaxSweepPoints, len(series), 8*len(series), api.MaxPackedBytes)
	}
}
