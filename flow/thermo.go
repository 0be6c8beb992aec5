package flow

import (
	"fmt"
	"math"
	"slices"
)

// FreeEnergyResult is ln Z/N at a point with how the sum ended.
type FreeEnergyResult struct {
	Value float64 // ln Z/N per site (per bond for a map whose PerBond is true)
	Err   float64 // bound on the truncation error
	Steps int
	Flag  string // non-empty when the sum is unreliable (and Value NaN)
}

// FreeEnergy sums ln Z/N = Σ_{n≥0} b^{−dn} g(xₙ) along the flow from x.
// The sum stops when the remaining terms are below 1e-17 of the total: once
// the flow has settled on a finite fixed point the tail is summed in closed
// form, g(x*) b^{−dn}/(1 − b^{−d}); otherwise terms are added until they
// fall below the bound (a flow running to infinite coupling has g growing
// at most like b^{(d−1)n}, so the terms fall like b^{−n}). A step that
// fails, or terms that stop falling, give NaN with a flag.
func FreeEnergy(m Map, x []float64) FreeEnergyResult {
	b, d := m.Rescale(), m.Dimension()
	q := math.Pow(b, -d)
	n := len(x)
	cur := append([]float64(nil), x...)
	next := make([]float64, n)
	var sum, comp float64 // Kahan summation
	w := 1.0
	add := func(v float64) {
		y := v - comp
		t := sum + y
		comp = (t - sum) - y
		sum = t
	}
	prev := math.Inf(1)
	// The remainder b^{-d n} Remainder(x_n) (see Remainderer): it settles
	// to a constant on the way to an ordered sink and decays elsewhere; the
	// sum stops only once it has done either.
	rm, hasRem := m.(Remainderer)
	// Symmetry-breaking one-body couplings: their weighted size
	// b^{-d n}|h_n| must not grow along the flow, or the field's share of
	// the free energy diverges (a scheme whose field eigenvalue at the
	// ordered sink exceeds b^d).
	var fields []int
	for i, c := range m.Couplings() {
		if c.Role.OneBody() && !c.Symmetric {
			fields = append(fields, i)
		}
	}
	growing, lastField := 0, 0.0
	lastRem := math.NaN()
	remainder := func(x []float64, w float64) (r float64, done bool) {
		if !hasRem {
			return 0, true
		}
		r = w * rm.Remainder(x)
		done = math.Abs(r) <= 1e-18*math.Abs(sum) || math.Abs(r-lastRem) <= 1e-15*math.Abs(r)
		lastRem = r
		return r, done
	}
	for k := 0; k < 2000; k++ {
		g := m.Step(next, cur)
		if math.IsNaN(g) || math.IsInf(g, 0) {
			return FreeEnergyResult{Value: math.NaN(), Steps: k, Flag: "the constant g is not available or not finite along the flow"}
		}
		bad := false
		var moved float64
		for i := range next {
			bad = bad || math.IsNaN(next[i]) || math.IsInf(next[i], 0)
			moved = math.Max(moved, math.Abs(next[i]-cur[i]))
		}
		term := w * g
		add(term)
		if bad {
			return FreeEnergyResult{Value: math.NaN(), Steps: k, Flag: "the flow left the map's domain"}
		}
		if len(fields) > 0 && !hasRem {
			a := 0.0
			for _, i := range fields {
				a = math.Max(a, w*q*math.Abs(next[i]))
			}
			if a > 1.01*lastField && a > 1e-6*(1+math.Abs(sum)) {
				growing++
			} else {
				growing = 0
			}
			lastField = a
			if growing >= 12 {
				return FreeEnergyResult{Value: math.NaN(), Steps: k, Flag: flagFieldGrows}
			}
		}
		r, remDone := remainder(next, w*q)
		if moved <= 1e-15*(1+maxAbs(cur)) {
			// Settled on a fixed point: the rest is a geometric series.
			tail := w * q * g / (1 - q)
			add(tail)
			add(r)
			return FreeEnergyResult{Value: sum, Err: 1e-16 * math.Abs(sum), Steps: k + 1}
		}
		if math.Abs(term) < 1e-18*math.Abs(sum) && math.Abs(term) <= prev && remDone {
			add(r)
			return FreeEnergyResult{Value: sum, Err: 2 * math.Abs(term), Steps: k + 1}
		}
		prev = math.Abs(term)
		w *= q
		cur, next = next, cur
		if w == 0 {
			add(r)
			return FreeEnergyResult{Value: sum, Err: 0, Steps: k + 1}
		}
	}
	return FreeEnergyResult{Value: math.NaN(), Steps: 2000, Flag: "the sum did not converge in 2000 steps"}
}

