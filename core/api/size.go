package api

import (
	"fmt"
	"sync"

	"clearkit/core"
)

// SizeRequest asks which filter, or which flow, reaches a target
// clearance (fresh dialysate: CDi = 0).
type SizeRequest struct {
	TargetClearance Number `json:"target_clearance"` // required, mL/min
	QB              Number `json:"qb"`               // required, mL/min
	QD              Number `json:"qd"`               // required, mL/min
	// Whole blood (hct, plasma_water, red_cell_water) and ultrafiltration
	// (qf, sieving), as in compare.
	Conditions
	// Flow is "countercurrent" (the default) or "cocurrent": the
	// arrangement of the answer, the filter choice and the flow solves.
	Flow string `json:"flow"`
	K0   Number `json:"k0"` // optional, cm/min
	// Reference, instead of k0, gives K0 from a filter of the same
	// membrane family: its rated KoA and its area.
	Reference     *ReferenceRequest `json:"reference"`
	MarginPercent Number            `json:"margin_percent"` // optional, default 0
	Filters       []FilterRequest   `json:"filters"`
	// CurrentFilter, the filter in use, adds the smallest QD and QB with
	// which it reaches the target, searched in QDRange and QBRange.
	CurrentFilter *FilterRequest    `json:"current_filter"`
	QDRange       []Number          `json:"qd_range"` // [minimum, maximum], mL/min
	QBRange       []Number          `json:"qb_range"` // [minimum, maximum], mL/min
	Sweep         *SizeSweepRequest `json:"sweep"`
}

// ReferenceRequest is a reference filter: both fields required.
type ReferenceRequest struct {
	KoA    Number `json:"koa"`     // mL/min
	AreaM2 Number `json:"area_m2"` // m^2
}

// FilterRequest is a filter by its KoA or its area (or both: the KoA
// decides); the label is optional.
type FilterRequest struct {
	Label  string `json:"label"`
	KoA    Number `json:"koa"`     // mL/min
	AreaM2 Number `json:"area_m2"` // m^2
}

// SizeSweepRequest sets the chart series; both members are optional.
type SizeSweepRequest struct {
	Points Number `json:"points"`
	KoAMax Number `json:"koa_max"` // mL/min
}

// SizeInput echoes the operating values used, defaults filled in.
type SizeInput struct {
	TargetClearance float64          `json:"target_clearance"`
	QB              float64          `json:"qb"`
	QD              float64          `json:"qd"`
	Blood           *core.WholeBlood `json:"blood,omitempty"`
	QF              float64          `json:"qf"`
	Sieving         float64          `json:"sieving"`
	Flow            string           `json:"flow"`
	MarginPercent   float64          `json:"margin_percent"`
}

// SizeResponse is a successful size.
type SizeResponse struct {
	OK    bool      `json:"ok"`
	Input SizeInput `json:"input"`
	core.Sizing
}

// Size answers a SizeRequest. Numbers are read (and required ones
// demanded) in request order, then core.Size checks their values in the
// same order and refuses a target at or above the ceiling with the
// ceiling in error.limit.
func Size(request []byte) []byte {
	response, _ := size(nil, nil, request, false, true)
	return response
}

// AppendSize is Size with the response appended to dst (see Entry.Append).
func AppendSize(dst, request []byte) []byte {
	response, _ := size(dst, nil, request, false, true)
	return response
}

// SizePacked answers a SizeRequest like AppendSize, with the chart
// series, when the request asks for them, returned apart from the JSON
// (see Entry.Packed and Packing): the answer's "sweep" keeps its axis tops
// and ceilings, and "packed" names its series, which differ in length.
func SizePacked(dst []byte, storage []float64, request []byte) ([]byte, []float64) {
	return size(dst, storage, request, true, true)
}

// size answers all three, appending the response to dst and the packed
// series to storage (when it has room); with fast false it decodes the
// request with the general decoder only (see sizefast.go) and encodes the
// whole answer with the general encoder (see respondSize).
func size(dst []byte, storage []float64, request []byte, packed, fast bool) ([]byte, []float64) {
	var req SizeRequest
	if !fast || !req.decodeFast(request) {
		if err := decodeCopy(request, &req); err != nil {
			return appendTo(dst, failure(err)), nil
		}
	}
	spec, err := req.spec()
	if err != nil {
		return appendTo(dst, failure(err)), nil
	}
	s, err := sizing(spec, packed)
	if err != nil {
		return appendTo(dst, failure(err)), nil
	}
	return respondSize(dst, storage, &SizeResponse{
		OK: true,
		Input: SizeInput{
			TargetClearance: spec.Target,
			QB:              spec.QB,
			QD:              spec.QD,
			Blood:           spec.Blood,
			QF:              spec.QF,
			Sieving:         spec.Sieving,
			Flow:            spec.Flow.String(),
			MarginPercent:   spec.MarginPercent,
		},
		Sizing: s,
	}, packed, fast)
}

