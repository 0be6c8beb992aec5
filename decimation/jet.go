package decimation

import (
	"math"
	"sync"

	"scalewalk/flow"
)

// Jets: the steps of the chain and of bond moving pushed through truncated
// Taylor polynomials (flow.JetSpace), which gives the derivatives of the
// renormalized couplings and of g exactly, to rounding. A vector of jets
// holds entry e at [e·L, (e+1)·L) with L = s.Len().

var (
	_ flow.Jetter = (*Chain)(nil)
	_ flow.Jetter = (*BondMove)(nil)
)

// jetWork is the scratch of one jet step, sized for the largest jets
// (flow's limit of 20 coefficients).
type jetWork struct {
	base, res, tmp []float64 // size × 20
	xb             []float64 // couplings × 20
	col, x         []float64
	bufs           []float64 // n × 20: the terms of one product entry
	terms          [][]float64
	c, sg          []float64
}

// jetWork returns scratch from the model's pool (the caller puts it back).
func (m *Model) jetWork() (*jetWork, *sync.Pool) {
	if w, ok := m.jets.Get().(*jetWork); ok {
		return w, &m.jets
	}
	const L = 20
	n := max(m.n, 3)
	return &jetWork{
		base: make([]float64, m.size*L), res: make([]float64, m.size*L), tmp: make([]float64, m.size*L),
		xb: make([]float64, len(m.couplings)*L), col: make([]float64, m.size), x: make([]float64, len(m.couplings)),
		bufs: make([]float64, n*L), terms: make([][]float64, n), c: make([]float64, n), sg: make([]float64, n),
	}, &m.jets
}

// edgeJet is Edge on jets: dst_e = Σ_a x_a φ_a(e).
func (m *Model) edgeJet(L int, dst, x []float64) {
	for k := range dst {
		dst[k] = 0
	}
	for a := range m.couplings {
		xa := x[a*L : (a+1)*L]
		phi := m.basis[a*m.size : (a+1)*m.size]
		for e, p := range phi {
			if p == 0 {
				continue
			}
			d := dst[e*L : (e+1)*L]
			for c, v := range xa {
				d[c] += p * v
			}
		}
	}
}

// lseJet writes ln Σ σ_i exp(t_i + c_i) over the terms given (jets t_i,
// constants c_i, signs σ_i), NaN when the sum is not positive. The largest
// term is factored out as a whole jet, not only its value, L = t* + c* +
// ln(1 + Σ_{i≠*} σ_i exp(t_i + c_i − t* − c*)): a term that dominates then
// passes its derivatives through exactly, where exp followed by ln would
// cancel powers of large coefficients.
func lseJet(s *flow.JetSpace, dst []float64, t [][]float64, c, sg []float64) {
	L := s.Len()
	mx, at := math.Inf(-1), -1
	for i := range t {
		if sg[i] > 0 && t[i][0]+c[i] > mx {
			mx, at = t[i][0]+c[i], i
		}
	}
	if at < 0 || math.IsInf(mx, 0) || math.IsNaN(mx) {
		for k := range dst[:L] {
			dst[k] = math.NaN()
		}
		return
	}
	var acc, e [20]float64
	acc[0] = 1
	top := t[at]
	for i := range t {
		if sg[i] == 0 || i == at {
			continue
		}
		for k := 0; k < L; k++ {
			e[k] = t[i][k] - top[k]
		}
		e[0] += c[i] - c[at]
		s.Exp(e[:L], e[:L])
		for k := 0; k < L; k++ {
			acc[k] += sg[i] * e[k]
		}
	}
	s.Log(dst[:L], acc[:L])
	for k := 0; k < L; k++ {
		dst[k] += top[k]
	}
	dst[0] += c[at]
}

// mulJet is Mul on jets; dst must alias neither a nor b.
func (m *Model) mulJet(s *flow.JetSpace, w *jetWork, dst, a, b []float64) {
	L := s.Len()
	ent := func(v []float64, e int) []float64 { return v[e*L : (e+1)*L] }
	var tb [3][20]float64
	var ts [3][]float64
	add := func(i int, x, y []float64) []float64 {
		for k := 0; k < L; k++ {
			tb[i][k] = x[k] + y[k]
		}
		return tb[i][:L]
	}
	if m.algebra {
		// same = s1 s2 + (q−1) d1 d2; diff = s1 d2 + d1 s2 + (q−2) d1 d2.
		ts[0], ts[1] = add(0, ent(a, 0), ent(b, 0)), add(1, ent(a, 1), ent(b, 1))
		lseJet(s, ent(dst, 0), ts[:2], []float64{0, m.lnQ1}, []float64{1, m.sgQ1})
		ts[0], ts[1], ts[2] = add(0, ent(a, 0), ent(b, 1)), add(1, ent(a, 1), ent(b, 0)), add(2, ent(a, 1), ent(b, 1))
		lseJet(s, ent(dst, 1), ts[:3], []float64{0, 0, m.lnQ2}, []float64{1, 1, m.sgQ2})
		return
	}
	q := m.n
	terms, bufs := w.terms[:q], w.bufs[:q*L]
	c, sg := w.c[:q], w.sg[:q]
	for l := range sg {
		c[l], sg[l] = 0, 1
	}
	for i := 0; i < q; i++ {
		for k := 0; k < q; k++ {
			for l := 0; l < q; l++ {
				t := bufs[l*L : (l+1)*L]
				x, y := ent(a, i*q+l), ent(b, l*q+k)
				for r := 0; r < L; r++ {
					t[r] = x[r] + y[r]
				}
				terms[l] = t
			}
			lseJet(s, ent(dst, i*q+k), terms, c, sg)
		}
	}
}

