package flow

import (
	"math"
	"strings"
)

// A chart is a coordinate system on coupling space in which some couplings
// sit at one of their infinities and are described by their compactified
// coordinate u (with u = 0 at the infinity), the others by their value.
type chart struct {
	m    Map
	cs   []Coupling
	inf  []int // per coupling: 0 finite, +1 at +∞, −1 at −∞
	comp []*Compact
	face []int // indices with inf ≠ 0
	free []int // indices with inf == 0
}

func newChart(m Map, inf []int) *chart {
	cs := m.Couplings()
	c := &chart{m: m, cs: cs, inf: append([]int(nil), inf...), comp: make([]*Compact, len(cs))}
	for i, s := range inf {
		switch {
		case s > 0:
			c.comp[i] = cs[i].Plus
		case s < 0:
			c.comp[i] = cs[i].Minus
		}
		if s != 0 {
			c.face = append(c.face, i)
		} else {
			c.free = append(c.free, i)
		}
	}
	return c
}

// charts lists every chart of m: each coupling finite or at an infinity for
// which it declares a compactified coordinate. The all-finite chart is first.
func charts(m Map) []*chart {
	cs := m.Couplings()
	opts := make([][]int, len(cs))
	for i, c := range cs {
		opts[i] = []int{0}
		if c.Plus != nil {
			opts[i] = append(opts[i], 1)
		}
		if c.Minus != nil {
			opts[i] = append(opts[i], -1)
		}
	}
	var out []*chart
	inf := make([]int, len(cs))
	var rec func(i int)
	rec = func(i int) {
		if i == len(cs) {
			out = append(out, newChart(m, inf))
			return
		}
		for _, o := range opts[i] {
			inf[i] = o
			rec(i + 1)
		}
	}
	rec(0)
	return out
}

// name describes the chart, e.g. "K=+inf".
func (c *chart) name() string {
	var parts []string
	for _, i := range c.face {
		s := "+inf"
		if c.inf[i] < 0 {
			s = "-inf"
		}
		parts = append(parts, c.cs[i].Name+"="+s)
	}
	if len(parts) == 0 {
		return "finite"
	}
	return strings.Join(parts, ",")
}

// toX converts chart coordinates to couplings; a face coordinate at u ≤ 0
// gives ±Inf.
func (c *chart) toX(x, y []float64) {
	for i := range y {
		if c.inf[i] == 0 {
			x[i] = y[i]
			continue
		}
		if y[i] <= 0 {
			x[i] = math.Inf(c.inf[i])
			continue
		}
		x[i] = c.comp[i].X(y[i])
	}
}

// toY converts couplings to chart coordinates.
func (c *chart) toY(y, x []float64) {
	for i := range x {
		if c.inf[i] == 0 {
			y[i] = x[i]
			continue
		}
		y[i] = c.comp[i].U(x[i])
	}
}

// direct evaluates the map in chart coordinates at a point with every face
// coordinate > 0.
func (c *chart) direct(dst, y []float64) {
	n := len(y)
	x := make([]float64, n)
	xp := make([]float64, n)
	c.toX(x, y)
	c.m.Step(xp, x)
	c.toY(dst, xp)
}

// limitEps is the smallest compactified coordinate used to approach u = 0;
// limitEpsSafe is the fallback for maps that overflow that far out.
const (
	limitEps     = 1e-40
	limitEpsSafe = 1e-12
)

// eval evaluates the map in chart coordinates. Face coordinates equal to 0
// are approached from u > 0 and extrapolated to the limit (Richardson, the
// error series assumed to be in powers of u); the returned value is an
// estimate of the extrapolation error (0 when no limit was needed).
func (c *chart) eval(dst, y []float64) float64 {
	var zero []int
	for _, i := range c.face {
		if y[i] <= 0 {
			zero = append(zero, i)
		}
	}
	if len(zero) == 0 {
		c.direct(dst, y)
		return 0
	}
	n := len(y)
	yy := append([]float64(nil), y...)
	var f [3][]float64
	for _, eps := range []float64{limitEps, limitEpsSafe} {
		finite := true
		for k := 0; k < 3; k++ {
			for _, i := range zero {
				yy[i] = eps * float64(int(1)<<k)
			}
			f[k] = make([]float64, n)
			c.direct(f[k], yy)
			for _, v := range f[k] {
				finite = finite && !math.IsNaN(v) && !math.IsInf(v, 0)
			}
		}
		if finite {
			break
		}
	}
	var errMax float64
	for i := 0; i < n; i++ {
		a := 2*f[0][i] - f[1][i]
		b := 2*f[1][i] - f[2][i]
		dst[i] = a
		e := math.Abs(a - b)
		if math.IsNaN(e) {
			e = math.Inf(1)
		}
		errMax = math.Max(errMax, e)
	}
	return errMax
}

// faceRatio returns max |u′ᵢ| / uᵢ over the face coordinates of y at 0,
// evaluated at uᵢ = ε: bounded (|λ| of the face direction) when the map
// keeps the face with a finite derivative, huge when it only keeps it in the
// limit non-analytically (u′ ~ √u at a corner where limits do not commute).
func (c *chart) faceRatio(y []float64) float64 {
	n := len(y)
	yy := append([]float64(nil), y...)
	var zero []int
	for _, i := range c.face {
		if y[i] <= 0 {
			zero = append(zero, i)
		}
	}
	if len(zero) == 0 {
		return 0
	}
	f := make([]float64, n)
	var r float64
	for _, eps := range []float64{limitEps, limitEpsSafe} {
		for _, i := range zero {
			yy[i] = eps
		}
		c.direct(f, yy)
		r = 0
		finite := true
		for _, i := range zero {
			v := math.Abs(f[i]) / eps
			finite = finite && !math.IsNaN(v)
			r = math.Max(r, v)
		}
		if finite {
			return r
		}
	}
	return math.Inf(1)
}

// pathIndependent reports whether the limit at a point with two or more
// face coordinates at 0 is the same when they approach 0 at different
// rates: at a corner where the limits do not commute (K → ∞ and D → ∞ with
// K − D undetermined), the map's value depends on the path, and no fixed
// point can be claimed there.
func (c *chart) pathIndependent(y []float64) bool {
	var zero []int
	for _, i := range c.face {
		if y[i] <= 0 {
			zero = append(zero, i)
		}
	}
	if len(zero) < 2 {
		return true
	}
	n := len(y)
	fa := make([]float64, n)
	fb := make([]float64, n)
	ya := append([]float64(nil), y...)
	yb := append([]float64(nil), y...)
	for k, i := range zero {
		ya[i] = limitEps
		// Rates differing by 10^10 between neighbouring coordinates.
		yb[i] = limitEps * math.Pow(1e10, float64(k%2))
		if k%2 == 0 && len(zero) > 2 {
			yb[i] = limitEps * math.Pow(1e5, float64(k%3))
		}
	}
	c.direct(fa, ya)
	c.direct(fb, yb)
	for i := 0; i < n; i++ {
		if c.inf[i] != 0 && y[i] <= 0 {
			// Face coordinates: both must stay at the face scale.
			if math.Abs(fa[i]) > maxFaceRatio*ya[i] || math.Abs(fb[i]) > maxFaceRatio*yb[i] {
				return false
			}
			continue
		}
		if !(math.Abs(fa[i]-fb[i]) <= 1e-6*(1+math.Abs(fa[i]))) {
			return false
		}
	}
	return true
}
