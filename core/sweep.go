package core

import "math"

// Sweep points: how many a series may have.
const (
	DefaultSweepPoints = 101
	MinSweepPoints     = 2
	MaxSweepPoints     = 1001
)

// Range is a closed interval [Min, Max] swept in equal steps.
type Range struct{ Min, Max float64 }

// SweepSpec says which ranges to sweep. A nil range takes its default:
// QB 25 to max(600, 2 QB), QD 50 to max(1000, 2 QD), KoA 0 to
// max(2000, 2 KoA), all mL/min, which cover routine machines (QB 200-500,
// QD 300-800 mL/min; common practice) with the operating point inside.
// With ultrafiltration the QB range starts at max(25, 2 QF/w), w the
// water fraction of the blood (1 for an aqueous solution), so that QF is
// at most half the blood-side flow anywhere on the chart; a QB range given
// must keep the blood-side flow above QF.
type SweepSpec struct {
	Points      int // 0 means DefaultSweepPoints
	QB, QD, KoA *Range
}

// Series is clearance along one swept variable for both arrangements,
// with each arrangement's clearance ceiling at every point.
type Series struct {
	X                     []float64 `json:"x"`
	Countercurrent        []float64 `json:"countercurrent"`
	Cocurrent             []float64 `json:"cocurrent"`
	CountercurrentCeiling []float64 `json:"countercurrent_ceiling"`
	CocurrentCeiling      []float64 `json:"cocurrent_ceiling"`
}

// Sweeps holds clearance against QB, against QD and against KoA, each with
// the other two variables held at the operating point.
type Sweeps struct {
	QB  Series `json:"qb"`
	QD  Series `json:"qd"`
	KoA Series `json:"koa"`
	// packed is every series above end to end, in the order of
	// PackedSeries: the slices above are windows of it.
	packed []float64
}

// PackedSeries names the series of Sweeps in the order Packed lays them
// end to end, as "axis.member" with the JSON names.
var PackedSeries = [...]string{
	"qb.x", "qb.countercurrent", "qb.cocurrent", "qb.countercurrent_ceiling", "qb.cocurrent_ceiling",
	"qd.x", "qd.countercurrent", "qd.cocurrent", "qd.countercurrent_ceiling", "qd.cocurrent_ceiling",
	"koa.x", "koa.countercurrent", "koa.cocurrent", "koa.countercurrent_ceiling", "koa.cocurrent_ceiling",
}

// Packed returns every series end to end in the order of PackedSeries,
// Points() values each. It shares memory with s.
func (s Sweeps) Packed() []float64 { return s.packed }

// Points returns the number of points of each series.
func (s Sweeps) Points() int { return len(s.QB.X) }

// Sweep computes the chart series around op.
func Sweep(op Operating, spec SweepSpec) (Sweeps, error) {
	return SweepInto(nil, op, spec)
}

// SweepInto is Sweep computing the series into storage when it has room
// for them (len(PackedSeries) times the points, its capacity counts), and
// into new storage when not: a caller done with each result before it asks
// for the next (the WebAssembly bridge, which copies the series to the
// page) keeps one and spares an allocation of some 12 KB a call. The
// result shares storage.
func SweepInto(storage []float64, op Operating, spec SweepSpec) (Sweeps, error) {
	if err := op.Validate(); err != nil {
		return Sweeps{}, err
	}
	n := spec.Points
	if n == 0 {
		n = DefaultSweepPoints
	}
	if n < MinSweepPoints || n > MaxSweepPoints {
		return Sweeps{}, fieldErrorf("sweep.points", "must be a whole number from %d to %d (got %d)", MinSweepPoints, MaxSweepPoints, n)
	}
	water := op.BloodSideFlow() / op.QB
	qb, err := sweepRange("sweep.qb", spec.QB, Range{math.Max(25, 2*op.QF/water), math.Max(600, 2*op.QB)}, checkFlow)
	if err != nil {
		return Sweeps{}, err
	}
	if low := qb.Min * water; op.QF > 0 && low-op.QF < MinFlow {
		return Sweeps{}, fieldErrorf("sweep.qb", "must start where the blood-side flow stays above qf %g mL/min (got %g, giving %.6g)", op.QF, qb.Min, low)
	}
	qd, err := sweepRange("sweep.qd", spec.QD, Range{50, math.Max(1000, 2*op.QD)}, checkFlow)
	if err != nil {
		return Sweeps{}, err
	}
	koa, err := sweepRange("sweep.koa", spec.KoA, Range{0, math.Max(2000, 2*op.KoA)}, checkKoA)
	if err != nil {
		return Sweeps{}, err
	}
	size := len(PackedSeries) * n
	if cap(storage) < size {
		storage = make([]float64, size)
	}
	// series writes every value: storage needs no clearing.
	s := Sweeps{packed: storage[:size]}
	window := s.packed
	for _, axis := range []struct {
		series *Series
		r      Range
		swept  sweptVariable
	}{{&s.QB, qb, sweptQB}, {&s.QD, qd, sweptQD}, {&s.KoA, koa, sweptKoA}} {
		ser := axis.series
		for _, member := range []*[]float64{&ser.X, &ser.Countercurrent, &ser.Cocurrent, &ser.CountercurrentCeiling, &ser.CocurrentCeiling} {
			*member, window = window[:n:n], window[n:]
		}
		series(ser, axis.r, axis.swept, op)
	}
	return s, nil
}

