package api

import (
	"bytes"
	stdjson "encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/goccy/go-json"

	"clearkit/core"
	"clearkit/internal/badinput"
)

// The fast path of compare (fastpath.go) must answer exactly as the
// general path does, byte for byte, for every request: these tests send
// the same request both ways (compare(dst, storage, request, packed, true) and
// compare(nil, nil, request, packed, false)), as Compare and as ComparePacked;
// the fast way appends to a dst that holds bytes already, as the bridge's
// reused buffer does (after its [:0], with the last answer beyond len),
// and computes the packed series into storage that holds other values.

// pageRequest is what the compare view sends: the form's texts as typed,
// the empty conditions included (site/js/compare-view.js; the same request
// as wasm/bench/bench.mjs).
const pageRequest = `{"qb":"300","qd":"500","koa":"800","cbi":"","cdi":"","qf":"","sieving":"","hct":"","plasma_water":"","red_cell_water":""}`

// sameBothWays fails t unless request gets the same answer both ways, and
// reports whether the fast decoder took it.
func sameBothWays(t testing.TB, request []byte) bool {
	t.Helper()
	for _, packed := range []bool{false, true} {
		dst := append(make([]byte, 0, 2048), "kept"...)
		// storage for the packed series as a caller that keeps it has it:
		// with the values of some earlier answer (here NaN) in it.
		storage := slices.Repeat([]float64{math.NaN()}, len(core.PackedSeries)*core.MaxSweepPoints)
		fast, fastSeries := compare(dst, storage, request, packed, true)
		general, generalSeries := compare(nil, nil, request, packed, false)
		if !bytes.HasPrefix(fast, dst) {
			t.Errorf("compare(%q, packed %v) did not keep dst %q: %.20s", clip(string(request)), packed, dst, fast)
		}
		fast = fast[len(dst):]
		if !bytes.Equal(fast, general) || !slices.Equal(fastSeries, generalSeries) {
			t.Errorf("compare(%q, packed %v):\nfast path    %s, %d series values\ngeneral path %s, %d series values", clip(string(request)), packed, fast, len(fastSeries), general, len(generalSeries))
		}
	}
	if !reflect.ValueOf(emptySweep).IsZero() {
		t.Fatalf("compare(%q) wrote into emptySweep, which every flat sweep {} shares: %+v", clip(string(request)), emptySweep)
	}
	var req CompareRequest
	return req.decodeFast(request)
}

func TestFastPathPageRequest(t *testing.T) {
	chart := strings.TrimSuffix(pageRequest, "}") + `,"sweep":{}}` // with the chart series
	for _, r := range []string{pageRequest, routineRequestForFastPath, " \t\r\n" + pageRequest + "\n", chart} {
		if !sameBothWays(t, []byte(r)) {
			t.Errorf("decodeFast(%s) declined the page's request: the fast path is not used", r)
		}
	}
}

const routineRequestForFastPath = `{"qb":300,"qd":500,"koa":800}`

// TestFastPathCatalogue sends the bad-input catalogue (testdata/bad-input.json:
// the cases of every entry and compare's own, its valid request and
// examples) both ways.
func TestFastPathCatalogue(t *testing.T) {
	bodiesBothWays(t, catalogueBodies(t, "compare"), sameBothWays)
}

// bodiesBothWays sends every body both ways with same, and asks that the
// fast decoder took at least a third of them. Not a speed check: a guard
// that the comparison covers the fast path at all (most of the
// catalogue's cases are the page's requests with one bad value).
func bodiesBothWays(t *testing.T, bodies [][]byte, same func(testing.TB, []byte) bool) {
	t.Helper()
	fast := 0
	for _, b := range bodies {
		if same(t, b) {
			fast++
		}
	}
	if fast < len(bodies)/3 {
		t.Errorf("the fast decoder took %d of %d requests, want at least a third", fast, len(bodies))
	}
	t.Logf("%d requests, %d by the fast decoder", len(bodies), fast)
}

