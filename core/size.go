package core

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Sizing bounds and constants. The bounds are far wider than any
// dialyzer (urea K0 about 0.03-0.07 cm/min, membranes 0.5-2.5 m^2;
// REFERENCES and common practice) and keep every result finite.
const (
	CM2PerM2         = 1e4   // cm^2 in one m^2
	MinK0            = 1e-6  // cm/min
	MaxK0            = 10.0  // cm/min
	MaxArea          = 100.0 // m^2
	MaxFilters       = 100   // filters in one list
	MaxLabelLength   = 80    // characters of a filter label
	MaxMarginPercent = 1000  // percent

	// FlowTolerance is the relative tolerance of MinimumQD and MinimumQB:
	// the flow returned reaches the target and lies within FlowTolerance
	// (relative) above the smallest flow that does, as the model computes
	// it.
	FlowTolerance = 1e-12
	// flowMaxEval bounds the evaluations of one flow solve. Brent's method
	// needs 17 on average, 74 at worst over seeded random flows and KoA;
	// bisection alone would need about 80 on
	// the widest range (1e5 mL/min down to 1e-18, FlowTolerance x 1e-6).
	flowMaxEval = 300
)

// RequiredKoA returns the KoA (mL/min) with which arrangement a reaches the
// target clearance (mL/min, fresh dialysate, so clearance = dialysance) at
// blood flow qb and dialysate flow qd. It inverts the effectiveness-NTU
// relations of Effectiveness (Incropera & DeWitt ch. 11; REFERENCES):
//
//	counter-current  NTU = ln((1 - eps Cr)/(1 - eps)) / (1 - Cr)
//	co-current       NTU = -ln(1 - eps (1 + Cr)) / (1 + Cr)
//
// with eps = target/Cmin and KoA = NTU Cmin.
//
// Special cases are:
//
//	RequiredKoA(Countercurrent, q, q, k) = k q/(q - k)  (Cr = 1: NTU = eps/(1-eps))
//	target >= Ceiling(a, qb, qd): error on "target_clearance", Limit the ceiling
//	required KoA above MaxKoA: error on "target_clearance", Limit the clearance at MaxKoA
//	target <= 0 or not finite, flows out of bounds: error on the field
func RequiredKoA(a Arrangement, qb, qd, target float64) (float64, error) {
	if err := checkTarget(target); err != nil {
		return 0, err
	}
	if err := checkFlow("qb", qb); err != nil {
		return 0, err
	}
	if err := checkFlow("qd", qd); err != nil {
		return 0, err
	}
	return sizeKoA(a, qb, qd, target)
}

// sizeKoA is RequiredKoA on valid inputs: the ceiling and MaxKoA checks
// and the inverse.
func sizeKoA(a Arrangement, qb, qd, target float64) (float64, error) {
	ceiling := Ceiling(a, qb, qd)
	if target >= ceiling {
		return 0, unreachable(a, qb, qd, target)
	}
	koa := requiredKoA(a, qb, qd, target)
	if koa > MaxKoA {
		limit := Dialysance(a, qb, qd, MaxKoA)
		return 0, &FieldError{
			Field: "target_clearance",
			Message: fmt.Sprintf("is only %s mL/min below the %s ceiling of %s mL/min: it would need a KoA above %s mL/min, beyond any filter; aim lower",
				num(ceiling-target), a.label(), num(ceiling), num(MaxKoA)),
			Limit: &limit,
		}
	}
	return koa, nil
}

// requiredKoA is the inverse itself, for 0 <= target < Ceiling(a, qb, qd).
//
// Counter-current, with r = eps/(1-eps) = target/(Cmin - target) and
// y = r (1 - Cr), the logarithm is log1p(y), so NTU = (log1p(y)/y) r: no
// 0/0 at Cr = 1 (y = 0, where the factor is 1 and NTU = r), and Cmin -
// target is exact near the ceiling (Sterbenz), so 1 - eps keeps its
// digits there. Co-current, with x = eps (1 + Cr) = target/ceiling,
// -ln(1 - x) = ln(ceiling/(ceiling - target)) = log1p(target/(ceiling -
// target)), where the difference is exact near the ceiling too.
//
// Only math.Log1p is used, not math.Log: Go has assembly Log and Exp on
// amd64 and pure Go ones elsewhere (wasm), which can differ in the last
// bit; Log1p and Expm1 are the same code everywhere, so the page and
// native core agree to the bit.
func requiredKoA(a Arrangement, qb, qd, target float64) float64 {
	cmin, cmax, oneMinusCr := capacities(qb, qd)
	if a == Cocurrent {
		ceiling := Ceiling(Cocurrent, qb, qd)
		cr := cmin / cmax
		return math.Log1p(target/(ceiling-target)) / (1 + cr) * cmin
	}
	r := target / (cmin - target)
	y := r * oneMinusCr
	g := 1.0 // log1p(y)/y, 1 at y = 0
	if y != 0 {
		g = math.Log1p(y) / y
	}
	return g * r * cmin
}

