package decimation

import (
	"errors"
	"fmt"
	"math"
	"sync"

	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
)

// ErrDomain is the class of every error that says a point lies outside a
// model's or a map's physical domain.
var ErrDomain = errors.New("outside the physical domain")

// DomainError says which coupling (or which step) took a point outside the
// physical domain, and why.
type DomainError struct {
	Coupling string // "" when no single coupling is to blame
	Reason   string
}

func (e *DomainError) Error() string {
	if e.Coupling == "" {
		return e.Reason
	}
	return "coupling " + e.Coupling + ": " + e.Reason
}

func (e *DomainError) Unwrap() error { return ErrDomain }

// Model is a nearest-neighbour spin model held as its bond Boltzmann matrix
// W(s, s′) in log space (see the package documentation for the
// conventions). A Model is immutable after construction and safe for
// concurrent use.
type Model struct {
	name      string
	symmetry  string
	q         float64 // number of states (real for the Potts algebra)
	n         int     // states of the full representation; 0 for the algebra
	algebra   bool    // W = a I + c E held as (ln w_same, ln w_diff)
	size      int     // length of an edge vector
	couplings []flow.Coupling

	basis []float64 // m × size, row a = φ_a
	pinv  []float64 // (m+1) × size, pseudo-inverse of [1 φ_1 … φ_m]
	// pinvAbs[a] is Σ_e |pinv[a][e]|, the rounding gain of row a.
	pinvAbs []float64
	jets    sync.Pool // *jetWork scratch for StepJet

	// Potts algebra: ln|q−1|, sign(q−1), ln|q−2|, sign(q−2).
	lnQ1, sgQ1, lnQ2, sgQ2 float64

	absent map[string]string // couplings this instance lacks, with the reason
	potts  bool              // a Potts model (for scheme cautions)
}

// Absent returns why the model lacks a coupling called name (e.g. a Potts
// field at non-integer q), or "" when it has no such reason to give.
func (m *Model) Absent(name string) string { return m.absent[name] }

// Name returns the model's name with its parameters, e.g. "potts q=3".
func (m *Model) Name() string { return m.name }

// Couplings returns a copy of the model's couplings, in the order of the
// coupling vector x.
func (m *Model) Couplings() []flow.Coupling {
	return append([]flow.Coupling(nil), m.couplings...)
}

// Symmetry names the symmetry group under which the couplings are
// classified as symmetric or symmetry-breaking.
func (m *Model) Symmetry() string { return m.symmetry }

// States returns the number of states q of one spin (real for the Potts
// algebra).
func (m *Model) States() float64 { return m.q }

// Size returns the length of an edge vector: q·q (row-major ln W) for the
// full representation, 2 (ln w_same, ln w_diff) for the Potts algebra.
func (m *Model) Size() int { return m.size }

// Algebra reports whether the model uses the two-entry Potts algebra
// W = a I + c E instead of the full q × q matrix.
func (m *Model) Algebra() bool { return m.algebra }

// Basis returns the edge vector φ_a of coupling a (do not modify it).
func (m *Model) Basis(a int) []float64 { return m.basis[a*m.size : (a+1)*m.size] }

func (m *Model) checkLen(what string, v []float64, want int) {
	if len(v) != want {
		panic(fmt.Sprintf("decimation: %s has length %d, want %d", what, len(v), want))
	}
}

// Edge writes into dst (length Size) the log bond weights ln W for the
// couplings x (length len(Couplings)): dst = Σ_a x_a φ_a, one-body terms
// entering as (f(s) + f(s′))/2.
func (m *Model) Edge(dst, x []float64) {
	m.checkLen("Edge dst", dst, m.size)
	m.checkLen("Edge x", x, len(m.couplings))
	for k := range dst {
		dst[k] = 0
	}
	for a, xa := range x {
		phi := m.basis[a*m.size : (a+1)*m.size]
		for k, p := range phi {
			if p != 0 {
				dst[k] += xa * p
			}
		}
	}
}

// Mul writes into dst the log-space product ln(exp(a)·exp(b)) of two edge
// vectors, by log-sum-exp with the largest term factored out, so that
// entries of order 10³ and more stay finite; an entry −Inf is a zero
// weight. dst must alias neither a nor b (a and b may alias each other). In the Potts algebra an entry of the product that is not positive
// (possible for q < 2) is written as NaN.
func (m *Model) Mul(dst, a, b []float64) {
	m.checkLen("Mul dst", dst, m.size)
	m.checkLen("Mul a", a, m.size)
	m.checkLen("Mul b", b, m.size)
	if m.algebra {
		dst[0], dst[1] = m.algMul(a, b)
		return
	}
	q := m.n
	for i := 0; i < q; i++ {
		ai := a[i*q : (i+1)*q]
		for k := 0; k < q; k++ {
			mx, at := math.Inf(-1), -1
			for l, v := range ai {
				if t := v + b[l*q+k]; t > mx {
					mx, at = t, l
				}
			}
			if at < 0 { // every term −Inf (a zero weight) or NaN
				v := math.Inf(-1)
				for l, u := range ai {
					if math.IsNaN(u + b[l*q+k]) {
						v = math.NaN()
					}
				}
				dst[i*q+k] = v
				continue
			}
			if math.IsInf(mx, 1) {
				dst[i*q+k] = mx
				continue
			}
			// The largest term contributes exactly 1: ln(1 + s) by Log1p.
			s := 0.0
			for l, v := range ai {
				if l != at {
					s += math.Exp(v + b[l*q+k] - mx)
				}
			}
			dst[i*q+k] = mx + math.Log1p(s)
		}
	}
}

