package api_test

import (
	"encoding/json"
	"fmt"
	"math"

	"clearkit/core"
)

func init() { physicalChecks["size"] = sizeBounds }

// sizeBounds: the echoed input lies within core's bounds; the required KoA
// is positive, at most MaxKoA, with NTU = KoA/min(QBW, QD) and the area
// KoA/K0/1e4 (REFERENCES); the target lies below the arrangement's
// ceiling (counter-current min(QBW, QD + QF), co-current
// QBW (QD + QF)/(QBW + QD), QBW the blood-water flow, QB for an aqueous
// solution: the ideal ceilings without ultrafiltration);
// counter-current never needs more KoA than co-current (it never clears
// less, property_test.go); the filter list keeps its definitions (a filter
// meets the target when its KoA reaches the required KoA with the margin;
// the chosen one meets it and none smaller does; each clearance lies
// between 0 and the ceiling); a flow solve that succeeds reaches the
// target inside its range, one that fails has an error with a limit below
// the target; the sweep series rise below their ceilings up to koa_max.
func sizeBounds(response []byte) error {
	type arrangement struct {
		Reachable        bool     `json:"reachable"`
		KoA              *float64 `json:"koa"`
		ClearanceCeiling float64  `json:"clearance_ceiling"`
		Message          string   `json:"message"`
	}
	type flowAnswer struct {
		OK        bool       `json:"ok"`
		Flow      *float64   `json:"flow"`
		Clearance *float64   `json:"clearance"`
		Range     [2]float64 `json:"range"`
		Error     *struct {
			Field string   `json:"field"`
			Limit *float64 `json:"limit"`
		} `json:"error"`
	}
	var r struct {
		Input struct {
			Target float64 `json:"target_clearance"`
			QB     float64 `json:"qb"`
			QD     float64 `json:"qd"`
			Flow   string  `json:"flow"`
			Margin float64 `json:"margin_percent"`
			// Whole blood and ultrafiltration (size_conditions.go): the
			// model works at the blood-water flow qbw, the ceilings are
			// TransferCeiling's.
			Blood   *core.WholeBlood `json:"blood"`
			QF      float64          `json:"qf"`
			Sieving float64          `json:"sieving"`
		} `json:"input"`
		QBW              float64     `json:"qbw"`
		K0               *float64    `json:"k0"`
		Flow             string      `json:"flow"`
		KoA              float64     `json:"koa"`
		AreaM2           *float64    `json:"area_m2"`
		NTU              float64     `json:"ntu"`
		ClearanceCeiling float64     `json:"clearance_ceiling"`
		Countercurrent   arrangement `json:"countercurrent"`
		Cocurrent        arrangement `json:"cocurrent"`
		Choice           *struct {
			NeededKoA float64 `json:"needed_koa"`
			Chosen    *int    `json:"chosen"`
			Filters   []struct {
				KoA          float64 `json:"koa"`
				Clearance    float64 `json:"clearance"`
				ClearanceGap float64 `json:"clearance_gap"`
				Meets        bool    `json:"meets"`
			} `json:"filters"`
		} `json:"choice"`
		Current *struct {
			Clearance float64    `json:"clearance"`
			QD        flowAnswer `json:"qd"`
			QB        flowAnswer `json:"qb"`
		} `json:"current_filter"`
		Sweep *struct {
			KoAMax         float64         `json:"koa_max"`
			Countercurrent core.SizeSeries `json:"countercurrent"`
			Cocurrent      core.SizeSeries `json:"cocurrent"`
		} `json:"sweep"`
	}
	if err := json.Unmarshal(response, &r); err != nil {
		return err
	}
	in := r.Input
	if !(in.Target > 0 && in.QB >= core.MinFlow && in.QB <= core.MaxFlow && in.QD >= core.MinFlow && in.QD <= core.MaxFlow &&
		in.Margin >= 0 && in.Margin <= core.MaxMarginPercent && (in.Flow == "countercurrent" || in.Flow == "cocurrent") && r.Flow == in.Flow) {
		return fmt.Errorf("input %+v (flow %q) outside core's bounds", in, r.Flow)
	}
	qbw := in.QB
	if b := in.Blood; b != nil {
		qbw *= b.PlasmaWater*(1-b.Hct/100) + b.RedCellWater*b.Hct/100
	}
	if !within(r.QBW, qbw, qbw) || !(in.QF >= 0 && in.QF < qbw && in.Sieving >= 0 && in.Sieving <= 1) {
		return fmt.Errorf("qbw %g, qf %g, sieving %g: want qbw %g above qf, sieving 0 to 1", r.QBW, in.QF, in.Sieving, qbw)
	}
	// Counter-current min(QBW, QD + QF), co-current QBW (QD + QF)/(QBW + QD):
	// min(QB, QD) and QB QD/(QB + QD) without ultrafiltration.
	ceilings := map[string]float64{"countercurrent": math.Min(qbw, in.QD+in.QF), "cocurrent": qbw * (in.QD + in.QF) / (qbw + in.QD)}
	if !(r.KoA > 0 && r.KoA <= core.MaxKoA) || !within(r.NTU, r.KoA/math.Min(qbw, in.QD), r.KoA/math.Min(qbw, in.QD)) {
		return fmt.Errorf("KoA %g, NTU %g: want 0 < KoA <= MaxKoA and NTU = KoA/min(QBW, QD)", r.KoA, r.NTU)
	}
	if c := ceilings[in.Flow]; !within(r.ClearanceCeiling, c, c) || !(in.Target < r.ClearanceCeiling) {
		return fmt.Errorf("target %g, ceiling %g: want the %s ceiling %g, above the target", in.Target, r.ClearanceCeiling, in.Flow, c)
	}
	if (r.K0 == nil) != (r.AreaM2 == nil) || (r.K0 != nil && !(*r.K0 >= core.MinK0 && *r.K0 <= core.MaxK0 && within(*r.AreaM2, r.KoA / *r.K0 / 1e4, r.KoA / *r.K0 / 1e4))) {
		return fmt.Errorf("k0 %v, area %v: want both or neither, K0 within bounds and area = KoA/K0/1e4", r.K0, r.AreaM2)
	}
	for name, a := range map[string]arrangement{"countercurrent": r.Countercurrent, "cocurrent": r.Cocurrent} {
		c := ceilings[name]
		if !within(a.ClearanceCeiling, c, c) || (a.Reachable != (a.KoA != nil)) || (a.Reachable && !(in.Target < c && *a.KoA > 0 && *a.KoA <= core.MaxKoA)) ||
			(!a.Reachable && a.Message == "") || (name == in.Flow && (!a.Reachable || *a.KoA != r.KoA)) {
			return fmt.Errorf("%s: %+v, want its ceiling %g, a KoA when reachable and a message when not, the top-level KoA for %s", name, a, c, in.Flow)
		}
	}
	// With S < 1 and a small QD co-current can clear more (core's
	// TestCocurrentAheadRK4), so the order is asserted for S = 1 only.
	if (in.QF == 0 || in.Sieving == 1) && r.Countercurrent.Reachable && r.Cocurrent.Reachable && !within(*r.Countercurrent.KoA, 0, *r.Cocurrent.KoA) {
		return fmt.Errorf("counter-current needs KoA %g, more than co-current %g", *r.Countercurrent.KoA, *r.Cocurrent.KoA)
	}
	ceiling := ceilings[in.Flow]
	if ch := r.Choice; ch != nil {
		if !within(ch.NeededKoA, r.KoA*(1+in.Margin/100), r.KoA*(1+in.Margin/100)) {
			return fmt.Errorf("needed KoA %g, want KoA x (1 + margin) = %g", ch.NeededKoA, r.KoA*(1+in.Margin/100))
		}
		for i, f := range ch.Filters {
			if f.Meets != (f.KoA >= ch.NeededKoA) || !within(f.Clearance, 0, ceiling) || !within(f.ClearanceGap, f.Clearance-in.Target, f.Clearance-in.Target) {
				return fmt.Errorf("filter %d: %+v, want meets = KoA >= %g, 0 <= clearance <= %g, gap = clearance - target", i, f, ch.NeededKoA, ceiling)
			}
			if ch.Chosen != nil && f.Meets && f.KoA < ch.Filters[*ch.Chosen].KoA {
				return fmt.Errorf("filter %d (KoA %g) meets the target and is smaller than the chosen %d", i, f.KoA, *ch.Chosen)
			}
		}
		if ch.Chosen != nil && (*ch.Chosen < 0 || *ch.Chosen >= len(ch.Filters) || !ch.Filters[*ch.Chosen].Meets) {
			return fmt.Errorf("chosen %d does not meet the target", *ch.Chosen)
		}
	}
	if cur := r.Current; cur != nil {
		if !within(cur.Clearance, 0, ceiling) {
			return fmt.Errorf("current filter clearance %g, want 0 to %g", cur.Clearance, ceiling)
		}
		for name, s := range map[string]flowAnswer{"qd": cur.QD, "qb": cur.QB} {
			ok := s.OK && s.Flow != nil && s.Clearance != nil && s.Error == nil && *s.Flow >= s.Range[0] && *s.Flow <= s.Range[1] && *s.Clearance >= in.Target
			failed := !s.OK && s.Flow == nil && s.Error != nil && s.Error.Field != "" && s.Error.Limit != nil && *s.Error.Limit < in.Target
			if !ok && !failed {
				return fmt.Errorf("flow solve %s: %+v, want a flow in its range reaching the target, or an error with a limit below it", name, s)
			}
		}
	}
	if sw := r.Sweep; sw != nil {
		for name, s := range map[string]core.SizeSeries{"countercurrent": sw.Countercurrent, "cocurrent": sw.Cocurrent} {
			n := len(s.Target)
			if n < 1 || n > core.MaxSweepPoints || len(s.KoA) != n || (r.K0 != nil) != (len(s.AreaM2) == n) || !within(s.ClearanceCeiling, ceilings[name], ceilings[name]) {
				return fmt.Errorf("sweep %s: %d targets, %d KoA, %d areas, ceiling %g", name, n, len(s.KoA), len(s.AreaM2), s.ClearanceCeiling)
			}
			for i := range n {
				if !(s.Target[i] >= 0 && s.Target[i] < s.ClearanceCeiling) || (i > 0 && !(s.Target[i] >= s.Target[i-1] && s.KoA[i] >= s.KoA[i-1])) || !within(s.KoA[i], 0, sw.KoAMax) {
					return fmt.Errorf("sweep %s point %d: (%g, %g), want rising, below the ceiling %g and KoA at most %g", name, i, s.Target[i], s.KoA[i], s.ClearanceCeiling, sw.KoAMax)
				}
			}
		}
	}
	return nil
}
