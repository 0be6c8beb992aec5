package flow_test

import (
	"context"
	"testing"

	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
	"scalewalk/flow/flowtest"
)

var sinkPoints []flow.FixedPoint

// BenchmarkFindAll is the full fixed-point search with eigen-analysis.
func BenchmarkFindAll(b *testing.B) {
	for _, c := range []struct {
		name string
		m    flow.Map
	}{
		{"isingchain2-closedform", flowtest.IsingChain2{}},
		{"migdalkadanoff2-closedform", flowtest.MigdalKadanoff2{}},
	} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				r, _ := flow.FindAll(context.Background(), c.m, nil)
				sinkPoints = r.Points
			}
		})
	}
}

func BenchmarkNumericalJacobian(b *testing.B) {
	m := flowtest.IsingChain2{}
	dst := mat.NewDense(2, 2, nil)
	errs := mat.NewDense(2, 2, nil)
	x := []float64{0.4, 0.1}
	b.ReportAllocs()
	for b.Loop() {
		flow.NumericalJacobian(dst, errs, m, x)
	}
}
