package core_test

import (
	"fmt"
	"math"
	"testing"

	"clearkit/core"
)

func TestDebugIntegration(t *testing.T) {
	var worst [6]float64
	n, lms := 0, 0
	for _, op := range integrationGrid() {
		for _, a := range core.Arrangements {
			got, _ := core.Evaluate(a, op)
			ref := integrate(a, op)
			es := []float64{relErr(got.Clearance, ref.w/op.CBi), relErr(got.BloodOutlet, ref.cbo), relErr(got.DialysateOutlet, ref.cdo)}
			for i, e := range es {
				worst[i] = math.Max(worst[i], e)
			}
			ends := [2]float64{op.CBi - ref.cdo, ref.cbo - op.CDi}
			if a == core.Cocurrent {
				ends = [2]float64{op.CBi - op.CDi, ref.cbo - ref.cdo}
			}
			n++
			if math.Min(ends[0], ends[1]) >= logMeanFloor*(op.CBi-op.CDi) {
				lms++
				worst[3] = math.Max(worst[3], relErr(got.LogMeanDifference, logMean(ends[1], ends[0])))
			}
		}
	}
	fmt.Println(worst, n, lms)
}
