package api_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"clearkit/core"
	"clearkit/core/api"
)

// The response contract every entry keeps, whatever the request: the
// response is JSON (checked with the standard library's encoding/json, not
// the decoder the API uses); a failure names a field of the request or the
// request as a whole and says what is wrong; a success holds only finite
// numbers, and numbers within the physical bounds of its calculation
// (physicalChecks).

// envelope is the common part of every response.
type envelope struct {
	OK    *bool `json:"ok"`
	Error *struct {
		Field   *string  `json:"field"`
		Message string   `json:"message"`
		Limit   *float64 `json:"limit"`
	} `json:"error"`
}

// checkResponse checks the response of entry e to request.
func checkResponse(t *testing.T, e api.Entry, request, response []byte) envelope {
	t.Helper()
	if !json.Valid(response) {
		t.Fatalf("%s(%q) = %q: not valid JSON", e.Name, shown(request), shown(response))
	}
	var env envelope
	if err := json.Unmarshal(response, &env); err != nil || env.OK == nil {
		t.Fatalf("%s(%q) = %q: not an object with ok (%v)", e.Name, shown(request), shown(response), err)
	}
	if !*env.OK {
		checkFailure(t, e, request, response, env)
		return env
	}
	if !json.Valid(request) {
		t.Fatalf("%s(%q) = %q: ok:true for a request that is not JSON", e.Name, shown(request), shown(response))
	}
	if env.Error != nil {
		t.Errorf("%s(%q) = %q: ok:true with an error member", e.Name, shown(request), shown(response))
	}
	if err := finiteNumbers(response); err != nil {
		t.Fatalf("%s(%q) = %q: %v", e.Name, shown(request), shown(response), err)
	}
	check, ok := physicalChecks[e.Name]
	if !ok {
		t.Fatalf("entry %q has no physical bounds check: add one to physicalChecks in core/api/response_test.go", e.Name)
	}
	if err := check(response); err != nil {
		t.Errorf("%s(%q): %v\nresponse %s", e.Name, shown(request), err, shown(response))
	}
	return env
}

func checkFailure(t *testing.T, e api.Entry, request, response []byte, env envelope) {
	t.Helper()
	if env.Error == nil || env.Error.Field == nil || env.Error.Message == "" {
		t.Fatalf("%s(%q) = %q: ok:false needs error.field and a message", e.Name, shown(request), shown(response))
	}
	field, msg := *env.Error.Field, env.Error.Message
	if strings.Contains(msg, "internal error") {
		t.Fatalf("%s(%q) = %q: an internal error is a bug, not an answer to bad input", e.Name, shown(request), shown(response))
	}
	if env.Error.Limit != nil && (math.IsNaN(*env.Error.Limit) || math.IsInf(*env.Error.Limit, 0)) {
		t.Errorf("%s(%q) = %q: error.limit is not finite", e.Name, shown(request), shown(response))
	}
	if !json.Valid(request) && field != "" {
		t.Errorf("%s(%q) = %q: a request that is not JSON must be refused as a whole (field \"\")", e.Name, shown(request), shown(response))
	}
	// An unknown field is named as sent; every other error names a field
	// the entry knows, or the request.
	if field == "" || strings.Contains(msg, "is not a field of this request") {
		return
	}
	if !isRequestField(e, field) {
		t.Errorf("%s(%q) = %q: error names %q, which is not a field of the request", e.Name, shown(request), shown(response), field)
	}
}

// isRequestField asks the entry itself whether path ("sweep.points",
// "readings[2].qb") is one of its fields: a request holding only that
// path, with null at its end, must not be refused as naming an unknown
// field.
func isRequestField(e api.Entry, path string) bool {
	probe := "null"
	segments := strings.Split(path, ".")
	for i := len(segments) - 1; i >= 0; i-- {
		name, lists := segments[i], 0
		for strings.HasSuffix(name, "]") {
			open := strings.LastIndexByte(name, '[')
			if open < 0 {
				return false
			}
			name, lists = name[:open], lists+1
		}
		probe = strings.Repeat("[", lists) + probe + strings.Repeat("]", lists)
		key, _ := json.Marshal(name)
		probe = "{" + string(key) + ":" + probe + "}"
	}
	var env envelope
	if err := json.Unmarshal(e.Call([]byte(probe)), &env); err != nil || env.OK == nil {
		return false
	}
	return *env.OK || !strings.Contains(env.Error.Message, "is not a field of this request")
}

// finiteNumbers checks that every number in the JSON document b parses to
// a finite float64.
func finiteNumbers(b []byte) error {
	d := json.NewDecoder(bytes.NewReader(b))
	d.UseNumber()
	for {
		tok, err := d.Token()
		if err != nil {
			return nil // end of the document: Valid was checked before
		}
		if n, ok := tok.(json.Number); ok {
			if v, err := strconv.ParseFloat(string(n), 64); err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
				return fmt.Errorf("number %s is not a finite float64", n)
			}
		}
	}
}

