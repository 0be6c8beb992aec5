package decimation

import (
	"math"
	"testing"

	"scalewalk/flow"
)

// Exact Ising chain in a field (R. J. Baxter, Exactly Solved Models in
// Statistical Mechanics, 1982, ch. 2): ψ = K + ln[cosh h + √(sinh²h + e^{−4K})],
// m = ∂ψ/∂h = sinh h/√(sinh²h + e^{−4K}) (from memory; it is the derivative of
// ψ, differentiated by hand), and the susceptibility χ = ∂m/∂h =
// cosh h e^{−4K}/(sinh²h + e^{−4K})^{3/2} (by hand). The RG sum and its
// numerical derivatives agree to 1e-10 (ψ, relative) and 1e-7 (second
// derivatives), for b = 2 and 3, ferro- and antiferromagnetic K.
func TestChainThermodynamics(t *testing.T) {
	for _, b := range []int{2, 3} {
		c := mustChain(t, NewIsing(), b)
		for _, x := range [][2]float64{{0.5, 0.1}, {1.2, 0.3}, {-0.7, 0.4}, {0.3, -0.8}} {
			K, h := x[0], x[1]
			s := math.Sqrt(math.Sinh(h)*math.Sinh(h) + math.Exp(-4*K))
			psi := K + math.Log(math.Cosh(h)+s)
			mag := math.Sinh(h) / s
			chi := math.Cosh(h) * math.Exp(-4*K) / (s * s * s)
			d := flow.FreeEnergyDerivatives(c, []float64{K, h}, []int{0, 1}, 2)
			if math.Abs(d.F-psi) > 1e-10*math.Abs(psi) {
				t.Errorf("b=%d %v: ln Z/N = %.15g, want %.15g (Baxter 1982)", b, x, d.F, psi)
			}
			if math.Abs(d.Grad[1]-mag) > 1e-8 {
				t.Errorf("b=%d %v: m = %.12g, want %.12g", b, x, d.Grad[1], mag)
			}
			if math.Abs(d.Hess[1][1]-chi) > 1e-7*math.Max(1, chi) {
				t.Errorf("b=%d %v: chi = %.12g, want %.12g", b, x, d.Hess[1][1], chi)
			}
		}
	}
}

// The scalar curvature of the Ising chain's metric g_ij = ∂i∂j ψ in (K, h):
// R = 1 + cosh h/√(sinh²h + e^{−4K}) in the convention R = 2 × Gaussian
// curvature, sphere positive (B. P. Dolan, D. A. Johnston, R. Kenna,
// J. Phys. A 35, 9025, 2002; W. Janyszek, R. Mrugala, Phys. Rev. A 39,
// 6515, 1989), to 1e-6, from the RG free energy's third derivatives.
func TestChainCurvature(t *testing.T) {
	c := mustChain(t, NewIsing(), 2)
	for _, x := range [][2]float64{{0.5, 0.1}, {0.8, 0.4}, {0.3, -0.6}} {
		K, h := x[0], x[1]
		want := 1 + math.Cosh(h)/math.Sqrt(math.Sinh(h)*math.Sinh(h)+math.Exp(-4*K))
		d := flow.FreeEnergyDerivatives(c, []float64{K, h}, []int{0, 1}, 3)
		got := flow.HessianCurvature(d.Hess, d.Third)
		if math.Abs(got-want) > 1e-6*want {
			t.Errorf("%v: R = %.10g, want %.10g (Dolan, Johnston, Kenna 2002)", x, got, want)
		}
	}
}
