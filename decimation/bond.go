package decimation

import (
	"fmt"
	"math"
	"sync"

	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
)

// Order is the order of the two operations of a bond-moving step.
type Order int

const (
	// MoveFirst moves bonds, then decimates: the traditional estimate for
	// the hypercubic lattice; exact on the necklace hierarchical lattice
	// (parallel bundles of b^{d−1} bonds, b bundles in series).
	MoveFirst Order = iota
	// DecimateFirst decimates, then moves bonds: exact on the diamond
	// hierarchical lattice (b bonds in series on each of b^{d−1} parallel
	// branches). Its map is conjugate to MoveFirst's: same eigenvalues,
	// couplings larger by b^{d−1}.
	DecimateFirst
)

func (o Order) String() string {
	if o == DecimateFirst {
		return "decimate-first"
	}
	return "move-first"
}

// BondMove is the Migdal–Kadanoff bond-moving step in d dimensions with
// length factor b, and the exact step of the diamond-family hierarchical
// lattices, for any model of the spin-model layer.
//
// One step combines p bonds in parallel (the edge Boltzmann matrix raised
// elementwise to the power p: couplings add; p = b^{d−1} for bond moving,
// p = m on a hierarchical lattice) and b bonds in series (the chain step,
// W^b), in the chosen order, and projects ln W back onto the model's basis.
//
// Site terms sit on bonds: each bond carries (h/(2d))(s_i + s_j) and
// −(D/(2d))(s_i² + s_j²), since each site of the hypercubic lattice touches
// 2d bonds. They move with the bonds. This is exact on hierarchical lattices
// (where it defines how a uniform field sits on them), makes d = 1 equal to
// the chain, and gives y_h = d at the ordered sink. Couplings are printed
// in this site convention.
//
// The constant g: a renormalized bond replaces b·p = b^d bonds, so the
// constant per bond before the step is c/b^d. For bond moving, ln Z/N per
// site of the hypercubic lattice is taken as d times the per-bond sum plus
// the constant that makes ln Z/N = ln q at zero couplings; that constant
// changes no derivative. A hierarchical lattice reports g per bond and its
// sites per bond (flow.PerBonder).
//
// References: A. A. Migdal, Sov. Phys. JETP 42, 743 (1976); L. P. Kadanoff,
// Ann. Phys. 100, 359 (1976); A. N. Berker, S. Ostlund, J. Phys. C 12, 4961
// (1979); M. Kaufman, R. B. Griffiths, Phys. Rev. B 24, 496 (1981) (from
// memory).
type BondMove struct {
	ch    *Chain // the series part: W^b, its pools and Jacobian machinery
	m     *Model
	b     int
	d     float64
	p     float64 // bonds in parallel
	order Order
	hier  bool    // hierarchical lattice: g per bond
	kappa float64 // constant per site added to g (bond moving)
	one   []bool  // one-body couplings (site terms)
	pool  sync.Pool
}

var (
	_ flow.Map        = (*BondMove)(nil)
	_ flow.Jacobianer = (*BondMove)(nil)
	_ flow.Domainer   = (*BondMove)(nil)
	_ flow.Closer     = (*BondMove)(nil)
	_ flow.Symmetrist = (*BondMove)(nil)
)

// NewBondMove returns the bond-moving map of m in dimension d ≥ 1 with
// length factor b ≥ 2, in the given order.
func NewBondMove(m *Model, d float64, b int, order Order) (*BondMove, error) {
	if math.IsNaN(d) || math.IsInf(d, 0) || d < 1 {
		return nil, &ParamError{Name: "d", Value: fmt.Sprint(d), Reason: "need a real d >= 1"}
	}
	return newBond(m, b, d, math.Pow(float64(b), d-1), order, false)
}