// catalogueBodies returns the request bodies of the bad-input catalogue
// (testdata/bad-input.json) for entry: its valid request, its examples,
// and the cases of every entry and its own.
func catalogueBodies(t *testing.T, entry string) [][]byte {
	t.Helper()
	c, err := badinput.Load()
	if err != nil {
		t.Fatal(err)
	}
	section := c.Entries[entry]
	bodies := [][]byte{section.Valid}
	for _, ex := range section.Examples {
		bodies = append(bodies, ex)
	}
	cases, err := c.Cases(entry)
	if err != nil {
		t.Fatal(err)
	}
	for _, cs := range cases {
		bodies = append(bodies, cs.Body)
	}
	return bodies
}

// TestFastPathCorpora sends the committed fuzz inputs of every target of
// this package (testdata/fuzz/*) both ways.
func TestFastPathCorpora(t *testing.T) {
	files, err := filepath.Glob("testdata/fuzz/*/*")
	if err != nil || len(files) == 0 {
		t.Fatalf("no fuzz corpus files (%v)", err)
	}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		for _, line := range strings.Split(string(data), "\n") {
			if q, ok := strings.CutPrefix(line, "[]byte("); ok {
				s, err := strconv.Unquote(strings.TrimSuffix(q, ")"))
				if err != nil {
					t.Fatalf("%s: %v", f, err)
				}
				sameBothWays(t, []byte(s))
			}
		}
	}
}

// TestFastPathRandom sends seeded random requests both ways: mostly what
// the fast path reads (valid and bad values alike), and every kind of
// request it must leave to the general path.
func TestFastPathRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	randomBothWays(t, 20000, func() []byte { return randomCompareRequest(rng) }, sameBothWays)
}

// randomBothWays sends n requests from next (a tenth of them with -short)
// both ways through same, which reports whether the fast decoder took the
// request, and wants it to have taken between a quarter and nine tenths:
// enough that the comparison covers the fast path, and few enough that it
// covers what the fast path must decline.
func randomBothWays(t *testing.T, n int, next func() []byte, same func(testing.TB, []byte) bool) {
	t.Helper()
	if testing.Short() {
		n /= 10
	}
	fast := 0
	for range n {
		if same(t, next()) {
			fast++
		}
		if t.Failed() {
			return
		}
	}
	if fast < n/4 || fast > n*9/10 {
		t.Errorf("the fast decoder took %d of %d random requests, want between a quarter and nine tenths", fast, n)
	}
	t.Logf("%d requests, %d by the fast decoder", n, fast)
}

// FuzzFastPath: whatever the request, both paths give the same bytes.
func FuzzFastPath(f *testing.F) {
	rng := rand.New(rand.NewPCG(3, 5))
	for range 50 {
		f.Add(randomCompareRequest(rng))
	}
	f.Add([]byte(pageRequest))
	f.Add([]byte(strings.TrimSuffix(pageRequest, "}") + `,"sweep":{}}`))
	f.Add([]byte(`{"qb":300,"qd":500,"koa":800,"hct":32,"qf":10,"sieving":0.6}`))
	f.Fuzz(func(t *testing.T, request []byte) {
		sameBothWays(t, request)
	})
}

var randomNames = []string{"qb", "qd", "koa", "cbi", "cdi", "hct", "plasma_water", "red_cell_water", "qf", "sieving"}

// randomCompareRequest builds an object of some of compare's fields with
// values that are mostly plausible, sometimes not, in JSON that is mostly
// what the page sends, sometimes not.
func randomCompareRequest(rng *rand.Rand) []byte {
	space := func() string {
		if rng.IntN(40) != 0 {
			return ""
		}
		return []string{" ", "\t", "\n", "\r\n  ", "\v", "\f", "\u00a0"}[rng.IntN(7)]
	}
	var b strings.Builder
	b.WriteString(space() + "{" + space())
	names := rng.Perm(len(randomNames))
	if rng.IntN(4) != 0 { // mostly the required fields first
		names = append([]int{0, 1, 2}, slicesWithout(names, 0, 1, 2)...)
		names = names[:3+rng.IntN(len(names)-2)]
	} else {
		names = names[:rng.IntN(len(names)+1)]
	}
	if len(names) > 0 && rng.IntN(20) == 0 { // a field given twice
		names = append(names, names[rng.IntN(len(names))])
	}
	for j, k := range names {
		if j > 0 {
			b.WriteString(space() + "," + space())
		}
		name := randomNames[k]
		switch rng.IntN(80) {
		case 0:
			name = strings.ToUpper(name)
		case 1:
			name += "x"
		case 2:
			name = `q\u0062`
		case 3:
			name = "sweep"
		}
		b.WriteString(`"` + name + `"` + space() + ":" + space() + randomValue(rng, k))
	}
	b.WriteString(space() + "}" + space())
	s := b.String()
	switch rng.IntN(30) {
	case 0:
		s = s[:rng.IntN(len(s)+1)]
	case 1:
		s += []string{"}", "x", "{}", " 1", ","}[rng.IntN(5)]
	case 2:
		s = strings.Replace(s, "}", `,"sweep":{"points":3}}`, 1)
	case 3, 4, 5:
		// the page's chart request, or near it
		s = strings.Replace(s, "}", `,"sweep":`+[]string{"{}", "{ }", "{\n}", "null", "[]", "{}}"}[rng.IntN(6)]+"}", 1)
	}
	return []byte(s)
}

