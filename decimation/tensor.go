package decimation

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
)

// TensorRG is tensor renormalization of a spin model on the square
// lattice: the partition function is written as a network of one
// four-leg tensor per site, T[l, u, r, d], and coarse-grained step by
// step, each step halving the number of tensors and keeping at most χ
// states per leg. Two methods: Levin–Nave TRG (M. Levin, C. P. Nave, PRL
// 99, 120601 (2007)), which splits every tensor by a truncated SVD and
// recombines four halves on a lattice rotated by 45°; and HOTRG (Z. Y. Xie
// et al., PRB 86, 045139 (2012)), which merges two tensors along one axis
// and truncates the doubled leg with the isometry from the leading
// eigenvectors of its environment, alternating the axes.
//
// Unlike the other engines it is not a flow.Map: there is no
// low-dimensional flow of couplings. It gives the free energy per site,
// the phase a starting point flows to (a flow.Phaser, from the degeneracy
// of the coarse tensor), and the central charge and scaling dimensions
// from the transfer matrix of the coarse tensor (Z.-C. Gu, X.-G. Wen, PRB
// 80, 155131 (2009)).
type TensorRG struct {
	model  *Model
	cs     []flow.Coupling
	q      int
	Method string // "trg" or "hotrg"
	Chi    int
	Steps  int // coarse-graining steps for the free energy (default 30)
	// MaxPhaseSteps bounds the phase decision (default 60); Tol is the
	// distance of X from an integer that decides it (default 0.02).
	MaxPhaseSteps int
	Tol           float64
	// OnPhase, when set, is told each phase decision (for progress).
	OnPhase func(x []float64, ph flow.Phase)
	// CriticalPhase enables the third outcome, a critical phase (X held
	// on a non-integer plateau for PlateauSteps square steps): on for the
	// clock model with q >= 5, which has one between two transitions.
	CriticalPhase bool
	PlateauSteps  int
}

// TensorMemory estimates the peak bytes of one coarse-graining step: about
// ten chi^4 arrays for TRG and sixteen for HOTRG, whose chi^7 update runs
// one new index at a time (measured at chi = 32 on one core: 61 MB and
// 137 MB of peak resident memory).
func TensorMemory(method string, chi int) float64 {
	c := math.Pow(float64(chi), 4)
	if method == "hotrg" {
		return 8 * 16 * c
	}
	return 8 * 10 * c
}

// MaxTensorBytes is the memory the tensor engine may use.
const MaxTensorBytes = 2 << 30

// NewTensorRG returns the tensor engine for model m (integer number of
// states) with the method and bond dimension χ.
func NewTensorRG(m *Model, method string, chi, steps int) (*TensorRG, error) {
	if m.Algebra() {
		return nil, &ParamError{Name: "q", Value: fmt.Sprint(m.States()), Reason: "the tensor engine needs an integer number of states; accepted: integer q >= 2"}
	}
	if method != "trg" && method != "hotrg" {
		return nil, &ParamError{Name: "method", Value: method, Reason: "accepted: trg, hotrg"}
	}
	if chi < 2 {
		return nil, &ParamError{Name: "chi", Value: fmt.Sprint(chi), Reason: "accepted: an integer >= 2"}
	}
	if b := TensorMemory(method, chi); b > MaxTensorBytes {
		return nil, &ParamError{Name: "chi", Value: fmt.Sprint(chi), Reason: fmt.Sprintf(
			"chi=%d with %s needs about %.1f GB for one step, more than the %.0f GB allowed; accepted: a smaller chi", chi, method, b/1e9, float64(MaxTensorBytes)/1e9)}
	}
	if steps < 1 || steps > 200 {
		return nil, &ParamError{Name: "steps", Value: fmt.Sprint(steps), Reason: "accepted: 1 to 200"}
	}
	t := &TensorRG{model: m, cs: m.Couplings(), q: int(m.States()), Method: method, Chi: chi, Steps: steps, MaxPhaseSteps: 60, Tol: 0.02, PlateauSteps: 8}
	t.CriticalPhase = strings.HasPrefix(m.Name(), "clock") && t.q >= 5
	return t, nil
}

// Couplings returns the model's couplings.
func (t *TensorRG) Couplings() []flow.Coupling { return append([]flow.Coupling(nil), t.cs...) }

// Model returns the spin model.
func (t *TensorRG) Model() *Model { return t.model }

// tensor4 is a four-leg tensor T[l, u, r, d], row-major.
type tensor4 struct {
	d [4]int
	v []float64
	// g, when set, holds for each leg the matrix by which the generator of
	// the model's cyclic symmetry acts on it (HOTRG on the clock model):
	// the tensor is projected onto its invariant part after every step.
	g [4][]float64
}

// applyLeg multiplies leg a of T by the matrix m (rows: new index).
func (T *tensor4) applyLeg(a int, m []float64) *tensor4 {
	perm := []int{a}
	for b := 0; b < 4; b++ {
		if b != a {
			perm = append(perm, b)
		}
	}
	tp := make([]float64, len(T.v))
	nd := permute(tp, T.v, T.d[:], perm)
	rest := len(T.v) / nd[0]
	prod := make([]float64, len(T.v))
	gemm(false, false, nd[0], rest, nd[0], m, tp, prod)
	inv := make([]int, 4)
	for i, p := range perm {
		inv[p] = i
	}
	out := &tensor4{d: T.d, v: make([]float64, len(T.v)), g: T.g}
	permute(out.v, prod, nd, inv)
	return out
}

