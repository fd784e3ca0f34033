package api_test

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"clearkit/core"
	"clearkit/core/api"
)

// Inverse round trips across entries, through JSON as the page makes them:
// a clearance that compare gives for a filter of known KoA, asked back of
// size (the KoA needed for that clearance) and of check (the in-situ KoA
// from the inlet and outlet concentrations compare gives), must return
// that KoA. core has the same inverses on grids (size_test.go,
// check_test.go); this is seeded random points over routine machines
// (QB 50 to 600, QD 100 to 1000, KoA 100 to 2000 mL/min: common practice,
// no source) and the whole chain of request and answer. Points within 1 %
// of the ceiling are skipped: there the inverse amplifies the rounding of
// the clearance (README, sizing), and size_test.go checks them against
// the conditioning.
func TestPropertyInverseRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(20240611, 3))
	uniform := func(lo, hi float64) float64 { return lo + (hi-lo)*r.Float64() }
	num := func(v float64) string { return strconv.Quote(strconv.FormatFloat(v, 'g', -1, 64)) }
	checked := 0
	for range 400 {
		qb, qd, koa, cbi := uniform(50, 600), uniform(100, 1000), uniform(100, 2000), uniform(1, 200)
		var cmp struct {
			OK             bool             `json:"ok"`
			Countercurrent core.Performance `json:"countercurrent"`
		}
		req := fmt.Sprintf(`{"qb":%s,"qd":%s,"koa":%s,"cbi":%s}`, num(qb), num(qd), num(koa), num(cbi))
		if b := api.Compare([]byte(req)); json.Unmarshal(b, &cmp) != nil || !cmp.OK {
			t.Fatalf("compare(%s) = %s", req, b)
		}
		p := cmp.Countercurrent
		if p.Clearance > 0.99*p.ClearanceCeiling {
			continue
		}
		checked++

		var size struct {
			OK  bool    `json:"ok"`
			KoA float64 `json:"koa"`
		}
		req = fmt.Sprintf(`{"target_clearance":%s,"qb":%s,"qd":%s,"flow":"countercurrent","k0":0.05}`, num(p.Clearance), num(qb), num(qd))
		if b := api.Size([]byte(req)); json.Unmarshal(b, &size) != nil || !size.OK {
			t.Fatalf("size(%s) = %s", req, b)
		}
		// 1e-9 relative: far from the ceiling the inverse is well
		// conditioned (cond below about 100 here).
		if math.Abs(size.KoA-koa) > 1e-9*koa {
			t.Errorf("size(%s).koa = %.17g, want compare's KoA %.17g", req, size.KoA, koa)
		}

		var check struct {
			OK                bool     `json:"ok"`
			KoACountercurrent *float64 `json:"koa_countercurrent"`
		}
		req = fmt.Sprintf(`{"qb":%s,"qd":%s,"cbi":%s,"cbo":%s,"cdo":%s}`, num(qb), num(qd), num(cbi), num(p.BloodOutlet), num(p.DialysateOutlet))
		if b := api.Check([]byte(req)); json.Unmarshal(b, &check) != nil || !check.OK || check.KoACountercurrent == nil {
			t.Fatalf("check(%s) = %s", req, b)
		}
		// The outlets carry the rounding of CBi - CBo, about 1e-16 of CBi
		// relative to the drop: 1e-8 relative covers it here.
		if got := *check.KoACountercurrent; math.Abs(got-koa) > 1e-8*koa {
			t.Errorf("check(%s).koa_countercurrent = %.17g, want compare's KoA %.17g", req, got, koa)
		}
	}
	if checked < 300 {
		t.Errorf("only %d of 400 points checked, want at least 300", checked)
	}
}