func shown(b []byte) string {
	if len(b) > 300 {
		return string(b[:300]) + fmt.Sprintf("... (%d bytes)", len(b))
	}
	return string(b)
}

// physicalChecks holds, per entry, the physical bounds of a successful
// response. Every entry of api.Entries needs one.
var physicalChecks = map[string]func(response []byte) error{
	"compare": compareBounds,
}

// boundSlack is the relative rounding allowed where a bound is reached:
// a dialysance at its ceiling, counter-current equal to co-current.
const boundSlack = 1e-12

func within(x, lo, hi float64) bool {
	return x >= lo-boundSlack*math.Abs(lo) && x <= hi+boundSlack*math.Abs(hi)
}

// compareBounds: the echoed input lies within core's bounds; qbw is QB
// for an aqueous solution and QB (Fp (1 - Hct) + Fr Hct) for whole blood.
// Without ultrafiltration, for each arrangement 0 <= D <= its ceiling, with
// the counter-current ceiling min(QBW, QD) and the co-current one
// QBW QD/(QBW + QD) (REFERENCES: the KoA -> infinity limits);
// counter-current D >= co-current D (a fact of the model,
// property_test.go); K = D (CBi - CDi)/CBi; the outlet concentrations lie
// between the two inlets (no solute is created: common practice, no
// source); the sweeps keep the same bounds point by point. With
// ultrafiltration (filtrationBounds) the bounds of the ultrafiltration
// model apply.
func compareBounds(response []byte) error {
	var r struct {
		Input          core.Operating   `json:"input"`
		QBW            float64          `json:"qbw"`
		Countercurrent core.Performance `json:"countercurrent"`
		Cocurrent      core.Performance `json:"cocurrent"`
		Sweeps         *core.Sweeps     `json:"sweeps"`
	}
	if err := json.Unmarshal(response, &r); err != nil {
		return err
	}
	op := r.Input
	if !(op.QB >= core.MinFlow && op.QB <= core.MaxFlow && op.QD >= core.MinFlow && op.QD <= core.MaxFlow &&
		op.KoA >= 0 && op.KoA <= core.MaxKoA && op.CBi > 0 && op.CBi <= core.MaxConcentration &&
		op.CDi >= 0 && op.CDi <= core.MaxConcentration && op.QF >= 0 && op.QF < r.QBW && op.Sieving >= 0 && op.Sieving <= 1) {
		return fmt.Errorf("input %+v outside core's bounds", op)
	}
	qbw := op.QB
	if b := op.Blood; b != nil {
		if !(b.Hct >= 0 && b.Hct <= core.MaxHct && b.PlasmaWater > 0 && b.PlasmaWater <= 1 && b.RedCellWater > 0 && b.RedCellWater <= 1) {
			return fmt.Errorf("input blood %+v outside core's bounds", *b)
		}
		qbw = op.QB * (b.PlasmaWater*(1-b.Hct/100) + b.RedCellWater*b.Hct/100)
	}
	if !within(r.QBW, qbw, qbw) {
		return fmt.Errorf("qbw %g, want %g", r.QBW, qbw)
	}
	if op.QF > 0 {
		return filtrationBounds(op, r.QBW, r.Countercurrent, r.Cocurrent, r.Sweeps)
	}
	f := (op.CBi - op.CDi) / op.CBi
	lo, hi := math.Min(op.CBi, op.CDi), math.Max(op.CBi, op.CDi)
	ceilings := [2]float64{math.Min(qbw, op.QD), qbw * op.QD / (qbw + op.QD)}
	for i, p := range []core.Performance{r.Countercurrent, r.Cocurrent} {
		if !within(p.DialysanceCeiling, ceilings[i], ceilings[i]) || !within(p.Dialysance, 0, p.DialysanceCeiling) {
			return fmt.Errorf("arrangement %d: dialysance %g, ceiling %g, want 0 <= D <= ceiling = %g", i, p.Dialysance, p.DialysanceCeiling, ceilings[i])
		}
		if k := p.Dialysance * f; !within(p.Clearance, k, k) {
			return fmt.Errorf("arrangement %d: clearance %g, want D (CBi - CDi)/CBi = %g", i, p.Clearance, k)
		}
		// The outlets carry the rounding of the larger inlet.
		tol := boundSlack * hi
		if p.BloodOutlet < lo-tol || p.BloodOutlet > hi+tol || p.DialysateOutlet < lo-tol || p.DialysateOutlet > hi+tol {
			return fmt.Errorf("arrangement %d: outlets CBo %g, CDo %g, want them between the inlets %g and %g", i, p.BloodOutlet, p.DialysateOutlet, lo, hi)
		}
	}
	if !within(r.Countercurrent.Dialysance, r.Cocurrent.Dialysance, math.Inf(1)) {
		return fmt.Errorf("counter-current dialysance %g < co-current %g", r.Countercurrent.Dialysance, r.Cocurrent.Dialysance)
	}
	if r.Sweeps == nil {
		return nil
	}
	for name, s := range map[string]core.Series{"qb": r.Sweeps.QB, "qd": r.Sweeps.QD, "koa": r.Sweeps.KoA} {
		n := len(s.X)
		if n < core.MinSweepPoints || n > core.MaxSweepPoints || len(s.Countercurrent) != n || len(s.Cocurrent) != n ||
			len(s.CountercurrentCeiling) != n || len(s.CocurrentCeiling) != n {
			return fmt.Errorf("sweep %s: lengths %d, %d, %d, %d, %d", name, n, len(s.Countercurrent), len(s.Cocurrent), len(s.CountercurrentCeiling), len(s.CocurrentCeiling))
		}
		for i := range n {
			if i > 0 && !(s.X[i] >= s.X[i-1]) {
				return fmt.Errorf("sweep %s: x[%d] = %g after %g, want increasing", name, i, s.X[i], s.X[i-1])
			}
			// Divided by (CBi - CDi)/CBi the series are dialysances, with
			// the bounds above.
			if f == 0 {
				if s.Countercurrent[i] != 0 || s.Cocurrent[i] != 0 {
					return fmt.Errorf("sweep %s: clearance at x = %g is not 0 with CDi = CBi", name, s.X[i])
				}
				continue
			}
			cc, co := s.Countercurrent[i]/f, s.Cocurrent[i]/f
			ccMax, coMax := s.CountercurrentCeiling[i]/f, s.CocurrentCeiling[i]/f
			if !within(co, 0, cc) || !within(cc, co, ccMax) || !within(coMax, 0, ccMax) {
				return fmt.Errorf("sweep %s at x = %g: dialysances co %g, counter %g, ceilings %g and %g, want 0 <= co <= counter <= its ceiling, co ceiling <= counter ceiling",
					name, s.X[i], co, cc, coMax, ccMax)
			}
		}
	}
	return nil
}