// slicesWithout returns s without the values drop.
func slicesWithout(s []int, drop ...int) []int {
	var out []int
	for _, v := range s {
		if !slices.Contains(drop, v) {
			out = append(out, v)
		}
	}
	return out
}

// randomValue is a value for field k of randomNames.
func randomValue(rng *rand.Rand, k int) string {
	// plausible magnitudes: flows, KoA, concentrations, haematocrit, water
	// fractions, QF, sieving
	scale := []float64{600, 1000, 2000, 10, 2, 60, 1, 1, 30, 1}[k]
	x := rng.Float64() * scale
	switch rng.IntN(6) {
	case 0:
		x = math.Round(x)
	case 1:
		x = math.Round(x*10) / 10
	}
	num := strconv.FormatFloat(x, 'g', -1, 64)
	switch rng.IntN(24) {
	case 0:
		return `""`
	case 1:
		return "null"
	case 2:
		return `"` + strings.Replace(num, ".", ",", 1) + `"`
	case 3:
		return `" ` + num + ` "`
	case 4:
		return []string{"true", "false", "{}", "[]", "[1,2]", `{"a":1}`}[rng.IntN(6)]
	case 5:
		return []string{`"NaN"`, `"Infinity"`, `"1e999"`, `"+5"`, `".5"`, `"5."`, `"abc"`, `"\u0033"`, `"3\"`, "1e999", "-0", "-5", "01", "1.", "1e", "-", "0.0", "2E+2", `"é"`, `"` + "\x7f" + `"`}[rng.IntN(20)]
	case 6, 7, 8:
		return num
	}
	return `"` + num + `"`
}

// TestDecodeFastMembers gives each member of compareFlat alone (with the
// sweep) a value of its own and wants it in the request field whose JSON
// name it is, found through reflection: decodeFast's list of fields must
// follow compareFlat's names, and name every member of the request type.
func TestDecodeFastMembers(t *testing.T) {
	fields := map[string]reflect.Value{}
	var r CompareRequest
	var walk func(v reflect.Value)
	walk = func(v reflect.Value) {
		for i := range v.NumField() {
			f := v.Type().Field(i)
			name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
			if f.Anonymous && name == "" {
				walk(v.Field(i))
				continue
			}
			fields[name] = v.Field(i)
		}
	}
	walk(reflect.ValueOf(&r).Elem())
	if len(fields) != len(compareFlat) {
		t.Errorf("CompareRequest has %d members, compareFlat names %d: %q", len(fields), len(compareFlat), compareFlat)
	}
	// Every member at once, in compareFlat's order, as the page writes them
	// (each key found as the one expected next).
	var all []string
	for k, name := range compareFlat[:len(compareFlat)-1] {
		all = append(all, fmt.Sprintf(`%q:"%d.5"`, name, k+1))
	}
	request := "{" + strings.Join(all, ",") + `,"sweep":{}}`
	r = CompareRequest{}
	if !r.decodeFast([]byte(request)) || r.Sweep == nil {
		t.Fatalf("decodeFast(%s) declined, or lost the sweep", request)
	}
	for k, name := range compareFlat[:len(compareFlat)-1] {
		if got, want := string(fields[name].Addr().Interface().(*Number).raw), fmt.Sprintf(`"%d.5"`, k+1); got != want {
			t.Errorf("decodeFast(%s): %s = %s, want %s", request, name, got, want)
		}
	}
	for k, name := range compareFlat[:len(compareFlat)-1] {
		value := fmt.Sprintf(`"%d.5"`, k+1)
		request := fmt.Sprintf(`{"sweep":{},%q:%s}`, name, value)
		r = CompareRequest{}
		if !r.decodeFast([]byte(request)) {
			t.Fatalf("decodeFast(%s) declined", request)
		}
		field, ok := fields[name]
		if !ok {
			t.Fatalf("compareFlat's %q is no member of CompareRequest", name)
		}
		if got := string(field.Addr().Interface().(*Number).raw); got != value {
			t.Errorf("decodeFast(%s): %s = %s, want %s", request, name, got, value)
		}
		if r.Sweep == nil {
			t.Errorf("decodeFast(%s): no sweep", request)
		}
	}
}

