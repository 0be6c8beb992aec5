package decimation

import (
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
)

// propCase is a model with a generator of random couplings inside its
// domain.
type propCase struct {
	name string
	m    *Model
	gen  func(r *rand.Rand) []float64
}

func uniform(n int, lo, hi float64) func(r *rand.Rand) []float64 {
	return func(r *rand.Rand) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = lo + (hi-lo)*r.Float64()
		}
		return x
	}
}

// zeroLast draws uniform couplings and sets the last one (the clock field)
// to zero.
func zeroLast(n int, lo, hi float64) func(r *rand.Rand) []float64 {
	u := uniform(n, lo, hi)
	return func(r *rand.Rand) []float64 {
		x := u(r)
		x[n-1] = 0
		return x
	}
}

func propCases(t testing.TB) []propCase {
	cl3, cl4, cl6 := mustClock(t, 3), mustClock(t, 4), mustClock(t, 6)
	return []propCase{
		{"ising", NewIsing(), uniform(2, -1.5, 1.5)},
		{"potts3", mustPotts(t, 3), uniform(3, -1.5, 1.5)},
		{"potts2.5", mustPotts(t, 2.5), uniform(1, -1.5, 1.5)},
		{"potts0.5", mustPotts(t, 0.5), uniform(1, 0, 2)}, // q < 2: ferromagnets only (see TestPottsAlgebraDomain)
		{"clock3", cl3, zeroLast(len(cl3.Couplings()), -1.5, 1.5)},
		{"clock4", cl4, zeroLast(len(cl4.Couplings()), -1.5, 1.5)},
		{"clock6", cl6, zeroLast(len(cl6.Couplings()), -1.5, 1.5)},
		{"spin1", NewSpin1(), uniform(5, -1.5, 1.5)},
	}
}

// TestSemigroup checks the exact identity of W^b: W^{b1 b2} = (W^{b1})^{b2},
// so decimating by b1 and then b2 equals decimating by b1·b2, constants
// included: x″ agree and g_{b1 b2}(x) = g_{b1}(x) + g_{b2}(x′)/b1.
// Agreement is abs-or-rel to tolExact (absolute below 1, relative above).
func TestSemigroup(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 1))
	for _, tc := range propCases(t) {
		for _, bb := range [][2]int{{2, 2}, {2, 3}, {3, 2}} {
			c1, c2 := mustChain(t, tc.m, bb[0]), mustChain(t, tc.m, bb[1])
			c12 := mustChain(t, tc.m, bb[0]*bb[1])
			for trial := 0; trial < 20; trial++ {
				x := tc.gen(r)
				x0 := append([]float64(nil), x...)
				x1, g1 := step(c1, x)
				x2, g2 := step(c2, x1)
				xd, gd := step(c12, x)
				for i := range x {
					if x[i] != x0[i] {
						t.Fatalf("%s: Step modified x", tc.name)
					}
					if !near(x2[i], xd[i], tolExact) {
						t.Errorf("%s b=%v x=%v: coupling %d: two steps %.15g, one step %.15g [exact identity of W^b]", tc.name, bb, x, i, x2[i], xd[i])
					}
				}
				if g := g1 + g2/float64(bb[0]); !near(g, gd, tolExact) {
					t.Errorf("%s b=%v x=%v: g_b1 + g_b2/b1 = %.15g, g_b1b2 = %.15g [exact identity of W^b]", tc.name, bb, x, g, gd)
				}
			}
		}
	}
}

// TestClosure: the chain decimation closes whenever the basis spans every
// symmetric matrix the model's symmetry allows for W^b (ising, potts,
// spin1, zero-field clock; elementary counting of invariant entries, common
// practice), so the closure error is zero to rounding. A clock field leaves
// only the reflection n → −n: W^b then has entries such as (1,1) ≠ (0,q−1)
// that the basis (constant, harmonics of n − n′, one-body cos n + cos n′)
// cannot hold for q ≥ 3, so the closure error is non-zero.
func TestClosure(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 1))
	for _, tc := range propCases(t) {
		for _, b := range []int{2, 3} {
			c := mustChain(t, tc.m, b)
			for trial := 0; trial < 10; trial++ {
				x := tc.gen(r)
				if e := c.Closure(x); !(e <= tolExact) {
					t.Errorf("%s b=%d x=%v: closure error %g, want 0", tc.name, b, x, e)
				}
			}
		}
	}
	// Every harmonic is switched on: with K2 = 0 the 4-state clock is two
	// independent, identical Ising chains in σ± = cos θ ± sin θ (each with
	// K/2 and field h/2; the Ashkin–Teller mapping, common practice), and
	// then a field still closes.
	const minResidual = 1e-4 // any clearly non-zero value; the size is not claimed
	for _, q := range []int{3, 4, 6} {
		m := mustClock(t, q)
		x := make([]float64, len(m.Couplings()))
		for i := range x {
			x[i] = 0.3
		}
		x[0], x[len(x)-1] = 0.7, 0.5
		if e := mustChain(t, m, 2).Closure(x); !(e > minResidual) {
			t.Errorf("clock q=%d with a field: closure error %g, want > %g (a field breaks Z_q)", q, e, minResidual)
		}
	}
}

// TestJacobian compares the analytic Jacobian with central differences
// (gonum diff/fd, fd.Central). The tolerance covers the finite-difference
// error, O(h²) truncation plus O(ε/h) rounding with fd's default step.
func TestJacobian(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 1))
	cases := propCases(t)
	clf := mustClock(t, 6) // with a field: the projection is still linear and smooth
	cases = append(cases, propCase{"clock6+h", clf, uniform(len(clf.Couplings()), -1.5, 1.5)})
	for _, tc := range cases {
		for _, b := range []int{2, 3, 5} {
			c := mustChain(t, tc.m, b)
			n := len(tc.m.Couplings())
			for trial := 0; trial < 5; trial++ {
				x := tc.gen(r)
				var got mat.Dense
				c.JacobianTo(&got, x)
				want := mat.NewDense(n, n, nil)
				fd.Jacobian(want, func(y, x []float64) { c.Step(y, x) }, x, &fd.JacobianSettings{Formula: fd.Central})
				for i := 0; i < n; i++ {
					for j := 0; j < n; j++ {
						if g, w := got.At(i, j), want.At(i, j); !near(g, w, tolFD) {
							t.Errorf("%s b=%d x=%v: J[%d][%d] = %.10g, central differences %.10g", tc.name, b, x, i, j, g, w)
						}
					}
				}
			}
		}
	}
}