// filtrationBounds are the bounds of the ultrafiltration model
// (core/ultrafiltration_test.go, TestTransferProperties): D >= 0 and the
// clearance with fresh dialysate at most QBW, so clearance and both
// ceilings stay within [.., QBW]; the outlets are not negative; with S = 1
// and CDi <= CBi, moreover, clearance and dialysance lie at or below their
// ceilings and counter-current at or above co-current. The sweeps are
// finite (checked before) with ceilings of at least the clearance under
// the same condition.
func filtrationBounds(op core.Operating, qbw float64, cc, co core.Performance, sweeps *core.Sweeps) error {
	ordered := op.Sieving == 1 && op.CDi <= op.CBi
	for i, p := range []core.Performance{cc, co} {
		if !within(p.Dialysance, 0, qbw) || !within(p.Clearance, math.Inf(-1), qbw) || !within(p.DialysanceCeiling, 0, qbw) ||
			!within(p.ClearanceCeiling, math.Inf(-1), qbw) || p.BloodOutlet < 0 || p.DialysateOutlet < 0 {
			return fmt.Errorf("arrangement %d: %+v, want 0 <= D <= QBW = %g, clearance and ceilings at most QBW, outlets >= 0", i, p, qbw)
		}
		if ordered && (!within(p.Clearance, math.Inf(-1), p.ClearanceCeiling) || !within(p.Dialysance, 0, p.DialysanceCeiling)) {
			return fmt.Errorf("arrangement %d: %+v, want clearance and dialysance at or below their ceilings (S = 1)", i, p)
		}
	}
	if ordered && !within(cc.Clearance, co.Clearance, math.Inf(1)) {
		return fmt.Errorf("counter-current clearance %g < co-current %g (S = 1)", cc.Clearance, co.Clearance)
	}
	if sweeps == nil || !ordered {
		return nil
	}
	for name, s := range map[string]core.Series{"qb": sweeps.QB, "qd": sweeps.QD, "koa": sweeps.KoA} {
		for i, x := range s.X {
			if !within(s.Countercurrent[i], math.Inf(-1), s.CountercurrentCeiling[i]) || !within(s.Cocurrent[i], math.Inf(-1), s.CocurrentCeiling[i]) ||
				!within(s.Countercurrent[i], s.Cocurrent[i], math.Inf(1)) {
				return fmt.Errorf("sweep %s at x = %g: counter %g (ceiling %g), co %g (ceiling %g), want each at or below its ceiling, co at or below counter",
					name, x, s.Countercurrent[i], s.CountercurrentCeiling[i], s.Cocurrent[i], s.CocurrentCeiling[i])
			}
		}
	}
	return nil
}
