package flow

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// newtonResult is the outcome of one damped Newton solve in a chart.
type newtonResult struct {
	y        []float64
	residual float64 // ‖R(y) − y‖∞ over the free coordinates
	faceRes  float64 // max |u′| over the face coordinates (0 when invariant)
	limErr   float64 // error estimate of the limit evaluation at y (0 off faces)
	iters    int
	ok       bool
}

// newtonJac fills jac (k×k, k = len(c.free)) with ∂(R(y) − y)/∂y over the
// free coordinates: the map's analytic Jacobian in the finite chart, plain
// central differences otherwise (Newton needs no more).
func (c *chart) newtonJac(jac *mat.Dense, y, fy []float64) {
	n := len(y)
	if jm, ok := c.m.(Jacobianer); ok {
		// The map's own Jacobian, taken on the face at u = ε: the free
		// coordinates are the couplings themselves, less the shear along
		// the pivot on a ray chart (x_p does not move with them), so
		// ∂y′ᵢ/∂yⱼ = ∂x′ᵢ/∂xⱼ − sᵢ ∂x′_p/∂xⱼ.
		x := make([]float64, n)
		ye := append([]float64(nil), y...)
		for _, i := range c.face {
			if ye[i] <= 0 {
				ye[i] = limitEps
			}
		}
		c.toX(x, ye)
		full := mat.NewDense(n, n, nil)
		jm.JacobianTo(full, x)
		if finiteMatrix(full) {
			for a, i := range c.free {
				for b, j := range c.free {
					v := full.At(i, j)
					if c.shear != nil {
						v -= c.shear[i] * full.At(c.pivot, j)
					}
					jac.Set(a, b, v)
				}
				jac.Set(a, a, jac.At(a, a)-1)
			}
			return
		}
	}
	yp := append([]float64(nil), y...)
	fp := make([]float64, n)
	fm := make([]float64, n)
	for b, j := range c.free {
		h := 1e-6 * (1 + math.Abs(y[j]))
		yp[j] = y[j] + h
		c.evalFast(fp, yp)
		yp[j] = y[j] - h
		c.evalFast(fm, yp)
		yp[j] = y[j]
		for a, i := range c.free {
			jac.Set(a, b, (fp[i]-fm[i])/(2*h))
		}
		jac.Set(b, b, jac.At(b, b)-1)
	}
}

// residual returns ‖R(y) − y‖∞ over the free coordinates, and fills fy.
func (c *chart) residual(fy, y []float64) float64 {
	c.evalFast(fy, y)
	var r float64
	for _, i := range c.free {
		d := math.Abs(fy[i] - y[i])
		if math.IsNaN(d) {
			return math.Inf(1)
		}
		r = math.Max(r, d)
	}
	return r
}

func supNorm(v []float64, idx []int) float64 {
	var r float64
	for _, i := range idx {
		r = math.Max(r, math.Abs(v[i]))
	}
	return r
}

// solve runs damped Newton from y0 on the free coordinates of the chart
// (face coordinates held at 0), with the step −(J − I)⁺ r from the SVD
// pseudo-inverse, so that it converges onto families of fixed points too.
func (c *chart) solve(y0 []float64, s *FindSettings) newtonResult {
	n := len(y0)
	k := len(c.free)
	y := append([]float64(nil), y0...)
	for _, i := range c.face {
		y[i] = 0
	}
	fy := make([]float64, n)
	res := c.residual(fy, y)
	out := newtonResult{}
	if k == 0 {
		out.y = y
		out.residual = 0
		out.faceRes = supNorm(fy, c.face)
		out.ok = !math.IsNaN(out.faceRes) && !math.IsInf(out.faceRes, 0)
		return out
	}
	jac := mat.NewDense(k, k, nil)
	r := mat.NewVecDense(k, nil)
	step := mat.NewVecDense(k, nil)
	var svd mat.SVD
	yt := make([]float64, n)
	ft := make([]float64, n)
	polish := 0
	for it := 0; it < s.MaxIter; it++ {
		out.iters = it
		scale := 1 + supNorm(y, c.free)
		if res <= s.Tol*scale {
			// Converged; a few more steps while they still gain bring the
			// point to rounding level.
			out.ok = true
			if polish >= 3 || res <= 1e-15*scale {
				break
			}
			polish++
		}
		if math.IsInf(res, 0) {
			break
		}
		c.newtonJac(jac, y, fy)
		for a, i := range c.free {
			r.SetVec(a, fy[i]-y[i])
		}
		if !finiteMatrix(jac) {
			break
		}
		// A well-conditioned (J − I) is solved by LU; a singular or nearly
		// singular one (a family, a marginal direction) by the SVD
		// pseudo-inverse, which steps onto the family.
		var lu mat.LU
		lu.Factorize(jac)
		solved := false
		if lu.Cond() < 1e8 {
			if err := lu.SolveVecTo(step, false, r); err == nil {
				step.ScaleVec(-1, step)
				solved = true
			}
		}
		if !solved {
			if !svd.Factorize(jac, mat.SVDThin) {
				break
			}
			vals := svd.Values(nil)
			rank := 0
			for _, v := range vals {
				if v > 1e-9*math.Max(1, vals[0]) {
					rank++
				}
			}
			if rank == 0 {
				break
			}
			var u, v mat.Dense
			svd.UTo(&u)
			svd.VTo(&v)
			// step = −V Σ⁺ Uᵀ r
			step.Zero()
			for q := 0; q < rank; q++ {
				coef := mat.Dot(u.ColView(q), r) / vals[q]
				step.AddScaledVec(step, -coef, v.ColView(q))
			}
		}
		// Cap the step so a start far from any fixed point does not jump
		// across the domain.
		if sn := mat.Norm(step, math.Inf(1)); sn > s.MaxStep {
			step.ScaleVec(s.MaxStep/sn, step)
		}
		alpha := 1.0
		accepted := false
		for ls := 0; ls < 30; ls++ {
			copy(yt, y)
			for a, i := range c.free {
				yt[i] = y[i] + alpha*step.AtVec(a)
			}
			rt := c.residual(ft, yt)
			if rt < res {
				copy(y, yt)
				copy(fy, ft)
				res = rt
				accepted = true
				break
			}
			alpha /= 2
		}
		if !accepted {
			// Stagnation: accept if already close (limit-evaluation noise).
			if res <= s.LooseTol*scale {
				out.ok = true
			}
			break
		}

		if supNorm(y, c.free) > s.Escape {
			out.ok = false
			out.y = y
			out.residual = res
			return out
		}
	}
	if !out.ok && res <= s.Tol*(1+supNorm(y, c.free)) {
		out.ok = true
	}
	out.y = y
	out.residual = res
	out.limErr = c.eval(fy, y)
	out.faceRes = supNorm(fy, c.face)
	return out
}
