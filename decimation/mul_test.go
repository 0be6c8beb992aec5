package decimation

import (
	"math"
	"testing"
)

// TestMulIdentity: the identity matrix, ln I = 0 on the diagonal and −Inf
// off it, is neutral for the product (matrix algebra, common practice); the
// −Inf entries are zero weights, not errors.
func TestMulIdentity(t *testing.T) {
	for _, m := range []*Model{NewIsing(), mustPotts(t, 3), NewSpin1(), mustClock(t, 5)} {
		n := int(m.States())
		id := make([]float64, m.Size())
		for k := range id {
			id[k] = math.Inf(-1)
		}
		for i := 0; i < n; i++ {
			id[i*n+i] = 0
		}
		x := make([]float64, len(m.Couplings()))
		for i := range x {
			x[i] = 0.3*float64(i) - 0.4
		}
		lw := make([]float64, m.Size())
		m.Edge(lw, x)
		got := make([]float64, m.Size())
		for _, order := range []string{"I·W", "W·I"} {
			if order == "I·W" {
				m.Mul(got, id, lw)
			} else {
				m.Mul(got, lw, id)
			}
			for k := range got {
				if !near(got[k], lw[k], tolExact) {
					t.Errorf("%s: %s entry %d = %g, want %g", m.Name(), order, k, got[k], lw[k])
				}
			}
		}
	}
}
