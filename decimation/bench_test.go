package decimation

import (
	"testing"

	"gonum.org/v1/gonum/mat"
)

var sinkG float64

func benchModels(b *testing.B) []struct {
	name string
	m    *Model
	x    []float64
} {
	cl6 := mustClock(b, 6)
	return []struct {
		name string
		m    *Model
		x    []float64
	}{
		{"ising", NewIsing(), []float64{0.7, 0.2}},
		{"potts3", mustPotts(b, 3), []float64{0.9, 0.3, -0.2}},
		{"spin1", NewSpin1(), []float64{0.6, -0.4, 0.3, 0.2, -0.5}},
		{"clock6", cl6, []float64{0.8, 0.2, -0.1, 0}},
	}
}

func BenchmarkStep(b *testing.B) {
	for _, tc := range benchModels(b) {
		for _, bb := range []int{2, 3} {
			c := mustChain(b, tc.m, bb)
			dst := make([]float64, len(tc.x))
			b.Run(tc.name+"/b="+string(rune('0'+bb)), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					sinkG = c.Step(dst, tc.x)
				}
			})
		}
	}
}

func BenchmarkJacobian(b *testing.B) {
	c := mustChain(b, NewIsing(), 2)
	x := []float64{0.7, 0.2}
	var dst mat.Dense
	b.Run("ising", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			c.JacobianTo(&dst, x)
		}
	})
}