// checkTarget validates a target clearance.
func checkTarget(v float64) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf("target_clearance", "must be a finite number")
	case v <= 0:
		return fieldErrorf("target_clearance", "must be greater than 0 mL/min (got %g)", v)
	}
	return nil
}

// label is the arrangement's name in a sentence.
func (a Arrangement) label() string {
	if a == Cocurrent {
		return "co-current"
	}
	return "counter-current"
}

// unreachable is the refusal of a target at or above the ceiling of a,
// with what would make it reachable: the other arrangement, a higher QD at
// this QB, a higher QB at this QD (each where the ceiling passes the
// target), or both flows higher.
func unreachable(a Arrangement, qb, qd, target float64) *FieldError {
	ceiling := Ceiling(a, qb, qd)
	var ways []string
	if cc := Ceiling(Countercurrent, qb, qd); a == Cocurrent && target < cc {
		ways = append(ways, "counter-current flow (ceiling "+num(cc)+" mL/min)")
	}
	if q, ok := ceilingFlow(a, qb, target); ok {
		ways = append(ways, "QD above "+flowAbove(q)+" mL/min")
	}
	if q, ok := ceilingFlow(a, qd, target); ok {
		ways = append(ways, "QB above "+flowAbove(q)+" mL/min")
	}
	if len(ways) == 0 {
		// Neither flow alone will do. At equal flows q the ceiling is q
		// counter-current and q/2 co-current.
		q := target
		if a == Cocurrent {
			q = 2 * target
		}
		ways = append(ways, "both QB and QD above "+flowAbove(q)+" mL/min")
	}
	msg := "must be below the " + a.label() + " ceiling of " + num(ceiling) + " mL/min at QB " + num(qb) + " and QD " + num(qd) +
		" mL/min, which no filter reaches; it becomes reachable with " + strings.Join(ways, ", or with ")
	return &FieldError{Field: "target_clearance", Message: msg, Limit: &ceiling}
}

// ceilingFlow returns the flow x above which the ceiling of a, with the
// other flow held at other, passes target: counter-current min(other, x) >
// target needs other > target and x > target; co-current
// other x/(other + x) > target needs other > target and
// x > target other/(other - target).
func ceilingFlow(a Arrangement, other, target float64) (float64, bool) {
	if other <= target {
		return 0, false
	}
	x := target
	if a == Cocurrent {
		x = target * other / (other - target)
	}
	return x, x < MaxFlow
}

// num formats a number for a message: six significant digits.
func num(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }

// flowAbove formats the flow x of "QD above x" (or "QD x would") in a
// message: rounded up to a tenth of a mL/min, so that any flow set above
// the number shown is above x, and always with its one decimal, as the
// page shows flows (the number then keeps its width while the target
// changes, and the page lays out its sentence again only where the digits
// are).
func flowAbove(x float64) string { return upTenth(x) }

// atMost formats the clearance x of "at most x" in a message: rounded up
// to a tenth of a mL/min, so that it stays a bound, with its one decimal,
// for the same reasons.
func atMost(x float64) string { return upTenth(x) }

// upTenth writes x >= 0 rounded up to a tenth, with one decimal. A value
// within a part in 1e12 of a tenth (600.0000000000001, the rounding of a
// formula that gives 600) is that tenth, not the next.
func upTenth(x float64) string {
	return strconv.FormatFloat(math.Ceil(x*10*(1-1e-12))/10, 'f', 1, 64)
}

// K0FromReference returns the mass transfer coefficient K0 (cm/min) of a
// membrane from a reference filter of the same family: its rated KoA
// (mL/min) and membrane area (m^2), K0 = KoA/A with A in cm^2
// (KoA = K0 A; REFERENCES). Errors name "reference.koa" and
// "reference.area_m2".
func K0FromReference(koa, areaM2 float64) (float64, error) {
	if err := checkFilterKoA("reference", ".koa", koa); err != nil {
		return 0, err
	}
	if err := checkArea("reference", ".area_m2", areaM2); err != nil {
		return 0, err
	}
	k0 := koa / (areaM2 * CM2PerM2)
	if err := checkK0("reference", k0); err != nil {
		return 0, fieldErrorf("reference", "gives K0 = %g cm/min, outside %g to %g cm/min: check the KoA and the area", k0, MinK0, MaxK0)
	}
	return k0, nil
}

// AreaM2 returns the membrane area (m^2) that gives koa (mL/min) with
// mass transfer coefficient k0 (cm/min): A = KoA/K0 cm^2, / 1e4 for m^2.
func AreaM2(koa, k0 float64) float64 { return koa / k0 / CM2PerM2 }

