package decimation

import (
	"errors"
	"math"
	"testing"
)

// pottsT is the ratio of the two transfer-matrix eigenvalues of the
// field-free Potts chain, (e^K − 1)/(e^K + q − 1). Eigenvalues: e^K + q − 1
// (once) and e^K − 1 (q − 1 times); F. Y. Wu, Rev. Mod. Phys. 54, 235 (1982).
func pottsT(K, q float64) float64 { return (math.Exp(K) - 1) / (math.Exp(K) + q - 1) }

// TestPottsChain checks t(K′) = t(K)^b, i.e.
// K′ = ln[(1 + (q−1) t^b)/(1 − t^b)], and the free energy ln(e^K + q − 1),
// for the full representation (q = 3, 4) and the algebra (q = 0.5, 1, 2.5).
// Source: the Potts transfer matrix, F. Y. Wu, Rev. Mod. Phys. 54, 235 (1982).
func TestPottsChain(t *testing.T) {
	for _, q := range []float64{3, 4, 0.5, 1, 2.5} {
		m := mustPotts(t, q)
		Ks := []float64{0.2, 1, 2.5}
		if q >= 2 { // antiferromagnets: λ = e^K + q − 1 stays the largest in modulus
			Ks = append(Ks, -0.5, -2)
		}
		for _, b := range []int{2, 3} {
			c := mustChain(t, m, b)
			for _, K := range Ks {
				x := make([]float64, len(m.Couplings()))
				x[0] = K
				xp, _ := step(c, x)
				tb := math.Pow(pottsT(K, q), float64(b))
				want := math.Log((1 + (q-1)*tb) / (1 - tb))
				if !near(xp[0], want, tolExact) {
					t.Errorf("q=%g b=%d K=%g: K′ = %.15g, want %.15g [Wu 1982]", q, b, K, xp[0], want)
				}
				for i := 1; i < len(xp); i++ {
					if math.Abs(xp[i]) > tolExact {
						t.Errorf("q=%g b=%d K=%g: %s′ = %g, want 0 (zero field stays zero by symmetry)", q, b, K, m.Couplings()[i].Name, xp[i])
					}
				}
				fe := freeEnergy(c, x)
				wantFE := math.Log(math.Exp(K) + q - 1)
				if math.Abs(fe-wantFE) > tolExact*math.Max(1, math.Abs(wantFE)) {
					t.Errorf("q=%g b=%d K=%g: ln Z/N = %.15g, want %.15g [Wu 1982]", q, b, K, fe, wantFE)
				}
			}
		}
	}
}

// TestPottsAlgebraDomain: for q = 0.5 and K = −2 both eigenvalues
// e^K + q − 1 and e^K − 1 are negative and the larger in modulus is e^K − 1,
// so the off-diagonal entry of W², [(e^K+q−1)² − (e^K−1)²]/q, is negative
// (Wu 1982 eigenvalues; W^b = a^b I + [(a+q)^b − a^b]/q E with a = e^K − 1
// follows from E² = qE, common practice). No real K′ describes it.
func TestPottsAlgebraDomain(t *testing.T) {
	c := mustChain(t, mustPotts(t, 0.5), 2)
	x := []float64{-2}
	if e := math.Exp(-2); (e+0.5-1)*(e+0.5-1)-(e-1)*(e-1) >= 0 {
		t.Fatalf("test premise wrong: W² off-diagonal entry is not negative")
	}
	err := c.Domain(x)
	if !errors.Is(err, ErrDomain) {
		t.Errorf("Domain(%v) = %v, want an ErrDomain", x, err)
	}
	xp, g := step(c, x)
	if !math.IsNaN(xp[0]) || !math.IsNaN(g) {
		t.Errorf("Step(%v) = %v, %g; want NaN outside the domain", x, xp, g)
	}
	if err := c.Domain([]float64{0.7}); err != nil {
		t.Errorf("Domain(0.7) = %v, want nil (ferromagnet)", err)
	}
	if err := c.Domain([]float64{math.NaN()}); !errors.Is(err, ErrDomain) {
		t.Errorf("Domain(NaN) = %v, want an ErrDomain", err)
	}
}

// TestPotts2IsIsing: δ(σ, σ′) = (1 + s s′)/2 and δ(σ, 1) = (1 + s)/2 with
// s = ±1 (exact identity; conventions in shared/reference.md), so the
// Potts chain (K, h) is the Ising chain (K/2, h/2) plus the constant
// a(K, h) = K/2 + h/2 per site. Hence K′_P = 2 K′_I, h′_P = 2 h′_I and
// g_P(x) + a(x′)/b = a(x) + g_I(x/2).
func TestPotts2IsIsing(t *testing.T) {
	pm, im := mustPotts(t, 2), NewIsing()
	if n := len(pm.Couplings()); n != 2 {
		t.Fatalf("potts q=2 has %d couplings, want 2 (K, h)", n)
	}
	for _, b := range []int{2, 3} {
		pc, ic := mustChain(t, pm, b), mustChain(t, im, b)
		for _, x := range [][2]float64{{0.8, 0}, {1.4, 0.6}, {-0.9, -0.3}, {0.2, 2.1}} {
			pp, gp := step(pc, x[:])
			ip, gi := step(ic, []float64{x[0] / 2, x[1] / 2})
			if !near(pp[0], 2*ip[0], tolExact) || !near(pp[1], 2*ip[1], tolExact) {
				t.Errorf("b=%d x=%v: Potts x′ = %v, 2×Ising x′ = %v", b, x, pp, []float64{2 * ip[0], 2 * ip[1]})
			}
			a := func(K, h float64) float64 { return K/2 + h/2 }
			lhs := gp + a(pp[0], pp[1])/float64(b)
			rhs := a(x[0], x[1]) + gi
			if !near(lhs, rhs, tolExact) {
				t.Errorf("b=%d x=%v: g_P + a(x′)/b = %.15g, a(x) + g_I = %.15g", b, x, lhs, rhs)
			}
		}
	}
}
