package decimation

import (
	"fmt"
	"math"
	"sync"

	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
)

// Chain is the exact decimation of the one-dimensional chain by a factor b:
// the transfer matrix of b consecutive bonds is W^b = e^c W(x′). It
// implements flow.Map, flow.Jacobianer (analytic), flow.Domainer,
// flow.Closer and flow.Symmetrist.
//
// A Chain is safe for concurrent use. Step allocates nothing: small models
// (q ≤ 4) work in arrays on the stack, larger ones in workspaces taken from
// a sync.Pool.
type Chain struct {
	m    *Model
	b    int
	nc   int       // couplings
	pool sync.Pool // *work without derivative buffers
	grad sync.Pool // *work with derivative buffers, for JacobianTo
}

var (
	_ flow.Map        = (*Chain)(nil)
	_ flow.Jacobianer = (*Chain)(nil)
	_ flow.Domainer   = (*Chain)(nil)
	_ flow.Closer     = (*Chain)(nil)
	_ flow.Symmetrist = (*Chain)(nil)
)

// NewChain returns the chain decimation of m by b ≥ 2.
func NewChain(m *Model, b int) (*Chain, error) {
	if m == nil {
		return nil, fmt.Errorf("decimation: NewChain: nil model")
	}
	if b < 2 {
		return nil, &ParamError{Name: "b", Value: fmt.Sprint(b), Reason: "need an integer b >= 2"}
	}
	c := &Chain{m: m, b: b, nc: len(m.couplings)}
	c.pool.New = func() any { return c.newWork(false) }
	c.grad.New = func() any { return c.newWork(true) }
	return c, nil
}

// Model returns the model the chain decimates.
func (c *Chain) Model() *Model { return c.m }

// Couplings returns the model's couplings.
func (c *Chain) Couplings() []flow.Coupling { return c.m.Couplings() }

// Rescale returns b.
func (c *Chain) Rescale() float64 { return float64(c.b) }

// Dimension returns 1.
func (c *Chain) Dimension() float64 { return 1 }

// Symmetry returns the model's symmetry group.
func (c *Chain) Symmetry() string { return c.m.symmetry }

// work holds the buffers of one step: three edge vectors and, for the
// Jacobian, three sets of nc derivative vectors.
type work struct {
	base, res, tmp    []float64
	dbase, dres, dtmp []float64
	x                 []float64
}

func (c *Chain) newWork(grad bool) *work {
	sz := c.m.size
	w := &work{
		base: make([]float64, sz), res: make([]float64, sz), tmp: make([]float64, sz),
		x: make([]float64, c.nc),
	}
	if grad {
		w.dbase = make([]float64, c.nc*sz)
		w.dres = make([]float64, c.nc*sz)
		w.dtmp = make([]float64, c.nc*sz)
	}
	return w
}

// smallSize is the largest edge vector Step keeps on the stack.
const smallSize = 16

// power writes ln W(x)^b into one of base, res and tmp and returns it, by
// binary powering in log space.
func (c *Chain) power(x, base, res, tmp []float64) []float64 {
	m := c.m
	m.Edge(base, x)
	have := false
	for e := c.b; ; {
		if e&1 == 1 {
			if !have {
				copy(res, base)
				have = true
			} else {
				m.Mul(tmp, res, base)
				res, tmp = tmp, res
			}
		}
		e >>= 1
		if e == 0 {
			break
		}
		m.Mul(tmp, base, base)
		base, tmp = tmp, base
	}
	return res
}

// Step writes x′ into dst and returns g = c/b, the constant per site of the
// chain before the step: W(x)^b = e^c W(x′) and Z_N = Tr W^N give
// ln Z_N(x) = (N/b) c + ln Z_{N/b}(x′). Outside the domain, or when the
// step overflows, dst is NaN and so is g.
func (c *Chain) Step(dst, x []float64) (g float64) {
	c.m.checkLen("Step dst", dst, c.nc)
	c.m.checkLen("Step x", x, c.nc)
	sz := c.m.size
	if sz <= smallSize {
		var buf [3 * smallSize]float64
		return c.finish(dst, c.power(x, buf[:sz], buf[sz:2*sz], buf[2*sz:3*sz]))
	}
	w := c.pool.Get().(*work)
	g = c.finish(dst, c.power(x, w.base, w.res, w.tmp))
	c.pool.Put(w)
	return g
}

