package decimation

import "testing"

var bondBenchSink float64

// BenchmarkBondMoveStep times one bond-moving step, d = 2, b = 2, bonds
// moved first.
func BenchmarkBondMoveStep(b *testing.B) {
	for _, tc := range []struct {
		name string
		m    *Model
		x    []float64
	}{
		{"ising", NewIsing(), []float64{0.7, 0.2}},
		{"potts3", mustPotts(b, 3), []float64{0.9, 0.3, -0.2}},
		{"spin1", NewSpin1(), []float64{0.6, -0.4, 0.3, 0.2, -0.5}},
	} {
		bm := mustBond(b, tc.m, 2, 2, MoveFirst)
		dst := make([]float64, len(tc.x))
		b.Run(tc.name+"/move-first", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				bondBenchSink = bm.Step(dst, tc.x)
			}
		})
	}
}
