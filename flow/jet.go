package flow

import (
	"fmt"
	"math"
	"sync"
)

// maxJet is the most coefficients a jet may have: three variables to third
// order (1 + 3 + 6 + 10).
const maxJet = 20

// JetSpace is the algebra of truncated Taylor polynomials ("jets") in a few
// variables t_1..t_v to a fixed total order: a jet holds the Taylor
// coefficients ∂^α f/α! of a function at t = 0 for every multi-index α with
// |α| ≤ order, coefficient 0 being the value. Pushing jets through a
// computation in place of numbers gives the derivatives of its result
// exactly, to rounding (forward-mode automatic differentiation to higher
// order). A JetSpace is read-only after construction and safe for
// concurrent use; its methods allocate nothing.
type JetSpace struct {
	Vars, Order int
	n           int
	mono        [][]int  // exponents of each coefficient
	deg         []int    // total degree of each coefficient
	mul         [][3]int // (i, j, k): a_i b_j contributes to c_k
	mulNil      [][3]int // the entries of mul with both degrees ≥ 1
	mul21       [][3]int // the entries of mul with degrees 2 and 1
	index       [64]int  // by the packed exponents α_1 + 4 α_2 + 16 α_3, -1 when absent
}

func pack(alpha []int) int {
	k := 0
	for v := len(alpha) - 1; v >= 0; v-- {
		k = 4*k + alpha[v]
	}
	return k
}

var (
	jetSpacesOnce sync.Once
	jetSpaces     [4][4]*JetSpace
)

// JetSpaceOf returns the shared jet space in vars variables to order order
// (both 1 to 3), nil otherwise.
func JetSpaceOf(vars, order int) *JetSpace {
	jetSpacesOnce.Do(func() {
		for v := 1; v <= 3; v++ {
			for o := 1; o <= 3; o++ {
				jetSpaces[v][o], _ = NewJetSpace(v, o)
			}
		}
	})
	if vars < 1 || vars > 3 || order < 1 || order > 3 {
		return nil
	}
	return jetSpaces[vars][order]
}

// NewJetSpace returns the jets in vars variables (1 to 3) to total order
// order (1 to 3).
func NewJetSpace(vars, order int) (*JetSpace, error) {
	if vars < 1 || vars > 3 || order < 1 || order > 3 {
		return nil, fmt.Errorf("flow: jets in %d variables to order %d: need 1 to 3 variables and order 1 to 3", vars, order)
	}
	s := &JetSpace{Vars: vars, Order: order}
	for i := range s.index {
		s.index[i] = -1
	}
	// Monomials by increasing degree, then lexicographically.
	var rec func(prefix []int, left int, deg int)
	for d := 0; d <= order; d++ {
		rec = func(prefix []int, left, pos int) {
			if pos == vars-1 {
				m := append(append([]int(nil), prefix...), left)
				s.index[pack(m)] = len(s.mono)
				s.mono = append(s.mono, m)
				s.deg = append(s.deg, d)
				return
			}
			for e := left; e >= 0; e-- {
				rec(append(prefix, e), left-e, pos+1)
			}
		}
		rec(nil, d, 0)
	}
	s.n = len(s.mono)
	sum := make([]int, vars)
	for i, a := range s.mono {
		for j, b := range s.mono {
			if s.deg[i]+s.deg[j] > order {
				continue
			}
			for v := range sum {
				sum[v] = a[v] + b[v]
			}
			t := [3]int{i, j, s.index[pack(sum)]}
			s.mul = append(s.mul, t)
			if s.deg[i] >= 1 && s.deg[j] >= 1 {
				s.mulNil = append(s.mulNil, t)
			}
			if s.deg[i] == 2 && s.deg[j] == 1 {
				s.mul21 = append(s.mul21, t)
			}
		}
	}
	return s, nil
}

// Len returns the number of coefficients of a jet.
func (s *JetSpace) Len() int { return s.n }

// Degree returns the total degree of coefficient i.
func (s *JetSpace) Degree(i int) int { return s.deg[i] }

// Index returns the position of the coefficient of t^α, or -1 when |α|
// exceeds the order.
func (s *JetSpace) Index(alpha ...int) int {
	if len(alpha) != s.Vars {
		return -1
	}
	deg := 0
	for _, a := range alpha {
		if a < 0 {
			return -1
		}
		deg += a
	}
	if deg > s.Order {
		return -1
	}
	return s.index[pack(alpha)]
}

// Derivative returns ∂^α f at t = 0 from the jet a of f: the coefficient
// times α!.
func (s *JetSpace) Derivative(a []float64, alpha ...int) float64 {
	i := s.Index(alpha...)
	if i < 0 {
		return math.NaN()
	}
	f := 1.0
	for _, e := range alpha {
		for k := 2; k <= e; k++ {
			f *= float64(k)
		}
	}
	return a[i] * f
}

