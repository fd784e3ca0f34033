package core

// minNormal is the smallest normal float64, 2^-1022.
const minNormal = 0x1p-1022

// Operating is one operating point of a dialyzer: the flows, the filter's
// KoA, the inlet concentrations, the blood and the ultrafiltration.
type Operating struct {
	QB  float64 `json:"qb"`  // blood flow, mL/min, > 0
	QD  float64 `json:"qd"`  // dialysate flow, mL/min, > 0
	KoA float64 `json:"koa"` // mass transfer-area coefficient, mL/min, >= 0
	CBi float64 `json:"cbi"` // blood inlet concentration, > 0 (1 for a normalised solute)
	CDi float64 `json:"cdi"` // dialysate inlet concentration, >= 0 (0 for fresh dialysate)
	// Blood, when not nil, says that the blood side carries whole blood:
	// the model then works with the blood-water flow QBW (BloodWaterFlow)
	// in place of QB, and concentrations are blood-water concentrations.
	// Nil is an aqueous test solution, QBW = QB.
	Blood *WholeBlood `json:"blood,omitempty"`
	// Filtration is the ultrafiltration; its zero value is none. QF must
	// stay below QBW.
	Filtration
}

// Validate reports the first field that cannot be used, by its API name,
// in the order qb, qd, koa, cbi, cdi, hct, plasma_water, red_cell_water,
// qf, sieving.
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
	if err := checkConcentration("cdi", op.CDi, false); err != nil {
		return err
	}
	if op.Blood == nil {
		return op.Filtration.validate(op.QB, "blood flow QB")
	}
	if err := op.Blood.Validate(); err != nil {
		return err
	}
	qbw := op.BloodSideFlow()
	if qbw < MinFlow {
		return fieldErrorf("qb", "gives a blood-water flow of %g mL/min, too small to compute with (minimum %g)", qbw, MinFlow)
	}
	return op.Filtration.validate(qbw, "blood-water flow QBW")
}

// BloodSideFlow returns the flow the model uses on the blood side, mL/min:
// QB for an aqueous solution, the blood-water flow
// QB (Fp (1 - Hct) + Fr Hct) for whole blood.
func (op Operating) BloodSideFlow() float64 {
	if op.Blood == nil {
		return op.QB
	}
	return op.QB * op.Blood.WaterFraction()
}

// model returns op as the flow model sees it: QB replaced by
// BloodSideFlow and no blood correction left to apply.
func (op Operating) model() Operating {
	if op.Blood != nil {
		op.QB, op.Blood = op.BloodSideFlow(), nil
	}
	return op
}

// drivingFraction returns (CBi - CDi)/CBi, the share of the blood inlet
// concentration that drives transfer; clearance = dialysance * this.
func (op Operating) drivingFraction() float64 {
	return (op.CBi - op.CDi) / op.CBi
}

// Performance is what one arrangement delivers at an operating point. QB
// below is the blood-side flow of the model (Operating.BloodSideFlow).
type Performance struct {
	// Clearance K = W/CBi, mL/min: what the in-vitro formula
	// QB (CBi - CBo)/CBi + QF CBo/CBi gives from the outlets. Equal to
	// dialysance when CDi = 0 and QF = 0; negative when CDi > CBi
	// (transfer into the blood).
	Clearance float64 `json:"clearance"`
	// Dialysance D, mL/min: with QF = 0, W/(CBi - CDi); in general
	// -dW/dCDi, the fall in transfer per unit rise of the dialysate inlet
	// concentration, which is what two dialysate inlet levels measure
	// (see Transfer).
	Dialysance float64 `json:"dialysance"`
	// ExtractionRatio (CBi - CBo)/CBi, relative to blood: K/QB when
	// QF = 0, (K - QF)/(QB - QF) in general.
	ExtractionRatio float64 `json:"extraction_ratio"`
	// BloodOutlet CBo and DialysateOutlet CDo, in the unit of CBi.
	BloodOutlet     float64 `json:"cbo"`
	DialysateOutlet float64 `json:"cdo"`
	// TransferRate W, the solute mass removed per minute (unit of CBi x mL/min).
	TransferRate float64 `json:"transfer_rate"`
	// LogMeanDifference is the log-mean blood-dialysate concentration
	// difference: W/KoA when QF = 0 (CBi - CDi at KoA = 0). With QF > 0 it
	// is the log-mean of the two end differences (counter-current
	// CBi - CDo and CBo - CDi, co-current CBi - CDi and CBo - CDo); 0 if
	// one of them is 0, and their arithmetic mean if they differ in sign
	// (convection can carry solute against the concentration difference).
	LogMeanDifference float64 `json:"log_mean_difference"`
	// ClearanceCeiling and DialysanceCeiling are the limits as KoA grows
	// without bound (see Ceiling and TransferCeiling).
	ClearanceCeiling  float64 `json:"clearance_ceiling"`
	DialysanceCeiling float64 `json:"dialysance_ceiling"`
}

