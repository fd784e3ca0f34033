package api

import (
	"cmp"
	"math"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"clearkit/core"
)

// The fast path of compare. Under WebAssembly the general decoder
// (goccy/go-json's Unmarshal, then checkKeys' walk along the request type)
// and encoder cost several times the calculation itself, and the page calls
// compare on every input event. The fast path reads the page's request, a
// flat object of strings, numbers and nulls, in one pass without
// reflection, and writes the answer without its chart series as JSON
// directly.
// Anything else goes the general way, which gives every error: the fast
// path never refuses a request, it only declines it, so every message
// stays what the general path says. fastpath_test.go checks that both paths give the same
// bytes (the bad-input catalogue, the fuzz corpora, seeded random requests
// and FuzzFastPath), and that the encoder writes every member of the answer.

// flatSpace returns the position of the first byte at or after i that is
// not JSON white space.
func flatSpace(s []byte, i int) int {
	for i < len(s) && (s[i] == ' ' || s[i] == '\t' || s[i] == '\n' || s[i] == '\r') {
		i++
	}
	return i
}

// flatString returns the position after the string that starts (with its
// quote) at i, or -1 if it holds anything but printable ASCII without
// escapes, or does not end.
func flatString(s []byte, i int) int {
	for i++; i < len(s); i++ {
		switch c := s[i]; {
		case c == '"':
			return i + 1
		case c < 0x20 || c > 0x7e || c == '\\':
			return -1
		}
	}
	return -1
}

// flatNumber returns the position after the JSON number (RFC 8259:
// -?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?) that starts at i, or -1.
func flatNumber(s []byte, i int) int {
	digits := func() int {
		start := i
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
		return i - start
	}
	if s[i] == '-' {
		i++
	}
	if i < len(s) && s[i] == '0' {
		i++
	} else if digits() == 0 {
		return -1
	}
	if i < len(s) && s[i] == '.' {
		i++
		if digits() == 0 {
			return -1
		}
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		if digits() == 0 {
			return -1
		}
	}
	return i
}

// compareFlat names the members of a flat compare request, in the order
// the page writes them (the compare form's inputs in site/index.html, read
// by readForm in site/js/form.js), with the sweep, whose only flat value
// is {} (the page's chart request), last.
var compareFlat = [...]string{
	"qb", "qd", "koa", "cbi", "cdi", "qf", "sieving", "hct", "plasma_water", "red_cell_water",
	"sweep",
}

// decodeFast reads a flat compare request into r, which must be zero, and
// reports whether it did; when not, r may hold part of the request (decode
// then reads it into a value of its own), as r is filled as it is read
// rather than through a copy (some 500 bytes, zeroed and copied again,
// under WebAssembly). It takes a flat JSON object whose
// every key is one of compareFlat, written exactly (no escape, no other
// case) and at most once, and whose every value is null, a JSON number, or
// a string of printable ASCII without escapes (for the sweep only {}, the
// page's chart request), with only JSON white space (space, tab, line
// feed, carriage return) between the tokens, at most MaxRequestBytes. A
// value's bytes, as written, are what the general decoder hands
// Number.UnmarshalJSON. Any other request (nested, unknown or repeated
// keys, other values, malformed) is declined: decode then reads it, or
// says what is wrong with it. The keys are read by fastDecoder.member
// (sizefast.go), which compares each first with the name after the last
// one found, so that the page's request finds each at once. The Numbers
// share request's bytes, so request must not change while they are read.
func (r *CompareRequest) decodeFast(request []byte) bool {
	if len(request) > MaxRequestBytes {
		return false
	}
	const sweep = len(compareFlat) - 1
	numbers := [sweep]*Number{
		&r.QB, &r.QD, &r.KoA, &r.CBi, &r.CDi, &r.QF, &r.Sieving, &r.Hct, &r.PlasmaWater, &r.RedCellWater,
	}
	d := fastDecoder{s: request}
	var o fastObject
	for {
		k, ok := d.member(compareFlat[:], &o)
		switch {
		case !ok:
			return false
		case k < 0:
			return d.space() == len(request)
		case k == sweep:
			r.Sweep = &emptySweep
			ok = d.take('{') && d.take('}')
		default:
			ok = d.number(numbers[k], true)
		}
		if !ok {
			return false
		}
	}
}

