package api

import (
	"bytes"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// The fast decoder of size (sizefast.go) must leave every answer as the
// general decoder gives it, byte for byte: these tests send the same
// request both ways, size(dst, nil, request, false, true) and size(nil,
// nil, request, false, false), the fast way after bytes dst holds
// already, as the bridge's buffer does. (Packed, the general way writes
// the series as JSON; TestSizePacked compares the packed answers with
// these.)

// sizePageRequest is what the size view sends with its demo (site/js/size-view.js).
const sizePageRequest = `{"target_clearance":"250","qb":"300","qd":"500","flow":"countercurrent","qf":"","sieving":"","hct":"","plasma_water":"","red_cell_water":"","k0":"0.05","margin_percent":"10","sweep":{},"current_filter":{"koa":"700","area_m2":""},"qd_range":["300","800"],"qb_range":["150","450"],"filters":[{"label":"Shelf A","area_m2":"1.4","koa":""},{"label":"Shelf B","area_m2":"1.8","koa":""},{"label":"Shelf C","area_m2":"2.1","koa":""}]}`

// sameSizeBothWays fails t unless request gets the same answer both ways,
// and reports whether the fast decoder took it.
func sameSizeBothWays(t testing.TB, request []byte) bool {
	t.Helper()
	dst := append(make([]byte, 0, 4096), "kept"...)
	fast, _ := size(dst, nil, request, false, true)
	general, _ := size(nil, nil, request, false, false)
	if !bytes.HasPrefix(fast, dst) {
		t.Errorf("size(%q) did not keep dst %q: %.20s", clip(string(request)), dst, fast)
	}
	if fast = fast[len(dst):]; !bytes.Equal(fast, general) {
		t.Errorf("size(%q):\nfast path    %s\ngeneral path %s", request, fast, general)
	}
	var req SizeRequest
	return req.decodeFast(request)
}

// TestSizeFastPathPageRequest: the fast decoder takes what the page sends,
// with every optional part and with none, and reads it as the general
// decoder does.
func TestSizeFastPathPageRequest(t *testing.T) {
	with := strings.Replace(sizePageRequest, `"sweep":{}`, `"sweep":{},"reference":{"koa":"900","area_m2":"1.8"}`, 1)
	with = strings.Replace(with, `"k0":"0.05"`, `"k0":""`, 1)
	bare := `{"target_clearance":"250","qb":"300","qd":"500","flow":"cocurrent","qf":"","sieving":"","hct":"32","plasma_water":"","red_cell_water":"","k0":"","margin_percent":"","sweep":{}}`
	accents := strings.Replace(sizePageRequest, "Shelf A", "Filtre à fibres 1,4", 1) // a label beyond ASCII
	for _, r := range []string{sizePageRequest, with, bare, accents, " \n" + sizePageRequest + "\t", `{"target_clearance":250,"qb":300,"qd":500,"sweep":{"points":21,"koa_max":"4000"}}`} {
		if !sameSizeBothWays(t, []byte(r)) {
			t.Errorf("decodeFast declined %s: the fast path is not used", r)
		}
	}
	var fast, general SizeRequest
	if !fast.decodeFast([]byte(with)) {
		t.Fatal("declined")
	}
	if err := decode([]byte(with), &general); err != nil {
		t.Fatal(err)
	}
	if !sameRequest(fast, general) {
		t.Errorf("decodeFast read\n%+v\nthe general decoder\n%+v", fast, general)
	}
}

// sameRequest compares two size requests member by member, the numbers
// by the bytes they hold.
func sameRequest(a, b SizeRequest) bool {
	num := func(x, y Number) bool { return bytes.Equal(x.raw, y.raw) && (x.raw == nil) == (y.raw == nil) }
	nums := func(x, y []Number) bool { return slices.EqualFunc(x, y, num) && (x == nil) == (y == nil) }
	filter := func(x, y FilterRequest) bool {
		return x.Label == y.Label && num(x.KoA, y.KoA) && num(x.AreaM2, y.AreaM2)
	}
	return num(a.TargetClearance, b.TargetClearance) && num(a.QB, b.QB) && num(a.QD, b.QD) &&
		num(a.QF, b.QF) && num(a.Sieving, b.Sieving) && num(a.Hct, b.Hct) && num(a.PlasmaWater, b.PlasmaWater) &&
		num(a.RedCellWater, b.RedCellWater) && a.Flow == b.Flow && num(a.K0, b.K0) && num(a.MarginPercent, b.MarginPercent) &&
		(a.Reference == nil) == (b.Reference == nil) && (a.Reference == nil || num(a.Reference.KoA, b.Reference.KoA) && num(a.Reference.AreaM2, b.Reference.AreaM2)) &&
		(a.CurrentFilter == nil) == (b.CurrentFilter == nil) && (a.CurrentFilter == nil || filter(*a.CurrentFilter, *b.CurrentFilter)) &&
		nums(a.QDRange, b.QDRange) && nums(a.QBRange, b.QBRange) &&
		slices.EqualFunc(a.Filters, b.Filters, filter) && (a.Filters == nil) == (b.Filters == nil) &&
		(a.Sweep == nil) == (b.Sweep == nil) && (a.Sweep == nil || num(a.Sweep.Points, b.Sweep.Points) && num(a.Sweep.KoAMax, b.Sweep.KoAMax))
}

// TestSizeFastPathCatalogue sends the bad-input catalogue's size section
// (testdata/bad-input.json: the cases of every entry and size's own, its
// valid request and examples) and sizeRequests both ways.
func TestSizeFastPathCatalogue(t *testing.T) {
	bodies := catalogueBodies(t, "size")
	for _, r := range sizeRequests() {
		bodies = append(bodies, []byte(r))
	}
	bodiesBothWays(t, bodies, sameSizeBothWays)
}

// TestSizeFastPathRandom sends seeded random size requests both ways:
// mostly the page's shape (with valid and bad values alike), and every
// kind the fast decoder must leave to the general one.
func TestSizeFastPathRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 19))
	randomBothWays(t, 4000, func() []byte { return randomSizeRequest(rng) }, sameSizeBothWays)
}

