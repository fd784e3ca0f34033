package core

import (
	"math"
	"math/rand/v2"
)

// The uncertainty of a clearance check.
//
// Each reading (QB, QD, QF and the four concentrations) is taken to lie
// anywhere within ± its limit, with no value more likely than another: the
// rectangular distribution the Guide to the Expression of Uncertainty in
// Measurement (JCGM 100:2008, GUM, 4.3.7; from memory) prescribes when only
// limits are known, with standard uncertainty a/sqrt(3) for half-width a.
// A flow's limit is a share of the reading; a concentration's is a share of
// the reading plus an absolute floor, the "± (% of reading + digits)" form
// of instrument specifications (common practice, no source). A reading of
// exactly 0 (fresh dialysate, no ultrafiltration) is taken as known.
// Readings are taken as independent, which is cautious when one analyser
// measures every sample (a shared calibration error cancels in the
// ratios).
//
// Why the floor matters: the blood-side clearance is QB times the
// extraction ratio 1 - CBo/CBi, so near the ceiling (QB the smaller flow)
// KoA depends on CBo/CBi, and a purely relative error of a small CBo moves
// it little. What makes KoA ill-conditioned there is an error that does
// not shrink with CBo: the analyser's last digit or detection limit, or QD
// as the smaller flow (then QB's error moves the clearance but not the
// ceiling).
//
// Two propagations are reported:
//   - a seeded Monte Carlo (GUM Supplement 1, JCGM 101:2008; from memory):
//     UncertaintySamples draws of every reading, the check's arithmetic on
//     each, and the 2.5th and 97.5th percentiles (nearest rank) as a 95 %
//     interval. A draw whose clearance no filter reaches counts as an
//     infinite KoA, so the interval loses its upper end when more than
//     2.5 % of draws do: the ill-conditioning of KoA near the ceiling shows
//     as "no upper bound" rather than as a misleading number.
//   - the linearised interval, value ± k u with k = 2 (GUM 6.3.3, about
//     95 %; from memory), u combining the sensitivity coefficients, found by
//     central differences with relative step sensitivityStep, times each
//     reading's standard uncertainty. It is meaningful while the result is
//     nearly linear in the readings over their uncertainty; where the two
//     intervals differ, the Monte Carlo one is right.

const (
	// UncertaintySamples is the number of Monte Carlo draws: the 2.5th
	// percentile of 4000 draws has a sampling error of about
	// sqrt(0.025 x 0.975/4000) = 0.25 % in probability, small beside the
	// interval it bounds.
	UncertaintySamples = 4000
	// UncertaintyCoverage is the probability the intervals cover.
	UncertaintyCoverage = 0.95
	// coverageFactor is k of the linearised interval.
	coverageFactor = 2
	// sensitivityStep is the relative step of the central differences:
	// the truncation error (about step^2) and the rounding error (about
	// 1e-16/step) are both near 1e-12 relative.
	sensitivityStep = 1e-6
	// rngStream is the second word of the PCG generator's state; the seed
	// is the first.
	rngStream = 0x636c6561726b6974
)

// Uncertainty holds the 95 % intervals of a check's results.
type Uncertainty struct {
	// The ± limits used: per cent of each reading, and the absolute floor
	// of each concentration (in the concentration unit).
	ConcentrationPercent float64 `json:"concentration_percent"`
	ConcentrationFloor   float64 `json:"concentration_floor"`
	FlowPercent          float64 `json:"flow_percent"`
	Samples              int     `json:"samples"`
	Seed                 uint64  `json:"seed"`
	Coverage             float64 `json:"coverage"`

	Clearance         Interval `json:"clearance"`
	MassBalanceError  Interval `json:"mass_balance_error"`
	KoACountercurrent Interval `json:"koa_countercurrent"`
	KoACocurrent      Interval `json:"koa_cocurrent"`
}

// Interval is one result's 95 % interval by both propagations. A null end
// has no finite bound.
type Interval struct {
	Low  *float64 `json:"low"`  // Monte Carlo 2.5th percentile
	High *float64 `json:"high"` // Monte Carlo 97.5th percentile
	// LinearLow and LinearHigh are value ± 2u; null when the result itself
	// is null or a difference step leaves the arrangement's reach.
	LinearLow  *float64 `json:"linear_low"`
	LinearHigh *float64 `json:"linear_high"`
	// UnboundedFraction is the share of draws with no finite value: a
	// clearance no filter reaches (KoA), or no blood-side removal (mass
	// balance error).
	UnboundedFraction float64 `json:"unbounded_fraction"`
}

// outputs lists the results propagated, in the order of Uncertainty.
func outputs(s solution) [4]float64 {
	return [4]float64{s.k, s.balance, s.koa[0], s.koa[1]}
}

// readings returns pointers to the readings of m and whether each is a
// flow (otherwise a concentration).
func (m *Measurement) readings() ([7]*float64, [7]bool) {
	return [7]*float64{&m.QB, &m.QD, &m.QF, &m.CBi, &m.CBo, &m.CDi, &m.CDo},
		[7]bool{true, true, true, false, false, false, false}
}

