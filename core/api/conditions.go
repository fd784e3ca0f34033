package api

import "clearkit/core"

// Conditions are the request fields beyond the ideal model: whole blood
// rather than an aqueous test solution, and ultrafiltration. Every
// calculation that takes an operating point embeds them, so that they
// read the same everywhere.
type Conditions struct {
	// Hct is the haematocrit in percent; present (even 0) for whole
	// blood, absent for an aqueous test solution.
	Hct Number `json:"hct"`
	// PlasmaWater and RedCellWater are the water fractions of plasma and
	// red cells, defaults core.DefaultPlasmaWater and
	// core.DefaultRedCellWater; given only with hct.
	PlasmaWater  Number `json:"plasma_water"`
	RedCellWater Number `json:"red_cell_water"`
	// QF is the ultrafiltration rate, mL/min, default 0.
	QF Number `json:"qf"`
	// Sieving is the sieving coefficient, 0 to 1, default
	// core.DefaultSieving (urea).
	Sieving Number `json:"sieving"`
}

// apply reads the conditions into op, an operating point whose own fields
// are valid, and validates the result.
func (c Conditions) apply(op *core.Operating) (err error) {
	hct, whole, err := c.Hct.value("hct")
	if err != nil {
		return err
	}
	if whole {
		b := core.DefaultWholeBlood(hct)
		if b.PlasmaWater, err = c.PlasmaWater.Optional("plasma_water", core.DefaultPlasmaWater); err != nil {
			return err
		}
		if b.RedCellWater, err = c.RedCellWater.Optional("red_cell_water", core.DefaultRedCellWater); err != nil {
			return err
		}
		op.Blood = &b
	} else {
		for _, f := range []struct {
			name string
			n    Number
		}{{"plasma_water", c.PlasmaWater}, {"red_cell_water", c.RedCellWater}} {
			if _, given, err := f.n.value(f.name); err != nil {
				return err
			} else if given {
				return fieldErr(f.name, "applies to whole blood only: give the haematocrit hct as well, or leave it out for an aqueous test solution")
			}
		}
	}
	if op.QF, err = c.QF.Optional("qf", 0); err != nil {
		return err
	}
	if op.Sieving, err = c.Sieving.Optional("sieving", core.DefaultSieving); err != nil {
		return err
	}
	return op.Validate()
}
