package api

import (
	"reflect"
	"slices"
	"strings"

	"github.com/goccy/go-json"

	"clearkit/core"
)

// respondSize encodes a successful size. With fast, its chart series (some
// 600 numbers: most of the answer's bytes, and under WebAssembly most of
// its time through the general encoder, which writes a float in about
// twice the time of appendJSONFloat) are written by appendSizeSweep, and
// the rest of the answer by respond; the bytes are the general encoder's
// (TestSizeSweepWriter, FuzzSizeSweepWriter). "sweep" is the answer's last
// member, so the answer without it, less its closing brace, is followed by
// the sweep and the brace. Without fast, or should the answer's types
// change (sizeSweepKnown), respond writes it all.
func respondSize(r *SizeResponse, fast bool) []byte {
	sweep := r.Sweep
	if !fast || sweep == nil || !sizeSweepKnown {
		return respond(r, nil)
	}
	r.Sweep = nil
	b, err := json.Marshal(r)
	r.Sweep = sweep
	if err != nil {
		return respond(r, nil) // what could not be encoded: the general encoder says so
	}
	b, ok := appendSizeSweep(append(b[:len(b)-1], `,"sweep":`...), sweep)
	if !ok {
		return respond(r, nil) // a number that is not finite: the general encoder says so
	}
	return append(b, '}')
}

// appendSizeSweep appends s as the general encoder writes it, and reports
// whether every number was finite (the general encoder refuses the
// others). A member added to core.SizeSweep or core.SizeSeries must be
// added here and to sizeSweepMembers: TestSizeSweepWriter fails until it
// is, and until then every answer goes to the general encoder.
func appendSizeSweep(b []byte, s *core.SizeSweep) ([]byte, bool) {
	w := numberWriter{b: b, finite: true}
	w.b = append(w.b, `{"koa_max":`...)
	w.number(s.KoAMax)
	if s.AreaM2Max != nil {
		w.member(`,"area_m2_max":`, *s.AreaM2Max)
	}
	w.b = append(w.b, `,"countercurrent":`...)
	w.sizeSeries(&s.Countercurrent)
	w.b = append(w.b, `,"cocurrent":`...)
	w.sizeSeries(&s.Cocurrent)
	w.b = append(w.b, '}')
	return w.b, w.finite
}

func (w *numberWriter) sizeSeries(s *core.SizeSeries) {
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
