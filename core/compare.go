package core

import "math"

// minNormal is the smallest normal float64, 2^-1022.
const minNormal = 0x1p-1022

// Operating is one operating point of a dialyzer: the flows, the filter's
// KoA and the inlet concentrations.
type Operating struct {
	QB  float64 `json:"qb"`  // blood flow, mL/min, > 0
	QD  float64 `json:"qd"`  // dialysate flow, mL/min, > 0
	KoA float64 `json:"koa"` // mass transfer-area coefficient, mL/min, >= 0
	CBi float64 `json:"cbi"` // blood inlet concentration, > 0 (1 for a normalised solute)
	CDi float64 `json:"cdi"` // dialysate inlet concentration, >= 0 (0 for fresh dialysate)
}

// Validate reports the first field that cannot be used, by its API name.
func (op Operating) Validate() error {
	if err := checkFlow("qb", op.QB); err != nil {
		return err
	}
	if err := checkFlow("qd", op.QD); err != nil {
		return err
	}
	if err := checkKoA("koa", op.KoA); err != nil {
		return err
	}
	if err := checkConcentration("cbi", op.CBi, true); err != nil {
		return err
	}
	return checkConcentration("cdi", op.CDi, false)
}

// drivingFraction returns (CBi - CDi)/CBi, the share of the blood inlet
// concentration that drives transfer; clearance = dialysance * this.
func (op Operating) drivingFraction() float64 {
	return (op.CBi - op.CDi) / op.CBi
}

// Performance is what one arrangement delivers at an operating point.
type Performance struct {
	// Clearance K = W/CBi, mL/min. Equal to dialysance when CDi = 0;
	// negative when CDi > CBi (transfer into the blood).
	Clearance float64 `json:"clearance"`
	// Dialysance D = W/(CBi - CDi), mL/min.
	Dialysance float64 `json:"dialysance"`
	// ExtractionRatio (CBi - CBo)/CBi = K/QB, relative to blood.
	ExtractionRatio float64 `json:"extraction_ratio"`
	// BloodOutlet CBo and DialysateOutlet CDo, in the unit of CBi.
	BloodOutlet     float64 `json:"cbo"`
	DialysateOutlet float64 `json:"cdo"`
	// TransferRate W, the solute mass removed per minute (unit of CBi x mL/min).
	TransferRate float64 `json:"transfer_rate"`
	// LogMeanDifference is the log-mean blood-dialysate concentration
	// difference, W/KoA; at KoA = 0 it is CBi - CDi.
	LogMeanDifference float64 `json:"log_mean_difference"`
	// ClearanceCeiling and DialysanceCeiling are the limits as KoA grows
	// without bound (see Ceiling).
	ClearanceCeiling  float64 `json:"clearance_ceiling"`
	DialysanceCeiling float64 `json:"dialysance_ceiling"`
}

// Evaluate returns the performance of arrangement a at op.
func Evaluate(a Arrangement, op Operating) (Performance, error) {
	if err := op.Validate(); err != nil {
		return Performance{}, err
	}
	return evaluate(a, op), nil
}

func evaluate(a Arrangement, op Operating) Performance {
	d := Dialysance(a, op.QB, op.QD, op.KoA)
	w := d * (op.CBi - op.CDi)
	p := Performance{
		Clearance:         d * op.drivingFraction(),
		Dialysance:        d,
		TransferRate:      w,
		BloodOutlet:       op.CBi - w/op.QB,
		DialysateOutlet:   op.CDi + w/op.QD,
		DialysanceCeiling: Ceiling(a, op.QB, op.QD),
	}
	p.ExtractionRatio = p.Clearance / op.QB
	p.ClearanceCeiling = p.DialysanceCeiling * op.drivingFraction()
	// W/KoA is taken as (CBi - CDi) (D/KoA) so that a small W cannot
	// underflow. Below the smallest normal KoA or NTU, D/KoA would be 0/0 or
	// lose precision, and equals its KoA -> 0 limit, 1, to double precision.
	if ntu := op.KoA / math.Min(op.QB, op.QD); op.KoA >= minNormal && ntu >= minNormal {
		p.LogMeanDifference = (op.CBi - op.CDi) * (d / op.KoA)
	} else {
		p.LogMeanDifference = op.CBi - op.CDi
	}
	return p
}

// Comparison sets the two arrangements side by side.
type Comparison struct {
	Countercurrent Performance `json:"countercurrent"`
	Cocurrent      Performance `json:"cocurrent"`
	// Gain is counter-current minus co-current clearance, mL/min.
	Gain float64 `json:"countercurrent_gain"`
	// GainPercent is the gain relative to co-current, in percent (0 at
	// KoA = 0, where both arrangements transfer nothing).
	GainPercent float64 `json:"countercurrent_gain_percent"`
	// NTU = KoA/min(QB, QD) and FlowRatio Cr = min/max of QB and QD.
	NTU       float64 `json:"ntu"`
	FlowRatio float64 `json:"flow_ratio"`
}

// Compare evaluates both arrangements at op.
func Compare(op Operating) (Comparison, error) {
	if err := op.Validate(); err != nil {
		return Comparison{}, err
	}
	cc, co := evaluate(Countercurrent, op), evaluate(Cocurrent, op)
	cmin, cmax, _ := capacities(op.QB, op.QD)
	c := Comparison{
		Countercurrent: cc,
		Cocurrent:      co,
		Gain:           cc.Clearance - co.Clearance,
		NTU:            op.KoA / cmin,
		FlowRatio:      cmin / cmax,
	}
	// The percentage is taken on dialysance so that it keeps its sign and
	// meaning whatever the inlet concentrations.
	if co.Dialysance > 0 {
		c.GainPercent = 100 * (cc.Dialysance - co.Dialysance) / co.Dialysance
	}
	return c, nil
}