const flagFieldGrows = "the field grows faster than b^d along the flow (the scheme's field eigenvalue at the ordered sink exceeds b^d), so its share of the free energy diverges: responses to the field are not available here"

// Derivatives holds ln Z/N and its derivatives in a set of couplings.
type Derivatives struct {
	F     float64
	Grad  []float64
	Hess  [][]float64
	Third [][][]float64 // nil unless asked for
	Err   float64       // estimate of the error of the second derivatives
	Err3  float64       // estimate of the error of the third derivatives
	Flag  string
}

// FreeEnergyDerivatives returns ln Z/N at x and its derivatives to second
// (order 2) or third (order 3) order in the couplings idx. A map that can
// push jets (a Jetter) gives them exactly, to rounding, for up to three
// couplings (FreeEnergyJet); where that sum of derivatives diverges (a
// response the scheme makes infinite, or a phase boundary) the derivatives
// are NaN with an infinite error estimate, which the caller flags. Other
// maps, more couplings, or a jet sum that fails otherwise fall back on
// central differences of the summed free energy (NumericalDerivatives).
func FreeEnergyDerivatives(m Map, x []float64, idx []int, order int) Derivatives {
	if _, ok := m.(Jetter); ok && len(idx) >= 1 && len(idx) <= 3 && order <= 3 {
		d := FreeEnergyJet(m, x, idx, order)
		if d.Flag == "" {
			// The value from the plain sum, which stops on its own
			// terms (the jet sum stops on the slowest coefficient).
			if f := FreeEnergy(m, x); f.Flag == "" {
				d.F = f.Value
			}
			return d
		}
		if d.Flag == flagDiverged {
			f := FreeEnergy(m, x)
			d.F, d.Flag = f.Value, f.Flag
			d.Err, d.Err3 = math.Inf(1), math.Inf(1)
			nanFill(d)
			return d
		}
	}
	return NumericalDerivatives(m, x, idx, order)
}

// nanFill sets every derivative in d to NaN.
func nanFill(d Derivatives) {
	for a := range d.Grad {
		d.Grad[a] = math.NaN()
		for b := range d.Hess[a] {
			d.Hess[a][b] = math.NaN()
		}
		if d.Third != nil {
			for b := range d.Third[a] {
				for c := range d.Third[a][b] {
					d.Third[a][b][c] = math.NaN()
				}
			}
		}
	}
}