func checkK0(field string, v float64) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf(field, "must be a finite number")
	case v <= 0:
		return fieldErrorf(field, "must be greater than 0 cm/min (got %g)", v)
	case v < MinK0 || v > MaxK0:
		return fieldErrorf(field, "is outside any membrane (%g to %g cm/min, got %g; urea is about 0.03 to 0.07)", MinK0, MaxK0, v)
	}
	return nil
}

// checkArea validates a membrane area, of field+member ("filters[2]",
// ".area_m2"): the name is put together only for an error, as a size
// question checks every filter's fields at every call.
func checkArea(field, member string, v float64) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf(field+member, "must be a finite number")
	case v <= 0:
		return fieldErrorf(field+member, "must be greater than 0 m² (got %g)", v)
	case v > MaxArea:
		return fieldErrorf(field+member, "is beyond any filter (maximum %g m², got %g)", MaxArea, v)
	}
	return nil
}

// checkFilterKoA validates the KoA of a real filter, which must be > 0, of
// field+member as checkArea.
func checkFilterKoA(field, member string, v float64) error {
	if v > 0 && v <= MaxKoA {
		return nil // checkKoA's range, less 0
	}
	if err := checkKoA(field+member, v); err != nil {
		return err
	}
	if v == 0 {
		return fieldErrorf(field+member, "must be greater than 0 mL/min (a filter of KoA 0 clears nothing)")
	}
	return nil
}

// Filter is a filter by its label and its KoA (mL/min) or its membrane
// area (m^2). A zero KoA or area means "not given"; when both are given
// the KoA decides and the area is shown as given.
type Filter struct {
	Label  string
	KoA    float64
	AreaM2 float64
}

// resolve returns the filter's KoA and area (nil when not known). field is
// the prefix of its error fields ("filters[2]", "current_filter"); the area
// needs k0 (0 when not known) unless the KoA is given.
func (f Filter) resolve(field string, k0 float64) (koa float64, area *float64, err error) {
	switch {
	case f.KoA == 0 && f.AreaM2 == 0:
		return 0, nil, fieldErrorf(field+".koa", "give the filter's KoA or its membrane area")
	case f.KoA != 0:
		if err := checkFilterKoA(field, ".koa", f.KoA); err != nil {
			return 0, nil, err
		}
		koa = f.KoA
	}
	if f.AreaM2 != 0 {
		if err := checkArea(field, ".area_m2", f.AreaM2); err != nil {
			return 0, nil, err
		}
		a := f.AreaM2
		area = &a
		if koa == 0 {
			if k0 == 0 {
				return 0, nil, fieldErrorf(field+".area_m2", "needs K0 to give a KoA: enter K0 or a reference filter, or give this filter's KoA")
			}
			koa = f.AreaM2 * CM2PerM2 * k0
		}
	} else if k0 != 0 {
		a := AreaM2(koa, k0)
		area = &a
	}
	return koa, area, nil
}

// FlowSolve is the smallest flow found by MinimumQD or MinimumQB.
type FlowSolve struct {
	// Flow is the smallest flow in the range that reaches the target, to
	// FlowTolerance; the model's clearance at Flow is at least the target.
	Flow float64 `json:"flow"`
	// Clearance is the clearance at Flow, mL/min.
	Clearance float64 `json:"clearance"`
	// AtMinimum: the target is met at the bottom of the range already.
	AtMinimum   bool `json:"at_minimum"`
	Evaluations int  `json:"evaluations"`
}

// MinimumQD returns the smallest dialysate flow in r with which a filter
// of KoA koa reaches the target clearance in arrangement a at blood flow
// qb. Clearance rises with QD (property_test.go), so the root of
// K(QD) - target is bracketed by the range when K(r.Min) < target <=
// K(r.Max); it is found by FindRoot to FlowTolerance x r.Min, which is
// FlowTolerance relative or better at every flow of the range.
//
// Special cases are:
//
//	target met at r.Min: Flow = r.Min, AtMinimum
//	target above K(r.Max), reachable below MaxFlow: error on "qd_range" naming the QD that would do
//	target not reached even at QD = MaxFlow: error on "current_filter"
//	both with Limit the largest clearance in the range
//
// Errors name the fields of a size request ("qb", "current_filter.koa",
// "target_clearance", "qd_range").
func MinimumQD(a Arrangement, qb, koa, target float64, r Range) (FlowSolve, error) {
	if err := checkFlow("qb", qb); err != nil {
		return FlowSolve{}, err
	}
	return minimumFlow(a, "qd", qb, koa, target, r, sizeModel{water: 1})
}

