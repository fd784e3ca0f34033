package api

import (
	"reflect"
	"slices"
	"strconv"

	"clearkit/core"
)

// appendSizeAnswer appends r as the general encoder writes it, without its
// sweep and without its closing brace (respondSize writes the sweep
// there), member by member in the order of the types' fields, and reports
// true. It declines (false) a string that JSON escapes (a filter's label
// with a quote, say, or any letter beyond ASCII) or a number that is not
// finite: the general encoder writes the first and refuses the second.
// Under WebAssembly the general encoder took a fifth of the page's size
// call, which runs at every keystroke of the size view. A member added to
// SizeResponse or to the core types it holds must be added here and to
// sizeAnswerMembers: TestAppendSizeAnswerMembers fails until it is, and
// until then every answer goes to the general encoder.
func appendSizeAnswer(b []byte, r *SizeResponse) ([]byte, bool) {
	if !sizeAnswerKnown {
		return nil, false
	}
	w := answerWriter{numberWriter: numberWriter{b: b, finite: true}, plain: true}
	w.boolean(`{"ok":`, r.OK)
	in := &r.Input
	w.member(`,"input":{"target_clearance":`, in.TargetClearance)
	w.member(`,"qb":`, in.QB)
	w.member(`,"qd":`, in.QD)
	if in.Blood != nil {
		w.member(`,"blood":{"hct":`, in.Blood.Hct)
		w.member(`,"plasma_water":`, in.Blood.PlasmaWater)
		w.member(`,"red_cell_water":`, in.Blood.RedCellWater)
		w.b = append(w.b, '}')
	}
	w.member(`,"qf":`, in.QF)
	w.member(`,"sieving":`, in.Sieving)
	w.text(`,"flow":`, in.Flow)
	w.member(`,"margin_percent":`, in.MarginPercent)
	s := &r.Sizing
	w.optional(`},"k0":`, s.K0)
	w.text(`,"flow":`, s.Flow)
	w.member(`,"qbw":`, s.QBW)
	w.member(`,"koa":`, s.KoA)
	if s.AreaM2 != nil { // omitempty
		w.member(`,"area_m2":`, *s.AreaM2)
	}
	w.member(`,"ntu":`, s.NTU)
	w.member(`,"clearance_ceiling":`, s.ClearanceCeiling)
	w.arrangement(`,"countercurrent":`, &s.Countercurrent)
	w.arrangement(`,"cocurrent":`, &s.Cocurrent)
	if c := s.Choice; c != nil {
		w.member(`,"choice":{"margin_percent":`, c.MarginPercent)
		w.member(`,"needed_koa":`, c.NeededKoA)
		w.optional(`,"needed_area_m2":`, c.NeededAreaM2)
		w.b = append(w.b, `,"chosen":`...)
		if c.Chosen == nil {
			w.b = append(w.b, "null"...)
		} else {
			w.b = strconv.AppendInt(w.b, int64(*c.Chosen), 10)
		}
		w.b = append(w.b, `,"filters":`...)
		if c.Filters == nil {
			w.b = append(w.b, "null"...)
		} else {
			w.b = append(w.b, '[')
			for i := range c.Filters {
				f := &c.Filters[i]
				if i > 0 {
					w.b = append(w.b, ',')
				}
				w.text(`{"label":`, f.Label)
				w.member(`,"koa":`, f.KoA)
				w.optional(`,"area_m2":`, f.AreaM2)
				w.member(`,"clearance":`, f.Clearance)
				w.member(`,"clearance_gap":`, f.ClearanceGap)
				w.member(`,"koa_gap_percent":`, f.KoAGapPercent)
				w.boolean(`,"meets":`, f.Meets)
				w.b = append(w.b, '}')
			}
			w.b = append(w.b, ']')
		}
		w.b = append(w.b, '}')
	}
	if c := s.Current; c != nil {
		w.member(`,"current_filter":{"koa":`, c.KoA)
		w.optional(`,"area_m2":`, c.AreaM2)
		w.member(`,"clearance":`, c.Clearance)
		w.member(`,"clearance_gap":`, c.ClearanceGap)
		w.flow(`,"qd":`, &c.QD)
		w.flow(`,"qb":`, &c.QB)
		w.member(`,"relative_tolerance":`, c.RelativeTolerance)
		w.b = append(w.b, '}')
	}
	return w.b, w.finite && w.plain
}

// answerWriter is numberWriter with strings, booleans and pointers to
// numbers; plain turns false at the first string that JSON escapes.
type answerWriter struct {
	numberWriter
	plain bool
}

// text appends member name and s, a string written as it is between
// quotes (plainText).
func (w *answerWriter) text(name, s string) {
	if !plainText(s) {
		w.plain = false
	}
	w.b = append(append(append(append(w.b, name...), '"'), s...), '"')
}