// Const writes the jet of the constant c.
func (s *JetSpace) Const(dst []float64, c float64) {
	for k := range dst[:s.n] {
		dst[k] = 0
	}
	dst[0] = c
}

// Mul writes the product a·b; dst may alias neither.
func (s *JetSpace) Mul(dst, a, b []float64) {
	for k := range dst[:s.n] {
		dst[k] = 0
	}
	for _, t := range s.mul {
		dst[t[2]] += a[t[0]] * b[t[1]]
	}
}

// Apply writes f(a) for a function f whose value and first three
// derivatives at a's value a[0] are d0..d3: the composition of Taylor
// series, f(a) = d0 + d1 u + d2 u²/2 + d3 u³/6 with u = a − a[0]. dst may
// alias a.
func (s *JetSpace) Apply(dst, a []float64, d0, d1, d2, d3 float64) {
	n := s.n
	if d1 == 0 && d2 == 0 && d3 == 0 {
		for k := range dst[:n] {
			dst[k] = 0
		}
		dst[0] = d0
		return
	}
	// u = a − a[0] has no constant term: u² needs only the products of
	// coefficients of degree ≥ 1, and u³ = u²·u those of degrees 2 and 1.
	var u, u2, u3 [maxJet]float64
	copy(u[:n], a[:n])
	u[0] = 0
	if s.Order >= 2 {
		for _, t := range s.mulNil {
			u2[t[2]] += u[t[0]] * u[t[1]]
		}
	}
	if s.Order >= 3 {
		for _, t := range s.mul21 {
			u3[t[2]] += u2[t[0]] * u[t[1]]
		}
	}
	h2, h3 := d2/2, d3/6
	for k := 1; k < n; k++ {
		dst[k] = d1*u[k] + h2*u2[k] + h3*u3[k]
	}
	dst[0] = d0
}

// Exp writes exp(a); dst may alias a.
func (s *JetSpace) Exp(dst, a []float64) {
	e := math.Exp(a[0])
	s.Apply(dst, a, e, e, e, e)
}

// Log writes ln(a) (NaN in every coefficient when a[0] ≤ 0); dst may
// alias a.
func (s *JetSpace) Log(dst, a []float64) {
	x := a[0]
	if !(x > 0) {
		for k := range dst[:s.n] {
			dst[k] = math.NaN()
		}
		return
	}
	s.Apply(dst, a, math.Log(x), 1/x, -1/(x*x), 2/(x*x*x))
}

// Jetter is a map that can push jets through a step: x and dst hold one
// jet per coupling (coupling i at [i·L, (i+1)·L) with L = s.Len()), and g
// receives the jet of the constant. It reports false when the step leaves
// the map's domain or overflows.
type Jetter interface {
	StepJet(s *JetSpace, dst, x, g []float64) bool
}

// flagDiverged is FreeEnergyJet's flag for a sum of derivatives that does
// not converge.
const flagDiverged = "the sum of the derivatives does not converge (on a phase boundary, or where the scheme makes a response diverge, the derivatives do not exist)"

