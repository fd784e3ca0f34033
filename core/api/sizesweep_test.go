package api

import (
	"bytes"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/goccy/go-json"

	"clearkit/core"
)

// The size answer's series are written by appendSizeSweep (sizesweep.go)
// and must be the general encoder's bytes: these tests compare the two.

// TestSizeSweepWriter: appendSizeSweep writes every member of the sweep's
// types (found through reflection) as goccy/go-json does, for sweeps whose
// every number is random (fill), with and without the optional members,
// with nil, empty and filled series; it declines a number that is not
// finite, wherever it stands.
func TestSizeSweepWriter(t *testing.T) {
	if got := jsonMembers(reflect.TypeFor[core.SizeSweep](), ""); !slices.Equal(got, sizeSweepMembers) || !sizeSweepKnown {
		t.Fatalf("the sweep's members are %q,\nappendSizeSweep writes %q (sizeSweepMembers), and the sweep is the answer's last member: %v;\nadd a new member to both, in sizesweep.go", got, sizeSweepMembers, sizeSweepKnown)
	}
	rng := rand.New(rand.NewPCG(5, 8))
	check := func(s *core.SizeSweep) {
		t.Helper()
		want, err := json.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		if got, ok := appendSizeSweep([]byte("x"), s, false); !ok || !bytes.Equal(got[1:], want) || got[0] != 'x' {
			t.Fatalf("appendSizeSweep = %s, %v,\nwant x%s (goccy/go-json)", got, ok, want)
		}
		// Packed, the series are left out and the rest is as before.
		type ceiling struct {
			ClearanceCeiling float64 `json:"clearance_ceiling"`
		}
		want, err = json.Marshal(struct {
			KoAMax         float64  `json:"koa_max"`
			AreaM2Max      *float64 `json:"area_m2_max,omitempty"`
			Countercurrent ceiling  `json:"countercurrent"`
			Cocurrent      ceiling  `json:"cocurrent"`
		}{s.KoAMax, s.AreaM2Max, ceiling{s.Countercurrent.ClearanceCeiling}, ceiling{s.Cocurrent.ClearanceCeiling}})
		if err != nil {
			t.Fatal(err)
		}
		if got, ok := appendSizeSweep(nil, s, true); !ok || !bytes.Equal(got, want) {
			t.Fatalf("appendSizeSweep, packed = %s, %v,\nwant %s (goccy/go-json)", got, ok, want)
		}
		checkSizePacking(t, s)
	}
	for i := range 300 {
		var s core.SizeSweep
		fill(reflect.ValueOf(&s).Elem(), rng, i%2 == 0)
		check(&s)
		switch i % 3 {
		case 0:
			s.Countercurrent.AreaM2, s.Cocurrent.Target = nil, nil
		case 1:
			s.Cocurrent.AreaM2, s.Countercurrent.KoA = []float64{}, []float64{}
		default:
			s.Countercurrent.Target = make([]float64, 101)
			for k := range s.Countercurrent.Target {
				s.Countercurrent.Target[k] = randomFloat(rng)
			}
		}
		check(&s)
	}
	for _, x := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		for place := range 4 {
			s := core.SizeSweep{KoAMax: 2000, Countercurrent: core.SizeSeries{Target: []float64{1, 2}, KoA: []float64{3, 4}}}
			switch place {
			case 0:
				s.KoAMax = x
			case 1:
				s.Countercurrent.Target[1] = x
			case 2:
				s.Cocurrent.AreaM2 = []float64{x}
			default:
				s.Cocurrent.ClearanceCeiling = x
			}
			if _, ok := appendSizeSweep(nil, &s, false); ok {
				t.Errorf("appendSizeSweep with %v at place %d: accepted, want declined", x, place)
			}
		}
	}
}

