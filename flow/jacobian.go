package flow

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// vecFunc is a vector function of a vector, f: Rⁿ → Rⁿ, writing into dst.
type vecFunc func(dst, y []float64)

// richardsonCentral returns ∂f/∂y_j at y by central differences at steps
// h, h/2, h/4 combined by Richardson extrapolation, with an error estimate
// per component (the difference between the two best extrapolants).
//
// Reference: L. F. Richardson, Phil. Trans. R. Soc. A 226, 299 (1927);
// the central-difference tableau is textbook numerical analysis (common
// practice).
func richardsonCentral(col, errs []float64, f vecFunc, y []float64, j int, h float64) {
	n := len(y)
	yp := append([]float64(nil), y...)
	fp := make([]float64, n)
	fm := make([]float64, n)
	var d [3][]float64
	for k := 0; k < 3; k++ {
		hk := h / float64(int(1)<<k)
		yp[j] = y[j] + hk
		f(fp, yp)
		yp[j] = y[j] - hk
		f(fm, yp)
		d[k] = make([]float64, n)
		for i := range d[k] {
			d[k][i] = (fp[i] - fm[i]) / (2 * hk)
		}
	}
	for i := 0; i < n; i++ {
		// Central differences have an error series in h², so each
		// halving gains a factor 4, then 16.
		r1a := (4*d[1][i] - d[0][i]) / 3
		r1b := (4*d[2][i] - d[1][i]) / 3
		r2 := (16*r1b - r1a) / 15
		col[i] = r2
		errs[i] = math.Abs(r2-r1b) + 4*epsRound*(math.Abs(fp[i])+math.Abs(fm[i])+1)/h
	}
}

// richardsonOneSided returns the derivative at the boundary y_j = y0 (the
// value f0 there given) from one side: forward differences at steps
// t, t/2, t/4 with the error series in powers of t, extrapolated.
func richardsonOneSided(col, errs []float64, f vecFunc, y, f0 []float64, j int, t float64) {
	n := len(y)
	yp := append([]float64(nil), y...)
	fp := make([]float64, n)
	var d [3][]float64
	for k := 0; k < 3; k++ {
		tk := t / float64(int(1)<<k)
		yp[j] = y[j] + tk
		f(fp, yp)
		d[k] = make([]float64, n)
		for i := range d[k] {
			d[k][i] = (fp[i] - f0[i]) / tk
		}
	}
	for i := 0; i < n; i++ {
		r1a := 2*d[1][i] - d[0][i]
		r1b := 2*d[2][i] - d[1][i]
		r2 := (4*r1b - r1a) / 3
		col[i] = r2
		errs[i] = math.Abs(r2-r1b) + 8*epsRound*(math.Abs(fp[i])+math.Abs(f0[i])+1)/t
	}
}

// epsRound is the relative rounding error assumed for one map evaluation.
const epsRound = 1e-15

// NumericalJacobian fills dst with ∂x′ᵢ/∂xⱼ of the map at x by
// Richardson-extrapolated central differences, and errs (if not nil) with
// an estimate of the absolute error of each entry.
func NumericalJacobian(dst, errs *mat.Dense, m Map, x []float64) {
	n := len(x)
	f := func(d, y []float64) { m.Step(d, y) }
	col := make([]float64, n)
	ec := make([]float64, n)
	for j := 0; j < n; j++ {
		h := 1e-3 * math.Max(1, math.Abs(x[j]))
		richardsonCentral(col, ec, f, x, j, h)
		for i := 0; i < n; i++ {
			dst.Set(i, j, col[i])
			if errs != nil {
				errs.Set(i, j, ec[i])
			}
		}
	}
}

// Jacobian fills dst with ∂x′ᵢ/∂xⱼ at x: the map's own when it is a
// [Jacobianer], numerical otherwise. errs, if not nil, receives the
// entrywise error estimate (a rounding-level bound for analytic Jacobians).
func Jacobian(dst, errs *mat.Dense, m Map, x []float64) {
	if jm, ok := m.(Jacobianer); ok {
		jm.JacobianTo(dst, x)
		if errs != nil {
			r, c := dst.Dims()
			for i := 0; i < r; i++ {
				for j := 0; j < c; j++ {
					errs.Set(i, j, 1e-13*(1+math.Abs(dst.At(i, j))))
				}
			}
		}
		return
	}
	NumericalJacobian(dst, errs, m, x)
}