// FuzzSizeFastPath: whatever the request, both decoders give the same
// bytes.
func FuzzSizeFastPath(f *testing.F) {
	rng := rand.New(rand.NewPCG(23, 29))
	for range 40 {
		f.Add(randomSizeRequest(rng))
	}
	f.Add([]byte(sizePageRequest))
	f.Fuzz(func(t *testing.T, request []byte) {
		sameSizeBothWays(t, request)
	})
}

// randomSizeRequest builds a size request of the page's shape from random
// members, values and white space, and now and then breaks it: a key
// repeated, unknown, escaped or in capitals, a value of another type, an
// array empty or of one or three, a label that is not plain ASCII, the
// text cut short or followed by more.
func randomSizeRequest(rng *rand.Rand) []byte {
	space := func() string {
		if rng.IntN(30) != 0 {
			return ""
		}
		if rng.IntN(20) == 0 {
			return []string{"\v", "\u00a0"}[rng.IntN(2)] // not JSON's
		}
		return []string{" ", "\t", "\n", "\r\n  "}[rng.IntN(4)]
	}
	// value is a number's value at about scale.
	value := func(scale float64) string {
		if rng.IntN(6) == 0 {
			return `""`
		}
		k := randomNames[rng.IntN(len(randomNames))]
		v := randomValue(rng, slices.Index(randomNames, k))
		if rng.IntN(12) != 0 { // mostly plausible magnitudes, as strings
			v = `"` + strconv.FormatFloat(math.Round(rng.Float64()*scale*10)/10, 'g', -1, 64) + `"`
		}
		return v
	}
	object := func(members ...string) string { // name, value, name, value...
		var parts []string
		for i := 0; i < len(members); i += 2 {
			if rng.IntN(12) == 0 {
				continue // left out
			}
			name := members[i]
			switch rng.IntN(600) {
			case 0:
				name = strings.ToUpper(name)
			case 1:
				name += "x"
			case 2:
				name = `k\u0030`
			}
			parts = append(parts, `"`+name+`"`+space()+":"+space()+members[i+1])
			if rng.IntN(600) == 0 { // given twice
				parts = append(parts, `"`+name+`":`+members[i+1])
			}
		}
		return "{" + space() + strings.Join(parts, space()+","+space()) + space() + "}"
	}
	array := func(n int, elem func() string) string {
		parts := make([]string, n)
		for i := range parts {
			parts[i] = elem()
		}
		return "[" + space() + strings.Join(parts, ","+space()) + space() + "]"
	}
	odd := func(v string) string { // now and then a value of another type
		if rng.IntN(150) == 0 {
			return []string{"null", "true", "{}", "[]", "1", `"x"`, `{"a":1}`, "[null]"}[rng.IntN(8)]
		}
		return v
	}
	label := func() string {
		if rng.IntN(20) == 0 { // escapes, control characters, bytes that are not UTF-8
			return `"` + []string{`x\"y`, `\u00e0`, "tab\there", "\xff", "a\xc3", "\xed\xa0\x80", "\xf4\x90\x80\x80"}[rng.IntN(7)] + `"`
		}
		if rng.IntN(10) == 0 { // letters beyond ASCII, a character JSON need not escape
			return `"` + []string{"Größe", "Filtre à fibres", "\x7f", "水", "😀 F-2"}[rng.IntN(5)] + `"`
		}
		return `"` + []string{"Shelf A", "B-2", "", "large 1.8"}[rng.IntN(4)] + `"`
	}
	filter := func() string {
		return odd(object("label", label(), "area_m2", value(2.5), "koa", value(1500)))
	}
	pairLen := func() int { return []int{2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 0, 1, 3}[rng.IntN(15)] }
	members := []string{
		"target_clearance", value(320), "qb", value(500), "qd", value(800),
		"flow", odd(`"` + []string{"countercurrent", "cocurrent", "counter", ""}[rng.IntN(4)] + `"`),
		"qf", value(20), "sieving", value(1), "hct", value(45), "plasma_water", value(1), "red_cell_water", value(1),
		"k0", value(0.08), "margin_percent", value(30),
		"sweep", odd([]string{"{}", "{}", "{}", object("points", value(200), "koa_max", value(5000))}[rng.IntN(4)]),
	}
	if rng.IntN(3) == 0 {
		members = append(members, "reference", odd(object("koa", value(1500), "area_m2", value(2.5))))
	}
	if rng.IntN(3) != 0 {
		members = append(members, "current_filter", filter())
	}
	for _, name := range []string{"qd_range", "qb_range"} {
		if rng.IntN(3) != 0 {
			members = append(members, name, odd(array(pairLen(), func() string { return value(900) })))
		}
	}
	if rng.IntN(4) != 0 {
		members = append(members, "filters", odd(array(rng.IntN(5), filter)))
	}
	if rng.IntN(8) == 0 { // another order
		pairs := len(members) / 2
		for i := range pairs {
			j := rng.IntN(pairs)
			members[2*i], members[2*j] = members[2*j], members[2*i]
			members[2*i+1], members[2*j+1] = members[2*j+1], members[2*i+1]
		}
	}
	s := space() + object(members...) + space()
	switch rng.IntN(40) {
	case 0:
		s = s[:rng.IntN(len(s)+1)]
	case 1:
		s += []string{"}", "x", "{}", " 1", ","}[rng.IntN(5)]
	}
	return []byte(s)
}

