//go:build js && wasm

package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/hack-pad/safejs"

	"clearkit/core"
	"clearkit/core/api"
)

// packedBuffer returns a new Uint8Array of n bytes.
func packedBuffer(t testing.TB, n int) safejs.Value {
	t.Helper()
	class, err := safejs.Global().Get("Uint8Array")
	if err != nil {
		t.Fatal(err)
	}
	buf, err := class.New(n)
	if err != nil {
		t.Fatal(err)
	}
	return buf
}

// float64sOf reads a Uint8Array as little-endian float64 values through a
// Float64Array over its bytes, as the page does.
func float64sOf(t testing.TB, buf safejs.Value, n int) []float64 {
	t.Helper()
	class, err := safejs.Global().Get("Float64Array")
	if err != nil {
		t.Fatal(err)
	}
	buffer, err := buf.Get("buffer")
	if err != nil {
		t.Fatal(err)
	}
	view, err := class.New(buffer, 0, n)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]float64, n)
	for i := range out {
		v, err := view.Index(i)
		if err != nil {
			t.Fatal(err)
		}
		if out[i], err = v.Float(); err != nil {
			t.Fatal(err)
		}
	}
	return out
}

// TestComparePackedThroughJS: with a Uint8Array the compare answer leaves
// its series out of the JSON and the buffer holds them, bit for bit the
// numbers of the JSON answer.
func TestComparePackedThroughJS(t *testing.T) {
	const request = `{"qb":"300","qd":"500","koa":"800","sweep":{"points":11}}`
	var full struct {
		Sweeps map[string]map[string][]float64 `json:"sweeps"`
	}
	if err := json.Unmarshal([]byte(call(t, "compare", request)), &full); err != nil {
		t.Fatal(err)
	}
	buf := packedBuffer(t, api.MaxPackedBytes)
	var packed struct {
		OK     bool            `json:"ok"`
		Sweeps json.RawMessage `json:"sweeps"`
		Packed api.Packing     `json:"packed"`
	}
	got := call(t, "compare", request, buf)
	if err := json.Unmarshal([]byte(got), &packed); err != nil || !packed.OK || packed.Sweeps != nil {
		t.Fatalf("compare(%s, buffer) = %s (%v), want ok with packed and no sweeps", request, got, err)
	}
	if packed.Packed.Points != 11 || len(packed.Packed.Series) != len(core.PackedSeries) {
		t.Fatalf("compare(%s, buffer): packed = %+v, want 11 points of %d series", request, packed.Packed, len(core.PackedSeries))
	}
	values := float64sOf(t, buf, 11*len(core.PackedSeries))
	for k, name := range packed.Packed.Series {
		axis, member, _ := strings.Cut(name, ".")
		for i, want := range full.Sweeps[axis][member] {
			if v := values[11*k+i]; math.Float64bits(v) != math.Float64bits(want) {
				t.Fatalf("packed %s[%d] = %v, JSON answer %v", name, i, v, want)
			}
		}
	}
	ck, _ := safejs.Global().Get("clearkitTest")
	if n, err := ck.Get("packedBytes"); err != nil || n.Type() != safejs.TypeNumber {
		t.Errorf("clearkit.packedBytes is not published")
	}
}

// TestPackedArguments: a buffer too small or not a Uint8Array is refused
// with a message; entries without series and answers without them ignore
// the buffer.
func TestPackedArguments(t *testing.T) {
	const request = `{"qb":300,"qd":500,"koa":800,"sweep":{}}`
	if f := decodeFailure(t, call(t, "compare", request, packedBuffer(t, 100))); !strings.Contains(f.Error.Message, "need 12120 bytes") {
		t.Errorf("compare with a 100-byte buffer: %q, want the bytes needed (15 series x 101 points x 8)", f.Error.Message)
	}
	object, _ := safejs.Global().Get("Object")
	notBytes, _ := object.New()
	if f := decodeFailure(t, call(t, "compare", request, notBytes)); !strings.Contains(f.Error.Message, "Uint8Array") {
		t.Errorf("compare with an object for the buffer: %q, want a message naming Uint8Array", f.Error.Message)
	}
	const noSweep = `{"qb":300,"qd":500,"koa":800}`
	if got, want := call(t, "compare", noSweep, packedBuffer(t, 8)), call(t, "compare", noSweep); got != want {
		t.Errorf("compare without a sweep, with a buffer = %s, want %s", got, want)
	}
	const size = `{"target_clearance":250,"qb":300,"qd":500,"flow":"countercurrent","k0":0.05}`
	if got, want := call(t, "size", size, packedBuffer(t, 8)), call(t, "size", size); got != want {
		t.Errorf("size with a buffer = %s, want %s", got, want)
	}
}