// MinimumQB is MinimumQD for the blood flow at dialysate flow qd (fields
// "qd", "current_filter.koa", "target_clearance", "qb_range").
func MinimumQB(a Arrangement, qd, koa, target float64, r Range) (FlowSolve, error) {
	if err := checkFlow("qd", qd); err != nil {
		return FlowSolve{}, err
	}
	return minimumFlow(a, "qb", qd, koa, target, r, sizeModel{water: 1})
}

// minimumFlow solves for the flow named vary ("qd" or "qb") with the other
// flow held at other, by the sizing model m (size_conditions.go).
func minimumFlow(a Arrangement, vary string, other, koa, target float64, r Range, m sizeModel) (FlowSolve, error) {
	if err := checkFilterKoA("current_filter", ".koa", koa); err != nil {
		return FlowSolve{}, err
	}
	if err := checkTarget(target); err != nil {
		return FlowSolve{}, err
	}
	rangeField := vary + "_range"
	if _, err := sweepRange(rangeField, &r, r, checkFlow); err != nil {
		return FlowSolve{}, err
	}
	clearance := m.flowClearance(a, vary, other, koa)
	if vary == "qb" {
		r = m.qbRange(r)
	}
	if k := clearance(r.Min); k >= target {
		return FlowSolve{Flow: r.Min, Clearance: k, AtMinimum: true, Evaluations: 1}, nil
	}
	best := clearance(r.Max)
	if best < target {
		return FlowSolve{}, flowShortfall(a, vary, other, koa, target, r, best, clearance, m)
	}
	// The flow itself is the unknown (not its logarithm: math.Log and
	// math.Exp differ between amd64 and wasm, see requiredKoA). Brent's
	// tolerance 4 ulp(Q) + tol then keeps the bracket within FlowTolerance
	// relative at every flow from r.Min up.
	root, err := FindRoot(func(q float64) float64 { return clearance(q) - target }, r.Min, r.Max, FlowTolerance*r.Min, flowMaxEval)
	if err != nil {
		var re *RootError
		if errors.As(err, &re) && re.Err == ErrNotConverged {
			return FlowSolve{}, fieldErrorf(rangeField, "the %s solve did not converge: %v", strings.ToUpper(vary), err)
		}
		return FlowSolve{}, fieldErrorf("", "internal error in the %s solve: %v", strings.ToUpper(vary), err)
	}
	// Return the end of the final bracket that reaches the target.
	q := root.Bracket.Hi
	if root.Bracket.FLo >= 0 {
		q = root.Bracket.Lo
	}
	return FlowSolve{Flow: q, Clearance: clearance(q), Evaluations: root.Evaluations + 2}, nil
}

// flowShortfall is the error of a flow solve whose range does not reach
// the target: with the flow it would take when a higher flow (up to
// MaxFlow) does, or the most the filter can give at any flow.
func flowShortfall(a Arrangement, vary string, other, koa, target float64, r Range, best float64, clearance func(float64) float64, m sizeModel) error {
	name, otherName := strings.ToUpper(vary), "QB"
	if vary == "qb" {
		otherName = "QD"
	}
	if r.Max < MaxFlow && clearance(MaxFlow) >= target {
		msg := "no " + name + " up to " + num(r.Max) + " mL/min reaches " + num(target) + " mL/min with this filter at " +
			otherName + " " + num(other) + " (at most " + atMost(best) + " mL/min)"
		if s, err := minimumFlow(a, vary, other, koa, target, Range{r.Max, MaxFlow}, m); err == nil {
			msg += "; " + name + " " + flowAbove(s.Flow) + " mL/min would"
		}
		return &FieldError{Field: vary + "_range", Message: msg, Limit: &best}
	}
	most := clearance(MaxFlow)
	msg := "cannot reach " + num(target) + " mL/min at " + otherName + " " + num(other) + " mL/min with any " + name +
		": it gives at most " + atMost(most) + " mL/min (" + name + " at " + num(MaxFlow) + " mL/min); a larger filter or a higher " + otherName + " is needed"
	return &FieldError{Field: "current_filter", Message: msg, Limit: &best}
}

// SizeSweepSpec sets the chart series of Size: Points per arrangement (0
// for DefaultSweepPoints) and KoAMax, the top of the KoA axis (0 for
// max(2000, 2 x the required KoA of the chosen arrangement), in line with
// the KoA sweep of Sweep).
type SizeSweepSpec struct {
	Points int
	KoAMax float64
}

// SizeSeries is the required KoA (and area) against target clearance for
// one arrangement, from target 0 up to the clearance that KoAMax gives.
type SizeSeries struct {
	Target []float64 `json:"target"`
	KoA    []float64 `json:"koa"`
	AreaM2 []float64 `json:"area_m2,omitempty"`
	// ClearanceCeiling is the vertical asymptote of the series.
	ClearanceCeiling float64 `json:"clearance_ceiling"`
}

