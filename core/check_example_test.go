package core_test

import (
	"fmt"
	"testing"

	"clearkit/core"
)

// A bench clearance test: urea test solution in mg/dL, QB 300, QD 500,
// QF 10 mL/min, against a filter rated KoA 800 mL/min (invented figures).
func ExampleCheck() {
	m := core.Measurement{QB: 300, QD: 500, QF: 10, Sieving: 1, CBi: 100, CBo: 19, CDi: 0, CDo: 46.3}
	r, err := core.Check(m, core.CheckOptions{RatedKoA: 800})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("clearance %.1f mL/min, mass balance error %+.1f %%\n", r.Clearance, 100*r.MassBalanceError)
	fmt.Printf("in-situ KoA %.0f mL/min counter-current, co-current reachable: %v\n", *r.KoACountercurrent, r.KoACocurrent != nil)
	fmt.Println(r.Verdict)
	// Output:
	// clearance 244.9 mL/min, mass balance error +3.6 %
	// in-situ KoA 733 mL/min counter-current, co-current reachable: false
	// as_rated
}

func ExampleConductivityDialysance() {
	d, err := core.ConductivityDialysance(
		core.Levels{Cdi1: 15.0, Cdo1: 14.6, Cdi2: 14.0, Cdo2: 14.2},
		core.DialysanceSetting{QD: 500, QF: 10})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("De %.1f, Dd %.1f mL/min, ± %.1f from the meter\n", d.Dialysance, d.DiffusiveDialysance, d.ResolutionBound)
	// Output: De 306.0, Dd 296.0 mL/min, ± 7.1 from the meter
}

func ExampleTimedFlow() {
	r, _ := core.TimedFlow(core.Collection{SetFlow: 300, Seconds: 60, Volume: 296, Tolerance: 0.10, Circuit: "blood"})
	fmt.Println(r.Findings[0].Text)
	// Output: The blood pump measures 296.0 mL/min against 300 set (-1.3 %), within ±10 %.
}

func BenchmarkCheck(b *testing.B) {
	m := core.Measurement{QB: 300, QD: 500, QF: 10, Sieving: 1, CBi: 100, CBo: 19, CDi: 0, CDo: 46.3}
	for b.Loop() {
		core.Check(m, core.CheckOptions{RatedKoA: 800})
	}
}

// BenchmarkCheckWithUncertainty includes the Monte Carlo of 4000 draws.
func BenchmarkCheckWithUncertainty(b *testing.B) {
	m := core.Measurement{QB: 300, QD: 500, QF: 10, Sieving: 1, CBi: 100, CBo: 19, CDi: 0, CDo: 46.3}
	o := core.CheckOptions{RatedKoA: 800, ConcentrationUncertainty: 0.02, ConcentrationFloor: 0.5, FlowUncertainty: 0.03}
	for b.Loop() {
		core.Check(m, o)
	}
}

func BenchmarkConductivityDialysance(b *testing.B) {
	lv := core.Levels{Cdi1: 15.0, Cdo1: 14.6, Cdi2: 14.0, Cdo2: 14.2}
	st := core.DialysanceSetting{QD: 500, QF: 10, QB: 300, RatedKoA: 800}
	for b.Loop() {
		core.ConductivityDialysance(lv, st)
	}
}

func BenchmarkTimedFlow(b *testing.B) {
	c := core.Collection{SetFlow: 500, Seconds: 300, Mass: 2490, Density: 0.99333, Tolerance: 0.05, Circuit: "dialysate"}
	for b.Loop() {
		core.TimedFlow(c)
	}
}