// symmetrize projects T onto the part invariant under its generator,
// (1/q) Σ_j g^j T, with g acting on all four legs at once.
func (T *tensor4) symmetrize(q int) {
	if T.g[0] == nil {
		return
	}
	acc := append([]float64(nil), T.v...)
	cur := T
	for j := 1; j < q; j++ {
		for a := 0; a < 4; a++ {
			cur = cur.applyLeg(a, T.g[a])
		}
		for i, v := range cur.v {
			acc[i] += v
		}
	}
	for i := range acc {
		acc[i] /= float64(q)
	}
	T.v = acc
}

// kronAction returns Uᵀ (G ⊗ G) U, the generator on the merged leg whose
// isometry is U (D² × k) when each of the two merged legs carries G (D × D).
func kronAction(G, U []float64, D, k int) []float64 {
	// (G ⊗ G) U: U as [l1, (l2 c)] → G·U → [a, l2, c] → [l2, (a c)] → G·
	// → [b, a, c] → [(a b), c].
	t1 := make([]float64, D*D*k)
	gemm(false, false, D, D*k, D, G, U, t1)
	t2 := make([]float64, len(t1))
	permute(t2, t1, []int{D, D, k}, []int{1, 0, 2})
	t3 := make([]float64, len(t1))
	gemm(false, false, D, D*k, D, G, t2, t3)
	t4 := make([]float64, len(t1))
	permute(t4, t3, []int{D, D, k}, []int{1, 0, 2})
	out := make([]float64, k*k)
	gemm(true, false, k, k, D*D, U, t4, out)
	return out
}

func (t *tensor4) at(l, u, r, d int) float64 {
	return t.v[((l*t.d[1]+u)*t.d[2]+r)*t.d[3]+d]
}

// initial builds the site tensor at couplings x and returns it with the
// log-weight per site taken out of it (exponentials are shifted so that
// the largest weight is 1). The bond matrix of the two-site couplings is
// split as W = Q S Qᵀ: by the symmetric square root when W is positive
// semi-definite (S = 1), otherwise by the signed eigen-decomposition
// (S = sign of the eigenvalues, put on the right and up legs); one-body
// terms weigh the site once.
func (t *TensorRG) initial(x []float64) (*tensor4, float64, error) {
	q, m := t.q, t.model
	lw := make([]float64, q*q)
	f := make([]float64, q)
	for a, c := range t.cs {
		phi := m.Basis(a)
		if c.Role.OneBody() {
			for s := 0; s < q; s++ {
				f[s] += x[a] * phi[s*q+s]
			}
			continue
		}
		for k := range lw {
			lw[k] += x[a] * phi[k]
		}
	}
	shiftW, shiftF := math.Inf(-1), math.Inf(-1)
	for _, v := range lw {
		shiftW = math.Max(shiftW, v)
	}
	for _, v := range f {
		shiftF = math.Max(shiftF, v)
	}
	if math.IsNaN(shiftW) || math.IsInf(shiftW, 0) || math.IsNaN(shiftF) || math.IsInf(shiftF, 0) {
		return nil, 0, fmt.Errorf("couplings not finite")
	}
	w := mat.NewSymDense(q, nil)
	for s := 0; s < q; s++ {
		for u := 0; u < q; u++ {
			w.SetSym(s, u, math.Exp(lw[s*q+u]-shiftW))
		}
	}
	var es mat.EigenSym
	if !es.Factorize(w, true) {
		return nil, 0, fmt.Errorf("eigen-decomposition of the bond matrix failed")
	}
	ev := es.Values(nil)
	var vec mat.Dense
	es.VectorsTo(&vec)
	psd := true
	for _, e := range ev {
		if e < -1e-13*math.Abs(ev[len(ev)-1]) {
			psd = false
		}
	}
	// Legs: ql for left/down, qr for right/up (ql = qr when S = 1).
	ql := make([]float64, q*q)
	qr := make([]float64, q*q)
	if psd {
		// Symmetric square root U √Λ Uᵀ.
		for s := 0; s < q; s++ {
			for k := 0; k < q; k++ {
				v := 0.0
				for j := 0; j < q; j++ {
					v += vec.At(s, j) * math.Sqrt(math.Max(ev[j], 0)) * vec.At(k, j)
				}
				ql[s*q+k], qr[s*q+k] = v, v
			}
		}
	} else {
		for s := 0; s < q; s++ {
			for j := 0; j < q; j++ {
				a := vec.At(s, j) * math.Sqrt(math.Abs(ev[j]))
				ql[s*q+j] = a
				qr[s*q+j] = a * math.Copysign(1, ev[j])
			}
		}
	}
	T := &tensor4{d: [4]int{q, q, q, q}, v: make([]float64, q*q*q*q)}
	for s := 0; s < q; s++ {
		ws := math.Exp(f[s] - shiftF)
		for l := 0; l < q; l++ {
			a := ws * ql[s*q+l]
			for u := 0; u < q; u++ {
				b := a * qr[s*q+u]
				for r := 0; r < q; r++ {
					c := b * qr[s*q+r]
					for d := 0; d < q; d++ {
						T.v[((l*q+u)*q+r)*q+d] += c * ql[s*q+d]
					}
				}
			}
		}
	}
	// The clock model (with its critical phase) keeps its cyclic symmetry
	// exactly under HOTRG: with a circulant bond matrix the symmetric root
	// is circulant, so each leg turns with the cyclic shift of the states.
	if t.CriticalPhase && t.Method == "hotrg" && psd && symmetricPoint(t.cs, x) {
		P := make([]float64, q*q)
		for a := 0; a < q; a++ {
			P[a*q+(a+1)%q] = 1
		}
		T.g = [4][]float64{P, P, P, P}
	}
	// Two bonds per site on the square lattice.
	return T, 2*shiftW + shiftF, nil
}