// FreeEnergyJet returns ln Z/N at x and its derivatives to the given order
// (2 or 3) in the couplings idx (at most three), exactly to rounding, by
// pushing jets through each step of a Jetter and summing
// Σ b^{−dn} g(xₙ) coefficient by coefficient. The sum stops when every
// coefficient's terms are below 1e-16 of its own sum (of 1e-3 of the
// largest of its degree, for a small one), at the rounding floor once every
// coefficient is good to 1e-12, or, once the flow and its derivatives have
// settled on a finite fixed point, with the tail in closed form. A sum whose derivative terms stop falling
// (on a phase boundary the derivatives do not exist: at h = 0 in an
// ordered phase ∂²/∂h² grows with the system) is flagged, as is a step
// that fails.
func FreeEnergyJet(m Map, x []float64, idx []int, order int) Derivatives {
	j, ok := m.(Jetter)
	k := len(idx)
	out := Derivatives{F: math.NaN(), Grad: make([]float64, k), Hess: make([][]float64, k)}
	for a := range out.Hess {
		out.Hess[a] = make([]float64, k)
	}
	if order >= 3 {
		out.Third = make([][][]float64, k)
		for a := range out.Third {
			out.Third[a] = make([][]float64, k)
			for c := range out.Third[a] {
				out.Third[a][c] = make([]float64, k)
			}
		}
	}
	if !ok {
		out.Flag = "the map cannot propagate derivatives exactly"
		return out
	}
	if len(x) != len(m.Couplings()) {
		out.Flag = fmt.Sprintf("%d couplings given, the map has %d", len(x), len(m.Couplings()))
		return out
	}
	s := JetSpaceOf(k, max(order, 1))
	if s == nil {
		out.Flag = fmt.Sprintf("exact derivatives in %d couplings to order %d: need 1 to 3 couplings and order 1 to 3", k, order)
		return out
	}
	L := s.Len()
	nc := len(x)
	cur := make([]float64, nc*L)
	next := make([]float64, nc*L)
	g := make([]float64, L)
	sum := make([]float64, L)
	for i, v := range x {
		cur[i*L] = v
	}
	for a, i := range idx {
		cur[i*L+1+a] = 1 // degree-1 coefficients follow the value
	}
	q := math.Pow(m.Rescale(), -m.Dimension())
	w := 1.0
	ord := s.Order
	// Per total degree k: the largest term t[k] and partial sum sm[k].
	var t, sm, lastT [4]float64
	var relHist [20]float64
	bestRel := math.Inf(1)
	prevRel := math.Inf(1)
	var rerr [4]float64 // per degree k, the rounding estimate 64 ε Σ w (|g_0| + max_k |g_c|)
	done := false
	for step := 0; step < 2000 && !done; step++ {
		if !j.StepJet(s, next, cur, g) {
			out.Flag = "the flow left the map's domain"
			return out
		}
		finite := true
		var moved, size float64
		for i := range next {
			if math.IsNaN(next[i]) || math.IsInf(next[i], 0) {
				finite = false
			}
			if v := math.Abs(next[i] - cur[i]); v > moved {
				moved = v
			}
			if v := math.Abs(cur[i]); v > size {
				size = v
			}
		}
		t, sm = [4]float64{}, [4]float64{}
		for c := range g {
			if math.IsNaN(g[c]) || math.IsInf(g[c], 0) {
				finite = false
			}
			sum[c] += w * g[c]
			dg := s.Degree(c)
			if v := math.Abs(w * g[c]); v > t[dg] {
				t[dg] = v
			}
			if v := math.Abs(sum[c]); v > sm[dg] {
				sm[dg] = v
			}
		}
		if !finite {
			out.Flag = "the derivatives are not finite along the flow (a phase boundary or infinite coupling)"
			return out
		}
		for dg := 0; dg <= ord; dg++ {
			rerr[dg] += 64 * 0x1p-52 * (w*math.Abs(g[0]) + t[dg])
		}
		// Each coefficient's term against its own sum (one much smaller
		// than the largest of its degree against 1e-3 of that): a
		// diverging coefficient cannot hide behind a large converged one.
		rel := 0.0
		for c := range g {
			tc := math.Abs(w * g[c])
			if tc == 0 {
				continue
			}
			den := math.Max(math.Abs(sum[c]), 1e-3*sm[s.Degree(c)])
			if den == 0 {
				rel = math.Inf(1)
				continue
			}
			rel = math.Max(rel, tc/den)
		}
		lastT = t
		switch {
		case moved <= 1e-15*(1+size):
			for c := range sum {
				sum[c] += w * q * g[c] / (1 - q)
			}
			lastT = [4]float64{}
			done = true
		case rel <= 1e-16:
			done = true
		case rel > prevRel && bestRel < 1e-12:
			// The rounding floor: deep in a sink at infinite coupling the
			// renormalized couplings are differences of large numbers,
			// whose rounding, amplified along the flow, stops the terms
			// from falling further; the sum is already good to 1e-12.
			done = true
		case w*q == 0 || (step >= 60 && rel > 0.1*relHist[(step-20)%20]):
			// Terms that have not fallen tenfold against their sums in
			// twenty steps, late in the flow, belong to a sum that does
			// not converge (or converges only to rounding noise).
			out.Flag = flagDiverged
			return out
		}
		relHist[step%20] = rel
		bestRel = math.Min(bestRel, rel)
		prevRel = rel
		w *= q
		cur, next = next, cur
	}
	if !done {
		out.Flag = "the sum did not converge in 2000 steps"
		return out
	}
	out.F = sum[0]
	// The tail after the last term is at most about that term (the terms
	// fall at least geometrically by then); a Hessian entry is up to 2
	// and a third derivative up to 6 times its coefficient.
	out.Err = 4*lastT[min(2, ord)] + 2*rerr[min(2, ord)]
	out.Err3 = 12*lastT[min(3, ord)] + 6*rerr[min(3, ord)]
	alpha := make([]int, k)
	d := func(ax ...int) float64 {
		for i := range alpha {
			alpha[i] = 0
		}
		for _, a := range ax {
			alpha[a]++
		}
		return s.Derivative(sum, alpha...)
	}
	for a := 0; a < k; a++ {
		out.Grad[a] = d(a)
		if order < 2 {
			continue
		}
		for c := a; c < k; c++ {
			v := d(a, c)
			out.Hess[a][c], out.Hess[c][a] = v, v
			if order < 3 {
				continue
			}
			for e := c; e < k; e++ {
				v := d(a, c, e)
				for _, p := range [][3]int{{a, c, e}, {a, e, c}, {c, a, e}, {c, e, a}, {e, a, c}, {e, c, a}} {
					out.Third[p[0]][p[1]][p[2]] = v
				}
			}
		}
	}
	return out
}