// NumericalDerivatives is FreeEnergyDerivatives by central differences of
// the summed free energy at steps h and h/2 combined by Richardson
// extrapolation (the free energy is analytic away from phase boundaries;
// on one, the derivatives do not exist and the error estimate grows, which
// the caller flags).
func NumericalDerivatives(m Map, x []float64, idx []int, order int) Derivatives {
	k := len(idx)
	// The stencils of different derivatives and Richardson levels share
	// points: each is summed once.
	cache := map[string]float64{}
	key := make([]byte, 0, 8*k)
	f := func(dx []float64) float64 {
		key = key[:0]
		for _, v := range dx {
			b := math.Float64bits(v + 0) // -0 and +0 are one point
			for s := 0; s < 64; s += 8 {
				key = append(key, byte(b>>s))
			}
		}
		if v, ok := cache[string(key)]; ok {
			return v
		}
		y := append([]float64(nil), x...)
		for a, i := range idx {
			y[i] += dx[a]
		}
		v := FreeEnergy(m, y).Value
		cache[string(key)] = v
		return v
	}
	f0r := FreeEnergy(m, x)
	out := Derivatives{F: f0r.Value, Grad: make([]float64, k), Hess: make([][]float64, k)}
	if f0r.Flag != "" {
		out.Flag = f0r.Flag
	}
	for a := range out.Hess {
		out.Hess[a] = make([]float64, k)
	}
	// Derivatives by a tensor-product stencil: each derivative is a sum of
	// f at offsets (s_a h) with the central-difference weights of the
	// orders wanted; Richardson on h and h/2 removes the h² term.
	h0 := 2e-3
	deriv := func(orders []int, h float64) float64 {
		// Weights of the central difference of order o (error O(h²)):
		// o=0: {0:1}; o=1: {-1:-1/2, 1:1/2}; o=2: {-1:1, 0:-2, 1:1};
		// o=3: {-2:-1/2, -1:1, 1:-1, 2:1/2}.
		type wpt struct {
			s int
			w float64
		}
		table := [][]wpt{
			{{0, 1}},
			{{-1, -0.5}, {1, 0.5}},
			{{-1, 1}, {0, -2}, {1, 1}},
			{{-2, -0.5}, {-1, 1}, {1, -1}, {2, 0.5}},
		}
		var total float64
		dx := make([]float64, k)
		var rec func(a int, w float64)
		rec = func(a int, w float64) {
			if a == k {
				total += w * f(dx)
				return
			}
			for _, p := range table[orders[a]] {
				dx[a] = float64(p.s) * h
				rec(a+1, w*p.w)
			}
			dx[a] = 0
		}
		rec(0, 1)
		scale := 1.0
		for _, o := range orders {
			scale *= math.Pow(h, float64(o))
		}
		return total / scale
	}
	// richAt combines steps h and h/2 (and h/4 for third derivatives) by
	// Richardson extrapolation and estimates the error.
	richAt := func(orders []int, h float64, levels int) (float64, float64) {
		if levels == 2 {
			a := deriv(orders, h)
			b := deriv(orders, h/2)
			r := (4*b - a) / 3
			return r, math.Abs(r - b)
		}
		a := deriv(orders, h)
		b := deriv(orders, h/2)
		c := deriv(orders, h/4)
		r1 := (4*b - a) / 3
		r2 := (4*c - b) / 3
		r := (16*r2 - r1) / 15
		return r, math.Abs(r - r2)
	}
	// The steps: 2e-3 (second derivatives, two Richardson levels) and 2e-2
	// (third derivatives, three levels), divided by the scale on which
	// the free energy varies in that coupling when it is short (deep in an
	// ordered phase a field matters on the scale e^{-2K}): a response
	// ∂²F of size s shortens the step by 1/max(1, s/10).
	scale := make([]float64, k)
	for a := range scale {
		scale[a] = 1
	}
	rich := func(orders []int) (float64, float64) {
		tot := 0
		for _, o := range orders {
			tot += o
		}
		h := h0
		levels := 2
		if tot >= 3 {
			levels, h = 3, 2e-2
		}
		for a, o := range orders {
			if o > 0 {
				h = math.Min(h, h*scale[a])
			}
		}
		return richAt(orders, h, levels)
	}
	orders := make([]int, k)
	for a := 0; a < k; a++ {
		for i := range orders {
			orders[i] = 0
		}
		orders[a] = 2
		if v, _ := richAt(orders, h0, 2); math.Abs(v) > 10 {
			scale[a] = 10 / math.Abs(v)
		}
	}
	for a := 0; a < k; a++ {
		for i := range orders {
			orders[i] = 0
		}
		orders[a] = 1
		out.Grad[a], _ = rich(orders)
		for c := a; c < k; c++ {
			for i := range orders {
				orders[i] = 0
			}
			orders[a]++
			orders[c]++
			v, e := rich(orders)
			out.Hess[a][c], out.Hess[c][a] = v, v
			out.Err = math.Max(out.Err, e)
		}
	}
	if order >= 3 {
		out.Third = make([][][]float64, k)
		for a := range out.Third {
			out.Third[a] = make([][]float64, k)
			for c := range out.Third[a] {
				out.Third[a][c] = make([]float64, k)
			}
		}
		for a := 0; a < k; a++ {
			for c := a; c < k; c++ {
				for e := c; e < k; e++ {
					for i := range orders {
						orders[i] = 0
					}
					orders[a]++
					orders[c]++
					orders[e]++
					v, e3 := rich(orders)
					out.Err3 = math.Max(out.Err3, e3)
					for _, p := range [][3]int{{a, c, e}, {a, e, c}, {c, a, e}, {c, e, a}, {e, a, c}, {e, c, a}} {
						out.Third[p[0]][p[1]][p[2]] = v
					}
				}
			}
		}
	}
	return out
}

