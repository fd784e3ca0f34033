package api

import (
	"fmt"

	"clearkit/core"
)

// CompareRequest asks for both flow arrangements at one operating point.
type CompareRequest struct {
	QB  Number `json:"qb"`  // required, mL/min
	QD  Number `json:"qd"`  // required, mL/min
	KoA Number `json:"koa"` // required, mL/min
	CBi Number `json:"cbi"` // optional, default 1
	CDi Number `json:"cdi"` // optional, default 0
	Conditions
	// Sweep, when present (even {}), adds the chart series.
	Sweep *SweepRequest `json:"sweep"`
}

// SweepRequest sets the chart series; every member is optional.
type SweepRequest struct {
	Points Number   `json:"points"`
	QB     []Number `json:"qb"`  // [minimum, maximum], mL/min
	QD     []Number `json:"qd"`  // [minimum, maximum], mL/min
	KoA    []Number `json:"koa"` // [minimum, maximum], mL/min
}

// CompareResponse is a successful compare.
type CompareResponse struct {
	OK    bool           `json:"ok"`
	Input core.Operating `json:"input"` // the values used, defaults filled in
	core.Comparison
	Sweeps *core.Sweeps `json:"sweeps,omitempty"`
	// Packed takes the place of Sweeps in an answer of ComparePacked.
	Packed *Packing `json:"packed,omitempty"`
}

// Compare answers a CompareRequest.
func Compare(request []byte) []byte {
	response, _ := compare(nil, nil, request, false, true)
	return response
}

// AppendCompare is Compare with the response appended to dst, as
// strconv's Append functions do: a caller that is done with each response
// before it asks for the next (the bridge, which copies it into a
// JavaScript string) can keep one buffer for all of them and spare an
// allocation a call (see Entry.Append). Unlike append, it may also write
// into dst's room past the response (its number writer works there), so
// no bytes there are kept.
func AppendCompare(dst, request []byte) []byte {
	response, _ := compare(dst, nil, request, false, true)
	return response
}

// ComparePacked answers a CompareRequest like AppendCompare, with the
// chart series, when the request asks for them, returned apart from the
// JSON in the order of core.PackedSeries (see Entry.Packed), computed into
// storage when it has room for them (core.SweepInto).
func ComparePacked(dst []byte, storage []float64, request []byte) ([]byte, []float64) {
	return compare(dst, storage, request, true, true)
}

// compare answers all three, appending the response to dst and computing
// packed series into storage (when it has room); with fast false it takes
// the general decoder and encoder only (see fastpath.go).
func compare(dst []byte, storage []float64, request []byte, packed, fast bool) ([]byte, []float64) {
	var req CompareRequest
	if !fast || !req.decodeFast(request) {
		if err := decodeCopy(request, &req); err != nil {
			return appendTo(dst, failure(err)), nil
		}
	}
	op, err := operating(&req.QB, &req.QD, &req.KoA, &req.CBi, &req.CDi)
	if err != nil {
		return appendTo(dst, failure(err)), nil
	}
	if err := req.Conditions.apply(&op); err != nil {
		return appendTo(dst, failure(err)), nil
	}
	c, err := core.Compare(op)
	if err != nil {
		return appendTo(dst, failure(err)), nil
	}
	resp := CompareResponse{OK: true, Input: op, Comparison: c}
	if req.Sweep == nil {
		return respondCompare(dst, &resp, fast), nil
	}
	spec, err := req.Sweep.spec()
	if err != nil {
		return appendTo(dst, failure(err)), nil
	}
	if !packed {
		storage = nil // the answer's series are its own
	}
	s, err := core.SweepInto(storage, op, spec)
	if err != nil {
		return appendTo(dst, failure(err)), nil
	}
	if !packed {
		sweeps := s // a copy that goes to the heap, in this case alone
		resp.Sweeps = &sweeps
		return respondCompare(dst, &resp, false), nil
	}
	packing := Packing{Into: "sweeps", Points: s.Points(), Series: packedSeries}
	resp.Packed = &packing
	if !finite(s.Packed()) {
		// What respond would refuse in the JSON (see respond).
		return appendTo(dst, failure(fieldErr("", "internal error: result could not be encoded"))), nil
	}
	return respondCompare(dst, &resp, fast), s.Packed()
}

