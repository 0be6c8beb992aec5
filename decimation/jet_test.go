package decimation

import (
	"math"
	"testing"

	"scalewalk/flow"
)

// The exact derivatives pushed along the flow by jets reproduce the Ising
// chain in a field (R. J. Baxter, Exactly Solved Models in Statistical
// Mechanics, 1982, ch. 2; m and χ differentiated by hand) to 1e-12, and the
// chain's curvature R = 1 + cosh h/√(sinh²h + e^{−4K}) (B. P. Dolan,
// D. A. Johnston, R. Kenna, J. Phys. A 35, 9025, 2002) to 1e-9: tighter
// than the numerical derivatives can reach.
func TestJetChainExact(t *testing.T) {
	for _, b := range []int{2, 3} {
		c := mustChain(t, NewIsing(), b)
		for _, x := range [][2]float64{{0.5, 0.1}, {1.2, 0.3}, {-0.7, 0.4}, {0.3, -0.8}} {
			K, h := x[0], x[1]
			psi, mag, chi, R := isingChainExact(K, h)
			d := flow.FreeEnergyJet(c, []float64{K, h}, []int{0, 1}, 3)
			if d.Flag != "" {
				t.Fatalf("b=%d %v: flag %q", b, x, d.Flag)
			}
			if math.Abs(d.F-psi) > 1e-12*math.Abs(psi) {
				t.Errorf("b=%d %v: ln Z/N = %.15g, want %.15g (Baxter 1982)", b, x, d.F, psi)
			}
			if math.Abs(d.Grad[1]-mag) > 1e-12 {
				t.Errorf("b=%d %v: m = %.15g, want %.15g (Baxter 1982)", b, x, d.Grad[1], mag)
			}
			if math.Abs(d.Hess[1][1]-chi) > 1e-12*math.Max(1, chi) {
				t.Errorf("b=%d %v: chi = %.15g, want %.15g (Baxter 1982)", b, x, d.Hess[1][1], chi)
			}
			if got := flow.HessianCurvature(d.Hess, d.Third); math.Abs(got-R) > 1e-9*R {
				t.Errorf("b=%d %v: R = %.12g, want %.12g (Dolan, Johnston, Kenna 2002)", b, x, got, R)
			}
		}
	}
}

// Thermo's curvature on the Ising chain against the closed form of Dolan,
// Johnston and Kenna (J. Phys. A 35, 9025, 2002) to 1e-8 along a
// temperature path in a field, and, deep in the frozen corner (K = 5,
// h = 0.5, where the metric is 1e-8 and R a small difference of terms of
// order 1e8), flagged instead of given.
func TestThermoCurvatureChain(t *testing.T) {
	c := mustChain(t, NewIsing(), 2)
	for _, T := range []float64{0.4, 0.6, 1, 2, 4} {
		K, h := 1/T, 0.1/T
		_, _, _, want := isingChainExact(K, h)
		p := flow.Thermo(c, []float64{K, h}, []int{0, 1})
		if !(math.Abs(p.R-want) <= 1e-8*want) {
			t.Errorf("T = %g: R = %.12g, want %.12g (Dolan, Johnston, Kenna 2002); flags %q", T, p.R, want, p.Flags)
		}
	}
	p := flow.Thermo(c, []float64{5, 0.5}, []int{0, 1})
	if !math.IsNaN(p.R) {
		t.Errorf("K = 5, h = 0.5: R = %g given; want it flagged as ill-conditioned", p.R)
	}
}

// On the bond-moving and hierarchical maps (full representation and the
// Potts algebra) the jets agree with the numerical derivatives of the
// summed free energy within the latter's error estimates.
func TestJetMatchesNumerical(t *testing.T) {
	p3, _ := NewPotts(3)
	p25, _ := NewPotts(2.5)
	spin1 := NewSpin1()
	cases := []struct {
		name string
		m    flow.Map
		x    []float64
		idx  []int
	}{
		{"ising bondmove", mustBM(t, NewIsing(), 2, MoveFirst), []float64{0.6, 0.2}, []int{0, 1}},
		{"ising bondmove decimate-first", mustBM(t, NewIsing(), 2, DecimateFirst), []float64{0.6, -0.3}, []int{0, 1}},
		{"potts3 bondmove", mustBM(t, p3, 2, MoveFirst), []float64{0.9, 0.1, 0}, []int{0, 1}},
		{"potts2.5 bondmove (algebra)", mustBM(t, p25, 2, MoveFirst), []float64{0.4}, []int{0}},
		{"spin1 bondmove", mustBM(t, spin1, 2, MoveFirst), []float64{0.3, 0.1, -0.2, 0.05, 0}, []int{0, 2, 3}},
	}
	for _, c := range cases {
		j := flow.FreeEnergyJet(c.m, c.x, c.idx, 3)
		n := flow.NumericalDerivatives(c.m, c.x, c.idx, 3)
		if j.Flag != "" || n.Flag != "" {
			t.Fatalf("%s: flags %q, %q", c.name, j.Flag, n.Flag)
		}
		if math.Abs(j.F-n.F) > 1e-13*math.Abs(n.F) {
			t.Errorf("%s: F jet %.15g, summed %.15g", c.name, j.F, n.F)
		}
		for a := range c.idx {
			if math.Abs(j.Grad[a]-n.Grad[a]) > 1e-8 {
				t.Errorf("%s: grad[%d] jet %.12g, numerical %.12g", c.name, a, j.Grad[a], n.Grad[a])
			}
			for b := range c.idx {
				if d := math.Abs(j.Hess[a][b] - n.Hess[a][b]); d > 10*n.Err+1e-8 {
					t.Errorf("%s: hess[%d][%d] jet %.12g, numerical %.12g (err %g)", c.name, a, b, j.Hess[a][b], n.Hess[a][b], n.Err)
				}
				for e := range c.idx {
					if d := math.Abs(j.Third[a][b][e] - n.Third[a][b][e]); d > 10*n.Err3+1e-5 {
						t.Errorf("%s: third[%d][%d][%d] jet %.10g, numerical %.10g (err %g)", c.name, a, b, e, j.Third[a][b][e], n.Third[a][b][e], n.Err3)
					}
				}
			}
		}
	}
}

func mustBM(t *testing.T, m *Model, d float64, o Order) *BondMove {
	t.Helper()
	bm, err := NewBondMove(m, d, 2, o)
	if err != nil {
		t.Fatal(err)
	}
	return bm
}

// BenchmarkFreeEnergyJetThirdOrder is BenchmarkFreeEnergyThirdOrder with
// the derivatives pushed along the flow by jets.
func BenchmarkFreeEnergyJetThirdOrder(b *testing.B) {
	bm, _ := NewBondMove(NewIsing(), 2, 2, MoveFirst)
	x := []float64{0.25, 0.2}
	b.ReportAllocs()
	for b.Loop() {
		d := flow.FreeEnergyJet(bm, x, []int{0, 1}, 3)
		sinkG = d.F
	}
}