// symmetricPoint reports whether every symmetry-breaking coupling is 0.
func symmetricPoint(cs []flow.Coupling, x []float64) bool {
	for i, c := range cs {
		if !c.Symmetric && x[i] != 0 {
			return false
		}
	}
	return true
}

// normalize divides T by its largest entry and returns the log of it.
func (T *tensor4) normalize() float64 {
	mx := 0.0
	for _, v := range T.v {
		mx = math.Max(mx, math.Abs(v))
	}
	if mx == 0 {
		return math.Inf(-1)
	}
	for i := range T.v {
		T.v[i] /= mx
	}
	return math.Log(mx)
}

// degeneracy returns X = (Tr M)² / Tr(M²) with M[u, d] = Σ_l T[l, u, l, d]:
// 1 for a product (disordered) tensor, the number of ordered states for a
// degenerate one.
func (T *tensor4) degeneracy() float64 {
	dl, du := T.d[0], T.d[1]
	if T.d[2] != dl || T.d[3] != du {
		return math.NaN()
	}
	M := make([]float64, du*du)
	for l := 0; l < dl; l++ {
		for u := 0; u < du; u++ {
			for d := 0; d < du; d++ {
				M[u*du+d] += T.at(l, u, l, d)
			}
		}
	}
	tr, tr2 := 0.0, 0.0
	for u := 0; u < du; u++ {
		tr += M[u*du+u]
		for d := 0; d < du; d++ {
			tr2 += M[u*du+d] * M[d*du+u]
		}
	}
	return tr * tr / tr2
}

// trace returns Σ_{l,u} T[l, u, l, u], the tensor on a 1 × 1 torus.
func (T *tensor4) trace() float64 {
	s := 0.0
	for l := 0; l < T.d[0]; l++ {
		for u := 0; u < T.d[1]; u++ {
			s += T.at(l, u, l, u)
		}
	}
	return s
}

// trgStep is one Levin–Nave step: T = F1·F3 (legs (l,u)|(r,d)) and
// T = F2·F4 (legs (u,r)|(d,l)), truncated to χ, recombined around a
// plaquette into T′[α, β, γ, δ] = Σ F3[α,i,j] F4[β,k,i] F1[p,k,γ] F2[j,p,δ],
// whose legs point north-west, north-east, south-east and south-west (the
// new l, u, r, d).
func trgStep(T *tensor4, chi int) *tensor4 {
	A, B := T.d[0], T.d[1] // l, r and u, d dimensions
	AB := A * B
	// Split A: (l u) × (r d).
	u1, s1, v1 := truncSVD(T.v, AB, AB, chi)
	k1 := len(s1)
	// Split B: (u r) × (d l).
	tb := make([]float64, len(T.v))
	permute(tb, T.v, T.d[:], []int{1, 2, 3, 0})
	u2, s2, v2 := truncSVD(tb, AB, AB, chi)
	k2 := len(s2)
	// F1[(l u), m] = U √s, F3[m, (r d)] = √s Vᵀ; likewise F2, F4.
	for i := 0; i < AB; i++ {
		for m := 0; m < k1; m++ {
			u1[i*k1+m] *= math.Sqrt(s1[m])
		}
		for m := 0; m < k2; m++ {
			u2[i*k2+m] *= math.Sqrt(s2[m])
		}
	}
	for m := 0; m < k1; m++ {
		for i := 0; i < AB; i++ {
			v1[m*AB+i] *= math.Sqrt(s1[m])
		}
	}
	for m := 0; m < k2; m++ {
		for i := 0; i < AB; i++ {
			v2[m*AB+i] *= math.Sqrt(s2[m])
		}
	}
	// F3[α, i, j] (i = r, j = d) → [(α j), i].
	f3 := make([]float64, k1*AB)
	permute(f3, v1, []int{k1, A, B}, []int{0, 2, 1})
	// F4[β, k, i] (k = d, i = l) → [i, (β k)].
	f4 := make([]float64, k2*AB)
	permute(f4, v2, []int{k2, B, A}, []int{2, 0, 1})
	// P[(α j), (β k)] = Σ_i F3 F4.
	P := make([]float64, k1*B*k2*B)
	gemm(false, false, k1*B, k2*B, A, f3, f4, P)
	// F2[j, p, δ] (j = u, p = r) → [(j δ), p]; F1[p, (k γ)] as is.
	f2 := make([]float64, AB*k2)
	permute(f2, u2, []int{B, A, k2}, []int{0, 2, 1})
	// Q[(j δ), (k γ)] = Σ_p F2 F1.
	Q := make([]float64, B*k2*B*k1)
	gemm(false, false, B*k2, B*k1, A, f2, u1, Q)
	// T′[α, β, γ, δ] = Σ_{j,k} P[α, j, β, k] Q[j, δ, k, γ].
	pp := make([]float64, len(P))
	permute(pp, P, []int{k1, B, k2, B}, []int{0, 2, 1, 3}) // [α, β, j, k]
	qp := make([]float64, len(Q))
	permute(qp, Q, []int{B, k2, B, k1}, []int{0, 2, 3, 1}) // [j, k, γ, δ]
	out := &tensor4{d: [4]int{k1, k2, k1, k2}, v: make([]float64, k1*k2*k1*k2)}
	gemm(false, false, k1*k2, k1*k2, B*B, pp, qp, out.v)
	return out
}