// emptySweep is the sweep {} of every flat request, which is only read
// (SweepRequest.spec): one for all, not one allocated a call.
var emptySweep SweepRequest

// respondCompare appends a successful compare to dst: with fast,
// directly when it has no sweeps (appendCompare), and through respond
// otherwise. respond gets a copy, so that r does not escape to the heap
// (an allocation costs about as much as writing a few numbers under
// WebAssembly, and more once the collections it brings on are counted;
// what r points to does, as the copy takes it along). A dst without room
// gets a buffer of 1 KiB, which holds the answer without its series.
func respondCompare(dst []byte, r *CompareResponse, fast bool) []byte {
	if fast {
		b := dst
		if cap(b)-len(b) < 1024 {
			b = append(make([]byte, 0, len(b)+1024), b...)
		}
		if b, ok := appendCompare(b, r); ok {
			return b
		}
	}
	c := *r
	return appendTo(dst, respond(&c, nil))
}

// decodeCopy is decode into a new value that is then copied to *v: the
// value a request is decoded into escapes to the heap (decode takes it as
// an interface), and this keeps v, which the fast path fills, off it.
func decodeCopy[T any](request []byte, v *T) error {
	p := new(T)
	err := decode(request, p)
	*v = *p
	return err
}

// appendCompare appends r as the general encoder writes it, member by
// member in the order of the types' fields, and reports true; it declines
// (false) an answer with sweeps (the series as JSON), a packed series
// name that JSON escapes, or a number that is not finite (the general
// encoder refuses it). A member added to
// CompareResponse, core.Operating, core.WholeBlood, core.Filtration,
// core.Comparison or core.Performance must be added here too, and to
// answerMembers: TestAppendCompareMembers fails until it is.
func appendCompare(b []byte, r *CompareResponse) ([]byte, bool) {
	if r.Sweeps != nil || !answerKnown {
		return nil, false
	}
	w := numberWriter{b: b, finite: true}
	if r.OK {
		w.b = append(w.b, `{"ok":true,"input":{"qb":`...)
	} else {
		w.b = append(w.b, `{"ok":false,"input":{"qb":`...)
	}
	in := &r.Input
	w.number(in.QB)
	w.member(`,"qd":`, in.QD)
	w.member(`,"koa":`, in.KoA)
	w.member(`,"cbi":`, in.CBi)
	w.member(`,"cdi":`, in.CDi)
	if in.Blood != nil {
		w.member(`,"blood":{"hct":`, in.Blood.Hct)
		w.member(`,"plasma_water":`, in.Blood.PlasmaWater)
		w.member(`,"red_cell_water":`, in.Blood.RedCellWater)
		w.b = append(w.b, '}')
	}
	w.member(`,"qf":`, in.QF)
	w.member(`,"sieving":`, in.Sieving)
	w.b = append(w.b, `},"countercurrent":`...)
	w.performance(&r.Countercurrent)
	w.b = append(w.b, `,"cocurrent":`...)
	w.performance(&r.Cocurrent)
	w.member(`,"countercurrent_gain":`, r.Gain)
	w.member(`,"countercurrent_gain_percent":`, r.GainPercent)
	w.member(`,"ntu":`, r.NTU)
	w.member(`,"flow_ratio":`, r.FlowRatio)
	w.member(`,"qbw":`, r.QBW)
	if p := r.Packed; p != nil {
		if p.Into != "sweeps" || p.Lengths != nil || p.Points == 0 {
			return nil, false // not compare's: the general encoder writes it
		}
		w.b = append(w.b, `,"packed":{"into":"sweeps","points":`...)
		w.b = strconv.AppendInt(w.b, int64(p.Points), 10)
		switch {
		case p.Series == nil:
			w.b = append(w.b, `,"series":null}`...)
		case len(p.Series) == len(packedSeries) && &p.Series[0] == &packedSeries[0]:
			w.b = append(w.b, packedSeriesJSON...) // the names of every answer
		default:
			var ok bool
			if w.b, ok = appendSeriesNames(w.b, p.Series); !ok {
				return nil, false // one the general encoder escapes
			}
		}
	}
	w.b = append(w.b, '}')
	return w.b, w.finite
}

