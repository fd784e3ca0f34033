package api

import (
	"reflect"
	"slices"
	"strconv"
	"strings"

	"github.com/goccy/go-json"

	"clearkit/core"
)

// respondSize appends a successful size to dst. With fast, its chart
// series (some 600 numbers: most of the answer's bytes, and under
// WebAssembly most of its time through the general encoder, which writes
// a float in about twice the time of appendJSONFloat) are written by
// appendSizeSweep, and the rest of the answer by appendSizeAnswer (or by
// the general encoder, where that declines); the bytes are the general
// encoder's (TestSizeBothWays, FuzzSizeSweepWriter). "sweep" is the answer's last member, so the
// answer without it, less its closing brace, is followed by the sweep and
// the brace. With packed as well, the sweep keeps its axis tops and
// ceilings, its series are copied end to end into storage (grown when it
// has no room) and returned, and a "packed" member after the sweep names
// them (packSizeSweep). Without fast, or should the answer's types change
// (sizeSweepKnown), the general encoder writes it all, series included.
func respondSize(dst []byte, storage []float64, r *SizeResponse, packed, fast bool) ([]byte, []float64) {
	sweep := r.Sweep
	if !fast || sweep == nil || !sizeSweepKnown {
		return appendTo(dst, respond(r, nil)), nil
	}
	out, ok := appendSizeAnswer(dst, r)
	if !ok {
		r.Sweep = nil
		b, err := json.Marshal(r)
		r.Sweep = sweep
		if err != nil {
			return appendTo(dst, respond(r, nil)), nil // what could not be encoded: the general encoder says so
		}
		out = append(dst, b[:len(b)-1]...)
	}
	out = append(out, `,"sweep":`...)
	var series []float64
	if packed {
		series = packSizeSweep(storage[:0], sweep)
	}
	out, ok = appendSizeSweep(out, sweep, packed)
	if !ok || !finite(series) {
		return appendTo(dst, respond(r, nil)), nil // a number that is not finite: the general encoder says so
	}
	if packed {
		out = appendSizePacking(out, sweep)
	}
	return append(out, '}'), series
}

// sizeSeriesNames are the names of a size answer's packed series, by
// arrangement (countercurrent, cocurrent) and member (target, koa,
// area_m2).
var sizeSeriesNames = [2][3]string{
	{"countercurrent.target", "countercurrent.koa", "countercurrent.area_m2"},
	{"cocurrent.target", "cocurrent.koa", "cocurrent.area_m2"},
}

// sizeSeriesOf lists s's series and their names in the order packSizeSweep
// lays them: each arrangement's target and koa, and its area_m2 where it
// has one (the JSON leaves an empty one out), so that the packing names
// exactly the series the JSON would hold (TestSizeSweepWriter). They go
// into the caller's arrays (which then need not be allocated); it returns
// how many there are.
func sizeSeriesOf(s *core.SizeSweep, names *[6]string, series *[6][]float64) int {
	n := 0
	for k, one := range [2]*core.SizeSeries{&s.Countercurrent, &s.Cocurrent} {
		for m, xs := range [3][]float64{one.Target, one.KoA, one.AreaM2} {
			if m < 2 || len(xs) > 0 {
				names[n], series[n] = sizeSeriesNames[k][m], xs
				n++
			}
		}
	}
	return n
}

// packSizeSweep appends s's series end to end to storage.
func packSizeSweep(storage []float64, s *core.SizeSweep) []float64 {
	var names [6]string
	var series [6][]float64
	for _, xs := range series[:sizeSeriesOf(s, &names, &series)] {
		storage = append(storage, xs...)
	}
	return storage
}

// appendSizePacking appends the "packed" member of a packed size answer,
// as the general encoder writes a Packing (TestSizePacked).
func appendSizePacking(b []byte, s *core.SizeSweep) []byte {
	var names [6]string
	var series [6][]float64
	n := sizeSeriesOf(s, &names, &series)
	b = append(b, `,"packed":{"into":"sweep","lengths":[`...)
	for k, xs := range series[:n] {
		if k > 0 {
			b = append(b, ',')
		}
		b = strconv.AppendInt(b, int64(len(xs)), 10)
	}
	b = append(b, ']')
	b, _ = appendSeriesNames(b, names[:n]) // plain names: TestSizePacked
	return b
}

// appendSizeSweep appends s as the general encoder writes it, its series
// left out when packed, and reports whether every number was finite (the
// general encoder refuses the others). A member added to core.SizeSweep
// or core.SizeSeries must be added here and to sizeSweepMembers:
// TestSizeSweepWriter fails until it is, and until then every answer goes
// to the general encoder.
func appendSizeSweep(b []byte, s *core.SizeSweep, packed bool) ([]byte, bool) {
	w := numberWriter{b: b, finite: true}
	w.b = append(w.b, `{"koa_max":`...)
	w.number(s.KoAMax)
	if s.AreaM2Max != nil {
		w.member(`,"area_m2_max":`, *s.AreaM2Max)
	}
	w.b = append(w.b, `,"countercurrent":`...)
	w.sizeSeries(&s.Countercurrent, packed)
	w.b = append(w.b, `,"cocurrent":`...)
	w.sizeSeries(&s.Cocurrent, packed)
	w.b = append(w.b, '}')
	return w.b, w.finite
}

func (w *numberWriter) sizeSeries(s *core.SizeSeries, packed bool) {
	if packed {
		w.member(`{"clearance_ceiling":`, s.ClearanceCeiling)
		w.b = append(w.b, '}')
		return
	}
	w.b = append(w.b, `{"target":`...)
	w.list(s.Target)
	w.b = append(w.b, `,"koa":`...)
	w.list(s.KoA)
	if len(s.AreaM2) > 0 { // omitempty
		w.b = append(w.b, `,"area_m2":`...)
		w.list(s.AreaM2)
	}
	w.member(`,"clearance_ceiling":`, s.ClearanceCeiling)
	w.b = append(w.b, '}')
}

// list appends xs as a JSON array, null for a nil slice.
func (w *numberWriter) list(xs []float64) {
	if xs == nil {
		w.b = append(w.b, "null"...)
		return
	}
	w.b = append(w.b, '[')
	for i, x := range xs {
		if i > 0 {
			w.b = append(w.b, ',')
		}
		w.number(x)
	}
	w.b = append(w.b, ']')
}

// sizeSweepMembers are the members appendSizeSweep writes, by their JSON
// paths, in order.
var sizeSweepMembers = []string{
	"koa_max", "area_m2_max",
	"countercurrent.target", "countercurrent.koa", "countercurrent.area_m2", "countercurrent.clearance_ceiling",
	"cocurrent.target", "cocurrent.koa", "cocurrent.area_m2", "cocurrent.clearance_ceiling",
}

// sizeSweepKnown is whether appendSizeSweep writes every member of the
// sweep's types and the sweep is the size answer's last member (found
// through reflection, once).
var sizeSweepKnown = func() bool {
	answer := jsonMembers(reflect.TypeFor[SizeResponse](), "")
	return slices.Equal(jsonMembers(reflect.TypeFor[core.SizeSweep](), ""), sizeSweepMembers) &&
		len(answer) > 0 && strings.HasPrefix(answer[len(answer)-1], "sweep.")
}()