// hotrgStep merges T with the tensor above it (the lower one's up leg
// joined to the upper one's down leg) and truncates the doubled left and
// right legs to χ with one isometry U, the leading eigenvectors of the
// environment of whichever side loses less.
func hotrgStep(T *tensor4, chi int) *tensor4 {
	dl, du, dr, dd := T.d[0], T.d[1], T.d[2], T.d[3]
	if du != dd || dl != dr {
		panic("decimation: HOTRG needs matching opposite legs")
	}
	D, E := dl, du // horizontal and vertical leg dimensions
	// P[(l1 k), (l1' k')] = Σ_{r1 d} T[l1,k,r1,d] T[l1',k',r1,d].
	P := make([]float64, D*E*D*E)
	gemm(false, true, D*E, D*E, D*E, T.v, T.v, P)
	// Q[(l2 k), (l2' k')] = Σ_{u r2} T[l2,u,r2,k] T[l2',u,r2,k'].
	tq := make([]float64, len(T.v))
	permute(tq, T.v, []int{D, E, D, E}, []int{0, 3, 1, 2}) // [l2, k, u, r2]
	Qm := make([]float64, D*E*D*E)
	gemm(false, true, D*E, D*E, D*E, tq, tq, Qm)
	env := func(P, Q []float64) []float64 {
		// ML[(l1 l2), (l1' l2')] = Σ_{k k'} P[l1,k,l1',k'] Q[l2,k,l2',k'].
		pp := make([]float64, len(P))
		permute(pp, P, []int{D, E, D, E}, []int{0, 2, 1, 3}) // [l1 l1', k k']
		qq := make([]float64, len(Q))
		permute(qq, Q, []int{D, E, D, E}, []int{0, 2, 1, 3}) // [l2 l2', k k']
		r := make([]float64, D*D*D*D)
		gemm(false, true, D*D, D*D, E*E, pp, qq, r) // [l1 l1', l2 l2']
		ml := make([]float64, len(r))
		permute(ml, r, []int{D, D, D, D}, []int{0, 2, 1, 3}) // [l1 l2, l1' l2']
		return ml
	}
	ML := env(P, Qm)
	// The right side: the same with r in place of l.
	tr := make([]float64, len(T.v))
	permute(tr, T.v, []int{D, E, D, E}, []int{2, 1, 0, 3}) // swap l and r
	PR := make([]float64, D*E*D*E)
	gemm(false, true, D*E, D*E, D*E, tr, tr, PR)
	tqr := make([]float64, len(T.v))
	permute(tqr, tr, []int{D, E, D, E}, []int{0, 3, 1, 2})
	QR := make([]float64, D*E*D*E)
	gemm(false, true, D*E, D*E, D*E, tqr, tqr, QR)
	MR := env(PR, QR)
	k := min(chi, D*D)
	vl, ul := topEigen(ML, D*D, k)
	vr, ur := topEigen(MR, D*D, k)
	trace := func(m []float64) float64 {
		s := 0.0
		for i := 0; i < D*D; i++ {
			s += m[i*D*D+i]
		}
		return s
	}
	sum := func(v []float64) float64 {
		s := 0.0
		for _, x := range v {
			s += x
		}
		return s
	}
	U := ul
	if trace(MR)-sum(vr) < trace(ML)-sum(vl) {
		U = ur
		k = len(vr)
	} else {
		k = len(vl)
	}
	// The update T′[l′,u,r′,d] = Σ U[(l1 l2),l′] T[l1,k,r1,d] T[l2,u,r2,k]
	// U[(r1 r2),r′], one l′ at a time so that no χ⁵ array is held: per l′,
	// X[l2, (k r1 d)] = Σ_{l1} U[(l1 l2), l′] T[l1, (k r1 d)] (χ⁵), then
	// Y[(r1 d), (u r2)] = Σ_{l2,k} X T (the χ⁶ part of the χ⁷ whole), then
	// Z[(u d), r′] = Σ_{r1 r2} Y U.
	tk := make([]float64, len(T.v)) // T as [(l2 k), (u r2)]
	permute(tk, T.v, []int{D, E, D, E}, []int{0, 3, 1, 2})
	ulp := make([]float64, D*D)   // U[(l1 l2), l′] at one l′, as [l1, l2]
	x := make([]float64, D*E*D*E) // [l2, (k r1 d)]
	xp := make([]float64, len(x)) // [(r1 d), (l2 k)]
	y := make([]float64, D*E*E*D) // [(r1 d), (u r2)]
	yp := make([]float64, len(y)) // [(u d), (r1 r2)]
	z := make([]float64, E*E*k)   // [(u d), r′]
	out := &tensor4{d: [4]int{k, E, k, E}, v: make([]float64, k*E*k*E)}
	if T.g[0] != nil {
		out.g = [4][]float64{kronAction(T.g[0], U, D, k), T.g[1], kronAction(T.g[2], U, D, k), T.g[3]}
	}
	for lp := 0; lp < k; lp++ {
		for a := 0; a < D*D; a++ {
			ulp[a] = U[a*k+lp]
		}
		gemm(true, false, D, E*D*E, D, ulp, T.v, x)          // [l2, (k r1 d)]
		permute(xp, x, []int{D, E, D, E}, []int{2, 3, 0, 1}) // [r1, d, l2, k]
		gemm(false, false, D*E, E*D, D*E, xp, tk, y)         // [(r1 d), (u r2)]
		permute(yp, y, []int{D, E, E, D}, []int{2, 1, 0, 3}) // [u, d, r1, r2]
		gemm(false, false, E*E, k, D*D, yp, U, z)            // [(u d), r′]
		for u := 0; u < E; u++ {
			for d := 0; d < E; d++ {
				for rp := 0; rp < k; rp++ {
					out.v[((lp*E+u)*k+rp)*E+d] = z[(u*E+d)*k+rp]
				}
			}
		}
	}
	return out
}

