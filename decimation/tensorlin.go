package decimation

import (
	"math"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// Dense linear algebra for the tensor engines: index permutation, matrix
// products through gonum's BLAS on row-major slices, and truncated
// decompositions that find only the leading k singular (or eigen) pairs by
// a randomized range finder with power iterations (Halko, Martinsson and
// Tropp, SIAM Rev. 53, 217 (2011)), so that no full decomposition of a
// χ² × χ² matrix is needed.

// permute writes src, an array of the given dims (row-major), into dst
// with its axes reordered: axis a of dst is axis perm[a] of src. It
// returns the dims of dst.
func permute(dst, src []float64, dims, perm []int) []int {
	n := len(dims)
	nd := make([]int, n)
	stride := make([]int, n) // strides of src
	s := 1
	for a := n - 1; a >= 0; a-- {
		stride[a] = s
		s *= dims[a]
	}
	pst := make([]int, n) // src stride of each dst axis
	for a := range perm {
		nd[a] = dims[perm[a]]
		pst[a] = stride[perm[a]]
	}
	if s == 0 {
		return nd
	}
	// Walk dst in order; the innermost axis is a strided copy.
	idx := make([]int, n)
	off := 0
	inner, ist := nd[n-1], pst[n-1]
	for k := 0; k < s; k += inner {
		d := dst[k : k+inner]
		o := off
		for i := range d {
			d[i] = src[o]
			o += ist
		}
		// Advance the outer axes.
		for a := n - 2; a >= 0; a-- {
			idx[a]++
			off += pst[a]
			if idx[a] < nd[a] {
				break
			}
			off -= pst[a] * nd[a]
			idx[a] = 0
		}
	}
	return nd
}

// gemm computes c = a·b (transposed as asked) for row-major a (m×k or
// k×m), b (k×n or n×k), c (m×n).
func gemm(ta, tb bool, m, n, k int, a, b, c []float64) {
	tA, tB := blas.NoTrans, blas.NoTrans
	lda, ldb := k, n
	if ta {
		tA, lda = blas.Trans, m
	}
	if tb {
		tB, ldb = blas.Trans, k
	}
	blas64.Implementation().Dgemm(tA, tB, m, n, k, 1, a, max(lda, 1), b, max(ldb, 1), 0, c, max(n, 1))
}

// orthonormalize makes the l columns of the m×l row-major matrix y
// orthonormal in place (classical Gram–Schmidt, twice for stability);
// columns that vanish are replaced by random unit vectors.
func orthonormalize(y []float64, m, l int, rng *rand.Rand) {
	col := make([]float64, m)
	for j := 0; j < l; j++ {
		for i := 0; i < m; i++ {
			col[i] = y[i*l+j]
		}
		for attempt := 0; ; attempt++ {
			before := 0.0
			for _, v := range col {
				before += v * v
			}
			for pass := 0; pass < 2; pass++ {
				for p := 0; p < j; p++ {
					dot := 0.0
					for i := 0; i < m; i++ {
						dot += y[i*l+p] * col[i]
					}
					for i := 0; i < m; i++ {
						col[i] -= dot * y[i*l+p]
					}
				}
			}
			nrm := 0.0
			for _, v := range col {
				nrm += v * v
			}
			if nrm > 1e-20*before && nrm > 1e-300 || attempt > 3 {
				nrm = math.Sqrt(nrm)
				for i := 0; i < m; i++ {
					y[i*l+j] = col[i] / nrm
				}
				break
			}
			for i := range col { // a dependent column: try a random one
				col[i] = rng.NormFloat64()
			}
		}
	}
}

// multipletCut returns how many of the descending values v (at most k)
// to keep without cutting through a degenerate multiplet: a truncation
// inside one would break the model's symmetry at random. It keeps k when
// the whole multiplet at the cut would leave fewer than k/2 states.
func multipletCut(v []float64, k int) int {
	if k >= len(v) || k == 0 {
		return min(k, len(v))
	}
	const rel = 1e-7
	c := k
	for c > 0 && math.Abs(v[c]-v[c-1]) <= rel*math.Abs(v[0]) {
		c--
	}
	if c < k/2 {
		return k
	}
	return c
}

// powerIterations sharpen the randomized range: the error of the leading
// vectors falls like (s_{l+1}/s_k)^(2·powerIterations+1).
const powerIterations = 2

// eigenIterations is the subspace iteration count of topEigen: the cut of
// a HOTRG isometry must fall between whole multiplets, or the truncation
// breaks the model's symmetry, so its subspace is converged further.
const eigenIterations = 8

// truncSVD returns the k leading singular triplets of the m×n row-major
// matrix a: u (m×k), s (k, descending), vt (k×n). Small matrices get a full
// decomposition; larger ones the randomized range finder with oversampling
// and power iterations. The seed is fixed: results are reproducible.
func truncSVD(a []float64, m, n, k int) (u, s, vt []float64) {
	want := min(k, m, n)
	k = min(k+1, m, n) // one more, to see whether the cut splits a multiplet
	u, s, vt = truncSVDk(a, m, n, k)
	c := multipletCut(s, want)
	return cutColumns(u, m, len(s), c), s[:c], vt[:c*n]
}

// cutColumns keeps the first c of the k columns of the m×k row-major u.
func cutColumns(u []float64, m, k, c int) []float64 {
	if c == k {
		return u
	}
	out := make([]float64, m*c)
	for i := 0; i < m; i++ {
		copy(out[i*c:(i+1)*c], u[i*k:i*k+c])
	}
	return out
}

func truncSVDk(a []float64, m, n, k int) (u, s, vt []float64) {
	if min(m, n) <= max(2*k, 48) {
		return fullSVD(a, m, n, k)
	}
	rng := rand.New(rand.NewPCG(0x5ca1e, 0xa1c))
	l := min(m, n, k+max(8, k/2))
	omega := make([]float64, n*l)
	for i := range omega {
		omega[i] = rng.NormFloat64()
	}
	y := make([]float64, m*l)
	z := make([]float64, n*l)
	gemm(false, false, m, l, n, a, omega, y) // y = a·Ω
	orthonormalize(y, m, l, rng)
	for it := 0; it < powerIterations; it++ {
		gemm(true, false, n, l, m, a, y, z) // z = aᵀ·y
		orthonormalize(z, n, l, rng)
		gemm(false, false, m, l, n, a, z, y) // y = a·z
		orthonormalize(y, m, l, rng)
	}
	b := make([]float64, l*n)
	gemm(true, false, l, n, m, y, a, b) // b = yᵀ·a
	ub, sb, vtb := fullSVD(b, l, n, k)
	u = make([]float64, m*k)
	gemm(false, false, m, k, l, y, ub, u)
	return u, sb, vtb
}

// fullSVD is the thin SVD by gonum, truncated to k.
func fullSVD(a []float64, m, n, k int) (u, s, vt []float64) {
	var svd mat.SVD
	if !svd.Factorize(mat.NewDense(m, n, append([]float64(nil), a...)), mat.SVDThin) {
		panic("decimation: SVD failed")
	}
	sv := svd.Values(nil)
	var um, vm mat.Dense
	svd.UTo(&um)
	svd.VTo(&vm)
	u = make([]float64, m*k)
	vt = make([]float64, k*n)
	for i := 0; i < m; i++ {
		for j := 0; j < k; j++ {
			u[i*k+j] = um.At(i, j)
		}
	}
	for j := 0; j < k; j++ {
		for i := 0; i < n; i++ {
			vt[j*n+i] = vm.At(i, j)
		}
	}
	return u, sv[:k], vt
}

// topEigen returns the k leading eigenpairs of the symmetric positive
// semi-definite n×n matrix a: the values descending and the vectors as the
// columns of v (n×k); the randomized range finder above for large n.
func topEigen(a []float64, n, k int) (vals, v []float64) {
	want := min(k, n)
	k = min(k+1, n)
	vals, v = topEigenK(a, n, k)
	c := multipletCut(vals, want)
	return vals[:c], cutColumns(v, n, len(vals), c)
}

func topEigenK(a []float64, n, k int) (vals, v []float64) {
	var q []float64
	l := n
	if n > max(2*k, 48) {
		rng := rand.New(rand.NewPCG(0xe16e, 0x5eed))
		l = min(n, k+max(8, k/2))
		q = make([]float64, n*l)
		for i := range q {
			q[i] = rng.NormFloat64()
		}
		y := make([]float64, n*l)
		gemm(false, false, n, l, n, a, q, y)
		orthonormalize(y, n, l, rng)
		for it := 0; it < eigenIterations; it++ {
			gemm(false, false, n, l, n, a, y, q)
			orthonormalize(q, n, l, rng)
			y, q = q, y
		}
		q = y
	}
	// The small symmetric problem b = qᵀ a q (or a itself).
	b := a
	if q != nil {
		t := make([]float64, n*l)
		gemm(false, false, n, l, n, a, q, t)
		b = make([]float64, l*l)
		gemm(true, false, l, l, n, q, t, b)
		for i := 0; i < l; i++ { // symmetrize rounding
			for j := i + 1; j < l; j++ {
				m := (b[i*l+j] + b[j*l+i]) / 2
				b[i*l+j], b[j*l+i] = m, m
			}
		}
	}
	var es mat.EigenSym
	if !es.Factorize(mat.NewSymDense(l, append([]float64(nil), b...)), true) {
		panic("decimation: symmetric eigen-decomposition failed")
	}
	ev := es.Values(nil)
	var vec mat.Dense
	es.VectorsTo(&vec)
	order := make([]int, l)
	for i := range order {
		order[i] = i
	}
	sort.Slice(order, func(i, j int) bool { return ev[order[i]] > ev[order[j]] })
	vals = make([]float64, k)
	small := make([]float64, l*k)
	for j := 0; j < k; j++ {
		vals[j] = ev[order[j]]
		for i := 0; i < l; i++ {
			small[i*k+j] = vec.At(i, order[j])
		}
	}
	if q == nil {
		return vals, small
	}
	v = make([]float64, n*k)
	gemm(false, false, n, k, l, q, small, v)
	return vals, v
}