// SizeSweep holds both series and the top of their KoA (and area) axis.
type SizeSweep struct {
	KoAMax         float64    `json:"koa_max"`
	AreaM2Max      *float64   `json:"area_m2_max,omitempty"`
	Countercurrent SizeSeries `json:"countercurrent"`
	Cocurrent      SizeSeries `json:"cocurrent"`
}

// sizeSeries samples the required KoA of a against the target. The curve
// is flat at small targets and climbs to infinity at the ceiling, so half
// the points are spaced evenly in target and the rest evenly in KoA (their
// targets placed by the forward model, Dialysance), merged in order of
// target. Every KoA is the inverse, requiredKoA, at its target. Points
// whose clearance rounds to the ceiling, where the inverse is not
// defined, are left out.
func sizeSeries(a Arrangement, qb, qd, koaMax, k0 float64, n int) SizeSeries {
	ceiling := Ceiling(a, qb, qd)
	m := max(2, (n+1)/2) // evenly in target, 0 to the end, the end excluded
	k := n - m + 1       // evenly in KoA, koaMax/k to koaMax
	byKoA := make([]float64, 0, k)
	for j := 1; j <= k; j++ {
		if x := Dialysance(a, qb, qd, koaMax*float64(j)/float64(k)); x < ceiling {
			byKoA = append(byKoA, x)
		}
	}
	// The even points: 0 up to the last KoA point, which is not repeated;
	// only 0 when every KoA point saturates (flows tiny beside KoAMax).
	evens := []float64{0}
	if last := len(byKoA) - 1; last >= 0 {
		evens = evens[:0]
		for i := range m - 1 {
			evens = append(evens, byKoA[last]*float64(i)/float64(m-1))
		}
	}
	targets := make([]float64, 0, len(evens)+len(byKoA))
	i, j := 0, 0
	for i < len(evens) || j < len(byKoA) {
		if i < len(evens) && (j == len(byKoA) || evens[i] <= byKoA[j]) {
			targets = append(targets, evens[i])
			i++
		} else {
			targets = append(targets, byKoA[j])
			j++
		}
	}
	s := SizeSeries{Target: targets, KoA: make([]float64, len(targets)), ClearanceCeiling: ceiling}
	for i, x := range targets {
		// No target passes the clearance at koaMax, so the exact KoA is at
		// most koaMax; near saturation the inverse's rounding can land just
		// above it (2000.0002 for 2000 at QB 30, QD 50, found by fuzzing).
		s.KoA[i] = math.Min(requiredKoA(a, qb, qd, x), koaMax)
	}
	if k0 != 0 {
		s.AreaM2 = make([]float64, len(targets))
		for i, koa := range s.KoA {
			s.AreaM2[i] = AreaM2(koa, k0)
		}
	}
	return s
}

// SizeSpec is a sizing question. Target, QB and QD are required; the rest
// is optional (zero values mean "not given").
type SizeSpec struct {
	Target float64 // target clearance, mL/min (fresh dialysate: CDi = 0)
	QB, QD float64 // mL/min
	// Blood, when not nil, is whole blood: the model works with the
	// blood-water flow (size_conditions.go). Nil: an aqueous solution.
	Blood *WholeBlood
	// Filtration is the ultrafiltration; zero is none.
	Filtration
	Flow Arrangement // the arrangement the filter choice and flow solves use
	K0   float64     // cm/min; 0: not known (no areas)
	// Reference, when not nil and K0 is 0, is a filter of the same
	// membrane family (its KoA and area) that gives K0 (K0FromReference).
	Reference *Filter
	// MarginPercent is headroom on KoA: a filter qualifies when its KoA is
	// at least the required KoA times (1 + MarginPercent/100).
	MarginPercent float64
	Filters       []Filter
	// Current, when not nil, is the filter in use: the answer adds the
	// smallest QD and the smallest QB with which it reaches the target.
	Current          *Filter
	QDRange, QBRange *Range // flow solve ranges; nil for MinFlow to MaxFlow
	Sweep            *SizeSweepSpec
}

// ArrangementSize is the required filter for one arrangement. When the
// target is out of reach, Reachable is false, the KoA, area and NTU are
// null and Message says why and what would make it reachable.
type ArrangementSize struct {
	Reachable        bool     `json:"reachable"`
	KoA              *float64 `json:"koa"`
	AreaM2           *float64 `json:"area_m2"`
	NTU              *float64 `json:"ntu"`
	ClearanceCeiling float64  `json:"clearance_ceiling"`
	Message          string   `json:"message,omitempty"`
}