// packedSeriesJSON is the "series" member of packedSeries, the names of
// every packed answer, with the end of "packed": written once, not name by
// name in every answer.
var packedSeriesJSON = func() []byte {
	b, ok := appendSeriesNames(nil, packedSeries)
	if !ok {
		panic("api: a packed series name is not plain")
	}
	return b
}()

// appendSeriesNames appends `,"series":[names...]}` and reports true, or
// false (appending part of it) if a name is not plain.
func appendSeriesNames(b []byte, names []string) ([]byte, bool) {
	b = append(b, `,"series":[`...)
	for k, name := range names {
		if !plainName(name) {
			return b, false
		}
		if k > 0 {
			b = append(b, ',')
		}
		b = append(append(append(b, '"'), name...), '"')
	}
	return append(b, "]}"...), true
}

// plainName reports whether s is written in JSON as it is, between
// quotes: letters, digits, '.', '_' and '-' only.
func plainName(s string) bool {
	for i := range len(s) {
		if c := s[i]; !('a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' || '0' <= c && c <= '9' || c == '.' || c == '_' || c == '-') {
			return false
		}
	}
	return true
}

// answerMembers are the members appendCompare writes, by their JSON
// paths, in order (sweeps aside: an answer with them goes to the general
// encoder).
var answerMembers = []string{
	"ok", "input.qb", "input.qd", "input.koa", "input.cbi", "input.cdi",
	"input.blood.hct", "input.blood.plasma_water", "input.blood.red_cell_water",
	"input.qf", "input.sieving",
	"countercurrent.clearance", "countercurrent.dialysance", "countercurrent.extraction_ratio",
	"countercurrent.cbo", "countercurrent.cdo", "countercurrent.transfer_rate",
	"countercurrent.log_mean_difference", "countercurrent.clearance_ceiling", "countercurrent.dialysance_ceiling",
	"cocurrent.clearance", "cocurrent.dialysance", "cocurrent.extraction_ratio",
	"cocurrent.cbo", "cocurrent.cdo", "cocurrent.transfer_rate",
	"cocurrent.log_mean_difference", "cocurrent.clearance_ceiling", "cocurrent.dialysance_ceiling",
	"countercurrent_gain", "countercurrent_gain_percent", "ntu", "flow_ratio", "qbw",
	"packed.into", "packed.points", "packed.lengths", "packed.series",
}

// answerKnown is whether answerMembers are all the members of the answer's
// types (found through reflection, once): should a member be added to
// them and not to appendCompare, every answer goes to the general encoder
// rather than lose it (and TestAppendCompareMembers fails).
var answerKnown = slices.Equal(jsonMembers(reflect.TypeFor[CompareResponse](), ""), answerMembers)

// jsonMembers lists the JSON paths of the members of struct type t that
// are not structs themselves, as the encoder writes them: fields of
// embedded structs without a tag promoted, structs and pointers to structs
// entered, "sweeps" left out.
func jsonMembers(t reflect.Type, prefix string) []string {
	var paths []string
	for i := range t.NumField() {
		f := t.Field(i)
		name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		ft := f.Type
		if ft.Kind() == reflect.Pointer {
			ft = ft.Elem()
		}
		switch {
		case name == "-" || !f.IsExported() && !f.Anonymous || prefix+name == "sweeps":
		case f.Anonymous && name == "" && ft.Kind() == reflect.Struct:
			paths = append(paths, jsonMembers(ft, prefix)...)
		case ft.Kind() == reflect.Struct:
			paths = append(paths, jsonMembers(ft, prefix+cmp.Or(name, f.Name)+".")...)
		default:
			paths = append(paths, prefix+cmp.Or(name, f.Name))
		}
	}
	return paths
}

