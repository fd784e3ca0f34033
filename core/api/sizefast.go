package api

import "unicode/utf8"

// The fast decoder of size. The size view sends a request at every
// keystroke; the general decoder (goccy/go-json's reflection, then
// checkKeys' walk) is a fifth of the call under WebAssembly, and, as the
// call's first part after a frame, runs with cold caches. The page's
// request is shallow: numbers as strings, two flat objects, two pairs,
// the sweep {} and a list of flat filters. decodeFast reads that shape in
// one pass and declines every other, as compare's fast path does
// (fastpath.go, which reads with the same fastDecoder): the general path
// then reads it, and gives every error.
// TestSizeBothWays, TestSizeFastPathCatalogue, TestSizeFastPathRandom and
// FuzzSizeFastPath check that both give the same bytes.

// sizeFlat names the members of a size request in the order the page
// writes them (request in site/js/size-view.js).
var sizeFlat = [...]string{
	"target_clearance", "qb", "qd", "flow", "qf", "sieving", "hct", "plasma_water", "red_cell_water",
	"k0", "margin_percent", "sweep", "reference", "current_filter", "qd_range", "qb_range", "filters",
}

// The members of sizeFlat that are not numbers, by their place in it
// (TestSizeDecodeFastMembers checks the places); decodeFast's numbers
// follow the same order.
const (
	sizeFlow          = 3
	sizeSweep         = 11
	sizeReference     = 12
	sizeCurrentFilter = 13
	sizeQDRange       = 14
	sizeQBRange       = 15
	sizeFilters       = 16
)

// A fastObject's seen holds a bit per name: no list of names may grow
// past 32.
var (
	_ [32 - len(sizeFlat)]struct{}
	_ [32 - len(compareFlat)]struct{}
)

var (
	filterFlat    = [...]string{"label", "area_m2", "koa"}
	referenceFlat = [...]string{"koa", "area_m2"}
	sweepFlat     = [...]string{"points", "koa_max"}
)

// decodeFast reads the page's shape of size request into r, which must be
// zero, and reports whether it did; when not, r may hold part of the
// request (decode then reads it into a value of its own), as r is filled
// as it is read, as compare's decodeFast fills its request. It takes: an object of
// the members of sizeFlat, each at most once, whose numbers are JSON
// numbers, strings of printable ASCII without escapes, or null (as in
// compare's flat request); flow a string (text); sweep, reference and
// current_filter objects of their members, qd_range and qb_range arrays of
// numbers, and filters an array of objects of label, area_m2 and koa,
// where a label is a string (text), every number below the top level a
// JSON number or such a string (no null), and no array is empty; with
// only JSON white space between the tokens, and at most MaxRequestBytes.
// The Numbers share request's bytes, so request must not change while
// they are read.
func (r *SizeRequest) decodeFast(request []byte) bool {
	if len(request) > MaxRequestBytes {
		return false
	}
	d := fastDecoder{s: request}
	numbers := [...]*Number{
		&r.TargetClearance, &r.QB, &r.QD, nil, &r.QF, &r.Sieving, &r.Hct, &r.PlasmaWater, &r.RedCellWater,
		&r.K0, &r.MarginPercent,
	}
	var o fastObject
	for {
		k, ok := d.member(sizeFlat[:], &o)
		switch {
		case !ok:
			return false
		case k < 0:
			return d.space() == len(request)
		case k == sizeFlow:
			if r.Flow, ok = d.text(); !ok {
				return false
			}
		case k == sizeSweep:
			r.Sweep = new(SizeSweepRequest)
			ok = d.numbers(sweepFlat[:], &r.Sweep.Points, &r.Sweep.KoAMax)
		case k == sizeReference:
			r.Reference = new(ReferenceRequest)
			ok = d.numbers(referenceFlat[:], &r.Reference.KoA, &r.Reference.AreaM2)
		case k == sizeCurrentFilter:
			r.CurrentFilter = new(FilterRequest)
			ok = d.filter(r.CurrentFilter)
		case k == sizeQDRange:
			r.QDRange, ok = d.pair()
		case k == sizeQBRange:
			r.QBRange, ok = d.pair()
		case k == sizeFilters:
			r.Filters, ok = d.filters()
		default:
			ok = d.number(numbers[k], true)
		}
		if !ok {
			return false
		}
	}
}

// fastDecoder reads a request from s[i:].
type fastDecoder struct {
	s []byte
	i int
}

// fastObject is where an object's reading stands: whether its brace was
// read, the members found (bit k for names[k]) and the one looked for
// first next.
type fastObject struct {
	open bool
	seen uint32
	next int
}

// space moves past JSON white space and returns where it stopped.
func (d *fastDecoder) space() int {
	d.i = flatSpace(d.s, d.i)
	return d.i
}

// take moves past c, and the white space around it, if it is next.
func (d *fastDecoder) take(c byte) bool {
	s, i := d.s, d.i
	if i >= len(s) || s[i] != c {
		// White space first? (The page writes none: JSON.stringify.)
		if i = flatSpace(s, i); i >= len(s) || s[i] != c {
			d.i = i
			return false
		}
	}
	if i++; i < len(s) && s[i] <= ' ' {
		i = flatSpace(s, i)
	}
	d.i = i
	return true
}

