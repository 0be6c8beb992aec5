package flow

import (
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// Relevance says how a direction behaves under the flow.
type Relevance int

const (
	Irrelevant Relevance = iota // |λ| < 1
	Marginal                    // |λ| = 1 within the tolerance
	Relevant                    // |λ| > 1
)

func (r Relevance) String() string {
	switch r {
	case Relevant:
		return "relevant"
	case Marginal:
		return "marginal"
	}
	return "irrelevant"
}

// Block says which invariant block of the Jacobian a direction belongs to.
type Block int

const (
	// SymmetricBlock: the direction lies in the symmetric subspace.
	SymmetricBlock Block = iota
	// BreakingBlock: a symmetry-breaking direction.
	BreakingBlock
	// MixedBlock: the point is outside the symmetric subspace, so
	// directions do not split.
	MixedBlock
)

func (b Block) String() string {
	switch b {
	case SymmetricBlock:
		return "symmetric"
	case BreakingBlock:
		return "breaking"
	}
	return "mixed"
}

// Direction is one eigen-direction of the linearized map at a fixed point.
type Direction struct {
	Lambda    complex128 // eigenvalue
	LambdaErr float64    // error estimate of |λ|
	Y         float64    // ln|λ| / ln b (−Inf for λ = 0)
	YErr      float64
	Block     Block
	OneBody   bool // one-body direction at zero two-site couplings: not counted
	Free      bool // along a family of fixed points: not counted
	Relevance Relevance
	// Right and Left are the right eigenvector and the left eigenvector
	// (the scaling field) in chart coordinates; the left one is
	// normalised so that Left · Right = 1.
	Right, Left []complex128
}

// Counted reports whether the direction counts in the classification.
func (d Direction) Counted() bool { return !d.OneBody && !d.Free }

// Linearization is the Jacobian at a point in chart coordinates with its
// eigen-decomposition.
type Linearization struct {
	Jacobian *mat.Dense // ∂y′ᵢ/∂yⱼ
	Err      *mat.Dense // entrywise error estimate
	Dirs     []Direction
}

// linearize computes the Jacobian in chart coordinates at y (face
// coordinates at 0 are one-sided limits) with its error estimate.
func (c *chart) jacobian(y []float64) (jac, errs *mat.Dense) {
	n := len(y)
	jac = mat.NewDense(n, n, nil)
	errs = mat.NewDense(n, n, nil)
	if len(c.face) == 0 {
		Jacobian(jac, errs, c.m, y)
		return jac, errs
	}
	f := func(d, yy []float64) { c.eval(d, yy) }
	f0 := make([]float64, n)
	lim := c.eval(f0, y)
	col := make([]float64, n)
	ec := make([]float64, n)
	for j := 0; j < n; j++ {
		if c.inf[j] != 0 && y[j] <= 0 {
			richardsonOneSided(col, ec, f, y, f0, j, 1e-4)
		} else {
			h := 1e-3 * math.Max(1, math.Abs(y[j]))
			richardsonCentral(col, ec, f, y, j, h)
		}
		for i := 0; i < n; i++ {
			jac.Set(i, j, col[i])
			errs.Set(i, j, ec[i]+lim/1e-4)
		}
	}
	return jac, errs
}

// eigenDirections decomposes jac into eigen-directions, sorted by |λ|
// descending, with errors propagated from errs by first-order perturbation
// theory: |δλ| ≤ |l|ᵀ|E||r| / |l·r|.
func eigenDirections(jac, errs *mat.Dense, b float64) ([]Direction, bool) {
	n, _ := jac.Dims()
	if !finiteMatrix(jac) {
		// gonum's balancing step does not return on Inf or NaN entries.
		return nil, false
	}
	var eig mat.Eigen
	if !eig.Factorize(jac, mat.EigenBoth) {
		return nil, false
	}
	vals := eig.Values(nil)
	var rv, lv mat.CDense
	eig.VectorsTo(&rv)
	eig.LeftVectorsTo(&lv)
	dirs := make([]Direction, n)
	lnb := math.Log(b)
	normE := mat.Norm(errs, 2)
	normJ := mat.Norm(jac, 2)
	for k := 0; k < n; k++ {
		r := make([]complex128, n)
		l := make([]complex128, n)
		for i := 0; i < n; i++ {
			r[i] = rv.At(i, k)
			l[i] = lv.At(i, k)
		}
		// Normalise: l·r = 1 (l is a left eigenvector: lᴴ J = λ lᴴ in
		// gonum's convention; we store the row vector conj(l)).
		var dot complex128
		for i := 0; i < n; i++ {
			l[i] = cmplx.Conj(l[i])
			dot += l[i] * r[i]
		}
		var pert float64
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				pert += cmplx.Abs(l[i]) * errs.At(i, j) * cmplx.Abs(r[j])
			}
		}
		if dot != 0 {
			for i := range l {
				l[i] /= dot
			}
			pert /= cmplx.Abs(dot)
		} else {
			pert = math.Inf(1)
		}
		// Near a defective eigenvalue (a Jordan block) l·r → 0 and the
		// first-order estimate blows up, while the true shift is of order
		// √(‖E‖‖J‖) (J. H. Wilkinson, The Algebraic Eigenvalue Problem,
		// 1965, ch. 2; common practice): use the smaller.
		pert = math.Min(pert, math.Sqrt(normE*normJ)+normE)
		lam := vals[k]
		a := cmplx.Abs(lam)
		d := Direction{Lambda: lam, LambdaErr: pert, Right: r, Left: l}
		d.Y = math.Log(a) / lnb
		if a > 0 {
			d.YErr = pert / (a * lnb)
		} else {
			d.YErr = math.Inf(1)
		}
		dirs[k] = d
	}
	sort.SliceStable(dirs, func(i, j int) bool { return cmplx.Abs(dirs[i].Lambda) > cmplx.Abs(dirs[j].Lambda) })
	return dirs, true
}

// blockEigenvalues returns the eigenvalues of the diagonal block of jac on
// the index set idx.
func blockEigenvalues(jac *mat.Dense, idx []int) []complex128 {
	if len(idx) == 0 {
		return nil
	}
	sub := mat.NewDense(len(idx), len(idx), nil)
	for a, i := range idx {
		for b, j := range idx {
			sub.Set(a, b, jac.At(i, j))
		}
	}
	if !finiteMatrix(sub) {
		return nil
	}
	var eig mat.Eigen
	if !eig.Factorize(sub, mat.EigenNone) {
		return nil
	}
	return eig.Values(nil)
}

// tagBlocks assigns each direction to the block whose eigenvalue it
// matches: groups maps a tag to the coordinate indices of a block.
func tagBlocks(dirs []Direction, jac *mat.Dense, groups [][]int, apply func(d *Direction, g int)) {
	used := make([]bool, len(dirs))
	for g, idx := range groups {
		for _, ev := range blockEigenvalues(jac, idx) {
			best, bestD := -1, math.Inf(1)
			for k := range dirs {
				if used[k] {
					continue
				}
				if dd := cmplx.Abs(dirs[k].Lambda - ev); dd < bestD {
					best, bestD = k, dd
				}
			}
			if best >= 0 {
				used[best] = true
				apply(&dirs[best], g)
			}
		}
	}
}

// finiteMatrix reports whether every entry of a is finite.
func finiteMatrix(a mat.Matrix) bool {
	r, c := a.Dims()
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			v := a.At(i, j)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return false
			}
		}
	}
	return true
}
