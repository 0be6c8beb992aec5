package decimation

import (
	"context"
	"math"
	"math/cmplx"
	"sort"
	"testing"

	"scalewalk/flow"
)

// Shared helpers of the bond-moving and hierarchical-lattice tests
// (bond_test.go, hierarchical_test.go). Every expected value they produce
// is written from a closed form or from the lattice's definition, never
// from the engine under test.

func mustBond(t testing.TB, m *Model, d float64, b int, o Order) *BondMove {
	t.Helper()
	bm, err := NewBondMove(m, d, b, o)
	if err != nil {
		t.Fatalf("NewBondMove(%s, d=%g, b=%d, %v): %v", m.Name(), d, b, o, err)
	}
	return bm
}

func mustHier(t testing.TB, m *Model, b, mm int) *BondMove {
	t.Helper()
	bm, err := NewHierarchical(m, b, mm)
	if err != nil {
		t.Fatalf("NewHierarchical(%s, b=%d, m=%d): %v", m.Name(), b, mm, err)
	}
	return bm
}

var bothOrders = []Order{MoveFirst, DecimateFirst}

// bmStep applies one step of a bond-moving or hierarchical map.
func bmStep(bm *BondMove, x []float64) ([]float64, float64) {
	dst := make([]float64, len(x))
	g := bm.Step(dst, x)
	return dst, g
}

// bondPsi sums ln Z/N = Σ_n b^{-dn} g(x_n) for a bond-moving map (g per
// site: package flow's convention). A field grows along the flow (by
// b^{d−1} per step at the K = 0 sink), so g(x_n) grows too and the terms
// fall off only like b^{−n}: the sum runs until three terms in a row are
// below 1e-18 of the total.
func bondPsi(bm *BondMove, x []float64) float64 {
	bd := math.Pow(bm.Rescale(), bm.Dimension())
	x = append([]float64(nil), x...)
	sum, small := 0.0, 0
	for w, n := 1.0, 0; small < 3 && n < 1000; w, n = w/bd, n+1 {
		xn, g := bmStep(bm, x)
		sum += w * g
		if math.Abs(w*g) <= 1e-18*math.Max(1, math.Abs(sum)) {
			small++
		} else {
			small = 0
		}
		x = xn
	}
	return sum
}

// isingMK returns K′ and dK′/dK of the zero-field Ising bond-moving
// recursion, written from the bond algebra of the Ising model: b bonds in
// series give tanh K′ = tanh^b K (D. R. Nelson, M. E. Fisher, Ann. Phys. 91,
// 226, 1975), p = b^{d−1} bonds in parallel add their couplings. Moving
// first: K′ = atanh(tanh^b(pK)); decimating first: K′ = p atanh(tanh^b K).
// The derivative is taken analytically:
// d/du atanh(tanh^b u) = b tanh^{b−1}u (1 − tanh²u)/(1 − tanh^{2b}u).
func isingMK(K, d float64, b int, o Order) (kp, dkp float64) {
	p := math.Pow(float64(b), d-1)
	u, outer := p*K, 1.0 // argument of tanh, factor outside atanh
	if o == DecimateFirst {
		u, outer = K, p
	}
	th := math.Tanh(u)
	tb := math.Pow(th, float64(b))
	kp = outer * math.Atanh(tb)
	// Chain rule: the factor p comes from u = pK (moving first) or from the
	// outer p (decimating first).
	dkp = p * float64(b) * math.Pow(th, float64(b-1)) * (1 - th*th) / (1 - tb*tb)
	return kp, dkp
}

// bisectFixed returns the root of f(K) = next(K) − K in [lo, hi], where f
// changes sign, by bisection down to adjacent floating-point numbers.
func bisectFixed(next func(float64) float64, lo, hi float64) float64 {
	flo := next(lo) - lo
	for k := 0; k < 2000; k++ {
		mid := lo + (hi-lo)/2
		if mid <= lo || mid >= hi {
			break
		}
		if fm := next(mid) - mid; (fm < 0) == (flo < 0) {
			lo, flo = mid, fm
		} else {
			hi = mid
		}
	}
	return lo + (hi-lo)/2
}

// findPoints runs the fixed-point finder on m.
func findPoints(t *testing.T, m flow.Map) []flow.FixedPoint {
	t.Helper()
	r, err := flow.FindAll(context.Background(), m, nil)
	if err != nil {
		t.Fatalf("FindAll: %v", err)
	}
	return r.Points
}