// BenchmarkBridgeComparePacked is the page's chart request with the
// series in a buffer.
func BenchmarkBridgeComparePacked(b *testing.B) {
	buf := packedBuffer(b, api.MaxPackedBytes)
	for b.Loop() {
		call(b, "compare", `{"qb":300,"qd":500,"koa":800,"sweep":{}}`, buf)
	}
}

// TestResponseBufferReused: compare and size write every answer into one
// buffer (invoke's buffer) and every packed series into one storage
// (seriesBuffer), so each call's string and series must be its own,
// whole, whatever came before it: a long answer (the series as JSON text)
// then shorter ones, failures, packed answers of either entry (size's
// largest, 1001 points a series, among them) and the general path, in
// turn, twice, each against the same request answered natively.
func TestResponseBufferReused(t *testing.T) {
	buf := packedBuffer(t, api.MaxPackedBytes)
	entries := map[string]api.Entry{}
	for _, e := range api.Entries {
		entries[e.Name] = e
	}
	requests := []struct {
		entry, request string
		packed         bool
	}{
		{"compare", `{"qb":300,"qd":500,"koa":800,"sweep":{}}`, false},
		{"compare", `{"qb":"300","qd":"500","koa":"800","cbi":"","cdi":""}`, false},
		{"size", `{"target_clearance":250,"qb":300,"qd":500,"k0":0.05,"sweep":{"points":1001}}`, true},
		{"compare", `{"qb":-1,"qd":500,"koa":800}`, false},
		{"size", `{"target_clearance":250,"qb":300,"qd":500,"sweep":{}}`, false},
		{"compare", `{"qb":450,"qd":"700,5","koa":1300,"sweep":{}}`, true},
		{"size", `{"target_clearance":180,"qb":300,"qd":500,"flow":"cocurrent","sweep":{"points":7}}`, true},
		{"size", `{"qb":300,"sweep":{}}`, true},
		{"compare", `{"qb":300,"qd":500,"koa":800,"sweep":{"points":3}}`, false},
		{"compare", `{"QB":310,"qd":500,"koa":800}`, false}, // not flat as the page writes it: the general path
		{"size", `{"target_clearance":299.9,"qb":300,"qd":800,"k0":0.06,"sweep":{}}`, true},
		{"compare", `{"qb":300,"qd":500,"koa":800,"sweep":{}}`, true},
	}
	var answers []string
	for round := range 2 {
		for i, r := range requests {
			e := entries[r.entry]
			var got string
			var want []byte
			if r.packed {
				got = call(t, r.entry, r.request, buf)
				var series []float64
				want, series = e.Packed(nil, nil, []byte(r.request))
				// the series, computed into the bridge's kept storage, as
				// they reached the page's buffer
				for k, x := range float64sOf(t, buf, len(series)) {
					if math.Float64bits(x) != math.Float64bits(series[k]) {
						t.Fatalf("round %d, %s(%s, buffer): series value %d = %v, want %v", round, r.entry, r.request, k, x, series[k])
					}
				}
			} else {
				got = call(t, r.entry, r.request)
				want = e.Call([]byte(r.request))
			}
			if got != string(want) {
				t.Fatalf("round %d, %s(%s): got %.80s... (%d bytes), want %.80s... (%d bytes)", round, r.entry, r.request, got, len(got), want, len(want))
			}
			if round == 0 {
				answers = append(answers, got)
			} else if got != answers[i] {
				t.Errorf("%s(%s) changed between rounds", r.entry, r.request)
			}
		}
	}
}