func (c *Chain) finish(dst, lw []float64) float64 {
	cst := c.m.Project(dst, lw)
	ok := !math.IsNaN(cst) && !math.IsInf(cst, 0)
	for _, v := range dst {
		ok = ok && !math.IsNaN(v) && !math.IsInf(v, 0)
	}
	if !ok {
		for i := range dst {
			dst[i] = math.NaN()
		}
		return math.NaN()
	}
	return cst / float64(c.b)
}

// Closure returns the closure error of one step at x: the largest
// deviation of an entry of ln W(x)^b from its projection on the basis.
// It is 0 (to rounding) whenever the basis spans every interaction the
// model's symmetry allows, and NaN outside the domain.
func (c *Chain) Closure(x []float64) float64 {
	c.m.checkLen("Closure x", x, c.nc)
	w := c.pool.Get().(*work)
	defer c.pool.Put(w)
	return c.m.Residual(c.power(x, w.base, w.res, w.tmp))
}

// Domain returns nil when x is inside the chain's domain: the model's
// domain, and a step that yields a positive, finite W^b (in the Potts
// algebra with q < 2 an antiferromagnetic W^b can have a non-positive
// entry, which no Potts coupling describes).
func (c *Chain) Domain(x []float64) error {
	if err := c.m.Domain(x); err != nil {
		return err
	}
	w := c.pool.Get().(*work)
	defer c.pool.Put(w)
	lw := c.power(x, w.base, w.res, w.tmp)
	for _, v := range lw {
		if math.IsNaN(v) {
			if c.m.algebra {
				return &DomainError{Reason: fmt.Sprintf("W^%d has a non-positive entry (q = %g < 2 with an antiferromagnetic K): no real Potts coupling describes it", c.b, c.m.q)}
			}
			return &DomainError{Reason: fmt.Sprintf("W^%d is not finite (the couplings are too large)", c.b)}
		}
		if math.IsInf(v, 0) {
			return &DomainError{Reason: fmt.Sprintf("W^%d overflows (the couplings are too large)", c.b)}
		}
	}
	if g := c.Step(w.x, x); math.IsNaN(g) {
		return &DomainError{Reason: "the renormalized couplings are not finite (the couplings are too large)"}
	}
	return nil
}

// JacobianTo writes the analytic Jacobian ∂x′_i/∂x_j into dst, resizing
// an empty dst to n × n (n couplings); a non-empty dst of another shape is
// a programming error. The derivatives ∂ ln W/∂x_j = φ_j are carried through
// the log-space powering by Model.MulGrad and projected like the entries.
// Outside the domain every entry is NaN.
func (c *Chain) JacobianTo(dst *mat.Dense, x []float64) {
	n := c.nc
	c.m.checkLen("JacobianTo x", x, n)
	if dst.IsEmpty() {
		dst.ReuseAs(n, n)
	} else if r, cc := dst.Dims(); r != n || cc != n {
		panic(fmt.Sprintf("decimation: JacobianTo dst is %d x %d, want %d x %d", r, cc, n, n))
	}
	m := c.m
	sz := m.size
	w := c.grad.Get().(*work)
	defer c.grad.Put(w)
	base, res, tmp := w.base, w.res, w.tmp
	dbase, dres, dtmp := w.dbase, w.dres, w.dtmp
	m.Edge(base, x)
	copy(dbase, m.basis) // ∂ ln W/∂x_j = φ_j, rows j of the basis
	have := false
	for e := c.b; ; {
		if e&1 == 1 {
			if !have {
				copy(res, base)
				copy(dres, dbase)
				have = true
			} else {
				m.MulGrad(tmp, dtmp, res, dres, base, dbase)
				res, tmp = tmp, res
				dres, dtmp = dtmp, dres
			}
		}
		e >>= 1
		if e == 0 {
			break
		}
		m.MulGrad(tmp, dtmp, base, dbase, base, dbase)
		base, tmp = tmp, base
		dbase, dtmp = dtmp, dbase
	}
	col := w.x
	for j := 0; j < n; j++ {
		m.Project(col, dres[j*sz:(j+1)*sz])
		for i, v := range col {
			dst.Set(i, j, v)
		}
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if v := dst.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
				c.fillNaN(dst)
				return
			}
		}
	}
}

func (c *Chain) fillNaN(dst *mat.Dense) {
	r, cc := dst.Dims()
	for i := 0; i < r; i++ {
		for j := 0; j < cc; j++ {
			dst.Set(i, j, math.NaN())
		}
	}
}