// TestAppendCompareMembers fills every member of an answer with a value
// that is not zero, through reflection, so that a member added to the
// answer's types shows here even when no request sets it, and wants the
// general encoder's bytes from appendCompare. Sweeps is left nil (an
// answer with sweeps goes to the general encoder), and the packing is
// compare's.
func TestAppendCompareMembers(t *testing.T) {
	if got := jsonMembers(reflect.TypeFor[CompareResponse](), ""); !slices.Equal(got, answerMembers) {
		t.Fatalf("the answer's members are %q,\nappendCompare writes %q (answerMembers): add the new member to both, in fastpath.go", got, answerMembers)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for i := range 200 {
		var r CompareResponse
		fill(reflect.ValueOf(&r).Elem(), rng, i%2 == 0)
		r.Sweeps = nil
		if p := r.Packed; p != nil { // compare's packing (another is declined: below)
			p.Into, p.Lengths, p.Points = "sweeps", nil, max(p.Points, 1)
		}
		if i%3 == 0 { // the values the answer repeats, which numberWriter copies
			for _, p := range []*core.Performance{&r.Countercurrent, &r.Cocurrent} {
				p.Dialysance, p.TransferRate, p.DialysanceCeiling = p.Clearance, p.Clearance, p.ClearanceCeiling
			}
		}
		want, err := json.Marshal(&r)
		if err != nil {
			t.Fatal(err)
		}
		got, ok := appendCompare(nil, &r)
		if !ok || !bytes.Equal(got, want) {
			t.Fatalf("appendCompare = %s, %v,\nwant %s (a member added to the answer must be added to appendCompare in fastpath.go)", got, ok, want)
		}
	}
	// An answer with sweeps, or a number that is not finite, is declined,
	// a repeated one too.
	for _, x := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		r := CompareResponse{OK: true}
		r.Cocurrent.LogMeanDifference = x
		if _, ok := appendCompare(nil, &r); ok {
			t.Errorf("appendCompare with log_mean_difference %g: accepted, want declined", x)
		}
		r = CompareResponse{OK: true}
		r.Countercurrent.Clearance, r.Countercurrent.Dialysance = x, x
		if _, ok := appendCompare(nil, &r); ok {
			t.Errorf("appendCompare with clearance and dialysance %g: accepted, want declined", x)
		}
	}
	if _, ok := appendCompare(nil, &CompareResponse{OK: true, Sweeps: &core.Sweeps{}}); ok {
		t.Errorf("appendCompare with sweeps: accepted, want declined")
	}
	for _, name := range []string{`a"b`, `a\b`, "a<b", "a&b", "é", "a\nb", ""} {
		r := CompareResponse{OK: true, Packed: &Packing{Into: "sweeps", Points: 3, Series: []string{"qb.x", name}}}
		want, _ := json.Marshal(&r)
		if got, ok := appendCompare(nil, &r); ok && !bytes.Equal(got, want) {
			t.Errorf("appendCompare with the series name %q = %s, want %s or declined", name, got, want)
		}
	}
	for _, series := range [][]string{nil, {}, packedSeries} {
		r := CompareResponse{OK: true, Packed: &Packing{Into: "sweeps", Points: 101, Series: series}}
		want, _ := json.Marshal(&r)
		if got, ok := appendCompare(nil, &r); !ok || !bytes.Equal(got, want) {
			t.Errorf("appendCompare with the series %q = %s, %v, want %s", series, got, ok, want)
		}
	}
	// Another entry's packing (size's: series of their own lengths, into
	// its "sweep") is left to the general encoder, which writes it whole.
	for _, p := range []Packing{
		{Into: "sweep", Lengths: []int{3, 3}, Series: []string{"a.b", "c.d"}},
		{Into: "sweeps", Lengths: []int{3}, Series: []string{"qb.x"}},
		{Into: "sweeps", Series: []string{"qb.x"}},
	} {
		if got, ok := appendCompare(nil, &CompareResponse{OK: true, Packed: &p}); ok {
			t.Errorf("appendCompare with the packing %+v = %s, want declined", p, got)
		}
	}
}