// algMul returns the log entries of the algebra product,
// same = s1 s2 + (q−1) d1 d2 and diff = s1 d2 + d1 s2 + (q−2) d1 d2.
func (m *Model) algMul(a, b []float64) (same, diff float64) {
	same = signedLSE(
		a[0]+b[0], 0, 1,
		a[1]+b[1], m.lnQ1, m.sgQ1,
		0, 0, 0)
	diff = signedLSE(
		a[0]+b[1], 0, 1,
		a[1]+b[0], 0, 1,
		a[1]+b[1], m.lnQ2, m.sgQ2)
	return same, diff
}

// signedLSE returns ln(Σ σ_i e^{t_i + c_i}) over up to three terms (a term
// with σ = 0 is absent), NaN when the sum is not positive.
func signedLSE(t0, c0, s0, t1, c1, s1, t2, c2, s2 float64) float64 {
	mx := math.Inf(-1)
	if s0 != 0 && t0+c0 > mx {
		mx = t0 + c0
	}
	if s1 != 0 && t1+c1 > mx {
		mx = t1 + c1
	}
	if s2 != 0 && t2+c2 > mx {
		mx = t2 + c2
	}
	if math.IsInf(mx, 0) || math.IsNaN(mx) {
		return math.NaN()
	}
	sum := 0.0
	if s0 != 0 {
		sum += s0 * math.Exp(t0+c0-mx)
	}
	if s1 != 0 {
		sum += s1 * math.Exp(t1+c1-mx)
	}
	if s2 != 0 {
		sum += s2 * math.Exp(t2+c2-mx)
	}
	if !(sum > 0) {
		return math.NaN()
	}
	return mx + math.Log(sum)
}

// MulGrad is Mul together with the propagation of derivatives. da, db and
// ddst hold nd derivative vectors each, row-major (nd × Size): row j is
// ∂(a)/∂y_j for some parameters y. With L_ik = ln Σ_l exp(A_il + B_lk),
//
//	dL_ik = Σ_l w_ilk (dA_il + dB_lk),  w_ilk = exp(A_il + B_lk − L_ik),
//
// the softmax weights (signed in the Potts algebra). dst and ddst must
// alias none of the inputs.
func (m *Model) MulGrad(dst, ddst, a, da, b, db []float64) {
	m.Mul(dst, a, b)
	if len(da)%m.size != 0 || len(db) != len(da) || len(ddst) != len(da) {
		panic(fmt.Sprintf("decimation: MulGrad derivative lengths %d, %d, %d not equal multiples of %d",
			len(ddst), len(da), len(db), m.size))
	}
	nd := len(da) / m.size
	sz := m.size
	if m.algebra {
		ls, ld := dst[0], dst[1]
		// same: terms (a0+b0, +1), (a1+b1, q−1)
		w00 := math.Exp(a[0] + b[0] - ls)
		w11 := m.sgQ1 * math.Exp(a[1]+b[1]+m.lnQ1-ls)
		// diff: terms (a0+b1, +1), (a1+b0, +1), (a1+b1, q−2)
		v01 := math.Exp(a[0] + b[1] - ld)
		v10 := math.Exp(a[1] + b[0] - ld)
		v11 := m.sgQ2 * math.Exp(a[1]+b[1]+m.lnQ2-ld)
		for j := 0; j < nd; j++ {
			dA, dB := da[j*sz:j*sz+2], db[j*sz:j*sz+2]
			ddst[j*sz] = w00*(dA[0]+dB[0]) + w11*(dA[1]+dB[1])
			ddst[j*sz+1] = v01*(dA[0]+dB[1]) + v10*(dA[1]+dB[0]) + v11*(dA[1]+dB[1])
		}
		return
	}
	q := m.n
	for i := 0; i < q; i++ {
		for k := 0; k < q; k++ {
			ik := i*q + k
			for j := 0; j < nd; j++ {
				ddst[j*sz+ik] = 0
			}
			L := dst[ik]
			for l := 0; l < q; l++ {
				il, lk := i*q+l, l*q+k
				w := math.Exp(a[il] + b[lk] - L)
				for j := 0; j < nd; j++ {
					ddst[j*sz+ik] += w * (da[j*sz+il] + db[j*sz+lk])
				}
			}
		}
	}
}

