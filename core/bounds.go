package core

import "math"

// Physical bounds on inputs. They are far wider than any dialysis machine
// or filter (routine QB 200-500, QD 300-800 mL/min, urea KoA 500-1300
// mL/min: common practice) and exist so that every accepted input gives
// finite, meaningful numbers.
const (
	MinFlow          = 1e-6 // mL/min; smaller flows are refused as zero
	MaxFlow          = 1e5  // mL/min
	MaxKoA           = 1e8  // mL/min
	MaxConcentration = 1e9  // any unit
	// MinConcentration is the smallest blood inlet concentration: it
	// bounds the ratio CDi/CBi, which multiplies clearance, so that
	// clearance stays finite (at most MaxFlow MaxConcentration /
	// MinConcentration = 1e44 in size) and no concentration is subnormal.
	MinConcentration = 1e-30 // any unit
)

// checkFlow validates a flow that must be strictly positive.
func checkFlow(field string, v float64) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf(field, "must be a finite number")
	case v <= 0:
		return fieldErrorf(field, "must be greater than 0 mL/min (got %g)", v)
	case v < MinFlow:
		return fieldErrorf(field, "is too small to compute with (minimum %g mL/min, got %g)", MinFlow, v)
	case v > MaxFlow:
		return fieldErrorf(field, "is beyond any dialysis flow (maximum %g mL/min, got %g)", MaxFlow, v)
	}
	return nil
}

// checkKoA validates a mass transfer-area coefficient, which may be zero.
func checkKoA(field string, v float64) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf(field, "must be a finite number")
	case v < 0:
		return fieldErrorf(field, "must not be negative (got %g mL/min)", v)
	case v > MaxKoA:
		return fieldErrorf(field, "is beyond any filter (maximum %g mL/min, got %g)", MaxKoA, v)
	}
	return nil
}

// checkConcentration validates a concentration; positive demands at
// least MinConcentration.
func checkConcentration(field string, v float64, positive bool) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fieldErrorf(field, "must be a finite number")
	case positive && v <= 0:
		return fieldErrorf(field, "must be greater than 0 (got %g)", v)
	case positive && v < MinConcentration:
		return fieldErrorf(field, "is too small to compute with (minimum %g, got %g)", MinConcentration, v)
	case v < 0:
		return fieldErrorf(field, "must not be negative (got %g)", v)
	case v > MaxConcentration:
		return fieldErrorf(field, "is out of range (maximum %g, got %g)", MaxConcentration, v)
	}
	return nil
}