// fill sets every settable value in v: numbers to random values (repeated
// now and then, for numberWriter's copies), booleans to true, pointers to a
// filled value when withPointers, strings and lists to something.
func fill(v reflect.Value, rng *rand.Rand, withPointers bool) {
	switch v.Kind() {
	case reflect.Float64, reflect.Float32:
		v.SetFloat(randomFloat(rng))
	case reflect.Int, reflect.Int64, reflect.Int32:
		v.SetInt(rng.Int64N(1000) + 1)
	case reflect.Bool:
		v.SetBool(true)
	case reflect.String:
		v.SetString("x")
	case reflect.Pointer:
		if withPointers {
			v.Set(reflect.New(v.Type().Elem()))
			fill(v.Elem(), rng, withPointers)
		}
	case reflect.Struct:
		for i := range v.NumField() {
			if v.Type().Field(i).IsExported() {
				fill(v.Field(i), rng, withPointers)
			}
		}
	case reflect.Slice:
		v.Set(reflect.MakeSlice(v.Type(), 2, 2))
		for i := range 2 {
			fill(v.Index(i), rng, withPointers)
		}
	case reflect.Map:
		v.Set(reflect.MakeMap(v.Type()))
	}
}

// randomFloat is a finite float64: any bit pattern, or a short decimal, an
// integer, zero or a value at an edge of the formats.
func randomFloat(rng *rand.Rand) float64 {
	switch rng.IntN(8) {
	case 0:
		return math.Round(rng.NormFloat64() * 1000)
	case 1:
		return math.Round(rng.NormFloat64()*1e4) / 100
	case 2:
		return floatEdges[rng.IntN(len(floatEdges))]
	case 3:
		return float64(rng.Int64N(1<<54) - 1<<53) // integers near 2^53 as well
	case 4:
		return math.Pow(10, float64(rng.IntN(60)-30)) * float64(rng.IntN(10)+1)
	}
	for {
		if x := math.Float64frombits(rng.Uint64()); !math.IsInf(x, 0) && !math.IsNaN(x) {
			return x
		}
	}
}

// floatEdges: zeros, the integers about 2^53, the powers of ten about the
// changes of format (1e-6, 1e21), the subnormals and the largest and
// smallest floats.
var floatEdges = []float64{
	0, math.Copysign(0, -1), 1, -1, 0.5, 0.1, 0.2, 0.3, 1.0 / 3, 2.0 / 3,
	1 << 53, 1<<53 - 1, 1<<53 + 2, -(1 << 53), -(1<<53 - 1), 1 << 63, 1 << 64, 1e15, 1e16, 1e17, 123456789012345680,
	1e-6, math.Nextafter(1e-6, 0), math.Nextafter(1e-6, 1), 1e-7, 9.999999999999999e-7, 1e-5,
	1e20, 1e21, math.Nextafter(1e21, 0), math.Nextafter(1e21, 2e21), 1e22, 1e23, 9.999999999999999e22,
	math.MaxFloat64, -math.MaxFloat64, math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64,
	2 * math.SmallestNonzeroFloat64, 0x1p-1022, math.Nextafter(0x1p-1022, 0), 0x1.fffffffffffffp-1022,
	5e-324, 1e-323, 2.2250738585072014e-308, 1.7976931348623157e308, 4.9406564584124654e-324,
	0x1p-1074 * 3, 1e308, 1e-308, 1e-320, 1e-100, 1e100, 1e300,
	247.95456556655517, 2.6666666666666665, 0.6, 187.5,
}