// rotate turns T by 90° so that a vertical merge of the result is a
// horizontal merge of T: R[l, u, r, d] = T[u, r, d, l].
func (T *tensor4) rotate() *tensor4 {
	R := &tensor4{v: make([]float64, len(T.v))}
	perm := []int{3, 0, 1, 2}
	nd := permute(R.v, T.v, T.d[:], perm)
	copy(R.d[:], nd)
	if T.g[0] != nil {
		for a, p := range perm {
			R.g[a] = T.g[p]
		}
	}
	return R
}

// step coarse-grains once by the method: TRG, or HOTRG alternating a
// vertical and a horizontal merge (the step number's parity).
func (t *TensorRG) step(T *tensor4, n int) *tensor4 {
	if t.Method == "trg" {
		return trgStep(T, t.Chi)
	}
	var out *tensor4
	if n%2 == 1 {
		out = hotrgStep(T.rotate(), t.Chi).rotate().rotate().rotate()
	} else {
		out = hotrgStep(T, t.Chi)
	}
	out.symmetrize(t.q)
	return out
}

// TensorObserver sees the normalized coarse tensor after each step (n = 0
// for the initial tensor); returning false stops the run.
type tensorObserver func(n int, T *tensor4, lnZ float64) bool

// run coarse-grains from x for up to steps steps, tracking ln Z/N, and
// calls obs after each one. It returns ln Z/N including the final tensor
// on a 1 × 1 torus.
func (t *TensorRG) run(ctx context.Context, x []float64, steps int, obs tensorObserver) (float64, error) {
	T, shift, err := t.initial(x)
	if err != nil {
		return math.NaN(), err
	}
	lnZ := shift + T.normalize()
	w := 1.0 // sites per tensor, inverse
	if obs != nil && !obs(0, T, lnZ) {
		return lnZ, nil
	}
	for n := 0; n < steps; n++ {
		if err := ctx.Err(); err != nil {
			return math.NaN(), err
		}
		T = t.step(T, n)
		w /= 2
		c := T.normalize()
		if math.IsInf(c, -1) {
			return math.NaN(), fmt.Errorf("the coarse tensor vanished at step %d", n+1)
		}
		lnZ += w * c
		if obs != nil && !obs(n+1, T, lnZ) {
			return lnZ, nil
		}
	}
	if tr := T.trace(); tr > 0 {
		lnZ += w * math.Log(tr)
	}
	return lnZ, nil
}

// FreeEnergy returns ln Z/N per site at x after t.Steps steps (2^Steps
// sites).
func (t *TensorRG) FreeEnergy(ctx context.Context, x []float64) (float64, error) {
	return t.run(ctx, x, t.Steps, nil)
}

// squareStep reports whether the coarse tensor after n steps covers a
// square block (always for TRG; even n for HOTRG, whose tensors alternate
// between square and 2:1 blocks).
func (t *TensorRG) squareStep(n int) bool { return t.Method == "trg" || n%2 == 0 }

// Degeneracies returns X after each step from x (index 0: the initial
// tensor), NaN on steps whose block is not square.
func (t *TensorRG) Degeneracies(ctx context.Context, x []float64, steps int) ([]float64, error) {
	var xs []float64
	_, err := t.run(ctx, x, steps, func(n int, T *tensor4, _ float64) bool {
		if t.squareStep(n) {
			xs = append(xs, T.degeneracy())
		} else {
			xs = append(xs, math.NaN())
		}
		return true
	})
	return xs, err
}