// checkSizePacking: the packing of s (appendSizePacking, packSizeSweep)
// names every series s's JSON holds and no other, in the order the
// series are laid, each with its length and its values. A null series
// (nil) packs as an empty one.
func checkSizePacking(t *testing.T, s *core.SizeSweep) {
	t.Helper()
	whole, err := json.Marshal(s)
	if err != nil {
		t.Fatal(err)
	}
	var two struct {
		Countercurrent map[string]any `json:"countercurrent"`
		Cocurrent      map[string]any `json:"cocurrent"`
	}
	if err := json.Unmarshal(whole, &two); err != nil {
		t.Fatal(err)
	}
	sweep := map[string]map[string]any{"countercurrent": two.Countercurrent, "cocurrent": two.Cocurrent}
	var answer struct{ Packed Packing }
	if err := json.Unmarshal(append(appendSizePacking([]byte(`{"x":0`), s), '}'), &answer); err != nil {
		t.Fatal(err)
	}
	p := answer.Packed
	values := packSizeSweep(nil, s)
	if p.Into != "sweep" || len(p.Lengths) != len(p.Series) {
		t.Fatalf("packing %+v: want into sweep, a length per series", p)
	}
	var want []string
	for _, arr := range []string{"countercurrent", "cocurrent"} {
		for _, m := range []string{"target", "koa", "area_m2"} {
			if _, ok := sweep[arr][m]; ok {
				want = append(want, arr+"."+m)
			}
		}
	}
	if !slices.Equal(p.Series, want) {
		t.Fatalf("packing names %q, the JSON holds %q\n%s", p.Series, want, whole)
	}
	at := 0
	for k, name := range p.Series {
		arr, m, _ := strings.Cut(name, ".")
		list, _ := sweep[arr][m].([]any)
		if p.Lengths[k] != len(list) || at+len(list) > len(values) {
			t.Fatalf("%s: packed length %d, the JSON's %d (%d values in all)", name, p.Lengths[k], len(list), len(values))
		}
		for i, v := range list {
			if values[at+i] != v.(float64) {
				t.Fatalf("%s[%d]: packed %v, the JSON's %v", name, i, values[at+i], v)
			}
		}
		at += len(list)
	}
	if at != len(values) {
		t.Fatalf("%d values packed, the series hold %d", len(values), at)
	}
}

// sizeRequests are size requests with chart series in their variants (K0
// given, from a reference filter or absent, so with and without areas;
// other points and tops of the axis; whole blood and ultrafiltration;
// co-current; a target near the ceiling, where points are left out), and
// some without series or in error.
func sizeRequests() []string {
	var requests []string
	for _, base := range []string{
		`"target_clearance":250,"qb":300,"qd":500`,
		`"target_clearance":250,"qb":300,"qd":500,"k0":0.05`,
		`"target_clearance":"180,5","qb":"300","qd":"500","reference":{"koa":900,"area_m2":1.8},"flow":"cocurrent"`,
		`"target_clearance":299.9,"qb":300,"qd":800,"k0":0.06`,
		`"target_clearance":200,"qb":350,"qd":600,"hct":32,"qf":12,"sieving":0.9,"k0":0.05`,
		`"target_clearance":120,"qb":150,"qd":150`,
	} {
		for _, sweep := range []string{``, `,"sweep":{}`, `,"sweep":{"points":2}`, `,"sweep":{"points":7,"koa_max":1e4}`, `,"sweep":{"points":1001}`} {
			requests = append(requests, "{"+base+sweep+"}")
		}
	}
	return append(requests,
		`{"target_clearance":240,"qb":300,"qd":500,"k0":0.05,"margin_percent":5,"filters":[{"label":"small","area_m2":1.2},{"label":"large","koa":1200}],"current_filter":{"area_m2":1.5},"qd_range":[300,800],"sweep":{}}`,
		`{"target_clearance":400,"qb":300,"qd":500,"sweep":{}}`, `{"qb":300,"sweep":{}}`, `{`)
}

// SizeRequestsForTest gives sizeRequests to the package's external tests.
func SizeRequestsForTest() []string { return sizeRequests() }

// TestSizeBothWays: every request of sizeRequests gets the same bytes with
// the series written by appendSizeSweep (and the request read by the fast
// decoder, sizefast.go, where it takes it) as from the general encoder
// (and decoder); and
// packed, appended after what dst holds into storage that holds an earlier
// answer's values, it gets the same JSON and series as packed into none,
// with the series in that storage.
func TestSizeBothWays(t *testing.T) {
	withSeries := 0
	for _, request := range sizeRequests() {
		fast, _ := size(nil, nil, []byte(request), false, true)
		general, _ := size(nil, nil, []byte(request), false, false)
		if !bytes.Equal(fast, general) {
			t.Errorf("size(%s):\nwith appendSizeSweep %s\ngeneral encoder      %s", request, clip(string(fast)), clip(string(general)))
		}
		if bytes.Contains(general, []byte(`"sweep":{"koa_max"`)) {
			withSeries++
		}
		// Packed, into storage as the bridge keeps it (holding an earlier
		// answer's values, here NaN) and after what dst holds, as into none.
		dst := []byte("kept")
		storage := slices.Repeat([]float64{math.NaN()}, 6*core.MaxSweepPoints)
		kept, keptSeries := size(dst, storage, []byte(request), true, true)
		fresh, freshSeries := size(nil, nil, []byte(request), true, true)
		if !bytes.Equal(kept, append(dst, fresh...)) || !slices.Equal(keptSeries, freshSeries) || len(keptSeries) > 0 && &keptSeries[0] != &storage[0] {
			t.Errorf("size(%s), packed into kept storage: %s, %d values; into none: %s, %d values", request, clip(string(kept)), len(keptSeries), clip(string(fresh)), len(freshSeries))
		}
	}
	if withSeries < 20 {
		t.Errorf("only %d answers had series", withSeries)
	}
}

