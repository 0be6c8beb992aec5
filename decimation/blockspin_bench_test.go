package decimation

import (
	"context"
	"testing"

	"scalewalk/flow"
)

var blockSink float64

// BenchmarkCumulantStepOrder2 times one second-order cumulant step on the
// triangular lattice with K, L, M (the target: <= 1 ms).
func BenchmarkCumulantStepOrder2(b *testing.B) {
	for _, keep := range [][]string{{"K", "L", "M"}, {"K", "L", "M", "h"}} {
		b.Run(flagName(keep), func(b *testing.B) {
			bl, _ := NewBlocking(Triangular, 3)
			c, err := NewCumulant(NewIsing(), bl, Rule{Kind: "majority"}, 2, keep)
			if err != nil {
				b.Fatal(err)
			}
			x := []float64{0.2789, -0.0143, -0.0152, 0.01}[:len(keep)]
			dst := make([]float64, len(keep))
			b.ReportAllocs()
			for b.Loop() {
				blockSink = c.Step(dst, x)
			}
		})
	}
}

func flagName(keep []string) string {
	s := ""
	for _, k := range keep {
		s += k
	}
	return s
}

// BenchmarkClusterStep times one cluster step after the precomputation:
// the 4-block square cluster (16 spins; target <= 100 µs) and the 7-block
// triangular cluster (21 spins; target <= 2 ms), majority rule, without
// and with the field.
func BenchmarkClusterStep(b *testing.B) {
	for _, tc := range []struct {
		name string
		lat  *Lattice
		keep []string
	}{
		{"square4/KL", Square, []string{"K", "L"}},
		{"square4/KLh", Square, []string{"K", "L", "h"}},
		{"triangular7/KL", Triangular, []string{"K", "L"}},
		{"triangular7/KLh", Triangular, []string{"K", "L", "h"}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			c := mustCluster(b, NewIsing(), tc.lat, 0, Rule{Kind: "majority"}, tc.keep, ClusterSpec{})
			x := []float64{0.3, 0.02, 0.01}[:len(tc.keep)]
			dst := make([]float64, len(tc.keep))
			b.ReportAllocs()
			for b.Loop() {
				blockSink = c.Step(dst, x)
			}
		})
	}
}

// BenchmarkClusterBuild times the enumeration into the count table.
func BenchmarkClusterBuild(b *testing.B) {
	for _, tc := range []struct {
		name string
		m    *Model
		lat  *Lattice
		keep []string
	}{
		{"ising/square4/KL", NewIsing(), Square, []string{"K", "L"}},
		{"ising/triangular7/KL", NewIsing(), Triangular, []string{"K", "L"}},
		{"ising/triangular7/KLh", NewIsing(), Triangular, []string{"K", "L", "h"}},
		{"potts3/square4/KL", mustPotts(b, 3), Square, []string{"K", "L"}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			for b.Loop() {
				mustCluster(b, tc.m, tc.lat, 0, Rule{Kind: "majority"}, tc.keep, ClusterSpec{})
			}
		})
	}
}

// BenchmarkBlockSpinFindAll times the whole fixed-point search (target
// <= 5 s on two cores) on the default clusters and the second-order
// cumulant.
func BenchmarkBlockSpinFindAll(b *testing.B) {
	maps := map[string]func() flow.Map{
		"cluster/square4": func() flow.Map {
			return mustCluster(b, NewIsing(), Square, 0, Rule{Kind: "majority"}, []string{"K", "L"}, ClusterSpec{})
		},
		"cluster/triangular7": func() flow.Map {
			return mustCluster(b, NewIsing(), Triangular, 0, Rule{Kind: "majority"}, []string{"K", "L"}, ClusterSpec{})
		},
		"cumulant/order2": func() flow.Map {
			bl, _ := NewBlocking(Triangular, 3)
			c, _ := NewCumulant(NewIsing(), bl, Rule{Kind: "majority"}, 2, []string{"K", "L", "M", "h"})
			return c
		},
	}
	for _, name := range []string{"cluster/square4", "cluster/triangular7", "cumulant/order2"} {
		m := maps[name]()
		b.Run(name, func(b *testing.B) {
			for b.Loop() {
				if _, err := flow.FindAll(context.Background(), m, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