// XiHatter is a map that can estimate the correlation length of a point
// near its disordered sink (ok false elsewhere).
type XiHatter interface {
	XiHat(x []float64) (xi float64, ok bool)
}

// CorrelationLength follows the flow from x to the first point xₙ where
// the engine's estimate ξ̂ applies and returns ξ(x) = bⁿ ξ̂(xₙ): exact in one
// dimension (the chain's ratio of transfer-matrix eigenvalues is raised to
// the power b at each step), elsewhere known up to a factor of order one.
// ok is false when the flow does not reach the disordered sink (the ordered
// phase, or a map without ξ̂).
func CorrelationLength(m Map, x []float64) (xi float64, ok bool) {
	xh, has := m.(XiHatter)
	if !has {
		return math.NaN(), false
	}
	b := m.Rescale()
	cur := append([]float64(nil), x...)
	next := make([]float64, len(x))
	scale := 1.0
	for n := 0; n < 200; n++ {
		if v, ok := xh.XiHat(cur); ok {
			return scale * v, true
		}
		m.Step(next, cur)
		for _, v := range next {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return math.NaN(), false
			}
		}
		cur, next = next, cur
		scale *= b
		if maxAbs(cur) > 1e4 {
			return math.NaN(), false
		}
	}
	return math.NaN(), false
}

// Ordered reports whether the symmetric flow from x (its symmetry-breaking
// couplings set to 0) runs to zero temperature: coupling e, an exchange,
// growing past 50 within 200 steps; steps is how many it took.
func Ordered(m Map, x []float64, e int) (ordered bool, steps int) {
	cs := m.Couplings()
	cur := append([]float64(nil), x...)
	for i, c := range cs {
		if !c.Symmetric {
			cur[i] = 0
		}
	}
	next := make([]float64, len(x))
	for n := 0; n < 200; n++ {
		m.Step(next, cur)
		for i, c := range cs {
			if !c.Symmetric {
				next[i] = 0
			}
		}
		if math.IsNaN(next[e]) {
			return false, n
		}
		if next[e] > 50 {
			return true, n + 1
		}
		cur, next = next, cur
	}
	return false, 200
}

// SpontaneousMagnetization returns m₀ = lim_{h→0+} ∂(ln Z/N)/∂h at x (the
// other couplings as in x) for the field coupling h: the derivative at
// h = δ, 2δ, 4δ (central differences with step δ/4) extrapolated to δ → 0,
// removing the terms in δ and δ². The field must stay small until the flow
// has left the critical region, where it grows by up to b^d per step, so
// δ = 1e-3 b^{−d(n−4)} for a flow that takes n steps to order (steps from
// [Ordered]), at least 1e-12; limited reports that bound was hit (close to
// T_c, where rounding then limits the extrapolation). Callers use it in the
// ordered phase; in the disordered phase m₀ = 0.
func SpontaneousMagnetization(m Map, x []float64, h, steps int) (m0 float64, limited bool) {
	_, jets := m.(Jetter)
	mAt := func(v float64) float64 {
		y := append([]float64(nil), x...)
		if jets {
			// The exact first derivative at h = v.
			y[h] = v
			if d := FreeEnergyJet(m, y, []int{h}, 1); d.Flag == "" && d.Err <= 1e-6*(1+math.Abs(d.Grad[0])) {
				return d.Grad[0]
			}
		}
		s := v / 4
		y[h] = v + s
		fp := FreeEnergy(m, y).Value
		y[h] = v - s
		fm := FreeEnergy(m, y).Value
		y[h] = v + 2*s
		fpp := FreeEnergy(m, y).Value
		y[h] = v - 2*s
		fmm := FreeEnergy(m, y).Value
		// fourth-order central difference
		return (8*(fp-fm) - (fpp - fmm)) / (12 * s)
	}
	d := 1e-3 * math.Pow(m.Rescale(), -m.Dimension()*float64(max(0, steps-4)))
	if d < 1e-12 {
		d, limited = 1e-12, true
	}
	m1, m2, m3 := mAt(d), mAt(2*d), mAt(4*d)
	r1 := 2*m1 - m2
	r2 := 2*m2 - m3
	return (4*r1 - r2) / 3, limited
}