// Phase decides the phase x flows to from the degeneracy X of the coarse
// tensor, read at the first (square) step where X comes within Tol of an
// integer and moved by less than Tol since the previous square step (the
// two previous ones for the clock model's slow drifts): 1 is
// the disordered phase, n ≥ 2 an ordered phase with n
// states. The decision is taken at once, since a degenerate ordered tensor
// is unstable to round-off symmetry breaking and drifts back to X = 1 after
// some fifty steps. A flow still undecided after MaxPhaseSteps steps is
// undecided (Index −1).
func (t *TensorRG) Phase(ctx context.Context, x []float64) flow.Phase {
	ph := flow.Phase{Index: -1, Label: "undecided", Undecided: true}
	prev, prev2 := math.NaN(), math.NaN()
	plateau := 0
	_, err := t.run(ctx, x, t.MaxPhaseSteps, func(n int, T *tensor4, _ float64) bool {
		ph.Steps = n
		if !t.squareStep(n) {
			return true
		}
		X := T.degeneracy()
		r := math.Round(X)
		// Within Tol of an integer and settled there (a flow passing an
		// integer on its way elsewhere moves by more than Tol per step).
		// With a critical phase (clock, q >= 5) the flow leaving the
		// plateau drifts slowly past intermediate integers: only 1 and q
		// decide there.
		allowed := !t.CriticalPhase || r == 1 || int(r) == t.q
		// settled: moved by less than Tol since the previous square step,
		// and, with a critical phase (slow drifts), the one before too.
		settled := math.Abs(X-prev) < t.Tol && (!t.CriticalPhase || math.Abs(prev-prev2) < t.Tol)
		// A model with a critical phase loses its q-fold order to the
		// truncation within a few steps of reaching it: reaching q at all
		// decides.
		if t.CriticalPhase && math.Abs(X-float64(t.q)) < t.Tol {
			ph.Index, ph.Undecided = t.q, false
			ph.Label = fmt.Sprintf("ordered, %d states (X -> %d)", t.q, t.q)
			return false
		}
		if r > float64(t.q) && math.Abs(X-r) < t.Tol && settled {
			// More than the q states of a spin: the coexistence of the
			// ordered states with the disordered one, met at a first-order
			// transition; not a phase.
			ph.Label = fmt.Sprintf("coexistence (X -> %d): at a first-order transition", int(r))
			return false
		}
		if allowed && r >= 1 && math.Abs(X-r) < t.Tol && settled {
			ph.Index, ph.Undecided = int(r), false
			if r == 1 {
				ph.Label = "disordered (X -> 1)"
			} else {
				ph.Label = fmt.Sprintf("ordered, %d states (X -> %d)", int(r), int(r))
			}
			return false
		}
		if t.CriticalPhase && n >= 8 && math.Abs(X-prev) < t.Tol/2 && math.Abs(X-r) >= t.Tol {
			plateau++
			if plateau >= t.PlateauSteps {
				ph.Index, ph.Undecided = 0, false
				ph.Label = "critical phase (X on a non-integer plateau)"
				return false
			}
		} else {
			plateau = 0
		}
		prev, prev2 = X, prev
		return true
	})
	if err != nil {
		ph = flow.Phase{Index: -1, Label: "undecided: " + err.Error(), Undecided: true}
	} else if ph.Undecided && t.CriticalPhase && t.Method == "hotrg" && !math.IsNaN(prev) && math.Abs(prev-math.Round(prev)) >= t.Tol {
		// Neither ordered nor disordered after every step, X still off
		// the whole numbers: with the symmetry kept exactly (HOTRG on the
		// clock model), that is the critical phase.
		ph.Index, ph.Undecided = 0, false
		ph.Label = "critical phase (X on a non-integer plateau)"
	}
	if t.OnPhase != nil {
		t.OnPhase(x, ph)
	}
	return ph
}

// String describes the engine.
func (t *TensorRG) String() string {
	return fmt.Sprintf("%s tensor renormalization, chi = %d, %d steps (%s sites)", strings.ToUpper(t.Method), t.Chi, t.Steps, sitesText(t.Steps))
}

func sitesText(steps int) string {
	return fmt.Sprintf("2^%d", steps)
}

// Spectrum is what the transfer matrices of a coarse tensor say about the
// critical point it approximates (Gu and Wen 2009): with M_L the transfer
// matrix of a cylinder L tensors around and one tensor long, and λ_0(L) >
// λ_1(L) ≥ … its eigenvalues, conformal invariance gives
//
//	ln λ_0(L) = f L + π c / (6 L),    ln(λ_0/λ_i) = 2π x_i / L,
//
// so c = (4/π)(2 ln λ_0(1) − ln λ_0(2)) and x_i = (1/π) ln(λ_0(2)/λ_i(2)).
type Spectrum struct {
	Step       int       // coarse-graining steps taken
	X          float64   // the degeneracy of the coarse tensor there
	C          float64   // central charge
	Dimensions []float64 // scaling dimensions x_i > 0, lowest first
}

