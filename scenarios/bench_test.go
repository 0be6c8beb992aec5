package scenarios_test

import (
	"context"
	"testing"

	"scalewalk/flow"
	"scalewalk/scenarios"
)

var (
	benchScenario *scenarios.Scenario
	benchG        float64
	benchPoints   []flow.FixedPoint
)

// BenchmarkLoad is loading and validating a built-in (target <= 5 ms).
func BenchmarkLoad(b *testing.B) {
	for _, name := range []string{"monolayer", "mk-formula"} {
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				s, err := scenarios.Load(name)
				if err != nil {
					b.Fatal(err)
				}
				benchScenario = s
			}
		})
	}
}

// BenchmarkUserStep is one step of a two-coupling user recursion, the
// Nelson-Fisher chain in a field (target <= 2 microseconds).
func BenchmarkUserStep(b *testing.B) {
	b.Run("two-couplings", func(b *testing.B) {
		s, err := scenarios.Parse("chain-field.toml", []byte(nelsonFisherTOML))
		if err != nil {
			b.Fatal(err)
		}
		bt := mustBuild(b, s, nil)
		x := []float64{0.4, 0.1}
		dst := make([]float64, 2)
		b.ReportAllocs()
		for b.Loop() {
			benchG = bt.Map.Step(dst, x)
		}
	})
}

// BenchmarkUserFixed is the full fixed-point search on a user map
// (target <= 50 ms).
func BenchmarkUserFixed(b *testing.B) {
	b.Run("mk-formula", func(b *testing.B) {
		bt := mustBuild(b, mustLoad(b, "mk-formula"), nil)
		b.ReportAllocs()
		for b.Loop() {
			r, err := flow.FindAll(context.Background(), bt.Map, nil)
			if err != nil {
				b.Fatal(err)
			}
			benchPoints = r.Points
		}
	})
}