// OrderedSusceptibility returns χ(0+) = lim_{h→0+} ∂²(ln Z/N)/∂h² at x in
// the ordered phase (h = 0 itself is a first-order boundary, where the
// derivative does not exist) for the field coupling h: exact second
// derivatives from jets at h = δ, 2δ, 4δ, extrapolated to δ → 0 removing
// the terms in δ and δ². δ = 1e-3 b^{−d(n−10)} for a flow that takes n
// steps to order (steps from [Ordered]): the field must stay small through
// the critical region but not fall to the rounding of the exchange, which
// the ten steps the flow spends leaving that region allow; at least
// 1e-15. ok is false for a map without jets or where a sum fails.
func OrderedSusceptibility(m Map, x []float64, h, steps int) (chi float64, ok bool) {
	if _, jets := m.(Jetter); !jets {
		return math.NaN(), false
	}
	d := 1e-3 * math.Pow(m.Rescale(), -m.Dimension()*float64(max(0, steps-10)))
	d = math.Max(d, 1e-15)
	var v [3]float64
	y := append([]float64(nil), x...)
	for i, s := range []float64{1, 2, 4} {
		y[h] = s * d
		r := FreeEnergyJet(m, y, []int{h}, 2)
		if r.Flag != "" || !(r.Err <= 1e-6*math.Abs(r.Hess[0][0])) {
			return math.NaN(), false
		}
		v[i] = r.Hess[0][0]
	}
	r1, r2 := 2*v[0]-v[1], 2*v[1]-v[2]
	chi = (4*r1 - r2) / 3
	// The three fields must tell the same limit: otherwise δ is not yet
	// in the range where χ(h) is smooth, or rounding dominates.
	if !(math.Abs(r1-r2) <= 1e-2*math.Abs(chi)) {
		return math.NaN(), false
	}
	return chi, true
}

// ThermoValues are the thermodynamic quantities at one point; NaN where
// not available, with the reason in Flags.
type ThermoValues struct {
	X               []float64
	F, U, C, M, Chi float64 // ln Z/N, energy, specific heat, magnetization, susceptibility (per site)
	M0, Xi          float64 // spontaneous magnetization, correlation length
	Metric          [][]float64
	Det, R          float64
	Flags           []string
}