// numberWriter appends JSON members and numbers to b. finite turns false
// at the first number that is not finite.
type numberWriter struct {
	b      []byte
	finite bool
}

func (w *numberWriter) member(name string, x float64) {
	w.b = append(w.b, name...)
	w.number(x)
}

func (w *numberWriter) number(x float64) {
	w.b = appendJSONFloat(w.b, x, &w.finite)
}

// span is where a number stands in numberWriter.b.
type span struct{ start, end int }

// spanned appends member name and x, and returns where x stands.
func (w *numberWriter) spanned(name string, x float64) span {
	w.b = append(w.b, name...)
	start := len(w.b)
	w.number(x)
	return span{start, len(w.b)}
}

// repeat appends member name and x: a copy of prev's digits, which stand
// at s, when x has prev's bits. The answer repeats values (clearance,
// dialysance and transfer rate are equal when CBi = 1 and CDi = 0, and so
// are the two ceilings), and a copy costs a fraction of a number's
// shortest digits.
func (w *numberWriter) repeat(name string, x, prev float64, s span) span {
	if math.Float64bits(x) != math.Float64bits(prev) {
		return w.spanned(name, x)
	}
	w.b = append(w.b, name...)
	start := len(w.b)
	w.b = append(w.b, w.b[s.start:s.end]...)
	return span{start, len(w.b)}
}

func (w *numberWriter) performance(p *core.Performance) {
	k := w.spanned(`{"clearance":`, p.Clearance)
	d := w.repeat(`,"dialysance":`, p.Dialysance, p.Clearance, k)
	w.member(`,"extraction_ratio":`, p.ExtractionRatio)
	w.member(`,"cbo":`, p.BloodOutlet)
	w.member(`,"cdo":`, p.DialysateOutlet)
	w.repeat(`,"transfer_rate":`, p.TransferRate, p.Dialysance, d)
	w.member(`,"log_mean_difference":`, p.LogMeanDifference)
	c := w.spanned(`,"clearance_ceiling":`, p.ClearanceCeiling)
	w.repeat(`,"dialysance_ceiling":`, p.DialysanceCeiling, p.ClearanceCeiling, c)
	w.b = append(w.b, '}')
}

// appendOther is appendJSONFloat for the numbers it does not write
// itself: below 2^-6 or from 2^53, and those JSON cannot hold.
func appendOther(b []byte, x float64, finite *bool) []byte {
	if x-x != 0 { // NaN or an infinity (x - x is NaN there, 0 elsewhere)
		*finite = false
		return append(b, '0')
	}
	format := byte('f')
	if a := math.Abs(x); a != 0 && (a < 1e-6 || a >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, x, format, -1, 64)
	if format == 'e' {
		// e-07 becomes e-7
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

// quickNumber reads the forms of a Number the page sends most, without the
// general parse's calls: an empty string (absent), and a whole number of
// up to 15 digits, written as a JSON number or in a string, without sign,
// point or space ("300"). It reports ok false for any other raw value,
// which Number.parse then reads. Such a number is below 2^53, so its
// float64 is exact and is what strconv.ParseFloat returns.
// TestQuickNumber checks that it agrees with Number.parse.
func quickNumber(raw []byte) (v float64, given, ok bool) {
	digits := raw
	if len(raw) >= 2 && raw[0] == '"' && raw[len(raw)-1] == '"' {
		digits = raw[1 : len(raw)-1]
		if len(digits) == 0 {
			return 0, false, true
		}
	}
	if len(digits) == 0 || len(digits) > 15 {
		return 0, false, false
	}
	var u uint64
	for _, c := range digits {
		if c < '0' || c > '9' {
			return 0, false, false
		}
		u = u*10 + uint64(c-'0')
	}
	return float64(u), true, true
}