// floatCount is how many random floats a test checks: n, short under
// -short, or CLEARKIT_FLOATS when set.
func floatCount(t *testing.T, n, short int) int {
	t.Helper()
	if s := os.Getenv("CLEARKIT_FLOATS"); s != "" {
		v, err := strconv.Atoi(s)
		if err != nil {
			t.Fatalf("CLEARKIT_FLOATS=%q: %v", s, err)
		}
		return v
	}
	if testing.Short() {
		return short
	}
	return n
}

// TestAppendJSONFloat checks appendJSONFloat against the general encoder
// (goccy/go-json) and against encoding/json, the reference for how JSON
// writes a float64: on the edge values, every power of ten and of two and
// their neighbours, and random values (any bit pattern, short decimals,
// integers; 300 000 by default, CLEARKIT_FLOATS when set, such as
// CLEARKIT_FLOATS=50000000 for a long run).
func TestAppendJSONFloat(t *testing.T) {
	n := floatCount(t, 300_000, 20_000)
	check := func(x float64) bool {
		if math.IsInf(x, 0) {
			return true // past the largest float
		}
		got := appendJSONFloat(nil, x, new(bool))
		want, err := json.Marshal(x)
		if err != nil {
			t.Fatalf("json.Marshal(%v): %v", x, err)
		}
		std, err := stdjson.Marshal(x)
		if err != nil {
			t.Fatalf("encoding/json Marshal(%v): %v", x, err)
		}
		if !bytes.Equal(got, want) || !bytes.Equal(got, std) {
			t.Errorf("appendJSONFloat(%b) = %s, want %s (goccy/go-json), %s (encoding/json)", x, got, want, std)
			return false
		}
		return true
	}
	for _, x := range floatEdges {
		check(x)
		check(-x)
	}
	for e := -330; e <= 310; e++ { // every power of ten and its neighbours
		p, _ := strconv.ParseFloat(fmt.Sprintf("1e%d", e), 64)
		check(p)
		check(math.Nextafter(p, 0))
		check(math.Nextafter(p, math.Inf(1)))
	}
	for e := -1074; e <= 1023; e++ { // every power of two and its neighbours
		p := math.Ldexp(1, e)
		check(p)
		check(math.Nextafter(p, 0))
		check(math.Nextafter(p, math.Inf(1)))
	}
	rng := rand.New(rand.NewPCG(13, 17))
	for range n {
		if !check(randomFloat(rng)) && t.Failed() {
			return
		}
	}
}

// FuzzAppendJSONFloat: for every finite float64, appendJSONFloat writes
// what encoding/json writes.
func FuzzAppendJSONFloat(f *testing.F) {
	for _, x := range floatEdges {
		f.Add(math.Float64bits(x))
	}
	f.Fuzz(func(t *testing.T, bits uint64) {
		x := math.Float64frombits(bits)
		if math.IsInf(x, 0) || math.IsNaN(x) {
			return
		}
		got := appendJSONFloat(nil, x, new(bool))
		want, err := stdjson.Marshal(x)
		if err != nil || !bytes.Equal(got, want) {
			t.Errorf("appendJSONFloat(%b) = %s, want %s (encoding/json, %v)", x, got, want, err)
		}
	})
}

func BenchmarkCompareFastPath(b *testing.B) {
	for _, bc := range []struct{ name, request string }{{"page", pageRequest}, {"numbers", routineRequestForFastPath}} {
		for _, fast := range []bool{true, false} {
			b.Run(fmt.Sprintf("%s/fast=%v", bc.name, fast), func(b *testing.B) {
				req := []byte(bc.request)
				b.ReportAllocs()
				for b.Loop() {
					if resp, _ := compare(nil, nil, req, true, fast); !bytes.HasPrefix(resp, []byte(`{"ok":true`)) {
						b.Fatalf("compare(%s) = %s", req, resp)
					}
				}
			})
		}
	}
}