// Thermo computes, at x, ln Z/N per site and its derivatives: the energy
// and specific heat along the ray on which every coupling scales as 1/T (in
// units of the exchange), the magnetization and susceptibility in the first
// field coupling, the spontaneous magnetization and correlation length, and
// the metric over the couplings metric with its determinant and scalar
// curvature. A quantity whose derivatives are unreliable (on a phase
// boundary, or where the scheme makes a response diverge) is NaN with a flag.
func Thermo(m Map, x []float64, metric []int) (p ThermoValues) {
	nan := math.NaN()
	p = ThermoValues{X: x, F: nan, U: nan, C: nan, M: nan, Chi: nan, M0: nan, Xi: nan, Det: nan, R: nan}
	defer func() {
		if r := recover(); r != nil {
			p.Flags = append(p.Flags, fmt.Sprintf("internal error: %v", r))
		}
	}()
	bound := math.Inf(1)
	defer func() { p.dropUnphysical(bound) }()
	cs := m.Couplings()
	perSite := 1.0
	if pb, ok := m.(PerBonder); ok && pb.PerBond() {
		perSite = 1 / pb.SitesPerBond()
	}
	ok := func(d Derivatives) bool { return d.Err <= 1e-5*(1+maxAbsMatrix(d.Hess)) }
	flag := func(what string, d Derivatives) {
		p.Flags = append(p.Flags, fmt.Sprintf("%s: derivatives unreliable (error estimate %.2g): on a phase boundary, or where the scheme makes a response diverge (bond moving and block spins: a field relevant at the disordered sink makes the higher field derivatives diverge)", what, d.Err))
	}
	// The energy and specific heat: derivatives over the couplings that
	// are not zero (the ray on which they all scale as 1/T).
	var ray []int
	for i := range cs {
		if x[i] != 0 {
			ray = append(ray, i)
		}
	}
	if len(ray) == 0 {
		ray = []int{0}
	}
	// A map with jets gives every derivative below from one sum over the
	// union of the couplings involved, when that is at most three.
	e := ExchangeIndex(m)
	field := -1
	for i, c := range cs {
		if c.Role == Field {
			field = i
			break
		}
	}
	if fb, ok := m.(FieldBounder); ok && field >= 0 {
		bound = fb.FieldBound(field) * perSite
	}
	deriv := FreeEnergyDerivatives
	if _, isJ := m.(Jetter); isJ {
		union := append([]int(nil), ray...)
		for _, i := range append([]int{field}, metric...) {
			if i >= 0 && !slices.Contains(union, i) {
				union = append(union, i)
			}
		}
		// (When that sum diverges in one direction, as the field's on a
		// first-order boundary, each set is summed on its own instead.)
		if len(union) <= 3 {
			if all := FreeEnergyDerivatives(m, x, union, 3); all.Flag == "" && all.Err <= 1e-6*(1+maxAbsMatrix(all.Hess)) {
				deriv = func(_ Map, _ []float64, idx []int, order int) Derivatives {
					return all.restrict(union, idx, order)
				}
			}
		}
	}
	d := deriv(m, x, ray, 2)
	if d.Flag != "" {
		p.Flags = append(p.Flags, d.Flag)
		return p
	}
	p.F = d.F * perSite
	var xg, xx float64
	for a, i := range ray {
		xg += x[i] * d.Grad[a]
		for c, j := range ray {
			xx += x[i] * x[j] * d.Hess[a][c]
		}
	}
	if e >= 0 && x[e] != 0 {
		p.U = -xg / x[e] * perSite
	}
	var xs float64
	for _, i := range ray {
		xs += math.Abs(x[i])
	}
	if ok(d) && d.Err*xs*xs <= 1e-3*math.Abs(xx) {
		p.C = xx * perSite
	} else {
		flag("specific heat", d)
	}
	if xi, ok := CorrelationLength(m, x); ok {
		p.Xi = xi
		if m.Dimension() != 1 {
			p.Flags = append(p.Flags, "correlation length known up to a factor of order one (exact only in one dimension)")
		}
	} else {
		p.Flags = append(p.Flags, "correlation length: the flow does not reach the disordered sink here (ordered phase, or no estimate for this engine)")
	}
	if i := field; i >= 0 {
		ord, steps := false, 0
		if e >= 0 {
			ord, steps = Ordered(m, x, e)
		}
		if ord {
			m0, limited := SpontaneousMagnetization(m, x, i, steps)
			p.M0 = m0 * perSite
			if limited {
				p.Flags = append(p.Flags, "spontaneous magnetization: close to T_c the limit h -> 0+ is limited by rounding")
			}
		} else if e >= 0 {
			p.M0 = 0
		}
		dh := deriv(m, x, []int{i}, 2)
		p.M = dh.Grad[0] * perSite
		chi0, ok0 := math.NaN(), false
		if ord && x[i] == 0 && onlyField(cs, x, i) {
			chi0, ok0 = OrderedSusceptibility(m, x, i, steps)
		}
		switch {
		case ok0:
			// On the first-order boundary h = 0 of the ordered phase: the
			// one-sided limits h -> 0+.
			p.M, p.Chi = p.M0, chi0*perSite
			p.Flags = append(p.Flags, "magnetization and susceptibility: the limits h -> 0+ (h = 0 is a first-order boundary in the ordered phase)")
		case ok(dh) && dh.Err <= 1e-3*math.Abs(dh.Hess[0][0]):
			p.Chi = dh.Hess[0][0] * perSite
		default:
			p.M = math.NaN()
			flag("magnetization and susceptibility", dh)
		}
	}
	dm := deriv(m, x, metric, 3)
	minDiag := math.Inf(1)
	for a := range metric {
		minDiag = math.Min(minDiag, math.Abs(dm.Hess[a][a]))
	}
	if !ok(dm) || dm.Err > 1e-4*minDiag {
		flag("metric", dm)
		return p
	}
	k := len(metric)
	p.Metric = make([][]float64, k)
	for a := range p.Metric {
		p.Metric[a] = make([]float64, k)
		for b := range p.Metric[a] {
			p.Metric[a][b] = dm.Hess[a][b] * perSite
		}
	}
	p.Det = Det(p.Metric)
	if k >= 2 {
		diag := 1.0
		for a := 0; a < k; a++ {
			diag *= math.Abs(p.Metric[a][a])
		}
		if math.Abs(p.Det) < 1e-9*diag || diag == 0 {
			p.Flags = append(p.Flags, "curvature: the metric is nearly singular here (a frozen or decoupled direction), so R is not given")
			return p
		}
		if dm.Err3 > 1e-4*(maxAbs3(dm.Third)+1e-300) {
			p.Flags = append(p.Flags, fmt.Sprintf("curvature: third derivatives unreliable (error estimate %.2g)", dm.Err3))
			return p
		}
		third := dm.Third
		for a := range third {
			for b := range third[a] {
				for c := range third[a][b] {
					third[a][b][c] *= perSite
				}
			}
		}
		// Rounding leaves every derivative an absolute error of at least
		// a few ε |ln Z/N|; R is dropped where that, or the estimates,
		// could move it by more than 1 % of itself.
		floor := 64 * 0x1p-52 * (1 + math.Abs(dm.F)) * perSite
		eg := math.Max(dm.Err*perSite, floor)
		et := math.Max(dm.Err3*perSite, floor)
		r := HessianCurvature(p.Metric, third)
		if er := CurvatureError(p.Metric, third, eg, et); !(er <= 1e-2*math.Max(1, math.Abs(r))) {
			p.Flags = append(p.Flags, fmt.Sprintf("curvature: ill-conditioned here (error bound %.2g from the derivatives' errors; the metric is tiny where the system is nearly frozen)", er))
			return p
		}
		p.R = r
	}
	return p
}