// halfWidth returns the ± limit of reading x; a reading of 0 is known.
func (o CheckOptions) halfWidth(x float64, flow bool) float64 {
	switch {
	case x == 0:
		return 0
	case flow:
		return o.FlowUncertainty * math.Abs(x)
	}
	return o.ConcentrationUncertainty*math.Abs(x) + o.ConcentrationFloor
}

// propagate carries the uncertainties of o through the check of m.
func propagate(m Measurement, o CheckOptions) Uncertainty {
	u := Uncertainty{
		ConcentrationPercent: 100 * o.ConcentrationUncertainty,
		ConcentrationFloor:   o.ConcentrationFloor,
		FlowPercent:          100 * o.FlowUncertainty,
		Samples:              UncertaintySamples,
		Seed:                 o.Seed,
		Coverage:             UncertaintyCoverage,
	}
	intervals := [4]*Interval{&u.Clearance, &u.MassBalanceError, &u.KoACountercurrent, &u.KoACocurrent}

	// Monte Carlo. Every reading is drawn in a fixed order, even those
	// known exactly, so that a seed gives the same draws whatever the
	// inputs.
	var half [7]float64
	values, flows := m.readings()
	for k, v := range values {
		half[k] = o.halfWidth(*v, flows[k])
	}
	// With ultrafiltration the central in-situ KoA, against its closed-form
	// counterpart, starts the root finding of every draw (drawHint).
	central := solve(m, noHint)
	hint := newDrawHint(m, central)
	quick := hint
	quick.quick = true
	rng := rand.New(rand.NewPCG(o.Seed, rngStream))
	var draws [4][]float64
	for j := range draws {
		draws[j] = make([]float64, UncertaintySamples)
	}
	for i := range UncertaintySamples {
		d := m
		values, _ := d.readings()
		for k, v := range values {
			*v += half[k] * (2*rng.Float64() - 1)
		}
		for j, y := range outputs(solve(d, quick)) {
			draws[j][i] = y
		}
	}
	lowRank := int(math.Ceil((1-UncertaintyCoverage)/2*UncertaintySamples)) - 1
	highRank := int(math.Ceil((1+UncertaintyCoverage)/2*UncertaintySamples)) - 1
	for j, v := range draws {
		unbounded := 0
		for _, y := range v {
			if math.IsInf(y, 0) {
				unbounded++
			}
		}
		// The high rank first: selecting it leaves every smaller value
		// before it, where the low rank is then selected.
		intervals[j].High = finite(selectRank(v, highRank))
		intervals[j].Low = finite(selectRank(v[:highRank], lowRank))
		intervals[j].UnboundedFraction = float64(unbounded) / UncertaintySamples
	}

	// Linearised: u^2 = sum over readings of (df/dx a/sqrt(3))^2, a the
	// half-width, df/dx by a central difference of step sensitivityStep x.
	centre := outputs(central)
	var variance [4]float64
	var broken [4]bool
	for k := range 7 {
		if half[k] == 0 {
			continue
		}
		up, down := m, m
		vu, _ := up.readings()
		vd, _ := down.readings()
		step := sensitivityStep * *vu[k]
		*vu[k] += step
		*vd[k] -= step
		fu, fd := outputs(solve(up, hint)), outputs(solve(down, hint))
		for j := range centre {
			if math.IsInf(fu[j], 0) || math.IsInf(fd[j], 0) {
				broken[j] = true
				continue
			}
			c := (fu[j] - fd[j]) / (2 * step) * half[k] / math.Sqrt(3)
			variance[j] += c * c
		}
	}
	for j, y := range centre {
		if broken[j] || math.IsInf(y, 0) {
			continue
		}
		half := coverageFactor * math.Sqrt(variance[j])
		intervals[j].LinearLow, intervals[j].LinearHigh = ptr(y-half), ptr(y+half)
	}
	return u
}

// finite returns &v, or nil when v is infinite.
func finite(v float64) *float64 {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return nil
	}
	return &v
}

// selectRank returns the value of rank k (from 0) of v, which must hold no
// NaN, and leaves v partitioned around it: v[:k] no larger, v[k+1:] no
// smaller. Hoare's quickselect with a median-of-three pivot (Hoare, CACM
// 1961, Algorithm 65 FIND; from memory): linear time on average, where
// sorting the draws would be n log n.
func selectRank(v []float64, k int) float64 {
	lo, hi := 0, len(v)-1
	for lo < hi {
		a, b, c := v[lo], v[lo+(hi-lo)/2], v[hi]
		pivot := max(min(a, b), min(max(a, b), c)) // the median of the three
		i, j := lo, hi
		for i <= j {
			for v[i] < pivot {
				i++
			}
			for v[j] > pivot {
				j--
			}
			if i <= j {
				v[i], v[j] = v[j], v[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return v[k] // between the two halves: equal to the pivot
		}
	}
	return v[k]
}
