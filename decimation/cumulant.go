package decimation

import (
	"fmt"
	"math"
	"math/bits"
	"sort"
	"sync"

	"scalewalk/flow"
)

// Cumulant is the cumulant expansion of a block-spin transformation for
// the Ising model (Niemeijer and van Leeuwen): the Hamiltonian is split
// into H0, the kept pair couplings inside each block, and the
// perturbation V, the pair couplings between blocks and the field; the
// renormalized Hamiltonian is
//
//	H′(μ) = ln Z0 + ⟨V⟩0 + (⟨V²⟩0 − ⟨V⟩0²)/2 + …,
//
// the averages taken with H0 at fixed block spins μ, where blocks are
// independent. The engine builds the recursion by enumerating the block's
// internal configurations and the products of terms of V; no hand
// algebra. At second order the second cumulant is built from the
// nearest-neighbour bonds and the field only (the consistent O(K²)
// truncation: L and M are themselves of second order). The generated
// block couplings are projected onto the kept set; what is dropped (pairs
// beyond the kept shells, an anisotropy of a shell) is the closure error.
type Cumulant struct {
	bl    *Blocking
	rule  Rule
	order int
	keep  keptSet
	cs    []flow.Coupling
	n     int // sites per block

	conf  [][]float64 // internal configurations: spins ±1
	prule []float64   // P(μ = +1 | s) per configuration
	intra []intraBond // kept bonds inside a block (part of H0)

	mono    []monomial // terms building x′ and the constant
	dropped []monomial // terms of couplings not kept (closure)
	nout    int        // outputs: len(x) pair/field couplings, then the constant
	ndrop   int
	pairAvg []float64 // 1/(number of block vectors) per kept shell output
	pool    sync.Pool
}

type intraBond struct{ i, k, c int } // sites i, k of the block; c the index in x

// monomial is scale·x_a·x_b·(Π M[f1] − Π M[f2]) at second order and
// scale·x_a·Π M[f1] at first order (b < 0), M[mask] the block moment
// ⟨Π_{i∈mask} s_i⟩ at block spin +1.
type monomial struct {
	out   int
	a, b  int
	scale float64
	f1    [3]int32
	f2    [4]int32
}

// vterm is one term of the perturbation V: a bond between blocks or a
// site in the field.
type vterm struct {
	c      int       // index in x
	blocks [2][2]int // blocks of its sites (one for a field term)
	masks  [2]int    // the site masks in those blocks
	nb     int       // number of distinct blocks
}

// NewCumulant returns the cumulant expansion of the given order (1 or 2)
// for the Ising model on the blocking bl with the rule, keeping the listed
// couplings (K, L, M, h).
func NewCumulant(m *Model, bl *Blocking, rule Rule, order int, keep []string) (*Cumulant, error) {
	if m.Name() != "ising" {
		return nil, &ParamError{Name: "model", Value: m.Name(), Reason: "the cumulant expansion is built for the Ising model only; accepted: --model ising (use cluster for Potts)"}
	}
	if bl.Lattice.Dim != 2 {
		return nil, &ParamError{Name: "lattice", Value: bl.Lattice.Name, Reason: "the cumulant expansion works on two-dimensional lattices; accepted: triangular, square"}
	}
	if bl.Size() > 4 {
		return nil, &ParamError{Name: "block", Value: fmt.Sprint(bl.Size()), Reason: "the cumulant expansion here takes three-site triangles or 2×2 blocks; accepted: block=3 (triangular) or 4 (square), or 0 for the default"}
	}
	if order != 1 && order != 2 {
		return nil, &ParamError{Name: "order", Value: fmt.Sprint(order), Reason: "accepted: 1 or 2"}
	}
	ks, err := parseKeep(keep, bl.Lattice)
	if err != nil {
		return nil, err
	}
	c := &Cumulant{bl: bl, rule: rule, order: order, keep: ks, n: bl.Size()}
	c.cs = ks.couplings(bl.Lattice, "X s_i s_j between block spins and between sites alike", m.Couplings(), 1)
	c.buildBlock()
	c.buildTerms()
	return c, nil
}

func (c *Cumulant) buildBlock() {
	n := c.n
	w := make([]float64, 2)
	s := make([]int, n)
	for cf := 0; cf < 1<<n; cf++ {
		sp := make([]float64, n)
		for i := 0; i < n; i++ {
			s[i] = (cf >> i) & 1 // state 0 is spin +1
			sp[i] = 1 - 2*float64(s[i])
		}
		c.rule.weights(w, s, 2)
		if w[0] == 0 {
			continue
		}
		c.conf = append(c.conf, sp)
		c.prule = append(c.prule, w[0])
	}
	for i := 0; i < n; i++ {
		for k := i + 1; k < n; k++ {
			sh := c.bl.Lattice.SiteShell(c.bl.Sites[i], c.bl.Sites[k])
			if ix := c.keep.shellIndex(sh); sh > 0 && ix >= 0 {
				c.intra = append(c.intra, intraBond{i, k, ix})
			}
		}
	}
}