// dropUnphysical removes what no free energy can give: ln Z is convex in
// the couplings, so the specific heat, the susceptibility and the
// diagonal of the metric are not negative, the response to a field
// h -> 0+ is not negative, and no magnetization exceeds bound (the largest
// one-body term per site). An approximate scheme can break this where its
// projection fails (a block-spin fit far from its fixed point); the value
// is then NaN with a flag.
func (p *ThermoValues) dropUnphysical(bound float64) {
	const why = "unphysical here (ln Z must be convex): an artefact of the scheme's approximation at these couplings"
	tol := 1e-9 * (1 + math.Abs(p.F))
	if p.C < -tol {
		p.Flags = append(p.Flags, fmt.Sprintf("specific heat %.3g < 0: %s", p.C, why))
		p.C = math.NaN()
	}
	if p.Chi < -tol {
		p.Flags = append(p.Flags, fmt.Sprintf("susceptibility %.3g < 0: %s", p.Chi, why))
		p.Chi, p.M = math.NaN(), math.NaN()
	}
	if p.M0 < -tol {
		p.Flags = append(p.Flags, fmt.Sprintf("spontaneous magnetization %.3g < 0 for h -> 0+: %s", p.M0, why))
		p.M0 = math.NaN()
	}
	if math.Abs(p.M0) > bound*(1+1e-9) {
		p.Flags = append(p.Flags, fmt.Sprintf("spontaneous magnetization %.4g exceeds %g, the largest possible: an artefact of the scheme's approximation at these couplings", p.M0, bound))
		p.M0 = math.NaN()
	}
	if math.Abs(p.M) > bound*(1+1e-9) {
		p.Flags = append(p.Flags, fmt.Sprintf("magnetization %.4g exceeds %g, the largest possible: an artefact of the scheme's approximation at these couplings", p.M, bound))
		p.M, p.Chi = math.NaN(), math.NaN()
	}
	for a := range p.Metric {
		if p.Metric[a][a] < -tol {
			p.Flags = append(p.Flags, fmt.Sprintf("metric: diagonal entry %.3g < 0: %s", p.Metric[a][a], why))
			p.Metric, p.Det, p.R = nil, math.NaN(), math.NaN()
			break
		}
	}
}