// FilterFit is how one listed filter does against the target.
type FilterFit struct {
	Label  string   `json:"label"`
	KoA    float64  `json:"koa"`
	AreaM2 *float64 `json:"area_m2"` // as given, or KoA/K0; null when neither
	// Clearance at QB and QD in the chosen arrangement, and its difference
	// from the target (negative: short of it), mL/min.
	Clearance    float64 `json:"clearance"`
	ClearanceGap float64 `json:"clearance_gap"`
	// KoAGapPercent is 100 (KoA/NeededKoA - 1): below 0 the filter falls
	// short of the target with the margin.
	KoAGapPercent float64 `json:"koa_gap_percent"`
	Meets         bool    `json:"meets"`
}

// FilterChoice is the pick from a list of filters.
type FilterChoice struct {
	MarginPercent float64  `json:"margin_percent"`
	NeededKoA     float64  `json:"needed_koa"` // required KoA x (1 + margin/100)
	NeededAreaM2  *float64 `json:"needed_area_m2"`
	// Chosen is the index in Filters of the smallest KoA that meets
	// NeededKoA (the first listed among equals); null when none does.
	Chosen  *int        `json:"chosen"`
	Filters []FilterFit `json:"filters"`
}

// FlowAnswer is one flow solve in a sizing: OK with the flow, or not OK
// with the error (the same shape as an API error).
type FlowAnswer struct {
	OK          bool        `json:"ok"`
	Flow        *float64    `json:"flow,omitempty"`
	Clearance   *float64    `json:"clearance,omitempty"`
	AtMinimum   bool        `json:"at_minimum"`
	Evaluations int         `json:"evaluations"`
	Range       [2]float64  `json:"range"`
	Error       *FieldError `json:"error,omitempty"`
}

// CurrentFilter is how the filter in use does, and the flows that would
// do with it.
type CurrentFilter struct {
	KoA          float64    `json:"koa"`
	AreaM2       *float64   `json:"area_m2"`
	Clearance    float64    `json:"clearance"`
	ClearanceGap float64    `json:"clearance_gap"`
	QD           FlowAnswer `json:"qd"` // smallest QD at this QB
	QB           FlowAnswer `json:"qb"` // smallest QB at this QD
	// RelativeTolerance of both flow solves (FlowTolerance).
	RelativeTolerance float64 `json:"relative_tolerance"`
}

// Sizing answers a SizeSpec. KoA, AreaM2, NTU and ClearanceCeiling are
// those of the chosen arrangement (Flow); both arrangements are side by
// side in Countercurrent and Cocurrent.
type Sizing struct {
	// K0 is the mass transfer coefficient used (cm/min), given or from the
	// reference filter; null when not known.
	K0   *float64 `json:"k0"`
	Flow string   `json:"flow"`
	// QBW is the blood-side flow of the model, mL/min: QB for an aqueous
	// solution, the blood-water flow for whole blood.
	QBW              float64         `json:"qbw"`
	KoA              float64         `json:"koa"`
	AreaM2           *float64        `json:"area_m2,omitempty"`
	NTU              float64         `json:"ntu"`
	ClearanceCeiling float64         `json:"clearance_ceiling"`
	Countercurrent   ArrangementSize `json:"countercurrent"`
	Cocurrent        ArrangementSize `json:"cocurrent"`
	Choice           *FilterChoice   `json:"choice,omitempty"`
	Current          *CurrentFilter  `json:"current_filter,omitempty"`
	Sweep            *SizeSweep      `json:"sweep,omitempty"`
}

// Size answers a sizing question: the required KoA (and area, when K0 is
// known) in both arrangements, the smallest listed filter that meets the
// target with the margin, the flows that would do with the filter in use,
// and the chart series. Inputs are checked in request order, then the
// target against the ceiling of s.Flow, which is refused as RequiredKoA
// refuses it; a target out of reach of the other arrangement only marks
// that arrangement unreachable. A flow solve that fails is reported in its
// FlowAnswer, not as an error of the whole.
func Size(s SizeSpec) (Sizing, error) { return SizeWith(s, nil) }

// SweepMemo keeps the chart series of the last sizing question answered
// with it and what they were computed from (the flow model, QB, QD, K0, the
// top of the KoA axis and the number of points). The series do not depend
// on the target clearance, the filters or the margin, except through the
// axis top, so a page that asks again with a new target (a keystroke)
// gets the same series without computing them again. The zero value is an
// empty memo; a SweepMemo is not safe for concurrent use.
type SweepMemo struct {
	key   sweepKey
	sweep *SizeSweep
}

type sweepKey struct {
	m                  sizeModel
	qb, qd, k0, koaMax float64
	n                  int
}