// window is the radius, in block spacings, of the patch of blocks over
// which terms are enumerated; every product of two terms that touches the
// origin block lies inside it.
const cumulantWindow = 4

func (c *Cumulant) buildTerms() {
	bl := c.bl
	lat := bl.Lattice
	// Blocks of the patch.
	var blocks [][2]int
	for i := -3 * cumulantWindow; i <= 3*cumulantWindow; i++ {
		for j := -3 * cumulantWindow; j <= 3*cumulantWindow; j++ {
			d := [2]int{i, j}
			p := lat.Pos([2]int{i*bl.B1[0] + j*bl.B2[0], i*bl.B1[1] + j*bl.B2[1]})
			if p[0]*p[0]+p[1]*p[1] <= float64(cumulantWindow*cumulantWindow)*bl.b*bl.b+1e-9 {
				blocks = append(blocks, d)
			}
		}
	}
	var terms []vterm
	nbr := lat.neighbourVectors(3)
	for _, B := range blocks {
		for k := range bl.Sites {
			site := bl.Site(B, k)
			for _, v := range nbr {
				if v[0] < 0 || (v[0] == 0 && v[1] < 0) {
					continue // each bond once
				}
				e := [2]int{site[0] + v[0], site[1] + v[1]}
				sh := lat.SiteShell(site, e)
				ix := c.keep.shellIndex(sh)
				if ix < 0 {
					continue
				}
				B2, k2 := bl.Locate(e)
				if B2 == B {
					continue // inside the block: part of H0
				}
				terms = append(terms, vterm{c: ix, blocks: [2][2]int{B, B2}, masks: [2]int{1 << k, 1 << k2}, nb: 2})
			}
			if c.keep.field {
				terms = append(terms, vterm{c: c.keep.fieldIndex(), blocks: [2][2]int{B}, masks: [2]int{1 << k}, nb: 1})
			}
		}
	}
	// Outputs: the kept couplings (pair shells averaged over their block
	// vectors), the field, then the constant per block.
	nx := c.keep.len()
	c.nout = nx + 1
	c.pairAvg = make([]float64, nx)
	for _, d := range blocks {
		if sh := bl.BlockShell(d); sh > 0 {
			if ix := c.keep.shellIndex(sh); ix >= 0 {
				c.pairAvg[ix]++
			}
		}
	}
	for i := range c.pairAvg {
		if c.pairAvg[i] > 0 {
			c.pairAvg[i] = 1 / c.pairAvg[i]
		}
	}
	if c.keep.field {
		c.pairAvg[c.keep.fieldIndex()] = 1
	}
	acc := map[monoKey]float64{}
	drop := map[monoKey]float64{}
	dropIx := map[string]int{}
	origin := [2]int{}
	classify := func(prod map[[2]int]int, touched map[[2]int]bool) (out int, key string, share float64) {
		var odd [][2]int
		for B, m := range prod {
			if bits.OnesCount(uint(m))%2 == 1 {
				odd = append(odd, B)
			}
		}
		switch len(odd) {
		case 0:
			if !touched[origin] {
				return -1, "", 0
			}
			return nx, "", 1 / float64(len(touched))
		case 1:
			if odd[0] != origin {
				return -1, "", 0
			}
			if c.keep.field {
				return c.keep.fieldIndex(), "", 1
			}
			return -2, "field", 1
		}
		sort.Slice(odd, func(a, b int) bool {
			if odd[a][0] != odd[b][0] {
				return odd[a][0] < odd[b][0]
			}
			return odd[a][1] < odd[b][1]
		})
		if len(odd) == 2 && (odd[0] == origin || odd[1] == origin) {
			P := odd[0]
			if P == origin {
				P = odd[1]
			}
			sh := bl.BlockShell(P)
			if ix := c.keep.shellIndex(sh); sh > 0 && ix >= 0 {
				return ix, "", 1
			}
		}
		if odd[0] != origin {
			return -1, "", 0
		}
		key = fmt.Sprint(odd)
		return -2, key, 1
	}
	add := func(out int, key string, mk monoKey, v float64) {
		switch {
		case out >= 0:
			mk.out = out
			acc[mk] += v
		case out == -2:
			ix, ok := dropIx[key]
			if !ok {
				ix = len(dropIx)
				dropIx[key] = ix
			}
			mk.out = ix
			drop[mk] += v
		}
	}
	maskOf := func(t vterm) map[[2]int]int {
		m := map[[2]int]int{}
		for i := 0; i < t.nb; i++ {
			m[t.blocks[i]] ^= t.masks[i]
		}
		return m
	}
	// First cumulant.
	for _, t := range terms {
		prod := maskOf(t)
		touched := map[[2]int]bool{}
		for B := range prod {
			touched[B] = true
		}
		out, key, share := classify(prod, touched)
		if out == -1 {
			continue
		}
		var mk monoKey
		mk.a, mk.b = t.c, -1
		mk.f1 = sortedMasks3(prod)
		add(out, key, mk, share)
	}
	// Second cumulant, from the nearest-neighbour bonds and the field.
	if c.order == 2 {
		second := func(t vterm) bool {
			return t.c == c.keep.fieldIndex() || c.keep.shells[t.c] == 1
		}
		byBlock := map[[2]int][]int{}
		for i, t := range terms {
			if !second(t) {
				continue
			}
			for j := 0; j < t.nb; j++ {
				byBlock[t.blocks[j]] = append(byBlock[t.blocks[j]], i)
			}
		}
		stamp := make([]int, len(terms))
		for i := range stamp {
			stamp[i] = -1
		}
		for i, t1 := range terms {
			if !second(t1) {
				continue
			}
			for j := 0; j < t1.nb; j++ {
				for _, k := range byBlock[t1.blocks[j]] {
					if stamp[k] == i {
						continue
					}
					stamp[k] = i
					t2 := terms[k]
					m1, m2 := maskOf(t1), maskOf(t2)
					prod := map[[2]int]int{}
					touched := map[[2]int]bool{}
					for B, m := range m1 {
						prod[B] ^= m
						touched[B] = true
					}
					for B, m := range m2 {
						prod[B] ^= m
						touched[B] = true
					}
					out, key, share := classify(prod, touched)
					if out == -1 {
						continue
					}
					var mk monoKey
					mk.a, mk.b = t1.c, t2.c
					if mk.a > mk.b {
						mk.a, mk.b = mk.b, mk.a
					}
					mk.f1 = sortedMasks3(prod)
					var f2 []int32
					for _, m := range []map[[2]int]int{m1, m2} {
						for _, v := range m {
							f2 = append(f2, int32(v))
						}
					}
					sort.Slice(f2, func(a, b int) bool { return f2[a] < f2[b] })
					copy(mk.f2[:], f2)
					add(out, key, mk, 0.5*share)
				}
			}
		}
	}
	c.mono = flatten(acc)
	c.dropped = flatten(drop)
	c.ndrop = len(dropIx)
}