// NewHierarchical returns the exact RG of the diamond-family hierarchical
// lattice with b bonds in series on each of m parallel branches (series,
// then parallel). Its dimension is d = ln(b m)/ln b.
func NewHierarchical(model *Model, b, m int) (*BondMove, error) {
	if m < 1 {
		return nil, &ParamError{Name: "m", Value: fmt.Sprint(m), Reason: "need an integer m >= 1"}
	}
	if b < 2 {
		return nil, &ParamError{Name: "b", Value: fmt.Sprint(b), Reason: "need an integer b >= 2"}
	}
	d := math.Log(float64(b*m)) / math.Log(float64(b))
	return newBond(model, b, d, float64(m), DecimateFirst, true)
}

func newBond(m *Model, b int, d, p float64, order Order, hier bool) (*BondMove, error) {
	ch, err := NewChain(m, b)
	if err != nil {
		return nil, err
	}
	bm := &BondMove{ch: ch, m: m, b: b, d: d, p: p, order: order, hier: hier}
	for _, c := range m.couplings {
		bm.one = append(bm.one, c.Role.OneBody())
	}
	if !hier {
		// Σ_n b^{−dn} (d c0/b^d + κ) = ln q at zero couplings, where c0 is
		// the step's constant for W = all ones: (b−1) ln q from W^b when
		// bonds are moved first (moving zeros adds nothing), p (b−1) ln q
		// when the decimated bond is then taken p times.
		bd := math.Pow(float64(b), d)
		c0 := float64(b-1) * math.Log(m.q)
		if order == DecimateFirst {
			c0 *= p
		}
		perBond := c0 / bd / (1 - 1/bd)
		bm.kappa = (math.Log(m.q) - d*perBond) * (1 - 1/bd)
	}
	bm.pool.New = func() any { v := make([]float64, len(m.couplings)); return &v }
	return bm, nil
}

// Model returns the model.
func (bm *BondMove) Model() *Model { return bm.m }

// Couplings returns the model's couplings.
func (bm *BondMove) Couplings() []flow.Coupling { return bm.m.Couplings() }

// Rescale returns b.
func (bm *BondMove) Rescale() float64 { return float64(bm.b) }

// Dimension returns d (for a hierarchical lattice, ln(b m)/ln b).
func (bm *BondMove) Dimension() float64 { return bm.d }

// Parallel returns the number of bonds combined in parallel, b^{d−1} or m.
func (bm *BondMove) Parallel() float64 { return bm.p }

// Order returns the order of the operations.
func (bm *BondMove) Order() Order { return bm.order }

// Hierarchical reports whether the map is the exact RG of a hierarchical
// lattice (g per bond).
func (bm *BondMove) Hierarchical() bool { return bm.hier }

// Symmetry returns the model's symmetry group.
func (bm *BondMove) Symmetry() string { return bm.m.symmetry }

// SitesPerBond returns, for a hierarchical lattice, the number of sites
// per bond in the limit of many generations, m(b−1)/(bm−1); for bond moving
// it returns 1/d (the hypercubic lattice), and g is then per site.
func (bm *BondMove) SitesPerBond() float64 {
	if bm.hier {
		bmf := float64(bm.b) * bm.p
		return bm.p * float64(bm.b-1) / (bmf - 1)
	}
	return 1 / bm.d
}

// PerBond reports whether g is per bond (hierarchical lattices).
func (bm *BondMove) PerBond() bool { return bm.hier }

// toBond converts site-convention couplings to the bond's basis
// coefficients: one-body terms are shared among the 2d bonds of a site.
func (bm *BondMove) toBond(dst, x []float64) {
	for i, v := range x {
		if bm.one[i] {
			v /= bm.d
		}
		dst[i] = v
	}
}

// logW writes the log edge matrix after one step (before projection) and
// returns it; the buffers are those of the chain's powering.
func (bm *BondMove) logW(xb, base, res, tmp []float64) []float64 {
	if bm.order == MoveFirst {
		for i := range xb {
			xb[i] *= bm.p // couplings add over p parallel bonds
		}
		return bm.ch.power(xb, base, res, tmp)
	}
	lw := bm.ch.power(xb, base, res, tmp)
	for k := range lw {
		lw[k] *= bm.p
	}
	return lw
}

