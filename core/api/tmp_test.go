package api

import ("testing"; "clearkit/core")

func BenchmarkTmpP(b *testing.B) {
	req := []byte(`{"qb":"300","qd":"500","koa":"800","cbi":"","cdi":"","qf":"","sieving":"","hct":"","plasma_water":"","red_cell_water":"","sweep":{}}`)
	var r CompareRequest
	r.decodeFast(req)
	op, _ := operating(r.QB, r.QD, r.KoA, r.CBi, r.CDi)
	r.Conditions.apply(&op)
	c, _ := core.Compare(op)
	spec, _ := r.Sweep.spec()
	b.Run("sweep", func(b *testing.B) { for b.Loop() { core.Sweep(op, spec) } })
	s, _ := core.Sweep(op, spec)
	resp := CompareResponse{OK: true, Input: op, Comparison: c, Packed: &Packing{Points: s.Points(), Series: packedSeries}}
	b.Run("encode", func(b *testing.B) { for b.Loop() { respondCompare(&resp, true) } })
	b.Run("finite", func(b *testing.B) { for b.Loop() { finite(s.Packed()) } })
	b.Run("all", func(b *testing.B) { for b.Loop() { ComparePacked(req) } })
}