type monoKey struct {
	out, a, b int
	f1        [3]int32
	f2        [4]int32
}

func flatten(acc map[monoKey]float64) []monomial {
	out := make([]monomial, 0, len(acc))
	for k, v := range acc {
		if v == 0 {
			continue
		}
		out = append(out, monomial{out: k.out, a: k.a, b: k.b, scale: v, f1: k.f1, f2: k.f2})
	}
	sort.Slice(out, func(i, j int) bool {
		a, b := out[i], out[j]
		if a.out != b.out {
			return a.out < b.out
		}
		if a.a != b.a {
			return a.a < b.a
		}
		if a.b != b.b {
			return a.b < b.b
		}
		if a.f1 != b.f1 {
			return lessInt32(a.f1[:], b.f1[:])
		}
		return lessInt32(a.f2[:], b.f2[:])
	})
	return out
}

func lessInt32(a, b []int32) bool {
	for i := range a {
		if a[i] != b[i] {
			return a[i] < b[i]
		}
	}
	return false
}

// sortedMasks3 returns the non-zero masks of a product, sorted, padded
// with 0 (M[0] = 1). A product of two terms touches at most three blocks.
func sortedMasks3(prod map[[2]int]int) [3]int32 {
	var f []int32
	for _, m := range prod {
		if m != 0 {
			f = append(f, int32(m))
		}
	}
	if len(f) > 3 {
		panic("decimation: a cumulant product touches more than three blocks")
	}
	sort.Slice(f, func(a, b int) bool { return f[a] < f[b] })
	var out [3]int32
	copy(out[:], f)
	return out
}

// Couplings returns the kept couplings.
func (c *Cumulant) Couplings() []flow.Coupling { return append([]flow.Coupling(nil), c.cs...) }

// Rescale returns b (√3 for triangles, 2 for 2×2 blocks).
func (c *Cumulant) Rescale() float64 { return c.bl.b }