// FuzzSizeSweepWriter: whatever the request, both ways (the fast decoder
// and writers, the general ones) give the same bytes.
func FuzzSizeSweepWriter(f *testing.F) {
	for _, request := range sizeRequests() {
		f.Add([]byte(request))
	}
	f.Fuzz(func(t *testing.T, request []byte) {
		fast, _ := size(nil, nil, request, false, true)
		general, _ := size(nil, nil, request, false, false)
		if !bytes.Equal(fast, general) {
			t.Errorf("size(%q):\nwith appendSizeSweep %s\ngeneral encoder      %s", request, clip(string(fast)), clip(string(general)))
		}
	})
}

// TestAppendSizeAnswerMembers: appendSizeAnswer writes every member of the
// size answer's types (the sweep aside), and for answers of random values,
// with every pointer nil or every one set, with every boolean true or
// false and with the members that may be left out empty or not, the bytes
// of the general encoder without the sweep and the closing brace. A string
// that JSON escapes is declined. Reference: goccy/go-json's encoding.
func TestAppendSizeAnswerMembers(t *testing.T) {
	members := slices.DeleteFunc(jsonMembers(reflect.TypeFor[SizeResponse](), ""), func(m string) bool { return strings.HasPrefix(m, "sweep.") })
	if !slices.Equal(members, sizeAnswerMembers) || !slices.Equal(jsonMembers(reflect.TypeFor[core.FilterFit](), ""), sizeFilterMembers) {
		t.Fatalf("the answer's members are %q,\nappendSizeAnswer writes %q (sizeAnswerMembers): add the new member to both, in sizeanswer.go", members, sizeAnswerMembers)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for i := range 400 {
		var r SizeResponse
		fill(reflect.ValueOf(&r).Elem(), rng, i%2 == 0)
		r.Sweep = nil
		if i%4 >= 2 { // booleans false, and what omitempty leaves out empty
			r.OK = false
			r.Countercurrent.Reachable, r.Countercurrent.Message = false, ""
			if c := r.Current; c != nil {
				c.QD.OK, c.QD.AtMinimum, c.QB.Flow = false, false, nil
			}
			if c := r.Choice; c != nil {
				c.Filters[1].Meets = false
				if i%8 >= 4 {
					c.Filters = nil
				}
			}
		}
		want, err := json.Marshal(&r)
		if err != nil {
			t.Fatal(err)
		}
		got, ok := appendSizeAnswer([]byte("kept"), &r)
		if !ok || string(got) != "kept"+string(want[:len(want)-1]) {
			t.Fatalf("appendSizeAnswer = %s, %v,\nwant kept%s (a member added to the answer must be added to appendSizeAnswer in sizeanswer.go)", got, ok, want[:len(want)-1])
		}
		r.Cocurrent.Message = `the "target"`
		if _, ok := appendSizeAnswer(nil, &r); ok {
			t.Fatalf("appendSizeAnswer took a message with quotes")
		}
	}
	// The page's answers go this way: every answer of sizeRequests with
	// plain labels.
	taken := 0
	for _, request := range sizeRequests() {
		var req SizeRequest
		if decode([]byte(request), &req) != nil {
			continue
		}
		spec, err := req.spec()
		if err != nil {
			continue
		}
		s, err := core.Size(spec)
		if err != nil {
			continue
		}
		r := SizeResponse{OK: true, Input: SizeInput{TargetClearance: spec.Target, QB: spec.QB, QD: spec.QD, Blood: spec.Blood, QF: spec.QF, Sieving: spec.Sieving, Flow: spec.Flow.String(), MarginPercent: spec.MarginPercent}, Sizing: s}
		if _, ok := appendSizeAnswer(nil, &r); ok {
			taken++
		}
	}
	if taken < 20 {
		t.Errorf("appendSizeAnswer wrote %d of the answers of sizeRequests, want 20 or more", taken)
	}
}