// zeroFieldCritical returns the finite critical fixed point with the first
// coupling (the exchange) positive and every other coupling zero, or nil.
func zeroFieldCritical(ps []flow.FixedPoint) *flow.FixedPoint {
	for k := range ps {
		p := &ps[k]
		if p.Kind != flow.Critical || p.Family != nil {
			continue
		}
		ok := p.Inf[0] == 0 && p.X[0] > 0
		for i := 1; i < len(p.X); i++ {
			ok = ok && p.Inf[i] == 0 && math.Abs(p.X[i]) < 1e-9
		}
		if ok {
			return p
		}
	}
	return nil
}

// blockLambdas returns the eigenvalues of the directions in block blk,
// sorted by real part, then imaginary part.
func blockLambdas(p *flow.FixedPoint, blk flow.Block) []complex128 {
	var out []complex128
	for _, d := range p.Directions {
		if d.Block == blk {
			out = append(out, d.Lambda)
		}
	}
	sortComplex(out)
	return out
}

func allLambdas(p *flow.FixedPoint) []complex128 {
	out := make([]complex128, 0, len(p.Directions))
	for _, d := range p.Directions {
		out = append(out, d.Lambda)
	}
	sortComplex(out)
	return out
}

func sortComplex(v []complex128) {
	sort.Slice(v, func(i, j int) bool {
		if real(v[i]) != real(v[j]) {
			return real(v[i]) < real(v[j])
		}
		return imag(v[i]) < imag(v[j])
	})
}

// nearComplex reports whether a and b agree to tol, relative to max(1, |b|).
func nearComplex(a, b complex128, tol float64) bool {
	return cmplx.Abs(a-b) <= tol*math.Max(1, cmplx.Abs(b))
}

// ---------------------------------------------------------------------
// Hierarchical lattices, built from their definitions.

// hGraph is a lattice: sites 0 … n−1 (0 and 1 are the two roots) and its
// bonds, each oriented (from, to) as the construction lays it.
type hGraph struct {
	n     int
	bonds [][2]int
}

// diamondGraph builds generation gen of the diamond-family lattice:
// generation 0 is one bond between the two roots; generation k+1 replaces
// every bond (u, v) by m parallel branches, each a path of b bonds in series
// from u to v through b−1 new sites (A. N. Berker, S. Ostlund, J. Phys. C 12,
// 4961, 1979; M. Kaufman, R. B. Griffiths, Phys. Rev. B 24, 496, 1981; from
// memory).
func diamondGraph(b, m, gen int) hGraph {
	g := hGraph{n: 2, bonds: [][2]int{{0, 1}}}
	for k := 0; k < gen; k++ {
		var nb [][2]int
		for _, e := range g.bonds {
			for br := 0; br < m; br++ {
				prev := e[0]
				for j := 1; j < b; j++ {
					s := g.n
					g.n++
					nb = append(nb, [2]int{prev, s})
					prev = s
				}
				nb = append(nb, [2]int{prev, e[1]})
			}
		}
		g.bonds = nb
	}
	return g
}

// necklaceGraph builds generation gen of the necklace lattice: every bond
// (u, v) becomes b bundles in series, u = v_0, v_1 … v_{b−1} (new), v_b = v,
// each bundle p parallel bonds sharing the end sites v_j, v_{j+1}.
func necklaceGraph(b, p, gen int) hGraph {
	g := hGraph{n: 2, bonds: [][2]int{{0, 1}}}
	for k := 0; k < gen; k++ {
		var nb [][2]int
		for _, e := range g.bonds {
			prev := e[0]
			for j := 0; j < b; j++ {
				next := e[1]
				if j < b-1 {
					next = g.n
					g.n++
				}
				for c := 0; c < p; c++ {
					nb = append(nb, [2]int{prev, next})
				}
				prev = next
			}
		}
		g.bonds = nb
	}
	return g
}