// Project writes into dst (length len(Couplings)) the least-squares
// coefficients of the log entries lw on the coupling basis plus a
// constant, lw ≈ c + Σ_a dst_a φ_a, and returns c. It is linear in lw, so
// it also projects derivatives. It allocates nothing.
func (m *Model) Project(dst, lw []float64) (c float64) {
	m.checkLen("Project dst", dst, len(m.couplings))
	m.checkLen("Project lw", lw, m.size)
	if m.algebra {
		// K = ln w_same − ln w_diff, c = ln w_diff: exact, residual 0.
		dst[0] = lw[0] - lw[1]
		return lw[1]
	}
	// Factor out the largest entry (the pseudo-inverse maps the all-ones
	// vector onto the constant alone), which keeps the rounding relative to
	// the spread of the entries rather than to their size.
	shift := lw[0]
	for _, v := range lw {
		if v > shift {
			shift = v
		}
	}
	if math.IsInf(shift, 0) || math.IsNaN(shift) {
		shift = 0
	}
	sz := m.size
	for a := 0; a <= len(dst); a++ {
		row := m.pinv[a*sz : (a+1)*sz]
		s := 0.0
		for k, p := range row {
			s += p * (lw[k] - shift)
		}
		if a == 0 {
			c = s + shift
		} else {
			dst[a-1] = s
		}
	}
	return c
}

// Residual returns the closure error of lw: the largest absolute deviation
// of an entry from its projection c + Σ_a x_a φ_a (0 when the basis holds
// lw exactly).
func (m *Model) Residual(lw []float64) float64 {
	m.checkLen("Residual lw", lw, m.size)
	if m.algebra {
		return 0
	}
	var buf [64]float64
	var x []float64
	if nc := len(m.couplings); nc <= len(buf) {
		x = buf[:nc]
	} else {
		x = make([]float64, nc)
	}
	c := m.Project(x, lw)
	r := 0.0
	for k, v := range lw {
		fit := c
		for a, xa := range x {
			fit += xa * m.basis[a*m.size+k]
		}
		if d := math.Abs(v - fit); d > r || math.IsNaN(d) {
			r = d
		}
	}
	return r
}

// Domain returns nil when x is inside the model's physical domain: every
// coupling finite. (A map built on the model may restrict it further.)
func (m *Model) Domain(x []float64) error {
	m.checkLen("Domain x", x, len(m.couplings))
	for a, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return &DomainError{Coupling: m.couplings[a].Name, Reason: fmt.Sprintf("not finite (%g)", v)}
		}
	}
	return nil
}

// newFull builds a model on the full n × n representation from the basis
// functions phi[a](s, s′) and computes the pseudo-inverse of [1 φ_1 … φ_m].
func newFull(name, symmetry string, n int, cs []flow.Coupling, phi []func(s, t int) float64) *Model {
	if len(cs) != len(phi) {
		panic("decimation: couplings and basis functions differ in number")
	}
	sz := n * n
	m := &Model{name: name, symmetry: symmetry, q: float64(n), n: n, size: sz, couplings: cs}
	m.basis = make([]float64, len(cs)*sz)
	design := mat.NewDense(sz, len(cs)+1, nil)
	for s := 0; s < n; s++ {
		for t := 0; t < n; t++ {
			k := s*n + t
			design.Set(k, 0, 1)
			for a, f := range phi {
				v := f(s, t)
				m.basis[a*sz+k] = v
				design.Set(k, a+1, v)
			}
		}
	}
	m.pinv = pseudoInverse(design)
	m.pinvAbs = make([]float64, len(cs)+1)
	for a := range m.pinvAbs {
		for _, v := range m.pinv[a*sz : (a+1)*sz] {
			m.pinvAbs[a] += math.Abs(v)
		}
	}
	return m
}

// pseudoInverse returns the Moore–Penrose pseudo-inverse of a (r × c) as a
// row-major c × r slice, from a thin SVD; singular values below
// max(r, c)·ε·σ_max are treated as zero.
func pseudoInverse(a *mat.Dense) []float64 {
	r, c := a.Dims()
	var svd mat.SVD
	if !svd.Factorize(a, mat.SVDThin) {
		panic("decimation: SVD of the coupling basis failed")
	}
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	sv := svd.Values(nil)
	tol := float64(max(r, c)) * 0x1p-52 * sv[0]
	out := make([]float64, c*r)
	for i := 0; i < c; i++ {
		for k := 0; k < r; k++ {
			s := 0.0
			for l, sl := range sv {
				if sl > tol {
					s += v.At(i, l) * u.At(k, l) / sl
				}
			}
			out[i*r+k] = s
		}
	}
	return out
}