// appendTo returns dst with b appended: b itself, with no copy, when dst
// is empty and has no room for it. (An empty dst with room keeps its
// storage, so that the bridge's buffer does not shrink to a failure's
// size while the page's inputs are in error.)
func appendTo(dst, b []byte) []byte {
	if len(dst) == 0 && cap(dst) < len(b) {
		return b
	}
	return append(dst, b...)
}

var packedSeries = core.PackedSeries[:]

// finite reports whether every value of xs is finite, for values of
// magnitude below 1e307 (the chart series' are below 1e9): a sum that
// holds an infinity or a NaN is not finite, and times 0 it is NaN, while
// a finite sum times 0 is 0. Eight values a step, with one test, take a
// third of the time of a test per value under WebAssembly.
func finite(xs []float64) bool {
	s := 0.0
	for len(xs) >= 8 {
		s += (xs[0] + xs[1] + xs[2] + xs[3] + xs[4] + xs[5] + xs[6] + xs[7]) * 0
		xs = xs[8:]
	}
	for _, x := range xs {
		s += x * 0
	}
	return s == 0
}

// operating reads the fields of an operating point.
func operating(qb, qd, koa, cbi, cdi *Number) (op core.Operating, err error) {
	if op.QB, err = qb.Required("qb"); err != nil {
		return op, err
	}
	if op.QD, err = qd.Required("qd"); err != nil {
		return op, err
	}
	if op.KoA, err = koa.Required("koa"); err != nil {
		return op, err
	}
	if op.CBi, err = cbi.Optional("cbi", 1); err != nil {
		return op, err
	}
	if op.CDi, err = cdi.Optional("cdi", 0); err != nil {
		return op, err
	}
	return op, op.Validate()
}

func (s *SweepRequest) spec() (spec core.SweepSpec, err error) {
	if spec.Points, err = sweepPoints("sweep.points", s.Points); err != nil {
		return spec, err
	}
	if spec.QB, err = rangeOf("sweep.qb", s.QB); err != nil {
		return spec, err
	}
	if spec.QD, err = rangeOf("sweep.qd", s.QD); err != nil {
		return spec, err
	}
	spec.KoA, err = rangeOf("sweep.koa", s.KoA)
	return spec, err
}

// sweepPoints reads the number of points of a chart series.
func sweepPoints(field string, n Number) (int, error) {
	points, err := n.Optional(field, core.DefaultSweepPoints)
	if err != nil {
		return 0, err
	}
	// The range is checked here, before the conversion to int: an explicit
	// 0 would read as "default" in core, and a huge value does not fit an
	// int.
	if points < core.MinSweepPoints || points > core.MaxSweepPoints {
		return 0, fieldErr(field, fmt.Sprintf("must be a whole number from %d to %d (got %g)", core.MinSweepPoints, core.MaxSweepPoints, points))
	}
	if points != float64(int(points)) {
		return 0, fieldErr(field, "must be a whole number")
	}
	return int(points), nil
}

// rangeOf reads an optional [minimum, maximum] pair.
func rangeOf(field string, pair []Number) (*core.Range, error) {
	if pair == nil {
		return nil, nil
	}
	if len(pair) != 2 {
		return nil, fieldErr(field, "must be [minimum, maximum]")
	}
	lo, err := pair[0].Required(field)
	if err != nil {
		return nil, err
	}
	hi, err := pair[1].Required(field)
	if err != nil {
		return nil, err
	}
	return &core.Range{Min: lo, Max: hi}, nil
}