// TestAppendJSONFloatDigits checks appendJSONFloat against
// strconv.FormatFloat(x, 'f', -1, 64) over the range it writes itself (0,
// and 2^-6 <= |x| < 2^53, where JSON's form is 'f'), with every byte of
// the room it writes into set to 'x' first, so that a digit it did not
// write shows, and so does one it wrote past its answer: zero, integers
// and powers of two and their neighbours (where the lower halfway point
// moves), the ends of the range, and random significands, odd and even
// alike, over the range's exponents (a million by default,
// CLEARKIT_FLOATS when set).
func TestAppendJSONFloatDigits(t *testing.T) {
	n := floatCount(t, 1_000_000, 50_000)
	room := make([]byte, 128)
	check := func(x float64) bool {
		a := math.Abs(x)
		if a != 0 && (a < 0x1p-6 || a >= 0x1p53) {
			return true // appendOther's: TestAppendJSONFloat
		}
		for i := range room {
			room[i] = 'x'
		}
		finite := true
		got := string(appendJSONFloat(room[:0], x, &finite))
		if want := strconv.FormatFloat(x, 'f', -1, 64); got != want || !finite {
			t.Errorf("appendJSONFloat(%b) = %s (finite %v), want %s (strconv)", x, got, finite, want)
		}
		if past := bytes.TrimLeft(room[len(got):], "x"); len(past) > 0 {
			t.Errorf("appendJSONFloat(%b) = %s wrote past its answer: %q", x, got, room[len(got):len(room)-len(past)+1])
		}
		return !t.Failed()
	}
	for _, x := range floatEdges {
		check(x)
		check(-x)
	}
	for _, x := range []float64{0, 1, 9, 10, 99, 100, 999, 1000, 1e15 - 1, 1e15, 1<<32 - 1, 1 << 32, 1<<32 + 0.5, 1<<53 - 1} {
		check(x)
		check(-x)
	}
	for e := -6; e <= 52; e++ {
		p := math.Ldexp(1, e)
		// ties between two decimals of as many digits: p + 1/4 and p + 3/4
		// from 2^50, where 1/8 is the halfway distance
		for _, x := range []float64{p, math.Nextafter(p, 0), math.Nextafter(p, math.Inf(1)), p + 0.5, p - 0.5, p * 1.5, p + 0.25, p + 0.75, p + 1.25, p + 0.125, p + 0.375, p + 0.0625} {
			check(x)
			check(-x)
		}
	}
	rng := rand.New(rand.NewPCG(19, 23))
	for range n {
		// a random significand (its 52 bits drawn as they are, so that
		// odd ones, whose halfway points do not read back, come as often
		// as even ones) at an exponent of the range
		e := rng.IntN(59) - 6
		x := math.Ldexp(float64(1<<52|rng.Uint64()&(1<<52-1)), e-52)
		if rng.IntN(2) == 0 {
			x = -x
		}
		if !check(x) {
			return
		}
	}
}

// TestQuickNumber: quickNumber agrees with Number.parse wherever it reads
// a value, and reads the page's forms: every whole number to 10^6 and
// random ones to 15 digits, as JSON numbers and in strings, and nearby
// forms it must leave to parse (signs, points, commas, spaces, 16 digits,
// escapes, empty and null).
func TestQuickNumber(t *testing.T) {
	check := func(raw string, wantQuick bool) {
		v, given, ok := quickNumber([]byte(raw))
		if ok != wantQuick {
			t.Errorf("quickNumber(%s) ok = %v, want %v", raw, ok, wantQuick)
		}
		if !ok {
			return
		}
		n := Number{raw: []byte(raw)}
		pv, pgiven, err := n.parse("f")
		if err != nil || v != pv || given != pgiven || math.Signbit(v) != math.Signbit(pv) {
			t.Errorf("quickNumber(%s) = %v, %v; Number.parse gives %v, %v, %v", raw, v, given, pv, pgiven, err)
		}
	}
	for i := range 1_000_001 {
		s := strconv.Itoa(i)
		check(s, true)
		check(`"`+s+`"`, true)
	}
	rng := rand.New(rand.NewPCG(29, 31))
	for range 100_000 {
		s := strconv.FormatUint(rng.Uint64N(1e15), 10)
		check(s, true)
		check(`"`+s+`"`, true)
		check(`"0`+s+`"`, len(s) < 15)
	}
	check(`""`, true)
	check("999999999999999", true)
	check(`"000000000000000"`, true)
	for _, raw := range []string{"", "null", `"`, `"""`, "1000000000000000", `"1000000000000000"`, "-1", `"-1"`, `"+1"`, "1.5", `"1,5"`, `"1."`, `" 1"`, `"1 "`, "1e3", `"1e3"`, `"\u0031"`, `"a"`, "true", "[]", "{}"} {
		check(raw, false)
	}
}

