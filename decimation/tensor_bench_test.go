package decimation

import (
	"context"
	"fmt"
	"math"
	"testing"
)

// BenchmarkTensorRun times 30 coarse-graining steps (2^30 sites) of the
// square Ising model at K_c, for both methods and chi = 8, 16, 24, 32.
func BenchmarkTensorRun(b *testing.B) {
	kc := math.Log(1+math.Sqrt2) / 2
	for _, method := range []string{"trg", "hotrg"} {
		for _, chi := range []int{8, 16, 24, 32} {
			b.Run(fmt.Sprintf("%s/chi=%d", method, chi), func(b *testing.B) {
				tr := mustTensor(b, NewIsing(), method, chi)
				b.ReportAllocs()
				for b.Loop() {
					if _, err := tr.FreeEnergy(context.Background(), []float64{kc, 0}); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
