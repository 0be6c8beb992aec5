package flow

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// HessianCurvature returns the scalar curvature of the metric
// g_ij = ∂_i ∂_j f, given g and the third derivatives t_ijk = ∂_i ∂_j ∂_k f
// (n = 2 or 3 couplings).
//
// For a Hessian metric the Christoffel symbols are Γ_kij = ½ t_ijk and the
// Riemann tensor needs no fourth derivative:
//
//	R_ijkl = ¼ g^{mn} (t_jkm t_iln − t_ikm t_jln)
//
// (the second-derivative terms of Γ cancel because t is fully symmetric).
// The scalar R = g^{ik} g^{jl} R_ijkl is returned in the convention in which
// a round sphere has R > 0 and R = 2 × the Gaussian curvature in two
// dimensions (the convention of B. P. Dolan, D. A. Johnston, R. Kenna,
// J. Phys. A 35, 9025, 2002; Ruppeiner's has the opposite sign). It returns
// NaN when g is singular.
func HessianCurvature(g [][]float64, t [][][]float64) float64 {
	n := len(g)
	gm := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			gm.Set(i, j, g[i][j])
		}
	}
	var inv mat.Dense
	if err := inv.Inverse(gm); err != nil {
		return math.NaN()
	}
	gi := func(i, j int) float64 { return inv.At(i, j) }
	// c_ijkl = g^{mn} t_ijm t_kln, then R_ijkl = ¼ (c_jkil − c_ikjl).
	c := func(i, j, k, l int) float64 {
		var s float64
		for m := 0; m < n; m++ {
			for q := 0; q < n; q++ {
				s += gi(m, q) * t[i][j][m] * t[k][l][q]
			}
		}
		return s
	}
	var r float64
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			for k := 0; k < n; k++ {
				for l := 0; l < n; l++ {
					rijkl := 0.25 * (c(j, k, i, l) - c(i, k, j, l))
					r += gi(i, k) * gi(j, l) * rijkl
				}
			}
		}
	}
	return r
}

// CurvatureError bounds the error of HessianCurvature(g, t) caused by
// absolute errors eg in each metric component and et in each third
// derivative: the sum over the independent components of |∂R/∂component|
// times its error, the partial derivatives by central differences. Near a
// frozen corner of a phase diagram the metric and its derivatives are tiny
// and R is a small difference of large terms: this is what tells.
func CurvatureError(g [][]float64, t [][][]float64, eg, et float64) float64 {
	n := len(g)
	g2 := make([][]float64, n)
	for i := range g2 {
		g2[i] = append([]float64(nil), g[i]...)
	}
	t2 := make([][][]float64, n)
	for i := range t2 {
		t2[i] = make([][]float64, n)
		for j := range t2[i] {
			t2[i][j] = append([]float64(nil), t[i][j]...)
		}
	}
	var total float64
	// Metric components g_ij, i ≤ j, perturbed symmetrically.
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			h := 1e-6 * math.Max(math.Abs(g[i][j]), eg)
			if h == 0 {
				continue
			}
			set := func(v float64) { g2[i][j], g2[j][i] = v, v }
			set(g[i][j] + h)
			rp := HessianCurvature(g2, t2)
			set(g[i][j] - h)
			rm := HessianCurvature(g2, t2)
			set(g[i][j])
			total += math.Abs((rp-rm)/(2*h)) * eg
		}
	}
	// Third derivatives t_ijk, i ≤ j ≤ k, perturbed in every permutation.
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			for k := j; k < n; k++ {
				h := 1e-6 * math.Max(math.Abs(t[i][j][k]), et)
				if h == 0 {
					continue
				}
				set := func(v float64) {
					for _, p := range [][3]int{{i, j, k}, {i, k, j}, {j, i, k}, {j, k, i}, {k, i, j}, {k, j, i}} {
						t2[p[0]][p[1]][p[2]] = v
					}
				}
				set(t[i][j][k] + h)
				rp := HessianCurvature(g2, t2)
				set(t[i][j][k] - h)
				rm := HessianCurvature(g2, t2)
				set(t[i][j][k])
				total += math.Abs((rp-rm)/(2*h)) * et
			}
		}
	}
	return total
}