// Dimension returns 2.
func (c *Cumulant) Dimension() float64 { return 2 }

// Symmetry names the spin flip.
func (c *Cumulant) Symmetry() string { return "Z2 spin flip" }

type cumulantWork struct {
	mom, out, drop, ew []float64
}

// moments fills mom[mask] = ⟨Π_{i∈mask} s_i⟩ at block spin +1 under H0 and
// returns ln Z0, the block's partition function at fixed block spin.
func (c *Cumulant) moments(mom, ew, x []float64) float64 {
	n := c.n
	mx := math.Inf(-1)
	for j, s := range c.conf {
		e := 0.0
		for _, b := range c.intra {
			e += x[b.c] * s[b.i] * s[b.k]
		}
		ew[j] = e
		mx = math.Max(mx, e)
	}
	z := 0.0
	for j := range ew {
		ew[j] = c.prule[j] * math.Exp(ew[j]-mx)
		z += ew[j]
	}
	for mask := 0; mask < 1<<n; mask++ {
		v := 0.0
		for j, s := range c.conf {
			p := ew[j]
			for i := 0; i < n; i++ {
				if mask>>i&1 == 1 {
					p *= s[i]
				}
			}
			v += p
		}
		mom[mask] = v / z
	}
	return mx + math.Log(z)
}

func (c *Cumulant) eval(out []float64, ms []monomial, mom, x []float64) {
	for i := range out {
		out[i] = 0
	}
	for _, t := range ms {
		p1 := mom[t.f1[0]] * mom[t.f1[1]] * mom[t.f1[2]]
		if t.b < 0 {
			out[t.out] += t.scale * x[t.a] * p1
			continue
		}
		p2 := mom[t.f2[0]] * mom[t.f2[1]] * mom[t.f2[2]] * mom[t.f2[3]]
		out[t.out] += t.scale * x[t.a] * x[t.b] * (p1 - p2)
	}
}

func (c *Cumulant) work() *cumulantWork {
	if w, ok := c.pool.Get().(*cumulantWork); ok {
		return w
	}
	return &cumulantWork{mom: make([]float64, 1<<c.n), out: make([]float64, c.nout), drop: make([]float64, c.ndrop), ew: make([]float64, len(c.conf))}
}

// Step writes the renormalized couplings into dst and returns the constant
// per site, (ln Z0 + the constant of the cumulants) / (sites per block).
func (c *Cumulant) Step(dst, x []float64) float64 {
	if !blockStepInput("cumulant", dst, x, len(c.cs)) {
		return math.NaN()
	}
	w := c.work()
	defer c.pool.Put(w)
	lnZ0 := c.moments(w.mom, w.ew, x)
	c.eval(w.out, c.mono, w.mom, x)
	for i := range dst {
		dst[i] = w.out[i] * c.pairAvg[i]
	}
	return (lnZ0 + w.out[c.nout-1]) / float64(c.n)
}

// Closure returns the size of what the projection drops at x: the root
// sum of squares of the generated block couplings outside the kept set
// (per block, each coupling once).
func (c *Cumulant) Closure(x []float64) float64 {
	if c.ndrop == 0 {
		return 0
	}
	w := c.work()
	defer c.pool.Put(w)
	c.moments(w.mom, w.ew, x)
	c.eval(w.drop, c.dropped, w.mom, x)
	s := 0.0
	for _, v := range w.drop {
		s += v * v
	}
	return math.Sqrt(s)
}

// Remainder returns ln cosh h, the free energy per site of a lone field
// beyond the ln 2 the constants carry (|h| − ln 2 in the ordered limit):
// the field is carried whole into the block Hamiltonian, so the constants
// never collect its linear part (see flow.Remainderer).
func (c *Cumulant) Remainder(x []float64) float64 {
	i := c.keep.fieldIndex()
	if i < 0 {
		return 0
	}
	h := math.Abs(x[i])
	return h + math.Log1p(math.Exp(-2*h)) - math.Ln2
}

// FieldBound returns 1: the Ising spin and the Potts indicator are at
// most 1 in magnitude per site (see flow.FieldBounder).
func (c *Cumulant) FieldBound(int) float64 { return 1 }

// Cautions says what the truncated expansion cannot give well.
func (c *Cumulant) Cautions() []string {
	out := []string{"the cumulant expansion is a series in the couplings between blocks: far from its fixed point (deep in the ordered phase) its free energy and energy leave the physical bounds (an energy below the ground state), which no check here catches in general"}
	if c.order == 1 && c.keep.field {
		out = append(out, "at first order the field has no second cumulant: the susceptibility in the disordered phase comes out 0")
	}
	return out
}