// sweepMemo keeps the chart series of the last size answer with packed
// series, the page's (see core.SweepMemo): a keystroke in the size view
// changes the target, and the series, which depend on the flows and not
// on the target, are then taken as they were. Size and AppendSize compute
// them every time; TestSizePacked compares the two.
var sweepMemo struct {
	sync.Mutex
	memo core.SweepMemo
}

// sizing answers spec by core.Size, or by core.SizeWith with sweepMemo,
// which is held for the whole call (the page's calls come one at a time;
// native callers of SizePacked take turns). The series it returns are not
// changed afterwards (respondSize only reads them), so they need no lock.
func sizing(spec core.SizeSpec, memo bool) (core.Sizing, error) {
	if !memo {
		return core.Size(spec)
	}
	sweepMemo.Lock()
	defer sweepMemo.Unlock()
	return core.SizeWith(spec, &sweepMemo.memo)
}

func (r *SizeRequest) spec() (s core.SizeSpec, err error) {
	if s.Target, err = r.TargetClearance.Required("target_clearance"); err != nil {
		return s, err
	}
	if s.QB, err = r.QB.Required("qb"); err != nil {
		return s, err
	}
	if s.QD, err = r.QD.Required("qd"); err != nil {
		return s, err
	}
	if s.Blood, err = r.Conditions.read(); err != nil {
		return s, err
	}
	if s.QF, err = r.QF.Optional("qf", 0); err != nil {
		return s, err
	}
	if s.Sieving, err = r.Sieving.Optional("sieving", core.DefaultSieving); err != nil {
		return s, err
	}
	if r.Flow != "" {
		if s.Flow, err = core.ParseArrangement("flow", r.Flow); err != nil {
			return s, err
		}
	}
	if s.K0, err = positive("k0", r.K0, "cm/min"); err != nil {
		return s, err
	}
	if r.Reference != nil {
		s.Reference = &core.Filter{}
		if s.Reference.KoA, err = r.Reference.KoA.Required("reference.koa"); err != nil {
			return s, err
		}
		if s.Reference.AreaM2, err = r.Reference.AreaM2.Required("reference.area_m2"); err != nil {
			return s, err
		}
	}
	if s.MarginPercent, err = r.MarginPercent.Optional("margin_percent", 0); err != nil {
		return s, err
	}
	if len(r.Filters) > core.MaxFilters {
		return s, fieldErr("filters", fmt.Sprintf("lists %d filters: at most %d", len(r.Filters), core.MaxFilters))
	}
	if r.Filters != nil {
		s.Filters = make([]core.Filter, len(r.Filters))
		for i := range r.Filters {
			if s.Filters[i], err = r.Filters[i].filter(fmt.Sprintf("filters[%d]", i)); err != nil {
				return s, err
			}
		}
	}
	if r.CurrentFilter != nil {
		f, err := r.CurrentFilter.filter("current_filter")
		if err != nil {
			return s, err
		}
		s.Current = &f
	}
	if s.QDRange, err = rangeOf("qd_range", r.QDRange); err != nil {
		return s, err
	}
	if s.QBRange, err = rangeOf("qb_range", r.QBRange); err != nil {
		return s, err
	}
	if r.Sweep != nil {
		s.Sweep = &core.SizeSweepSpec{}
		if s.Sweep.Points, err = sweepPoints("sweep.points", r.Sweep.Points); err != nil {
			return s, err
		}
		if s.Sweep.KoAMax, err = positive("sweep.koa_max", r.Sweep.KoAMax, "mL/min"); err != nil {
			return s, err
		}
	}
	return s, nil
}

func (f *FilterRequest) filter(field string) (c core.Filter, err error) {
	c.Label = f.Label
	if c.KoA, err = positive(field+".koa", f.KoA, "mL/min"); err != nil {
		return c, err
	}
	c.AreaM2, err = positive(field+".area_m2", f.AreaM2, "m²")
	return c, err
}

// positive reads an optional number for which 0 means "not given" in
// core: an explicit 0 is refused here, so that it is not taken as absent.
func positive(field string, n Number, unit string) (float64, error) {
	v, given, err := n.value(field)
	if err == nil && given && v == 0 {
		if unit != "" {
			unit = " " + unit
		}
		err = fieldErr(field, "must be greater than 0"+unit+" (got 0)")
	}
	return v, err
}
