package flowtest

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
)

// CheckMap checks the contract of a [flow.Map] at the points xs: Step
// leaves its input alone, fills every element of dst with a finite value,
// returns a finite g, is deterministic, and, for a [flow.Jacobianer], its
// Jacobian agrees with gonum's central differences to jacTol (absolute,
// plus relative to the entry).
func CheckMap(m flow.Map, xs [][]float64, jacTol float64) error {
	cs := m.Couplings()
	n := len(cs)
	if n == 0 {
		return fmt.Errorf("map has no couplings")
	}
	if b := m.Rescale(); !(b > 1) {
		return fmt.Errorf("Rescale() = %g, want > 1", b)
	}
	if d := m.Dimension(); !(d > 0) {
		return fmt.Errorf("Dimension() = %g, want > 0", d)
	}
	seen := map[string]bool{}
	for _, c := range cs {
		if c.Name == "" || seen[c.Name] {
			return fmt.Errorf("coupling name %q empty or repeated", c.Name)
		}
		seen[c.Name] = true
		for _, cp := range []*flow.Compact{c.Plus, c.Minus} {
			if cp == nil {
				continue
			}
			for _, x := range []float64{0.3, 2, 7} {
				if c.Minus == cp {
					x = -x
				}
				u := cp.U(x)
				if !(u > 0 && u < 1e300) || math.Abs(cp.X(u)-x) > 1e-12*(1+math.Abs(x)) {
					return fmt.Errorf("coupling %s: coordinate %s is not invertible at %g", c.Name, cp.Name, x)
				}
			}
		}
	}
	for _, x := range xs {
		if len(x) != n {
			return fmt.Errorf("test point %v has %d values, map has %d couplings", x, len(x), n)
		}
		in := append([]float64(nil), x...)
		dst := make([]float64, n)
		for i := range dst {
			dst[i] = math.NaN()
		}
		g := m.Step(dst, in)
		for i := range x {
			if in[i] != x[i] {
				return fmt.Errorf("Step modified its input at %v", x)
			}
			if math.IsNaN(dst[i]) || math.IsInf(dst[i], 0) {
				return fmt.Errorf("Step(%v) left dst[%d] = %g", x, i, dst[i])
			}
		}
		if math.IsNaN(g) || math.IsInf(g, 0) {
			return fmt.Errorf("Step(%v) returned g = %g", x, g)
		}
		dst2 := make([]float64, n)
		if g2 := m.Step(dst2, in); g2 != g || !equal(dst, dst2) {
			return fmt.Errorf("Step(%v) is not deterministic", x)
		}
		jm, ok := m.(flow.Jacobianer)
		if !ok {
			continue
		}
		got := mat.NewDense(n, n, nil)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				got.Set(i, j, math.NaN())
			}
		}
		jm.JacobianTo(got, in)
		want := mat.NewDense(n, n, nil)
		fd.Jacobian(want, func(y, xx []float64) { m.Step(y, xx) }, in, &fd.JacobianSettings{Formula: fd.Central})
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				a, b := got.At(i, j), want.At(i, j)
				if math.IsNaN(a) || math.Abs(a-b) > jacTol*(1+math.Abs(b)) {
					return fmt.Errorf("Jacobian at %v entry (%d,%d) = %g, central differences %g (tol %g)", x, i, j, a, b, jacTol)
				}
			}
		}
	}
	return nil
}

func equal(a, b []float64) bool {
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