// sweptVariable is the variable a series sweeps.
type sweptVariable int

const (
	sweptQB sweptVariable = iota
	sweptQD
	sweptKoA
)

func sweepRange(field string, r *Range, def Range, check func(string, float64) error) (Range, error) {
	if r == nil {
		return def, nil
	}
	if err := check(field, r.Min); err != nil {
		return Range{}, err
	}
	if err := check(field, r.Max); err != nil {
		return Range{}, err
	}
	if !(r.Min < r.Max) {
		return Range{}, fieldErrorf(field, "minimum must be below maximum (got %g to %g)", r.Min, r.Max)
	}
	return *r, nil
}

// series fills s (its slices already sized) with both arrangements at
// equally spaced points of r, the swept variable replaced in op.
func series(s *Series, r Range, v sweptVariable, op Operating) {
	n := len(s.X)
	step := (r.Max - r.Min) / float64(n-1)
	if op.QF != 0 {
		for i := range n {
			x := r.Min + float64(i)*step
			if i == n-1 {
				x = r.Max
			}
			o := op
			switch v {
			case sweptQB:
				o.QB = x
			case sweptQD:
				o.QD = x
			default:
				o.KoA = x
			}
			o = o.model()
			s.X[i] = x
			s.Countercurrent[i], s.CountercurrentCeiling[i] = clearanceAt(Countercurrent, o)
			s.Cocurrent[i], s.CocurrentCeiling[i] = clearanceAt(Cocurrent, o)
		}
		return
	}
	// Without ultrafiltration: the closed forms, both arrangements at once
	// (dialysancePair gives what Dialysance and Ceiling give, rounding for
	// rounding; the loop above is four times slower under WebAssembly).
	// QB enters the model as the blood-side flow, as in Operating.model.
	f := op.drivingFraction()
	water := 1.0
	if op.Blood != nil {
		water = op.Blood.WaterFraction()
	}
	qb, qd, koa := op.model().QB, op.QD, op.KoA
	flows := pairFlows(qb, qd) // along KoA the flows stay
	for i := range n {
		x := r.Min + float64(i)*step
		if i == n-1 {
			x = r.Max
		}
		switch v {
		case sweptQB:
			qb = x
			if op.Blood != nil {
				qb = x * water
			}
		case sweptQD:
			qd = x
		default:
			koa = x
		}
		if v != sweptKoA {
			flows = pairFlows(qb, qd)
		}
		p := flows.at(koa)
		s.X[i] = x
		s.Countercurrent[i], s.CountercurrentCeiling[i] = p.counter*f, p.counterCeiling*f
		s.Cocurrent[i], s.CocurrentCeiling[i] = p.co*f, p.coCeiling*f
	}
}

// clearanceAt returns the clearance of arrangement a at op (as the model
// sees it) and its ceiling: D (CBi - CDi)/CBi without ultrafiltration,
// K - D CDi/CBi from Transfer with it.
func clearanceAt(a Arrangement, op Operating) (k, ceiling float64) {
	if op.QF == 0 {
		f := op.drivingFraction()
		return Dialysance(a, op.QB, op.QD, op.KoA) * f, Ceiling(a, op.QB, op.QD) * f
	}
	r := op.CDi / op.CBi
	kf, d := Transfer(a, op.QB, op.QD, op.KoA, op.Filtration)
	kc, dc := TransferCeiling(a, op.QB, op.QD, op.QF)
	return kf - d*r, kc - dc*r
}