// spectrum reads the central charge and the lowest n scaling dimensions
// from a square coarse tensor.
func (T *tensor4) spectrum(n int) (c float64, dims []float64, ok bool) {
	D, E := T.d[0], T.d[1]
	if T.d[2] != D || T.d[3] != E {
		return math.NaN(), nil, false
	}
	// M1[u, d] = Σ_l T[l,u,l,d].
	m1 := mat.NewDense(E, E, nil)
	for l := 0; l < D; l++ {
		for u := 0; u < E; u++ {
			for d := 0; d < E; d++ {
				m1.Set(u, d, m1.At(u, d)+T.at(l, u, l, d))
			}
		}
	}
	// M2[(u1 u2), (d1 d2)] = Σ_{l,m} T[l,u1,m,d1] T[m,u2,l,d2]:
	// A[(u1 d1), (l m)] = T[l,u1,m,d1]; B[(l m), (u2 d2)] = T[m,u2,l,d2].
	a := make([]float64, len(T.v))
	permute(a, T.v, []int{D, E, D, E}, []int{1, 3, 0, 2}) // [u1, d1, l, m]
	b := make([]float64, len(T.v))
	permute(b, T.v, []int{D, E, D, E}, []int{2, 0, 1, 3}) // [l(=r leg of T), m(=l leg), u2, d2]
	prod := make([]float64, E*E*E*E)
	gemm(false, false, E*E, E*E, D*D, a, b, prod) // [u1 d1, u2 d2]
	m2v := make([]float64, len(prod))
	permute(m2v, prod, []int{E, E, E, E}, []int{0, 2, 1, 3}) // [u1 u2, d1 d2]
	m2 := mat.NewDense(E*E, E*E, m2v)
	ev1, ok1 := leadingEigen(m1)
	ev2, ok2 := leadingEigen(m2)
	if !ok1 || !ok2 || ev1[0] <= 0 || ev2[0] <= 0 {
		return math.NaN(), nil, false
	}
	c = 4 / math.Pi * (2*math.Log(ev1[0]) - math.Log(ev2[0]))
	for _, e := range ev2[1:] {
		if e <= 0 || len(dims) == n {
			break
		}
		dims = append(dims, math.Log(ev2[0]/e)/math.Pi)
	}
	return c, dims, true
}

// leadingEigen returns the moduli of the eigenvalues of a, largest first.
func leadingEigen(a *mat.Dense) ([]float64, bool) {
	var e mat.Eigen
	if !e.Factorize(a, mat.EigenNone) {
		return nil, false
	}
	vals := e.Values(nil)
	out := make([]float64, len(vals))
	for i, v := range vals {
		out[i] = cmplxAbs(v)
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(out)))
	return out, true
}

func cmplxAbs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// Spectra coarse-grains from x and reads the spectrum after every square
// step from 1 to steps.
func (t *TensorRG) Spectra(ctx context.Context, x []float64, steps, n int) ([]Spectrum, error) {
	var out []Spectrum
	_, err := t.run(ctx, x, steps, func(k int, T *tensor4, _ float64) bool {
		if k == 0 || !t.squareStep(k) {
			return true
		}
		if c, dims, ok := T.spectrum(n); ok {
			out = append(out, Spectrum{Step: k, X: T.degeneracy(), C: c, Dimensions: dims})
		}
		return true
	})
	return out, err
}

// Stationary returns the spectrum at the step where it first stops
// changing from the previous square step (the coarse tensor nearest its
// fixed point; plain TRG drifts away from it after about ten steps), judged
// on c and the two lowest dimensions, skipping the first minSkip entries
// and every step where the flow has left the critical point (X within 0.05
// of a whole number: a trivial fixed point, whose spectrum is stationary
// too).
func Stationary(sp []Spectrum, minSkip int) (Spectrum, bool) {
	change := func(i int) float64 {
		a, b := sp[i], sp[i-1]
		if len(a.Dimensions) < 2 || len(b.Dimensions) < 2 || math.Abs(a.X-math.Round(a.X)) < 0.05 {
			return math.Inf(1)
		}
		return math.Abs(a.C-b.C) + math.Abs(a.Dimensions[0]-b.Dimensions[0]) + math.Abs(a.Dimensions[1]-b.Dimensions[1])
	}
	// The first local minimum of the change: at a small chi the flow
	// creeps on towards a fixed point of the truncation, whose ever
	// smaller changes would otherwise win.
	best, bi := math.Inf(1), -1
	for i := max(1, minSkip); i < len(sp); i++ {
		d := change(i)
		if d < best {
			best, bi = d, i
		} else if bi >= 0 && !math.IsInf(best, 1) {
			break
		}
	}
	if bi < 0 || math.IsInf(best, 1) {
		return Spectrum{}, false
	}
	return sp[bi], true
}

// TensorCritical is a transition located by the tensor engine, with what
// the coarse tensor at it says about the critical point.
type TensorCritical struct {
	Crossing flow.Crossing
	Kind     flow.TransitionKind // from the plateau of X
	Plateau  float64             // the value X holds at the transition (NaN if none)
	Spectrum Spectrum            // at the step where it is stationary
	Have     bool                // Spectrum was read
	// XSpin is the lowest scaling dimension; XEnergy the lowest one that
	// is not XSpin plus a whole number (its descendants) and below 2
	// (dimension-2 states are not used to classify).
	XSpin, XEnergy float64
	Nu, Eta        float64 // 1/(2 − XEnergy), 2 XSpin
}