// Evaluate returns the performance of arrangement a at op.
func Evaluate(a Arrangement, op Operating) (Performance, error) {
	if err := op.Validate(); err != nil {
		return Performance{}, err
	}
	return evaluateModel(a, op.model()), nil
}

// evaluateModel evaluates a (valid) operating point as the model sees it:
// the closed forms without ultrafiltration, the ultrafiltration model with.
func evaluateModel(a Arrangement, op Operating) Performance {
	if op.QF == 0 {
		return evaluate(a, op)
	}
	return evaluateFiltered(a, op, op.Filtration)
}

func evaluate(a Arrangement, op Operating) Performance {
	return performance(op, Dialysance(a, op.QB, op.QD, op.KoA), Ceiling(a, op.QB, op.QD))
}

// performance completes the Performance of dialysance d and its ceiling at
// op (closed forms, no ultrafiltration).
func performance(op Operating, d, ceiling float64) Performance {
	w := d * (op.CBi - op.CDi)
	p := Performance{
		Clearance:         d * op.drivingFraction(),
		Dialysance:        d,
		TransferRate:      w,
		BloodOutlet:       op.CBi - w/op.QB,
		DialysateOutlet:   op.CDi + w/op.QD,
		DialysanceCeiling: ceiling,
	}
	p.ExtractionRatio = p.Clearance / op.QB
	p.ClearanceCeiling = p.DialysanceCeiling * op.drivingFraction()
	// W/KoA is taken as (CBi - CDi) (D/KoA) so that a small W cannot
	// underflow. Below the smallest normal KoA or NTU, D/KoA would be 0/0 or
	// lose precision, and equals its KoA -> 0 limit, 1, to double precision.
	if cmin, _ := order(op.QB, op.QD); op.KoA >= minNormal && op.KoA/cmin >= minNormal {
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
	// NTU = KoA/min(QB, QD) and FlowRatio Cr = min/max of QB and QD,
	// with QB the blood-side flow of the model.
	NTU       float64 `json:"ntu"`
	FlowRatio float64 `json:"flow_ratio"`
	// QBW is that blood-side flow, mL/min (Operating.BloodSideFlow): QB for
	// an aqueous solution, the blood-water flow for whole blood.
	QBW float64 `json:"qbw"`
}

// Compare evaluates both arrangements at op.
func Compare(op Operating) (Comparison, error) {
	if err := op.Validate(); err != nil {
		return Comparison{}, err
	}
	m := op.model()
	f := pairFlows(m.QB, m.QD)
	var cc, co Performance
	if m.QF == 0 {
		// Both arrangements at once: evaluate's values, rounding for
		// rounding (dialysancePair), in about half its time under
		// WebAssembly, where the page asks for them on every input.
		p := f.at(m.KoA)
		cc, co = performance(m, p.counter, p.counterCeiling), performance(m, p.co, p.coCeiling)
	} else {
		cc, co = evaluateModel(Countercurrent, m), evaluateModel(Cocurrent, m)
	}
	c := Comparison{
		Countercurrent: cc,
		Cocurrent:      co,
		Gain:           cc.Clearance - co.Clearance,
		NTU:            m.KoA / f.cmin,
		FlowRatio:      f.cr,
		QBW:            m.QB,
	}
	// The percentage is taken on dialysance so that it keeps its sign and
	// meaning whatever the inlet concentrations.
	if co.Dialysance > 0 {
		c.GainPercent = 100 * (cc.Dialysance - co.Dialysance) / co.Dialysance
	}
	return c, nil
}