// TestApplyDefaultConditions: Conditions.apply of absent conditions, or of
// the defaults written out, gives an aqueous solution without
// ultrafiltration at the default sieving, and every point operating
// accepts, at the bounds of core and between them, stays valid with them.
func TestApplyDefaultConditions(t *testing.T) {
	flows := []float64{core.MinFlow, 0.5, 1, 300, 499.99, 500, core.MaxFlow}
	koas := []float64{0, core.MinFlow, 800, core.MaxKoA}
	concentrations := []float64{0, 1e-30, 1, 1e3, core.MaxConcentration}
	n := func(x float64) Number { return Number{raw: strconv.AppendFloat(nil, x, 'g', -1, 64)} }
	checked := 0
	for _, qb := range flows {
		for _, qd := range flows {
			for _, koa := range koas {
				for _, cbi := range concentrations {
					for _, cdi := range concentrations {
						QB, QD, KoA, CBi, CDi := n(qb), n(qd), n(koa), n(cbi), n(cdi)
						op, err := operating(&QB, &QD, &KoA, &CBi, &CDi)
						if err != nil {
							continue
						}
						// absent, as the page sends them, and given as the defaults
						for _, c := range []Conditions{{}, {QF: n(0), Sieving: n(1)}, {QF: Number{raw: []byte(`"-0"`)}, Sieving: Number{raw: []byte(`"1,0"`)}}} {
							o := op
							if err := c.apply(&o); err != nil {
								t.Fatalf("apply to %+v: %v", o, err)
							}
							if o.Blood != nil || o.QF != 0 || o.Sieving != core.DefaultSieving {
								t.Fatalf("apply of the default conditions gave %+v", o)
							}
							if err := o.Validate(); err != nil {
								t.Errorf("apply to %+v passed a point that fails Validate: %v", o, err)
							}
						}
						checked++
					}
				}
			}
		}
	}
	if checked == 0 {
		t.Error("no point of the grid was valid")
	}
}

// TestFastPathAllocations: the page's request, answered into a buffer
// with room (as the bridge keeps one), allocates nothing, and the chart
// request with storage for its series only its 32-byte "packed" member
// (which the general encoder's copy of the answer takes along). Under
// WebAssembly an allocation costs a few microseconds once the collections
// it brings on are counted; an escape to the heap, such as a pointer into
// the request that escape analysis cannot follow, shows here.
func TestFastPathAllocations(t *testing.T) {
	buf := make([]byte, 0, 4096)
	storage := make([]float64, len(core.PackedSeries)*core.MaxSweepPoints)
	page := []byte(pageRequest)
	chart := []byte(strings.TrimSuffix(pageRequest, "}") + `,"sweep":{}}`)
	for _, c := range []struct {
		name string
		call func()
		want float64
	}{
		{"AppendCompare", func() { buf = AppendCompare(buf[:0], page) }, 0},
		{"ComparePacked", func() { buf, _ = ComparePacked(buf[:0], storage, chart) }, 1},
	} {
		if n := testing.AllocsPerRun(100, c.call); n != c.want {
			t.Errorf("%s of the page's request: %v allocations, want %v", c.name, n, c.want)
		}
	}
	// A failure is written into the buffer too, so that the buffer keeps
	// its room for the answers after it.
	failed := AppendCompare(buf[:0], []byte(`{"qb":"-1","qd":"500","koa":"800"}`))
	if !bytes.HasPrefix(failed, []byte(`{"ok":false`)) || &failed[0] != &buf[:1][0] {
		t.Errorf("a failure was not written into the buffer given: %s", failed)
	}
}
