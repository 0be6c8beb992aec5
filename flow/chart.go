package flow

import (
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"
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
func charts(m Map, maxInf int) []*chart {
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
	var rec func(i, used int)
	rec = func(i, used int) {
		if i == len(cs) {
			out = append(out, newChart(m, inf))
			return
		}
		for _, o := range opts[i] {
			if o != 0 && used >= maxInf {
				continue
			}
			inf[i] = o
			u := used
			if o != 0 {
				u++
			}
			rec(i+1, u)
		}
		inf[i] = 0
	}
	rec(0, 0)
	return out
}

// maxInfinite is how many couplings a chart may put at infinity at once:
// all of them for small maps, three from five couplings, two from seven
// (the charts grow as 3^n; corners of many infinite couplings are rarely
// reached analytically).
func maxInfinite(n int) int {
	switch {
	case n <= 4:
		return n
	case n <= 6:
		return 3
	}
	return 2
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
			if i == c.pivot || s == 0 {
				continue
			}
			if c.inf[i] != 0 && y[i] <= 0 {
				// The sheared combination itself is at its infinity: the
				// coupling is infinite with the combination's sign.
				x[i] = math.Inf(c.inf[i])
				continue
			}
			x[i] += s * xp
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

// evalFast evaluates the map in chart coordinates with face coordinates at
// 0 replaced by limitEps (limitEpsSafe if that overflows): one evaluation,
// exact to O(limitEps) where the map is analytic in u. Newton iterations use
// it; the extrapolated [chart.eval] checks the limit at the end.
func (c *chart) evalFast(dst, y []float64) {
	zero := false
	for _, i := range c.face {
		if y[i] <= 0 {
			zero = true
			break
		}
	}
	if !zero {
		c.direct(dst, y)
		return
	}
	yy := make([]float64, len(y))
	for _, eps := range []float64{limitEps, limitEpsSafe} {
		copy(yy, y)
		for _, i := range c.face {
			if yy[i] <= 0 {
				yy[i] = eps
			}
		}
		c.direct(dst, yy)
		finite := true
		for _, v := range dst {
			finite = finite && !math.IsNaN(v) && !math.IsInf(v, 0)
		}
		if finite {
			return
		}
	}
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
	// slope returns the asymptotic slope A(v) = (R(T2 v) − R(T1 v))/(T2 − T1).
	slope := func(dst, v []float64) bool {
		for i := range x {
			x[i] = rayT1 * v[i]
		}
		m.Step(r1, x)
		for i := range x {
			x[i] = rayT2 * v[i]
		}
		m.Step(r2, x)
		for i := range dst {
			dst[i] = (r2[i] - r1[i]) / (rayT2 - rayT1)
			if math.IsNaN(dst[i]) || math.IsInf(dst[i], 0) {
				return false
			}
		}
		return true
	}
	for p, c := range cs {
		if !c.Symmetric {
			continue
		}
		var others []int
		for j, cj := range cs {
			if j != p && cj.Symmetric {
				others = append(others, j)
			}
		}
		k := len(others)
		for _, sign := range []int{1, -1} {
			if (sign > 0 && c.Plus == nil) || (sign < 0 && c.Minus == nil) {
				continue
			}
			// A ray v = sign·e_p + Σ w_j e_j is kept when the slope is
			// parallel to it: r(w)_j = A_j/|A_p| − w_j = 0 with A_p of the
			// ray's sign. Solve by damped Newton from a grid of w, so that
			// saddle rays (coexistence at zero temperature) are found as
			// well as attracting ones.
			a := make([]float64, n)
			res := func(dst, w []float64) bool {
				v := make([]float64, n)
				v[p] = float64(sign)
				for q, j := range others {
					v[j] = w[q]
				}
				if !slope(a, v) || !(a[p]*float64(sign) > 1e-9) {
					return false
				}
				for q, j := range others {
					dst[q] = a[j]/math.Abs(a[p]) - w[q]
				}
				return true
			}
			keptFamily := false
			for _, w0 := range rayStarts(k) {
				w, ok, isolated := solveRay(res, w0)
				if !ok {
					continue
				}
				v := make([]float64, n)
				v[p] = float64(sign)
				shear := make([]float64, n)
				axis := true
				for q, j := range others {
					shear[j] = niceRatio(w[q] * float64(sign))
					v[j] = w[q]
					axis = axis && shear[j] == 0
				}
				if axis {
					continue
				}
				dup := false
				for _, u := range seen {
					same := true
					for i := range u {
						same = same && math.Abs(u[i]-v[i]) < 1e-6
					}
					dup = dup || same
				}
				if dup {
					continue
				}
				if !isolated {
					// A continuum of kept rays: one of them stands for all.
					if keptFamily {
						continue
					}
					keptFamily = true
				}
				seen = append(seen, v)
				out = append(out, rayCharts(m, p, sign, shear)...)
			}
		}
	}
	return out
}

// rayStarts returns start points for the ray search in k dimensions.
func rayStarts(k int) [][]float64 {
	vals := []float64{0, 1, -1, 2, -2, 4, -4, 8, -8}
	if k > 2 {
		vals = []float64{0, 1, -1, 3, -3}
	}
	if k > 3 {
		vals = []float64{0, 1, -1}
	}
	out := [][]float64{make([]float64, k)}
	idx := make([]int, k)
	for k > 0 {
		a := 0
		for a < k {
			idx[a]++
			if idx[a] < len(vals) {
				break
			}
			idx[a] = 0
			a++
		}
		if a == k {
			break
		}
		w := make([]float64, k)
		for q := range w {
			w[q] = vals[idx[q]]
		}
		out = append(out, w)
	}
	return out
}

// solveRay runs damped Newton on res(w) = 0 and reports the root, whether
// it converged, and whether the root is isolated (a regular Jacobian).
func solveRay(res func(dst, w []float64) bool, w0 []float64) ([]float64, bool, bool) {
	k := len(w0)
	w := append([]float64(nil), w0...)
	r := make([]float64, k)
	if k == 0 {
		return w, res(r, w), true
	}
	if !res(r, w) {
		return nil, false, false
	}
	jac := mat.NewDense(k, k, nil)
	rp := make([]float64, k)
	wt := make([]float64, k)
	norm := func(v []float64) float64 { return maxAbs(v) }
	for it := 0; it < 40; it++ {
		if norm(r) < 1e-11 {
			break
		}
		for q := 0; q < k; q++ {
			h := 1e-6 * (1 + math.Abs(w[q]))
			copy(wt, w)
			wt[q] += h
			if !res(rp, wt) {
				return nil, false, false
			}
			for i := 0; i < k; i++ {
				jac.Set(i, q, (rp[i]-r[i])/h)
			}
		}
		var svd mat.SVD
		if !finiteMatrix(jac) || !svd.Factorize(jac, mat.SVDThin) {
			return nil, false, false
		}
		step := mat.NewVecDense(k, nil)
		rv := mat.NewVecDense(k, r)
		vals := svd.Values(nil)
		var u, v mat.Dense
		svd.UTo(&u)
		svd.VTo(&v)
		for q := range vals {
			if vals[q] > 1e-9*math.Max(1, vals[0]) {
				step.AddScaledVec(step, -mat.Dot(u.ColView(q), rv)/vals[q], v.ColView(q))
			}
		}
		alpha := 1.0
		moved := false
		for ls := 0; ls < 20; ls++ {
			for q := range wt {
				wt[q] = w[q] + alpha*step.AtVec(q)
			}
			if res(rp, wt) && norm(rp) < norm(r) {
				copy(w, wt)
				copy(r, rp)
				moved = true
				break
			}
			alpha /= 2
		}
		if !moved || maxAbs(w) > 1e3 {
			break
		}
	}
	if norm(r) > 1e-9 {
		return nil, false, false
	}
	// Isolated if the Jacobian of res is regular at the root.
	for q := 0; q < k; q++ {
		h := 1e-6 * (1 + math.Abs(w[q]))
		copy(wt, w)
		wt[q] += h
		if !res(rp, wt) {
			return w, true, false
		}
		for i := 0; i < k; i++ {
			jac.Set(i, q, (rp[i]-r[i])/h)
		}
	}
	var svd mat.SVD
	if !finiteMatrix(jac) || !svd.Factorize(jac, mat.SVDThin) {
		return w, true, false
	}
	vals := svd.Values(nil)
	return w, true, vals[len(vals)-1] > 1e-6*math.Max(1, vals[0])
}

// rayCharts returns the ray chart and its faces: each transverse coupling
// finite, or (sheared) at an infinity for which it declares a coordinate,
// the ray chart first.
func rayCharts(m Map, p, sign int, shear []float64) []*chart {
	cs := m.Couplings()
	var out []*chart
	inf := make([]int, len(cs))
	inf[p] = sign
	limit := maxInfinite(len(cs)) - 1
	var rec func(i int)
	rec = func(i int) {
		if i == len(cs) {
			faces := 0
			for j, v := range inf {
				if j != p && v != 0 {
					faces++
				}
			}
			if faces > limit {
				return
			}
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
		// A transverse coupling may sit at an infinity of its own only in
		// the direction the ray already sends it (it then runs off faster
		// than the ray); the other way, the combination's infinity says
		// nothing about the coupling itself (∞ − ∞).
		along := 0
		if shear[i] != 0 {
			along = sign * int(math.Copysign(1, shear[i]))
		}
		if cs[i].Symmetric && cs[i].Plus != nil && along >= 0 {
			inf[i] = 1
			rec(i + 1)
		}
		if cs[i].Symmetric && cs[i].Minus != nil && along <= 0 {
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
