package decimation

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Named tolerances. Exact identities are checked to tolExact: the step is a
// handful of log-sum-exp operations on numbers of order one, so rounding
// stays within a few hundred ulps.
const (
	tolExact = 1e-12 // exact identities and closed forms (abs-or-rel, see near)
	tolFD    = 1e-6  // finite-difference Jacobians: O(h²) truncation + O(ε/h) rounding
	tolAsym  = 1e-9  // large-coupling asymptotics (corrections are O(e^{-4K}))
)

// near reports whether a and b agree to tol absolutely when |a|, |b| <= 1
// and relatively otherwise (scalar.EqualWithinAbsOrRel).
func near(a, b, tol float64) bool { return scalar.EqualWithinAbsOrRel(a, b, tol, tol) }

func mustChain(t testing.TB, m *Model, b int) *Chain {
	t.Helper()
	c, err := NewChain(m, b)
	if err != nil {
		t.Fatalf("NewChain(%s, %d): %v", m.Name(), b, err)
	}
	return c
}

func mustPotts(t testing.TB, q float64) *Model {
	t.Helper()
	m, err := NewPotts(q)
	if err != nil {
		t.Fatalf("NewPotts(%g): %v", q, err)
	}
	return m
}

func mustClock(t testing.TB, q int) *Model {
	t.Helper()
	m, err := NewClock(q)
	if err != nil {
		t.Fatalf("NewClock(%d): %v", q, err)
	}
	return m
}

// step applies one step and returns x′ and g.
func step(c *Chain, x []float64) ([]float64, float64) {
	dst := make([]float64, len(x))
	g := c.Step(dst, x)
	return dst, g
}

// freeEnergy sums ln Z/N = Σ_n b^{-n} g(x_n), stopping once b^{-n} < 1e-17.
func freeEnergy(c *Chain, x []float64) float64 {
	b := c.Rescale()
	x = append([]float64(nil), x...)
	sum := 0.0
	for w := 1.0; w >= 1e-17; w /= b {
		xn, g := step(c, x)
		sum += w * g
		x = xn
	}
	return sum
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func nan() float64 { return math.NaN() }
func inf() float64 { return math.Inf(1) }
