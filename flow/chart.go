package flow

import (
	"math"
	"strconv"
	"strings"
)

// A chart is a coordinate system on coupling space in which some couplings
// sit at one of their infinities and are described by their compactified
// coordinate u (with u = 0 at the infinity), the others by their value.
type chart struct {
	m    Map
	cs   []Coupling
	inf  []int // per coupling: 0 finite, +1 at +∞, −1 at −∞ (face coordinates)
	comp []*Compact
	face []int // indices with inf ≠ 0
	free []int // indices with inf == 0
	// A ray chart has one face coordinate, the pivot, and describes the
	// other couplings relative to it: xᵢ = yᵢ + shear[i]·x_pivot, so a
	// fixed point at infinity along a direction of coupling space (not an
	// axis) has finite coordinates yᵢ. nil for an ordinary chart.
	shear []float64
	pivot int
}

// infinities returns, per coupling, the infinity the chart's face sends it
// to: the face coordinates' own, and on a ray chart the sheared couplings
// too.
func (c *chart) infinities() []int {
	out := append([]int(nil), c.inf...)
	if c.shear != nil {
		for i, s := range c.shear {
			if i != c.pivot && s != 0 && out[i] == 0 {
				out[i] = c.inf[c.pivot] * int(math.Copysign(1, s))
			}
		}
	}
	return out
}

// coordName names the chart coordinate of coupling i.
func (c *chart) coordName(i int) string {
	sheared := c.shear != nil && i != c.pivot && c.shear[i] != 0
	if c.inf[i] != 0 {
		if sheared {
			name := c.comp[i].Name
			if strings.Contains(name, "("+c.cs[i].Name+")") {
				return strings.Replace(name, "("+c.cs[i].Name+")", "("+c.shearedName(i)+")", 1)
			}
			return strings.Replace(name, c.cs[i].Name, "("+c.shearedName(i)+")", 1)
		}
		return c.comp[i].Name
	}
	if !sheared {
		return c.cs[i].Name
	}
	return c.shearedName(i)
}

// shearedName names the sheared coupling xᵢ − shearᵢ·x_pivot, e.g. "D+2*J".
func (c *chart) shearedName(i int) string {
	coef := -c.shear[i]
	sign := "+"
	if coef < 0 {
		sign, coef = "-", -coef
	}
	f := ""
	if coef != 1 {
		f = trimFloat(coef)
		if len(f) > 8 {
			f = strconv.FormatFloat(coef, 'g', 6, 64)
		}
		f += "*"
	}
	return c.cs[i].Name + sign + f + c.cs[c.pivot].Name
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
	if c.shear != nil {
		xp := x[c.pivot]
		for i, s := range c.shear {
			if i != c.pivot && s != 0 {
				x[i] += s * xp
			}
		}
	}
}