// projectJet is Project on jets: coefficient by coefficient (Project is
// linear); it writes the couplings' jets into dst and the constant's into
// cst. A coefficient of a coupling below the rounding level of the entries
// it is a difference of (16 ε Σ_e |P_ae| max_e |lw_e|, P the projection) is
// set to zero: deep in a sink at infinite coupling a coupling the flow
// kills is computed as a difference of large entries, and its rounding,
// amplified along the flow, would otherwise swamp the derivatives. (A field
// below that level is then exactly zero, and a sum that needs it to grow
// is flagged rather than given from noise.)
func (m *Model) projectJet(s *flow.JetSpace, w *jetWork, dst, cst, lw []float64) {
	L := s.Len()
	col, x := w.col, w.x
	for r := 0; r < L; r++ {
		lv := 0.0
		for e := range col {
			col[e] = lw[e*L+r]
			if v := math.Abs(col[e]); v > lv {
				lv = v
			}
		}
		cst[r] = m.Project(x, col)
		for a, v := range x {
			if !m.algebra && math.Abs(v) <= 16*epsilon*m.pinvAbs[a+1]*lv {
				v = 0
			}
			dst[a*L+r] = v
		}
	}
}

const epsilon = 0x1p-52

// powerJet is power on jets: ln W(x)^b by binary powering.
func (c *Chain) powerJet(s *flow.JetSpace, w *jetWork, x []float64) []float64 {
	m := c.m
	L := s.Len()
	n := m.size * L
	base, res, tmp := w.base[:n], w.res[:n], w.tmp[:n]
	m.edgeJet(L, base, x)
	have := false
	for e := c.b; ; {
		if e&1 == 1 {
			if !have {
				copy(res, base)
				have = true
			} else {
				m.mulJet(s, w, tmp, res, base)
				res, tmp = tmp, res
			}
		}
		e >>= 1
		if e == 0 {
			break
		}
		m.mulJet(s, w, tmp, base, base)
		base, tmp = tmp, base
	}
	return res
}

func finiteAll(v []float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// StepJet is Step on jets (flow.Jetter).
func (c *Chain) StepJet(s *flow.JetSpace, dst, x, g []float64) bool {
	L := s.Len()
	w, pool := c.m.jetWork()
	defer pool.Put(w)
	c.m.projectJet(s, w, dst, g, c.powerJet(s, w, x))
	for r := range g[:L] {
		g[r] /= float64(c.b)
	}
	return finiteAll(dst[:c.nc*L]) && finiteAll(g[:L])
}

// StepJet is Step on jets (flow.Jetter).
func (bm *BondMove) StepJet(s *flow.JetSpace, dst, x, g []float64) bool {
	L := s.Len()
	nc := len(bm.m.couplings)
	w, pool := bm.m.jetWork()
	defer pool.Put(w)
	xb := w.xb[:nc*L]
	for i := 0; i < nc; i++ {
		f := 1.0
		if bm.one[i] {
			f = 1 / bm.d
		}
		if bm.order == MoveFirst {
			f *= bm.p
		}
		for r := 0; r < L; r++ {
			xb[i*L+r] = f * x[i*L+r]
		}
	}
	lw := bm.ch.powerJet(s, w, xb)
	if bm.order != MoveFirst {
		for k := range lw {
			lw[k] *= bm.p
		}
	}
	bm.m.projectJet(s, w, dst, g, lw)
	for i := 0; i < nc; i++ {
		if bm.one[i] {
			for r := 0; r < L; r++ {
				dst[i*L+r] *= bm.d
			}
		}
	}
	for r := range g[:L] {
		g[r] /= float64(bm.b) * bm.p
		if !bm.hier {
			g[r] *= bm.d
		}
	}
	if !bm.hier {
		g[0] += bm.kappa
	}
	return finiteAll(dst[:nc*L]) && finiteAll(g[:L])
}