func (w *answerWriter) boolean(name string, v bool) {
	w.b = append(w.b, name...)
	w.b = strconv.AppendBool(w.b, v)
}

// optional appends member name and *x, or null for a nil x.
func (w *answerWriter) optional(name string, x *float64) {
	if x == nil {
		w.b = append(append(w.b, name...), "null"...)
		return
	}
	w.member(name, *x)
}

func (w *answerWriter) arrangement(name string, a *core.ArrangementSize) {
	w.b = append(w.b, name...)
	w.boolean(`{"reachable":`, a.Reachable)
	w.optional(`,"koa":`, a.KoA)
	w.optional(`,"area_m2":`, a.AreaM2)
	w.optional(`,"ntu":`, a.NTU)
	w.member(`,"clearance_ceiling":`, a.ClearanceCeiling)
	if a.Message != "" { // omitempty
		w.text(`,"message":`, a.Message)
	}
	w.b = append(w.b, '}')
}

func (w *answerWriter) flow(name string, f *core.FlowAnswer) {
	w.b = append(w.b, name...)
	w.boolean(`{"ok":`, f.OK)
	if f.Flow != nil { // omitempty
		w.member(`,"flow":`, *f.Flow)
	}
	if f.Clearance != nil { // omitempty
		w.member(`,"clearance":`, *f.Clearance)
	}
	w.boolean(`,"at_minimum":`, f.AtMinimum)
	w.b = append(w.b, `,"evaluations":`...)
	w.b = strconv.AppendInt(w.b, int64(f.Evaluations), 10)
	w.member(`,"range":[`, f.Range[0])
	w.member(`,`, f.Range[1])
	w.b = append(w.b, ']')
	if e := f.Error; e != nil { // omitempty
		w.text(`,"error":{"field":`, e.Field)
		w.text(`,"message":`, e.Message)
		if e.Limit != nil { // omitempty
			w.member(`,"limit":`, *e.Limit)
		}
		w.b = append(w.b, '}')
	}
	w.b = append(w.b, '}')
}

// plainText reports whether the general encoder writes s as it is between
// quotes: printable ASCII but the quote, the backslash and the three
// characters it escapes for HTML (<, > and &).
func plainText(s string) bool {
	for i := range len(s) {
		if c := s[i]; c < 0x20 || c > 0x7e || c == '"' || c == '\\' || c == '<' || c == '>' || c == '&' {
			return false
		}
	}
	return true
}

// sizeAnswerMembers are the members appendSizeAnswer writes, by their JSON
// paths, in order, and sizeFilterMembers those of each listed filter.
var (
	sizeAnswerMembers = []string{
		"ok", "input.target_clearance", "input.qb", "input.qd",
		"input.blood.hct", "input.blood.plasma_water", "input.blood.red_cell_water",
		"input.qf", "input.sieving", "input.flow", "input.margin_percent",
		"k0", "flow", "qbw", "koa", "area_m2", "ntu", "clearance_ceiling",
		"countercurrent.reachable", "countercurrent.koa", "countercurrent.area_m2", "countercurrent.ntu",
		"countercurrent.clearance_ceiling", "countercurrent.message",
		"cocurrent.reachable", "cocurrent.koa", "cocurrent.area_m2", "cocurrent.ntu",
		"cocurrent.clearance_ceiling", "cocurrent.message",
		"choice.margin_percent", "choice.needed_koa", "choice.needed_area_m2", "choice.chosen", "choice.filters",
		"current_filter.koa", "current_filter.area_m2", "current_filter.clearance", "current_filter.clearance_gap",
		"current_filter.qd.ok", "current_filter.qd.flow", "current_filter.qd.clearance", "current_filter.qd.at_minimum",
		"current_filter.qd.evaluations", "current_filter.qd.range",
		"current_filter.qd.error.field", "current_filter.qd.error.message", "current_filter.qd.error.limit",
		"current_filter.qb.ok", "current_filter.qb.flow", "current_filter.qb.clearance", "current_filter.qb.at_minimum",
		"current_filter.qb.evaluations", "current_filter.qb.range",
		"current_filter.qb.error.field", "current_filter.qb.error.message", "current_filter.qb.error.limit",
		"current_filter.relative_tolerance",
	}
	sizeFilterMembers = []string{"label", "koa", "area_m2", "clearance", "clearance_gap", "koa_gap_percent", "meets"}
)

// sizeAnswerKnown is whether appendSizeAnswer writes every member of the
// answer's types, the sweep aside (found through reflection, once).
var sizeAnswerKnown = func() bool {
	members := jsonMembers(reflect.TypeFor[SizeResponse](), "")
	members = slices.DeleteFunc(members, func(m string) bool { return len(m) > 6 && m[:6] == "sweep." })
	return slices.Equal(members, sizeAnswerMembers) &&
		slices.Equal(jsonMembers(reflect.TypeFor[core.FilterFit](), ""), sizeFilterMembers)
}()