// toY converts couplings to chart coordinates.
func (c *chart) toY(y, x []float64) {
	xp := 0.0
	if c.shear != nil {
		xp = x[c.pivot]
	}
	for i := range x {
		xi := x[i]
		if c.shear != nil && i != c.pivot {
			xi -= c.shear[i] * xp
		}
		if c.inf[i] == 0 {
			y[i] = xi
			continue
		}
		y[i] = c.comp[i].U(xi)
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

// Rays: fixed points at infinity off the coordinate axes.
//
// At zero temperature a map becomes asymptotically piecewise linear in
// the couplings (the Boltzmann weights are dominated by their largest
// terms): R(t v) ≈ μ t v′ + O(1) as t → ∞. A direction v with v′ = v is a
// ray the flow keeps; a fixed point "at infinity along v" has finite
// coordinates transverse to it. rays finds such directions by power
// iteration on the asymptotic slope, from each coupling's declared
// infinity, and returns them as ray charts (sheared on the probing
// coupling). Axis directions are left to the ordinary charts.

const (
	rayT1 = 40.0 // probing distances along a direction, in coupling units
	rayT2 = 80.0
)

func rays(m Map) []*chart {
	cs := m.Couplings()
	n := len(cs)
	var out []*chart
	var seen [][]float64
	r1 := make([]float64, n)
	r2 := make([]float64, n)
	x := make([]float64, n)
	for p, c := range cs {
		for _, sign := range []int{1, -1} {
			if (sign > 0 && c.Plus == nil) || (sign < 0 && c.Minus == nil) {
				continue
			}
			v := make([]float64, n)
			v[p] = float64(sign)
			ok := false
			for it := 0; it < 40; it++ {
				for i := range x {
					x[i] = rayT1 * v[i]
				}
				m.Step(r1, x)
				for i := range x {
					x[i] = rayT2 * v[i]
				}
				m.Step(r2, x)
				w := make([]float64, n)
				var big float64
				for i := range w {
					w[i] = (r2[i] - r1[i]) / (rayT2 - rayT1)
					big = math.Max(big, math.Abs(w[i]))
				}
				if !(big > 1e-6) || math.IsNaN(big) || math.IsInf(big, 0) {
					break
				}
				// Normalise on the pivot, keeping the direction's sign.
				if !(w[p]*float64(sign) > 0.25*big) {
					break
				}
				scale := math.Abs(w[p])
				var diff float64
				for i := range w {
					w[i] /= scale
					diff = math.Max(diff, math.Abs(w[i]-v[i]))
				}
				v = w
				if diff < 1e-10 {
					ok = true
					break
				}
			}
			if !ok {
				continue
			}
			shear := make([]float64, n)
			axis := true
			for i := range v {
				if i == p {
					continue
				}
				shear[i] = niceRatio(v[i] / v[p])
				axis = axis && shear[i] == 0
			}
			if axis {
				continue
			}
			dup := false
			for _, u := range seen {
				same := true
				for i := range u {
					same = same && math.Abs(u[i]-v[i]/math.Abs(v[p])) < 1e-6
				}
				dup = dup || same
			}
			if dup {
				continue
			}
			seen = append(seen, v)
			out = append(out, rayCharts(m, p, sign, shear)...)
		}
	}
	return out
}

// rayCharts returns the ray chart and its faces: each transverse coupling
// finite, or (sheared) at an infinity for which it declares a coordinate,
// the ray chart first.
func rayCharts(m Map, p, sign int, shear []float64) []*chart {
	cs := m.Couplings()
	var out []*chart
	inf := make([]int, len(cs))
	inf[p] = sign
	var rec func(i int)
	rec = func(i int) {
		if i == len(cs) {
			c := newChart(m, inf)
			c.shear = append([]float64(nil), shear...)
			c.pivot = p
			// Off the axes, the search stays in the symmetric subspace:
			// at such nested zero-temperature limits, symmetry-breaking
			// couplings often become redundant with each other (a field
			// and an odd pair term act alike on s = ±1), and their
			// continua say nothing new. They are still linearized.
			var free []int
			for _, j := range c.free {
				if cs[j].Symmetric {
					free = append(free, j)
				}
			}
			c.free = free
			out = append(out, c)
			return
		}
		if i == p {
			rec(i + 1)
			return
		}
		inf[i] = 0
		rec(i + 1)
		if cs[i].Symmetric && cs[i].Plus != nil {
			inf[i] = 1
			rec(i + 1)
		}
		if cs[i].Symmetric && cs[i].Minus != nil {
			inf[i] = -1
			rec(i + 1)
		}
		inf[i] = 0
	}
	rec(0)
	return out
}

// niceRatio rounds r to a fraction with a denominator up to 12 when it is
// within 1e-7 of one, and to 0 below 1e-9.
func niceRatio(r float64) float64 {
	if math.Abs(r) < 1e-9 {
		return 0
	}
	for d := 1.0; d <= 12; d++ {
		k := math.Round(r * d)
		if math.Abs(r-k/d) < 1e-7 {
			return k / d
		}
	}
	return r
}