// SizeWith is Size with the chart series taken from memo when they were
// computed from the same inputs, and kept there when not. The series
// returned are shared with later answers: they must not be changed. A
// nil memo computes them every time.
func SizeWith(s SizeSpec, memo *SweepMemo) (Sizing, error) {
	if err := s.validate(); err != nil {
		return Sizing{}, err
	}
	if s.Reference != nil {
		s.K0, _ = K0FromReference(s.Reference.KoA, s.Reference.AreaM2)
	}
	m := s.model()
	koa, err := m.requiredKoA(s.Flow, s.QB, s.QD, s.Target)
	if err != nil {
		return Sizing{}, err
	}
	cmin := math.Min(m.qbw(s.QB), s.QD)
	out := Sizing{
		Flow:             s.Flow.String(),
		QBW:              m.qbw(s.QB),
		KoA:              koa,
		NTU:              koa / cmin,
		ClearanceCeiling: m.ceiling(s.Flow, s.QB, s.QD),
		Countercurrent:   s.arrangement(Countercurrent),
		Cocurrent:        s.arrangement(Cocurrent),
	}
	out.AreaM2 = s.area(koa)
	if s.K0 != 0 {
		k0 := s.K0
		out.K0 = &k0
	}

	filters := make([]resolvedFilter, len(s.Filters))
	for i, f := range s.Filters {
		filters[i], _ = s.resolveFilter(filterField(i), f, i)
	}
	if len(filters) > 0 {
		out.Choice = s.choose(koa, filters)
	}
	if s.Current != nil {
		c, _ := s.resolveFilter("current_filter", *s.Current, 0)
		out.Current = s.current(c)
	}
	if s.Sweep != nil {
		out.Sweep = s.sweep(koa, memo)
	}
	return out, nil
}

// filterField is the field of filter i of a size request: "filters[i]".
func filterField(i int) string { return "filters[" + strconv.Itoa(i) + "]" }

type resolvedFilter struct {
	label string
	koa   float64
	area  *float64
}

func (s SizeSpec) resolveFilter(field string, f Filter, i int) (resolvedFilter, error) {
	koa, area, err := f.resolve(field, s.K0)
	label := strings.TrimSpace(f.Label)
	if label == "" {
		label = "filter " + strconv.Itoa(i+1)
	}
	return resolvedFilter{label, koa, area}, err
}

// validate checks every input in request order; with a reference filter
// it works on the K0 that the reference gives.
func (s SizeSpec) validate() error {
	if err := checkTarget(s.Target); err != nil {
		return err
	}
	if err := checkFlow("qb", s.QB); err != nil {
		return err
	}
	if err := checkFlow("qd", s.QD); err != nil {
		return err
	}
	// The blood and the ultrafiltration, through Operating.Validate (KoA
	// and concentrations are not the question's).
	if err := (Operating{QB: s.QB, QD: s.QD, CBi: 1, Blood: s.Blood, Filtration: s.Filtration}).Validate(); err != nil {
		return err
	}
	if s.Flow != Countercurrent && s.Flow != Cocurrent {
		return fieldErrorf("flow", "must be \"countercurrent\" or \"cocurrent\"")
	}
	if s.K0 != 0 {
		if err := checkK0("k0", s.K0); err != nil {
			return err
		}
	}
	if s.Reference != nil {
		if s.K0 != 0 {
			return fieldErrorf("reference", "give K0 or a reference filter, not both")
		}
		k0, err := K0FromReference(s.Reference.KoA, s.Reference.AreaM2)
		if err != nil {
			return err
		}
		s.K0 = k0
	}
	switch m := s.MarginPercent; {
	case math.IsNaN(m) || math.IsInf(m, 0):
		return fieldErrorf("margin_percent", "must be a finite number")
	case m < 0 || m > MaxMarginPercent:
		return fieldErrorf("margin_percent", "must be from 0 to %g %% (got %g)", float64(MaxMarginPercent), m)
	}
	if len(s.Filters) > MaxFilters {
		return fieldErrorf("filters", "lists %d filters: at most %d", len(s.Filters), MaxFilters)
	}
	for i, f := range s.Filters {
		field := filterField(i)
		if n := utf8.RuneCountInString(f.Label); n > MaxLabelLength || !utf8.ValidString(f.Label) {
			return fieldErrorf(field+".label", "must be valid text of at most %d characters (got %d)", MaxLabelLength, n)
		}
		if _, err := s.resolveFilter(field, f, i); err != nil {
			return err
		}
	}
	if s.Current != nil {
		if _, err := s.resolveFilter("current_filter", *s.Current, 0); err != nil {
			return err
		}
	}
	for _, r := range []struct {
		field string
		r     *Range
	}{{"qd_range", s.QDRange}, {"qb_range", s.QBRange}} {
		if r.r != nil {
			if _, err := sweepRange(r.field, r.r, *r.r, checkFlow); err != nil {
				return err
			}
		}
	}
	if s.Sweep != nil {
		if n := s.Sweep.Points; n != 0 && (n < MinSweepPoints || n > MaxSweepPoints) {
			return fieldErrorf("sweep.points", "must be a whole number from %d to %d (got %d)", MinSweepPoints, MaxSweepPoints, n)
		}
		if k := s.Sweep.KoAMax; k != 0 {
			if err := checkFilterKoA("sweep", ".koa_max", k); err != nil {
				return err
			}
		}
	}
	return nil
}