// Step writes x′ and returns g (per site for bond moving, per bond on a
// hierarchical lattice; see the type's doc).
func (bm *BondMove) Step(dst, x []float64) float64 {
	m := bm.m
	m.checkLen("Step dst", dst, len(m.couplings))
	m.checkLen("Step x", x, len(m.couplings))
	xp := bm.pool.Get().(*[]float64)
	defer bm.pool.Put(xp)
	xb := *xp
	bm.toBond(xb, x)
	sz := m.size
	var lw []float64
	if sz <= smallSize {
		var buf [3 * smallSize]float64
		lw = bm.logW(xb, buf[:sz], buf[sz:2*sz], buf[2*sz:3*sz])
		return bm.finish(dst, lw)
	}
	w := bm.ch.pool.Get().(*work)
	defer bm.ch.pool.Put(w)
	return bm.finish(dst, bm.logW(xb, w.base, w.res, w.tmp))
}

func (bm *BondMove) finish(dst, lw []float64) float64 {
	cst := bm.m.Project(dst, lw)
	ok := !math.IsNaN(cst) && !math.IsInf(cst, 0)
	for i, v := range dst {
		ok = ok && !math.IsNaN(v) && !math.IsInf(v, 0)
		if bm.one[i] {
			dst[i] = v * bm.d
		}
	}
	if !ok {
		for i := range dst {
			dst[i] = math.NaN()
		}
		return math.NaN()
	}
	perBond := cst / (float64(bm.b) * bm.p)
	if bm.hier {
		return perBond
	}
	return bm.d*perBond + bm.kappa
}

// Closure returns the closure error of one step at x.
func (bm *BondMove) Closure(x []float64) float64 {
	xb := make([]float64, len(x))
	bm.toBond(xb, x)
	sz := bm.m.size
	base, res, tmp := make([]float64, sz), make([]float64, sz), make([]float64, sz)
	return bm.m.Residual(bm.logW(xb, base, res, tmp))
}

// Domain returns nil inside the map's domain.
func (bm *BondMove) Domain(x []float64) error {
	if err := bm.m.Domain(x); err != nil {
		return err
	}
	dst := make([]float64, len(x))
	if g := bm.Step(dst, x); math.IsNaN(g) {
		if bm.m.algebra {
			return &DomainError{Reason: fmt.Sprintf("the renormalized weights have a non-positive entry (q = %g < 2 with an antiferromagnetic K): no real Potts coupling describes them", bm.m.q)}
		}
		return &DomainError{Reason: "the renormalized couplings are not finite (the couplings are too large)"}
	}
	return nil
}

// JacobianTo writes the analytic Jacobian ∂x′_i/∂x_j: derivatives of the
// log entries carried through the scaling and the log-space powering, then
// projected, with the site-to-bond factors 1/d and d at both ends.
func (bm *BondMove) JacobianTo(dst *mat.Dense, x []float64) {
	n := len(bm.m.couplings)
	if dst.IsEmpty() {
		dst.ReuseAs(n, n)
	}
	xb := make([]float64, n)
	bm.toBond(xb, x)
	if bm.order == MoveFirst {
		for i := range xb {
			xb[i] *= bm.p
		}
	}
	// The chain's Jacobian of the series part, in bond coordinates; either
	// order multiplies it by p (the moved couplings are p xb, or the
	// projected ones p times the chain's).
	var js mat.Dense
	bm.ch.JacobianTo(&js, xb)
	js.Scale(bm.p, &js)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := js.At(i, j)
			if bm.one[i] {
				v *= bm.d
			}
			if bm.one[j] {
				v /= bm.d
			}
			dst.Set(i, j, v)
		}
	}
}

// Cautions returns warnings a user must see beside this scheme's results.
func (bm *BondMove) Cautions() []string {
	var out []string
	if bm.m.potts && !bm.hier && math.Abs(bm.d-2) < 1e-12 && bm.m.q > 4 {
		out = append(out, fmt.Sprintf("bond moving predicts a continuous transition for every q, but the two-dimensional Potts model with q = %g > 4 has a first-order transition (R. J. Baxter, J. Phys. C 6, L445, 1973): the critical point and exponents found here are artefacts of the approximation", bm.m.q))
	}
	return out
}