// TestSizeDecodeFastMembers: the names decodeFast reads are the JSON
// members of the request types, found through reflection (SizeRequest
// with Conditions' members, FilterRequest, ReferenceRequest,
// SizeSweepRequest), so that a member added to them is not left out of
// the fast decoder unseen (requests with it would be declined: correct,
// but slow); and a request with every member, each a value of its own,
// is read as the general decoder reads it.
func TestSizeDecodeFastMembers(t *testing.T) {
	var names func(typ reflect.Type) []string
	names = func(typ reflect.Type) []string {
		var out []string
		for i := range typ.NumField() {
			f := typ.Field(i)
			name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
			if f.Anonymous && name == "" {
				out = append(out, names(f.Type)...)
				continue
			}
			out = append(out, name)
		}
		slices.Sort(out)
		return out
	}
	sorted := func(s []string) []string { return slices.Sorted(slices.Values(s)) }
	for _, c := range []struct {
		typ  reflect.Type
		flat []string
	}{
		{reflect.TypeFor[SizeRequest](), sizeFlat[:]},
		{reflect.TypeFor[FilterRequest](), filterFlat[:]},
		{reflect.TypeFor[ReferenceRequest](), referenceFlat[:]},
		{reflect.TypeFor[SizeSweepRequest](), sweepFlat[:]},
	} {
		if got, want := sorted(c.flat), names(c.typ); !slices.Equal(got, want) {
			t.Errorf("decodeFast reads %v of a %v, whose members are %v", got, c.typ, want)
		}
	}
	for k, name := range map[int]string{sizeFlow: "flow", sizeSweep: "sweep", sizeReference: "reference", sizeCurrentFilter: "current_filter",
		sizeQDRange: "qd_range", sizeQBRange: "qb_range", sizeFilters: "filters"} {
		if sizeFlat[k] != name {
			t.Errorf("sizeFlat[%d] is %q, decodeFast reads it as %q", k, sizeFlat[k], name)
		}
	}
	all := `{"target_clearance":"1.5","qb":"2.5","qd":"3.5","flow":"cocurrent","qf":"4.5","sieving":"5.5","hct":"6.5",` +
		`"plasma_water":"7.5","red_cell_water":"8.5","k0":"9.5","margin_percent":"10.5","sweep":{"points":"11","koa_max":"12.5"},` +
		`"reference":{"koa":"13.5","area_m2":"14.5"},"current_filter":{"label":"in use","area_m2":"15.5","koa":"16.5"},` +
		`"qd_range":["17.5","18.5"],"qb_range":["19.5","20.5"],"filters":[{"label":"A","area_m2":"21.5","koa":"22.5"},{"label":"B","area_m2":"23.5","koa":"24.5"}]}`
	var fast, general SizeRequest
	if !fast.decodeFast([]byte(all)) {
		t.Fatalf("decodeFast declined %s", all)
	}
	if err := decode([]byte(all), &general); err != nil {
		t.Fatal(err)
	}
	if !sameRequest(fast, general) {
		t.Errorf("decodeFast(%s) read\n%+v\nthe general decoder\n%+v", all, fast, general)
	}
}