// TransitionKind reads the kind of a transition at x from the degeneracy
// X of the coarse tensor: at a continuous transition X holds a non-integer
// plateau for several square steps; at a first-order one it goes straight
// to an integer (a phase, or the coexistence of several); a flow that
// drifts without either is of unknown kind at this chi.
func (t *TensorRG) TransitionKind(ctx context.Context, x []float64) (flow.TransitionKind, float64, error) {
	xs, err := t.Degeneracies(ctx, x, 24)
	if err != nil {
		return flow.UnknownKind, math.NaN(), err
	}
	var sq []float64
	for _, v := range xs[1:] {
		if !math.IsNaN(v) {
			sq = append(sq, v)
		}
	}
	run, best, sum, bestSum := 0, 0, 0.0, 0.0
	for i := 1; i < len(sq); i++ {
		r := math.Round(sq[i])
		if math.Abs(sq[i]-sq[i-1]) < 0.05 && math.Abs(sq[i]-r) > 0.05 {
			run++
			sum += sq[i]
			if run > best {
				best, bestSum = run, sum
			}
		} else {
			run, sum = 0, 0
		}
	}
	// Three square steps on the plateau; two for HOTRG, whose square steps
	// are every other step.
	need := 3
	if t.Method == "hotrg" {
		need = 2
	}
	if best >= need {
		return flow.Continuous, bestSum / float64(best), nil
	}
	// First order: X at a whole number (a phase, or the coexistence of
	// several) within the first few square steps. Otherwise the flow
	// drifts without a plateau and the kind is not decided at this chi.
	for i, v := range sq {
		r := math.Round(v)
		if math.Abs(v-r) < 0.05 && (r > float64(t.q) || i < 3 && r >= 2) {
			// More than q: the coexistence of the ordered states with the
			// disordered one, found only at a first-order transition.
			return flow.FirstOrder, math.NaN(), nil
		}
	}
	return flow.UnknownKind, math.NaN(), nil
}

// Critical locates every transition on the path by bisection on the phase
// and, for each continuous one, reads the central charge and the scaling
// dimensions at the step where the spectrum is stationary.
func (t *TensorRG) Critical(ctx context.Context, path flow.Path, tol float64) ([]TensorCritical, error) {
	xs, err := flow.Crossings(ctx, t, path, &flow.CrossingSettings{Tol: tol})
	if err != nil {
		return nil, err
	}
	var out []TensorCritical
	x := make([]float64, len(t.cs))
	for _, c := range xs {
		tc := TensorCritical{Crossing: c, Plateau: math.NaN(), XSpin: math.NaN(), XEnergy: math.NaN(), Nu: math.NaN(), Eta: math.NaN()}
		path.Point(x, c.Value)
		kind, plateau, err := t.TransitionKind(ctx, x)
		if err != nil {
			return nil, err
		}
		if strings.HasPrefix(c.Below.Label, "critical phase") || strings.HasPrefix(c.Above.Label, "critical phase") {
			// An end of a critical phase: a continuous transition of
			// infinite order (the clock model's), whatever X does at it.
			kind = flow.Continuous
		}
		tc.Kind, tc.Plateau = kind, plateau
		tc.Crossing.Kind = kind
		if kind == flow.Continuous {
			sp, err := t.Spectra(ctx, x, 24, 8)
			if err != nil {
				return nil, err
			}
			if s, ok := Stationary(sp, 2); ok {
				tc.Spectrum, tc.Have = s, true
				tc.XSpin, tc.XEnergy = classifyDimensions(s.Dimensions)
				tc.Nu = 1 / (2 - tc.XEnergy)
				tc.Eta = 2 * tc.XSpin
			}
		}
		out = append(out, tc)
	}
	return out, nil
}

// classifyDimensions takes the lowest dimension as the spin's and the
// lowest one that is neither it plus a whole number nor 2 or more as the
// energy's.
func classifyDimensions(dims []float64) (spin, energy float64) {
	spin, energy = math.NaN(), math.NaN()
	if len(dims) == 0 {
		return
	}
	spin = dims[0]
	for _, d := range dims[1:] {
		if d >= 1.9 {
			break
		}
		desc := false
		for n := 0.0; n <= 2; n++ {
			desc = desc || math.Abs(d-(spin+n)) < 0.06
		}
		if !desc {
			energy = d
			break
		}
	}
	return
}

// Cautions says what the tensor engine gives and what it does not.
func (t *TensorRG) Cautions() []string {
	out := []string{
		fmt.Sprintf("tensor renormalization truncated to chi = %d: the free energy and critical coupling carry a truncation error that shrinks as chi grows (repeat at a larger chi to see its trend); free energy over 2^%d sites (%d steps), phases decided within %d steps", t.Chi, t.Steps, t.Steps, t.MaxPhaseSteps),
		"no flow of couplings: eigenvalues and controlling fixed points do not exist here; exponents come from the scaling dimensions of the coarse tensor's transfer matrix",
	}
	if t.CriticalPhase && t.Method != "hotrg" {
		out = append(out, "for the clock model use method=hotrg: only HOTRG here keeps its cyclic symmetry exactly; with trg the truncation breaks it within some twenty steps, and the critical phase between the two transitions is lost")
	}
	return out
}
