package api_test

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"clearkit/core"
	"clearkit/core/api"
)

// Over seeded random operating points written the ways a request may write
// numbers (JSON numbers, strings with a decimal point, strings with a
// decimal comma), the response holds exactly what core computes: float64
// survives the JSON round trip without loss when written with the shortest
// form that reads back to it (Go's strconv, 'g' -1, and its parser), and
// the response is read here with the standard library's encoding/json.
func TestPropertyCompareMatchesCore(t *testing.T) {
	r := rand.New(rand.NewPCG(20240607, 11))
	logUniform := func(lo, hi float64) float64 {
		return math.Exp(math.Log(lo) + r.Float64()*(math.Log(hi)-math.Log(lo)))
	}
	for i := range 1500 {
		op := core.Operating{
			QB:  logUniform(core.MinFlow, core.MaxFlow),
			QD:  logUniform(core.MinFlow, core.MaxFlow),
			KoA: logUniform(1e-3, core.MaxKoA),
			CBi: logUniform(core.MinConcentration, core.MaxConcentration),
			// The default sieving coefficient, echoed in the input.
			Filtration: core.Filtration{Sieving: core.DefaultSieving},
		}
		op.CDi = op.CBi * 2 * r.Float64()
		if op.CDi > core.MaxConcentration {
			op.CDi = core.MaxConcentration
		}
		write := func(v float64) string {
			s := strconv.FormatFloat(v, 'g', -1, 64)
			switch i % 3 {
			case 1:
				return strconv.Quote(s)
			case 2:
				return strconv.Quote(strings.Replace(s, ".", ",", 1))
			}
			return s
		}
		sweep := ""
		if i%10 == 0 {
			sweep = `,"sweep":{"points":21}`
		}
		req := fmt.Sprintf(`{"qb":%s,"qd":%s,"koa":%s,"cbi":%s,"cdi":%s%s}`, write(op.QB), write(op.QD), write(op.KoA), write(op.CBi), write(op.CDi), sweep)
		var got struct {
			OK    bool           `json:"ok"`
			Input core.Operating `json:"input"`
			core.Comparison
			Sweeps *core.Sweeps `json:"sweeps"`
		}
		resp := api.Compare([]byte(req))
		if err := json.Unmarshal(resp, &got); err != nil || !got.OK {
			t.Fatalf("Compare(%s) = %s (%v), want success", req, shown(resp), err)
		}
		want, err := core.Compare(op)
		if err != nil {
			t.Fatal(err)
		}
		if got.Input != op || got.Comparison != want {
			t.Errorf("Compare(%s) = %+v %+v, want %+v %+v (core.Compare)", req, got.Input, got.Comparison, op, want)
		}
		if sweep != "" {
			s, err := core.Sweep(op, core.SweepSpec{Points: 21})
			if err != nil {
				t.Fatal(err)
			}
			if got.Sweeps == nil || !reflect.DeepEqual([]core.Series{got.Sweeps.QB, got.Sweeps.QD, got.Sweeps.KoA}, []core.Series{s.QB, s.QD, s.KoA}) {
				t.Errorf("Compare(%s) sweeps differ from core.Sweep", req)
			}
		}
	}
}
