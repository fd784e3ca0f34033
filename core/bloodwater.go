package core

import "math"

// Blood water. Urea is carried by the water of the blood, not by the
// whole blood volume, so with whole blood the flow that matters on the
// blood side is the blood-water flow
//
//	QBW = QB (Fp (1 - Hct) + Fr Hct)
//
// with Fp the water fraction of plasma and Fr that of the red cells
// (attributed to Lim, Flanigan and Depner; from memory). With an aqueous
// test solution, as in a bench test of a dialyzer, QBW = QB and no
// correction applies.
const (
	// DefaultPlasmaWater Fp: plasma is about 93 % water (from memory,
	// Lim, Flanigan and Depner; 0.93 is also the plasma water fraction used
	// in Vartia's dissertation on urea kinetics).
	DefaultPlasmaWater = 0.93
	// DefaultRedCellWater Fr: red cells are about 72 % water (from memory,
	// Lim, Flanigan and Depner).
	DefaultRedCellWater = 0.72
	// MaxHct bounds the haematocrit, percent: packed red cells stay below
	// it (common practice, no source).
	MaxHct = 80
)

// WholeBlood describes the blood when a calculation works with whole
// blood rather than an aqueous test solution.
type WholeBlood struct {
	// Hct is the haematocrit in percent (32 for 0.32 L/L), 0 to MaxHct.
	Hct float64 `json:"hct"`
	// PlasmaWater Fp and RedCellWater Fr are water fractions, above 0 and
	// at most 1 (DefaultPlasmaWater and DefaultRedCellWater).
	PlasmaWater  float64 `json:"plasma_water"`
	RedCellWater float64 `json:"red_cell_water"`
}

// DefaultWholeBlood returns WholeBlood with haematocrit hct (percent) and
// the default water fractions.
func DefaultWholeBlood(hct float64) WholeBlood {
	return WholeBlood{Hct: hct, PlasmaWater: DefaultPlasmaWater, RedCellWater: DefaultRedCellWater}
}

// Validate reports the first field that cannot be used, by its API name.
// A haematocrit between 0 and 1 is refused as a likely fraction typed
// where a percentage is asked for (no blood has a haematocrit below 1 %).
func (b WholeBlood) Validate() error {
	switch h := b.Hct; {
	case math.IsNaN(h) || math.IsInf(h, 0):
		return fieldErrorf("hct", "must be a finite number")
	case h < 0:
		return fieldErrorf("hct", "must not be negative (got %g %%)", h)
	case h > 0 && h < 1:
		return fieldErrorf("hct", "is in percent: %g would be %g %%; for a haematocrit of %g L/L enter %g", h, h, h, 100*h)
	case h > MaxHct:
		return fieldErrorf("hct", "is beyond any blood (maximum %g %%, got %g)", float64(MaxHct), h)
	}
	for _, f := range [...]struct {
		field string
		v     float64
	}{{"plasma_water", b.PlasmaWater}, {"red_cell_water", b.RedCellWater}} {
		switch {
		case math.IsNaN(f.v) || math.IsInf(f.v, 0):
			return fieldErrorf(f.field, "must be a finite number")
		case f.v <= 0 || f.v > 1:
			return fieldErrorf(f.field, "is a water fraction: above 0 and at most 1 (got %g)", f.v)
		}
	}
	return nil
}

// WaterFraction returns the water fraction of the blood,
// Fp (1 - Hct) + Fr Hct, with Hct as a fraction.
func (b WholeBlood) WaterFraction() float64 {
	h := b.Hct / 100
	return b.PlasmaWater*(1-h) + b.RedCellWater*h
}

// BloodWaterFlow returns QBW = QB (Fp (1 - Hct) + Fr Hct) in mL/min, or
// the first field of b that cannot be used.
func BloodWaterFlow(qb float64, b WholeBlood) (float64, error) {
	if err := b.Validate(); err != nil {
		return 0, err
	}
	return qb * b.WaterFraction(), nil
}