// member reads an object's opening brace (at its first call) or the comma
// after its last value, then a key of names and its colon, and returns
// the key's index; at the object's closing brace it returns -1. It
// declines (false) a key not in names, written other than exactly, or
// repeated, and anything not JSON. Each key is compared first with the
// name after the last one found, so that a request written in the order
// of names (as the page writes it) finds each at once.
func (d *fastDecoder) member(names []string, o *fastObject) (int, bool) {
	if !o.open {
		if !d.take('{') {
			return 0, false
		}
		o.open = true
		if d.take('}') {
			return -1, true
		}
	} else if i := d.i; i+1 < len(d.s) && d.s[i] == ',' && d.s[i+1] == '"' {
		d.i = i + 1 // the page's comma, with no white space: no call
	} else if !d.take(',') {
		if d.take('}') {
			return -1, true
		}
		return 0, false
	}
	s, i := d.s, d.i
	if i >= len(s) || s[i] != '"' {
		return 0, false
	}
	k, end := -1, -1
	if o.next < len(names) {
		if n := names[o.next]; len(s)-i > len(n)+1 && string(s[i+1:i+1+len(n)]) == n && s[i+1+len(n)] == '"' {
			k, end = o.next, i+len(n)+2
		}
	}
	if k < 0 {
		if end = flatString(s, i); end < 0 {
			return 0, false
		}
		for j := range names {
			if names[j] == string(s[i+1:end-1]) {
				k = j
				break
			}
		}
	}
	if k < 0 || o.seen&(1<<k) != 0 {
		return 0, false
	}
	o.seen |= 1 << k
	o.next = k + 1
	if end < len(s) && s[end] == ':' && end+1 < len(s) && s[end+1] > ' ' {
		d.i = end + 1 // the page's colon, with no white space: no call
		return k, true
	}
	d.i = end
	if !d.take(':') {
		return 0, false
	}
	return k, true
}

// number reads a JSON number or a string of printable ASCII without
// escapes (or null, with null true) into n, as the general decoder hands
// it to Number.UnmarshalJSON: the value's bytes as written.
func (d *fastDecoder) number(n *Number, null bool) bool {
	s, i := d.s, d.i
	if i >= len(s) {
		return false
	}
	end := -1
	switch c := s[i]; {
	case c == '"':
		end = flatString(s, i)
	case c == '-' || c >= '0' && c <= '9':
		end = flatNumber(s, i)
	case c == 'n' && null:
		if len(s)-i >= 4 && string(s[i:i+4]) == "null" {
			end = i + 4
		}
	}
	if end < 0 {
		return false
	}
	n.raw = s[i:end]
	d.i = end
	return true
}

// text reads a string without escapes or control characters whose bytes
// are valid UTF-8 (a label may hold any letter: "Filtre à fibres"): its
// bytes are then the Go string the general decoder makes of it, which
// changes only escapes and bytes that are not UTF-8.
func (d *fastDecoder) text() (string, bool) {
	s, i := d.s, d.i
	if i >= len(s) || s[i] != '"' {
		return "", false
	}
	ascii := true
	for j := i + 1; j < len(s); j++ {
		switch c := s[j]; {
		case c == '"':
			if !ascii && !utf8.Valid(s[i+1:j]) {
				return "", false
			}
			d.i = j + 1
			return string(s[i+1 : j]), true
		case c < 0x20 || c == '\\':
			return "", false
		case c >= 0x80:
			ascii = false
		}
	}
	return "", false
}

// numbers reads an object of names, whose values go to ns in order.
func (d *fastDecoder) numbers(names []string, ns ...*Number) bool {
	var o fastObject
	for {
		k, ok := d.member(names, &o)
		if !ok || k < 0 {
			return ok
		}
		if !d.number(ns[k], false) {
			return false
		}
	}
}

// filter reads an object of filterFlat into f.
func (d *fastDecoder) filter(f *FilterRequest) bool {
	var o fastObject
	for {
		k, ok := d.member(filterFlat[:], &o)
		switch {
		case !ok || k < 0:
			return ok
		case k == 0:
			f.Label, ok = d.text()
		case k == 1:
			ok = d.number(&f.AreaM2, false)
		default:
			ok = d.number(&f.KoA, false)
		}
		if !ok {
			return false
		}
	}
}

// elements reads an array's opening bracket (at its first call, with
// first true) or the comma after its last element, and reports whether an
// element follows (more) or the array ended; an empty array is declined.
func (d *fastDecoder) elements(first bool) (more, ok bool) {
	if first {
		return true, d.take('[')
	}
	if d.take(']') {
		return false, true
	}
	return true, d.take(',')
}

// pair reads an array of numbers (qd_range, qb_range: two, when right).
func (d *fastDecoder) pair() ([]Number, bool) {
	ns := make([]Number, 0, 2)
	for first := true; ; first = false {
		more, ok := d.elements(first)
		if !ok || !more {
			return ns, ok
		}
		ns = append(ns, Number{})
		if !d.number(&ns[len(ns)-1], false) {
			return nil, false
		}
	}
}

// filters reads an array of filters.
func (d *fastDecoder) filters() ([]FilterRequest, bool) {
	var fs []FilterRequest
	for first := true; ; first = false {
		more, ok := d.elements(first)
		if !ok || !more {
			return fs, ok
		}
		fs = append(fs, FilterRequest{})
		if !d.filter(&fs[len(fs)-1]) {
			return nil, false
		}
	}
}