// onlyField reports whether every symmetry-breaking coupling of x other
// than the field i is zero (the field alone decides the ordered state).
func onlyField(cs []Coupling, x []float64, i int) bool {
	for j, c := range cs {
		if j != i && !c.Symmetric && x[j] != 0 {
			return false
		}
	}
	return true
}

// restrict returns the derivatives in the couplings idx (each in union) to
// the given order from d, the derivatives in union.
func (d Derivatives) restrict(union, idx []int, order int) Derivatives {
	pos := make([]int, len(idx))
	for a, i := range idx {
		pos[a] = slices.Index(union, i)
	}
	k := len(idx)
	out := Derivatives{F: d.F, Err: d.Err, Err3: d.Err3, Flag: d.Flag, Grad: make([]float64, k), Hess: make([][]float64, k)}
	for a := range idx {
		out.Grad[a] = d.Grad[pos[a]]
		out.Hess[a] = make([]float64, k)
		for b := range idx {
			out.Hess[a][b] = d.Hess[pos[a]][pos[b]]
		}
	}
	if order >= 3 && d.Third != nil {
		out.Third = make([][][]float64, k)
		for a := range idx {
			out.Third[a] = make([][]float64, k)
			for b := range idx {
				out.Third[a][b] = make([]float64, k)
				for c := range idx {
					out.Third[a][b][c] = d.Third[pos[a]][pos[b]][pos[c]]
				}
			}
		}
	}
	return out
}

// ExchangeIndex returns the coupling that sets the temperature scale, the
// first symmetric exchange coupling, or −1.
func ExchangeIndex(m Coupled) int {
	for i, c := range m.Couplings() {
		if c.Role == Exchange && c.Symmetric {
			return i
		}
	}
	return -1
}

func maxAbsMatrix(a [][]float64) float64 {
	var m float64
	for _, r := range a {
		for _, v := range r {
			m = math.Max(m, math.Abs(v))
		}
	}
	return m
}

func maxAbs3(t [][][]float64) float64 {
	var m float64
	for _, a := range t {
		m = math.Max(m, maxAbsMatrix(a))
	}
	return m
}

// Det is the determinant of a metric of at most three couplings, by
// cofactors; NaN for larger ones.
func Det(a [][]float64) float64 {
	switch len(a) {
	case 1:
		return a[0][0]
	case 2:
		return a[0][0]*a[1][1] - a[0][1]*a[1][0]
	case 3:
		return a[0][0]*(a[1][1]*a[2][2]-a[1][2]*a[2][1]) - a[0][1]*(a[1][0]*a[2][2]-a[1][2]*a[2][0]) + a[0][2]*(a[1][0]*a[2][1]-a[1][1]*a[2][0])
	}
	return math.NaN()
}
