package decimation

import (
	"context"
	"fmt"
	"testing"
)

func TestScratchClockSym(t *testing.T) {
	m, _ := NewClock(6)
	tr := mustTensor(t, m, "hotrg", 16)
	for _, K := range []float64{1.0, 1.2, 1.3, 1.4, 1.5, 1.7} {
		x := make([]float64, len(m.Couplings()))
		x[0] = K
		xs, _ := tr.Degeneracies(context.Background(), x, 40)
		fmt.Printf("K=%.2f:", K)
		for i := 0; i < len(xs); i += 2 {
			fmt.Printf(" %.2f", xs[i])
		}
		fmt.Println(" ->", tr.Phase(context.Background(), x).Label)
	}
}