// area returns KoA/K0 in m^2, or nil when K0 is not known.
func (s SizeSpec) area(koa float64) *float64 {
	if s.K0 == 0 {
		return nil
	}
	a := AreaM2(koa, s.K0)
	return &a
}

// arrangement sizes one arrangement, marking an unreachable target.
func (s SizeSpec) arrangement(a Arrangement) ArrangementSize {
	m := s.model()
	out := ArrangementSize{ClearanceCeiling: m.ceiling(a, s.QB, s.QD)}
	koa, err := m.requiredKoA(a, s.QB, s.QD, s.Target)
	if err != nil {
		var fe *FieldError
		if errors.As(err, &fe) {
			out.Message = fe.Message
		}
		return out
	}
	ntu := koa / math.Min(m.qbw(s.QB), s.QD)
	out.Reachable, out.KoA, out.AreaM2, out.NTU = true, &koa, s.area(koa), &ntu
	return out
}

// choose sets each listed filter against the required KoA with the margin.
func (s SizeSpec) choose(required float64, filters []resolvedFilter) *FilterChoice {
	needed := required * (1 + s.MarginPercent/100)
	c := &FilterChoice{MarginPercent: s.MarginPercent, NeededKoA: needed, NeededAreaM2: s.area(needed), Filters: make([]FilterFit, len(filters))}
	for i, f := range filters {
		k := s.model().clearance(s.Flow, s.QB, s.QD, f.koa)
		fit := FilterFit{
			Label:         f.label,
			KoA:           f.koa,
			AreaM2:        f.area,
			Clearance:     k,
			ClearanceGap:  k - s.Target,
			KoAGapPercent: 100 * (f.koa - needed) / needed,
			Meets:         f.koa >= needed,
		}
		c.Filters[i] = fit
		if fit.Meets && (c.Chosen == nil || f.koa < c.Filters[*c.Chosen].KoA) {
			c.Chosen = &i
		}
	}
	return c
}

// current evaluates the filter in use and solves for both flows.
func (s SizeSpec) current(f resolvedFilter) *CurrentFilter {
	m := s.model()
	k := m.clearance(s.Flow, s.QB, s.QD, f.koa)
	qd, qb := Range{MinFlow, MaxFlow}, Range{MinFlow, MaxFlow}
	if s.QDRange != nil {
		qd = *s.QDRange
	}
	if s.QBRange != nil {
		qb = *s.QBRange
	}
	solveQD, errQD := minimumFlow(s.Flow, "qd", s.QB, f.koa, s.Target, qd, m)
	solveQB, errQB := minimumFlow(s.Flow, "qb", s.QD, f.koa, s.Target, qb, m)
	return &CurrentFilter{
		KoA:               f.koa,
		AreaM2:            f.area,
		Clearance:         k,
		ClearanceGap:      k - s.Target,
		QD:                answer(solveQD, errQD, qd),
		QB:                answer(solveQB, errQB, qb),
		RelativeTolerance: FlowTolerance,
	}
}

func answer(s FlowSolve, err error, r Range) FlowAnswer {
	out := FlowAnswer{Range: [2]float64{r.Min, r.Max}}
	if err != nil {
		fe := &FieldError{Message: err.Error()}
		errors.As(err, &fe)
		out.Error = fe
		return out
	}
	out.OK, out.Flow, out.Clearance, out.AtMinimum, out.Evaluations = true, &s.Flow, &s.Clearance, s.AtMinimum, s.Evaluations
	return out
}

// sweep computes both chart series.
func (s SizeSpec) sweep(required float64, memo *SweepMemo) *SizeSweep {
	n := s.Sweep.Points
	if n == 0 {
		n = DefaultSweepPoints
	}
	koaMax := s.Sweep.KoAMax
	if koaMax == 0 {
		koaMax = math.Max(2000, 2*required)
	}
	key := sweepKey{m: s.model(), qb: s.QB, qd: s.QD, k0: s.K0, koaMax: koaMax, n: n}
	if memo != nil && memo.sweep != nil && memo.key == key {
		return memo.sweep
	}
	sw := &SizeSweep{
		KoAMax:         koaMax,
		AreaM2Max:      s.area(koaMax),
		Countercurrent: key.m.series(Countercurrent, s.QB, s.QD, koaMax, s.K0, n),
		Cocurrent:      key.m.series(Cocurrent, s.QB, s.QD, koaMax, s.K0, n),
	}
	if memo != nil {
		memo.key, memo.sweep = key, sw
	}
	return sw
}
