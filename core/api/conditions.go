package api

import "clearkit/core"

// Conditions are the request fields beyond the ideal model: whole blood
// rather than an aqueous test solution, and ultrafiltration. The
// calculations that take an operating point embed them, so that they read
// the same everywhere (check, which has qf among its measurements, embeds
// WholeBloodFields and adds sieving).
type Conditions struct {
	WholeBloodFields
	// QF is the ultrafiltration rate, mL/min, default 0.
	QF Number `json:"qf"`
	// Sieving is the sieving coefficient, 0 to 1, default
	// core.DefaultSieving (urea).
	Sieving Number `json:"sieving"`
}

// WholeBloodFields are the fields of whole blood.
type WholeBloodFields struct {
	// Hct is the haematocrit in percent; present (even 0) for whole
	// blood, absent for an aqueous test solution.
	Hct Number `json:"hct"`
	// PlasmaWater and RedCellWater are the water fractions of plasma and
	// red cells, defaults core.DefaultPlasmaWater and
	// core.DefaultRedCellWater; given only with hct.
	PlasmaWater  Number `json:"plasma_water"`
	RedCellWater Number `json:"red_cell_water"`
}

// read returns the blood, nil for an aqueous solution (hct absent). It
// checks only the numbers' form; core validates their values.
func (w *WholeBloodFields) read() (*core.WholeBlood, error) {
	hct, whole, err := w.Hct.value("hct")
	if err != nil {
		return nil, err
	}
	if !whole {
		if err := bloodOnly(&w.PlasmaWater, "plasma_water"); err != nil {
			return nil, err
		}
		return nil, bloodOnly(&w.RedCellWater, "red_cell_water")
	}
	b := core.DefaultWholeBlood(hct)
	if b.PlasmaWater, err = w.PlasmaWater.Optional("plasma_water", core.DefaultPlasmaWater); err != nil {
		return nil, err
	}
	if b.RedCellWater, err = w.RedCellWater.Optional("red_cell_water", core.DefaultRedCellWater); err != nil {
		return nil, err
	}
	return &b, nil
}

// bloodOnly refuses a field of whole blood given for an aqueous solution.
func bloodOnly(n *Number, field string) error {
	if _, given, err := n.value(field); err != nil || !given {
		return err
	}
	return fieldErr(field, "applies to whole blood only: give the haematocrit hct as well, or leave it out for an aqueous test solution")
}

// apply reads the conditions into op, an operating point whose own fields
// are valid. It does not validate the result: core.Compare, which compare
// hands it to next, does, with the same error (under WebAssembly each
// validation is some 45 ns of a call the page makes at every keystroke).
func (c *Conditions) apply(op *core.Operating) (err error) {
	if op.Blood, err = c.read(); err != nil {
		return err
	}
	if op.QF, err = c.QF.Optional("qf", 0); err != nil {
		return err
	}
	op.Sieving, err = c.Sieving.Optional("sieving", core.DefaultSieving)
	return err
}
