package flow_test

import (
	"math"
	"testing"

	"scalewalk/flow"
)

// The Fisher metric of the normal distribution in its natural parameters
// (θ1 = μ/σ², θ2 = −1/(2σ²)) is the Hessian of ψ = −θ1²/(4θ2) − ½ ln(−2θ2)
// and has constant Gaussian curvature −1/2 (S. Amari, Methods of
// Information Geometry, 2000; from memory), so R = 2 K_G = −1 in the
// convention of HessianCurvature. Derivatives of ψ written by hand.
func TestCurvatureNormalDistribution(t *testing.T) {
	for _, th := range [][2]float64{{0.3, -0.7}, {-1.2, -0.2}, {2, -3}} {
		a, b := th[0], th[1]
		// ψ_1 = −a/(2b); ψ_2 = a²/(4b²) − 1/(2b)
		g := [][]float64{
			{-1 / (2 * b), a / (2 * b * b)},
			{a / (2 * b * b), -a*a/(2*b*b*b) + 1/(2*b*b)},
		}
		t111 := 0.0
		t112 := 1 / (2 * b * b)
		t122 := -a / (b * b * b)
		t222 := 3*a*a/(2*b*b*b*b) - 1/(b*b*b)
		tt := [][][]float64{
			{{t111, t112}, {t112, t122}},
			{{t112, t122}, {t122, t222}},
		}
		if r := flow.HessianCurvature(g, tt); math.Abs(r-(-1)) > 1e-12 {
			t.Errorf("theta %v: R = %.15g, want -1 (Gaussian curvature -1/2, Amari)", th, r)
		}
	}
}

// The three-coupling code on f(x, y) + z²/2 gives the two-coupling R, and
// R is a scalar: an affine change of coordinates mixing all three (under
// which a Hessian metric stays Hessian, its tensors transforming with the
// matrix) leaves it unchanged. Uses the normal-distribution ψ above.
func TestCurvatureThreeCouplings(t *testing.T) {
	a, b := 0.4, -0.9
	g2 := [][]float64{{-1 / (2 * b), a / (2 * b * b)}, {a / (2 * b * b), -a*a/(2*b*b*b) + 1/(2*b*b)}}
	t2 := [][][]float64{
		{{0, 1 / (2 * b * b)}, {1 / (2 * b * b), -a / (b * b * b)}},
		{{1 / (2 * b * b), -a / (b * b * b)}, {-a / (b * b * b), 3*a*a/(2*b*b*b*b) - 1/(b*b*b)}},
	}
	r2 := flow.HessianCurvature(g2, t2)
	g3 := [][]float64{{g2[0][0], g2[0][1], 0}, {g2[1][0], g2[1][1], 0}, {0, 0, 1}}
	t3 := make([][][]float64, 3)
	for i := range t3 {
		t3[i] = make([][]float64, 3)
		for j := range t3[i] {
			t3[i][j] = make([]float64, 3)
			for k := range t3[i][j] {
				if i < 2 && j < 2 && k < 2 {
					t3[i][j][k] = t2[i][j][k]
				}
			}
		}
	}
	if r3 := flow.HessianCurvature(g3, t3); math.Abs(r3-r2) > 1e-12 {
		t.Errorf("3-coupling R = %g, 2-coupling R = %g", r3, r2)
	}
	// x = A y: g' = Aᵀ g A, t'_ijk = A_ai A_bj A_ck t_abc.
	A := [][]float64{{1, 0.3, -0.2}, {0.5, 1.2, 0.1}, {-0.4, 0.2, 0.9}}
	gp := make([][]float64, 3)
	tp := make([][][]float64, 3)
	for i := 0; i < 3; i++ {
		gp[i] = make([]float64, 3)
		tp[i] = make([][]float64, 3)
		for j := 0; j < 3; j++ {
			tp[i][j] = make([]float64, 3)
			for p := 0; p < 3; p++ {
				for q := 0; q < 3; q++ {
					gp[i][j] += A[p][i] * A[q][j] * g3[p][q]
				}
			}
			for k := 0; k < 3; k++ {
				for p := 0; p < 3; p++ {
					for q := 0; q < 3; q++ {
						for r := 0; r < 3; r++ {
							tp[i][j][k] += A[p][i] * A[q][j] * A[r][k] * t3[p][q][r]
						}
					}
				}
			}
		}
	}
	if rp := flow.HessianCurvature(gp, tp); math.Abs(rp-r2) > 1e-10 {
		t.Errorf("after an affine change R = %g, want %g", rp, r2)
	}
}