// bondHistogram enumerates every configuration of q states on the sites of
// g (both roots included) and returns how many configurations have each
// histogram of bond states: key = Σ_k count_k (B+1)^k over the q² oriented
// bond states k = q s + t, B the number of bonds. Since every bond carries
// the same weight w(s, t), the energy of a configuration depends on this
// histogram alone, so ln Z = ln Σ_hist N(hist) exp(Σ_k count_k ln w_k)
// for any couplings. The counts are kept as exact integers while the
// configurations are stepped through like an odometer.
func bondHistogram(g hGraph, q int) map[uint64]float64 {
	nb := len(g.bonds)
	base := uint64(nb + 1)
	pw := make([]uint64, q*q)
	pw[0] = 1
	for k := 1; k < q*q; k++ {
		pw[k] = pw[k-1] * base
	}
	if float64(pw[q*q-1])*float64(base) > 1.8e19 {
		panic("bondHistogram: histogram key overflows uint64")
	}
	inc := make([][]int, g.n)
	for i, e := range g.bonds {
		inc[e[0]] = append(inc[e[0]], i)
		inc[e[1]] = append(inc[e[1]], i)
	}
	conf := make([]int, g.n)
	state := func(i int) int { e := g.bonds[i]; return q*conf[e[0]] + conf[e[1]] }
	key := uint64(nb) * pw[0] // all sites in state 0: every bond in state (0, 0)
	out := map[uint64]float64{}
	for {
		out[key]++
		j := 0
		for ; j < g.n; j++ {
			nv := conf[j] + 1
			if nv == q {
				nv = 0
			}
			for _, i := range inc[j] {
				key -= pw[state(i)]
			}
			conf[j] = nv
			for _, i := range inc[j] {
				key += pw[state(i)]
			}
			if nv != 0 {
				break
			}
		}
		if j == g.n {
			return out
		}
	}
}

// histLnZ returns ln Σ_hist N(hist) exp(Σ_k count_k lw[k]) by log-sum-exp.
func histLnZ(hist map[uint64]float64, nb int, lw []float64) float64 {
	base := uint64(nb + 1)
	terms := make([]float64, 0, len(hist))
	mx := math.Inf(-1)
	for key, n := range hist {
		e := math.Log(n)
		for k := range lw {
			if c := key % base; c != 0 {
				e += float64(c) * lw[k]
			}
			key /= base
		}
		terms = append(terms, e)
		mx = math.Max(mx, e)
	}
	sort.Float64s(terms) // add the small terms first
	s := 0.0
	for _, e := range terms {
		s += math.Exp(e - mx)
	}
	return mx + math.Log(s)
}

// Bond log-weights ln w(s, t) in the engine's site convention: each bond
// carries its two-site terms and, per end, 1/(2d) of every one-body term
// (a site of the d-dimensional lattice has 2d bond ends). Written from the
// Hamiltonians of the models' documentation, independently of Model.Edge;
// row-major q × q.
type bondWeight func(x []float64, d float64) []float64

func hIsingWeight(x []float64, d float64) []float64 {
	sp := [2]float64{1, -1}
	K, h := x[0], x[1]
	lw := make([]float64, 4)
	for i, s := range sp {
		for j, t := range sp {
			lw[2*i+j] = K*s*t + h/(2*d)*(s+t)
		}
	}
	return lw
}

// hPottsWeight is the q-state Potts bond with the field and the pair term
// on the favoured state (index 0): K δ(σ, τ) + (h/(2d))(δ(σ,1) + δ(τ,1))
// + Kfav δ(σ,1) δ(τ,1); x = (K, h, Kfav), or (K, h) at q = 2.
func hPottsWeight(q int) bondWeight {
	return func(x []float64, d float64) []float64 {
		kfav := 0.0
		if len(x) > 2 {
			kfav = x[2]
		}
		is := func(a, b int) float64 {
			if a == b {
				return 1
			}
			return 0
		}
		lw := make([]float64, q*q)
		for s := 0; s < q; s++ {
			for t := 0; t < q; t++ {
				lw[q*s+t] = x[0]*is(s, t) + x[1]/(2*d)*(is(s, 0)+is(t, 0)) + kfav*is(s, 0)*is(t, 0)
			}
		}
		return lw
	}
}

// hSpin1Weight: J st + K s²t² − (D/(2d))(s² + t²) + (h/(2d))(s + t)
// + Jodd (s²t + st²)/2, s, t ∈ {1, 0, −1}; x = (J, K, D, h, Jodd).
func hSpin1Weight(x []float64, d float64) []float64 {
	sp := [3]float64{1, 0, -1}
	J, K, D, h, jo := x[0], x[1], x[2], x[3], x[4]
	lw := make([]float64, 9)
	for i, s := range sp {
		for j, t := range sp {
			lw[3*i+j] = J*s*t + K*s*s*t*t - D/(2*d)*(s*s+t*t) + h/(2*d)*(s+t) + jo*(s*s*t+s*t*t)/2
		}
	}
	return lw
}

// lnSumW returns ln Σ_{s,t} e^{lw(s,t)}: the partition function of the
// generation-0 lattice, one bond with both roots summed.
func lnSumW(lw []float64) float64 {
	mx := math.Inf(-1)
	for _, v := range lw {
		mx = math.Max(mx, v)
	}
	s := 0.0
	for _, v := range lw {
		s += math.Exp(v - mx)
	}
	return mx + math.Log(s)
}
