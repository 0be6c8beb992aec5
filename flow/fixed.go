package flow

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"
)

// Kind is the classification of a fixed point.
type Kind int

const (
	Sink          Kind = iota // no relevant symmetric direction
	Critical                  // one relevant symmetric direction
	Multicritical             // two or more
	Source                    // every direction relevant, no declared symmetry
)

func (k Kind) String() string {
	switch k {
	case Sink:
		return "sink"
	case Critical:
		return "critical"
	case Multicritical:
		return "multicritical"
	case Source:
		return "source"
	}
	return "unknown"
}

// Family describes a connected set of fixed points along coordinate axes.
type Family struct {
	Free  []int        // indices of the free couplings
	Range [][2]float64 // per free coupling, [lo, hi]; ±Inf where unbounded
}

// FixedPoint is a fixed point with its analysis.
type FixedPoint struct {
	X           []float64 // couplings; ±Inf where infinite
	Inf         []int     // per coupling: 0 finite, +1 at +∞, −1 at −∞
	Coordinates []string  // per coupling, the coordinate of the analysis
	U           []float64 // chart coordinates (u = 0 at an infinity)
	Family      *Family   // nil for an isolated point; X is a representative

	Kind             Kind
	Discontinuity    bool
	ZeroTemperature  bool
	Symmetric        bool // lies in the symmetric subspace
	Relevant         int  // relevant symmetric directions (all relevant ones off the symmetric subspace)
	RelevantBreaking int
	Marginal         int
	Directions       []Direction
	Exponents        []Exponent
	Residual         float64 // ‖R(x) − x‖∞ in chart coordinates
	Iterations       int
	Closure          float64 // closure error of the step at the point; NaN if unknown or at infinity
	Notes            []string

	Jacobian, JacobianErr *mat.Dense // in chart coordinates
}

// FindSettings controls [FindAll]. A zero field takes its default.
type FindSettings struct {
	Tol         float64   // Newton convergence, relative sup norm; default 1e-11
	LooseTol    float64   // accepted on stagnation; default 1e-8
	MaxIter     int       // Newton iterations per start; default 80
	MaxStep     float64   // largest Newton step (sup norm); default 1
	Escape      float64   // a finite coordinate beyond this abandons the start; default 60
	MarginalTol float64   // ||λ| − 1| below this is marginal; default 1e-6
	Starts      []float64 // start values per coupling; default ±{0.1,0.3,0.7,1.5,3} and 0
	MaxStarts   int       // starts per chart; default 160
}

func (s *FindSettings) defaults() *FindSettings {
	o := FindSettings{}
	if s != nil {
		o = *s
	}
	if o.Tol == 0 {
		o.Tol = 1e-11
	}
	if o.LooseTol == 0 {
		o.LooseTol = 1e-8
	}
	if o.MaxIter == 0 {
		o.MaxIter = 80
	}
	if o.MaxStep == 0 {
		o.MaxStep = 1
	}
	if o.Escape == 0 {
		o.Escape = 60
	}
	if o.MarginalTol == 0 {
		o.MarginalTol = 1e-6
	}
	if o.Starts == nil {
		o.Starts = []float64{0, 0.1, -0.1, 0.3, -0.3, 0.7, -0.7, 1.5, -1.5, 3, -3}
	}
	if o.MaxStarts == 0 {
		o.MaxStarts = 160
	}
	return &o
}

// Stats counts the work of a search.
type Stats struct {
	Charts    int
	Starts    int
	Converged int
	Runtime   time.Duration
}

// FindResult is the outcome of [FindAll].
type FindResult struct {
	Points []FixedPoint
	Stats  Stats
}

// ErrCanceled is returned when the context ends a search early; the points
// found so far are returned with it.
var ErrCanceled = errors.New("flow: search canceled")

type found struct {
	c   *chart
	res newtonResult
	fam *Family
}

// FindAll searches for every fixed point of m: damped Newton from many
// starts in every chart (finite couplings, and each face where couplings
// sit at an infinity for which they declare a compactified coordinate),
// deduplicates, detects families, and analyses each point (see [Analyse]).
func FindAll(ctx context.Context, m Map, s *FindSettings) (*FindResult, error) {
	t0 := time.Now()
	s = s.defaults()
	out := &FindResult{}
	var pts []found
	for _, c := range charts(m) {
		if err := ctx.Err(); err != nil {
			return out, ErrCanceled
		}
		out.Stats.Charts++
		// A face the map does not keep (u′ ≠ 0 everywhere on a probe)
		// holds no fixed point: skip it cheaply.
		if len(c.face) > 0 && !c.faceMayHold(s) {
			continue
		}
		var local []found
		for _, y0 := range c.starts(s) {
			out.Stats.Starts++
			r := c.solve(y0, s)
			if !r.ok || r.faceRes > 1e-8 || math.IsNaN(r.residual) {
				continue
			}
			out.Stats.Converged++
			c.snap(&r, s)
			dup := false
			for _, p := range local {
				if sameY(p.res.y, r.y) || (p.fam != nil && onFamily(p.fam, p.res.y, r.y)) {
					dup = true
					break
				}
			}
			if dup {
				continue
			}
			f := found{c: c, res: r}
			f.fam = c.family(r.y, s)
			if f.fam != nil {
				// Move to the representative and drop earlier members.
				for k, j := range f.fam.Free {
					f.res.y[j] = clamp(0, f.fam.Range[k][0], f.fam.Range[k][1])
				}
				var kept []found
				for _, p := range local {
					if !onFamily(f.fam, f.res.y, p.res.y) {
						kept = append(kept, p)
					}
				}
				local = kept
			}
			local = append(local, f)
		}
		pts = append(pts, local...)
	}
	pts = mergeFaceEnds(pts)
	for _, p := range pts {
		fp := analyse(p.c, p.res.y, p.fam, s)
		fp.Residual = p.res.residual
		fp.Iterations = p.res.iters
		out.Points = append(out.Points, fp)
	}
	out.Stats.Runtime = time.Since(t0)
	return out, nil
}

// snap sets coordinates within 1e-12 of 0 to exactly 0 when the point
// stays fixed, so that symmetric points are recognised as such.
func (c *chart) snap(r *newtonResult, s *FindSettings) {
	y := append([]float64(nil), r.y...)
	changed := false
	for _, i := range c.free {
		if y[i] != 0 && math.Abs(y[i]) < 1e-12 {
			y[i] = 0
			changed = true
		}
	}
	if !changed {
		return
	}
	fy := make([]float64, len(y))
	if res := c.residual(fy, y); res <= math.Max(r.residual, s.Tol*(1+supNorm(y, c.free))) {
		r.y, r.residual = y, res
	}
}

func clamp(v, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, v)) }

func sameY(a, b []float64) bool {
	for i := range a {
		if math.Abs(a[i]-b[i]) > 1e-6*(1+math.Abs(a[i])) {
			return false
		}
	}
	return true
}

// onFamily reports whether y lies on the family through rep.
func onFamily(f *Family, rep, y []float64) bool {
	isFree := map[int]int{}
	for k, j := range f.Free {
		isFree[j] = k
	}
	for i := range y {
		if k, ok := isFree[i]; ok {
			if y[i] < f.Range[k][0]-1e-9 || y[i] > f.Range[k][1]+1e-9 {
				return false
			}
			continue
		}
		if math.Abs(y[i]-rep[i]) > 1e-6*(1+math.Abs(rep[i])) {
			return false
		}
	}
	return true
}

// mergeFaceEnds drops face points that are the ends at infinity of a family
// found in a chart with those couplings finite.
func mergeFaceEnds(pts []found) []found {
	var out []found
	for _, p := range pts {
		merged := false
		for _, q := range pts {
			if q.fam == nil || len(q.c.face) >= len(p.c.face) {
				continue
			}
			if endOf(q, p) {
				merged = true
				break
			}
		}
		if !merged {
			out = append(out, p)
		}
	}
	return out
}

// endOf reports whether the face point p is the end at infinity of the
// family q.
func endOf(q, p found) bool {
	fk := map[int]int{}
	for k, j := range q.fam.Free {
		fk[j] = k
	}
	for i := range p.c.inf {
		if p.c.inf[i] == q.c.inf[i] {
			if p.c.inf[i] != 0 {
				continue
			}
			if _, free := fk[i]; free {
				continue
			}
			if math.Abs(p.res.y[i]-q.res.y[i]) > 1e-6*(1+math.Abs(q.res.y[i])) {
				return false
			}
			continue
		}
		// p has coupling i at an infinity where q has it finite (or
		// vice versa): it must be a free coupling of q running there.
		k, free := fk[i]
		if !free || q.c.inf[i] != 0 {
			return false
		}
		if p.c.inf[i] > 0 && !math.IsInf(q.fam.Range[k][1], 1) {
			return false
		}
		if p.c.inf[i] < 0 && !math.IsInf(q.fam.Range[k][0], -1) {
			return false
		}
	}
	return true
}

// faceMayHold probes the face at a few points and reports whether the map
// keeps the face coordinates at 0 anywhere among them.
func (c *chart) faceMayHold(s *FindSettings) bool {
	n := len(c.inf)
	fy := make([]float64, n)
	for _, y := range c.starts(&FindSettings{Starts: s.Starts, MaxStarts: 24}) {
		c.eval(fy, y)
		ok := true
		for _, i := range c.face {
			if !(math.Abs(fy[i]) <= 1e-6) {
				ok = false
				break
			}
		}
		if ok {
			return true
		}
	}
	return false
}

// starts returns the start points of the chart: a grid over s.Starts in
// the free coordinates when it fits in s.MaxStarts, quasi-random points
// (Halton) over the same span otherwise.
func (c *chart) starts(s *FindSettings) [][]float64 {
	n := len(c.inf)
	k := len(c.free)
	total := 1
	for i := 0; i < k && total <= s.MaxStarts; i++ {
		total *= len(s.Starts)
	}
	var out [][]float64
	if total <= s.MaxStarts {
		idx := make([]int, k)
		for {
			y := make([]float64, n)
			for a, i := range c.free {
				y[i] = s.Starts[idx[a]]
			}
			out = append(out, y)
			a := 0
			for a < k {
				idx[a]++
				if idx[a] < len(s.Starts) {
					break
				}
				idx[a] = 0
				a++
			}
			if a == k {
				break
			}
		}
		return out
	}
	span := 0.0
	for _, v := range s.Starts {
		span = math.Max(span, math.Abs(v))
	}
	primes := []int{2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53}
	out = append(out, make([]float64, n))
	syms := c.symmetricFree()
	for p := 1; len(out) < s.MaxStarts; p++ {
		y := make([]float64, n)
		for a, i := range c.free {
			t := 2*halton(p, primes[a%len(primes)]) - 1
			y[i] = span * t * math.Abs(t)
		}
		// Every other start lies in the symmetric subspace, where most
		// fixed points of interest are.
		if p%2 == 0 && syms != nil {
			for _, i := range c.free {
				if !c.cs[i].Symmetric {
					y[i] = 0
				}
			}
		}
		out = append(out, y)
	}
	return out
}

func (c *chart) symmetricFree() []int {
	var out []int
	for _, i := range c.free {
		if c.cs[i].Symmetric {
			out = append(out, i)
		}
	}
	return out
}

func halton(i, base int) float64 {
	f, r := 1.0, 0.0
	for i > 0 {
		f /= float64(base)
		r += f * float64(i%base)
		i /= base
	}
	return r
}

// family checks each free coordinate of the chart at a fixed point y: if
// moving along it alone leaves a fixed point, it is a free direction, and
// its range is found by walking outward and bisecting where the point stops
// being fixed. It returns nil for an isolated point.
func (c *chart) family(y []float64, s *FindSettings) *Family {
	var fam *Family
	n := len(y)
	fy := make([]float64, n)
	yy := append([]float64(nil), y...)
	isFixed := func(v float64, i int) bool {
		copy(yy, y)
		yy[i] = v
		return c.residual(fy, yy) <= s.LooseTol*(1+supNorm(yy, c.free))
	}
	for _, i := range c.free {
		d := 1e-3 * (1 + math.Abs(y[i]))
		if !isFixed(y[i]+d, i) || !isFixed(y[i]-d, i) {
			continue
		}
		lo := c.walk(y[i], -1, i, isFixed)
		hi := c.walk(y[i], 1, i, isFixed)
		if fam == nil {
			fam = &Family{}
		}
		fam.Free = append(fam.Free, i)
		fam.Range = append(fam.Range, [2]float64{lo, hi})
	}
	return fam
}

// walkLimit is where a walk along a family concludes that it runs to
// infinity.
const walkLimit = 500

func (c *chart) walk(v0 float64, dir float64, i int, isFixed func(float64, int) bool) float64 {
	prev := v0
	step := 0.05
	for {
		v := prev + dir*step
		if math.Abs(v) > walkLimit {
			return math.Inf(int(dir))
		}
		if !isFixed(v, i) {
			a, b := prev, v
			for k := 0; k < 60 && math.Abs(a-b) > 1e-12*(1+math.Abs(a)); k++ {
				mid := (a + b) / 2
				if isFixed(mid, i) {
					a = mid
				} else {
					b = mid
				}
			}
			return a
		}
		prev = v
		step *= 2
	}
}

// Analyse linearizes m at the fixed point x (with inf giving the couplings
// at infinity, nil for none) and classifies it. It does not check that x is
// fixed; [FindAll] calls it on the points it finds.
func Analyse(m Map, x []float64, inf []int, s *FindSettings) FixedPoint {
	s = s.defaults()
	if inf == nil {
		inf = make([]int, len(x))
	}
	c := newChart(m, inf)
	y := make([]float64, len(x))
	for i := range x {
		if inf[i] == 0 {
			y[i] = x[i]
		}
	}
	fp := analyse(c, y, nil, s)
	fy := make([]float64, len(x))
	fp.Residual = c.residual(fy, y)
	return fp
}

func analyse(c *chart, y []float64, fam *Family, s *FindSettings) FixedPoint {
	m := c.m
	n := len(y)
	fp := FixedPoint{
		X:           make([]float64, n),
		Inf:         append([]int(nil), c.inf...),
		Coordinates: make([]string, n),
		U:           append([]float64(nil), y...),
		Family:      fam,
		Closure:     math.NaN(),
	}
	c.toX(fp.X, y)
	for i, cp := range c.cs {
		fp.Coordinates[i] = cp.Name
		if c.inf[i] != 0 {
			fp.Coordinates[i] = c.comp[i].Name
		}
	}
	if cl, ok := m.(Closer); ok && len(c.face) == 0 {
		fp.Closure = cl.Closure(fp.X)
	}
	jac, errs := c.jacobian(y)
	fp.Jacobian, fp.JacobianErr = jac, errs
	dirs, ok := eigenDirections(jac, errs, m.Rescale())
	if !ok {
		fp.Notes = append(fp.Notes, "eigen-decomposition failed")
		return fp
	}

	// Which invariant blocks apply here.
	const zeroTol = 1e-9
	symmetric, zeroTwo := true, true
	for i, cp := range c.cs {
		atZero := c.inf[i] == 0 && math.Abs(y[i]) <= zeroTol
		if !cp.Symmetric && !atZero {
			symmetric = false
		}
		if cp.TwoSite() && !atZero {
			zeroTwo = false
		}
		if cp.TwoSite() && cp.Symmetric && c.inf[i] != 0 {
			fp.ZeroTemperature = true
		}
	}
	if !hasBreaking(c.cs) {
		symmetric = true
	}
	fp.Symmetric = symmetric
	var groups [][]int
	var gBlock []Block
	var gOne []bool
	for _, sym := range []bool{true, false} {
		for _, one := range []bool{false, true} {
			var idx []int
			for i, cp := range c.cs {
				if (!symmetric || cp.Symmetric == sym) && (!zeroTwo || cp.Role.OneBody() == one) {
					idx = append(idx, i)
				}
			}
			if len(idx) == 0 || (!symmetric && !sym) || (!zeroTwo && one) {
				continue
			}
			groups = append(groups, idx)
			b := MixedBlock
			if symmetric {
				b = BreakingBlock
				if sym {
					b = SymmetricBlock
				}
			}
			gBlock = append(gBlock, b)
			gOne = append(gOne, zeroTwo && one)
		}
	}
	tagBlocks(dirs, jac, groups, func(d *Direction, g int) {
		d.Block = gBlock[g]
		d.OneBody = gOne[g]
	})
	if fam != nil {
		// The k directions nearest λ = 1 are along the family.
		for range fam.Free {
			best, bd := -1, math.Inf(1)
			for k := range dirs {
				if dirs[k].Free {
					continue
				}
				if dd := cmplx.Abs(dirs[k].Lambda - 1); dd < bd {
					best, bd = k, dd
				}
			}
			if best >= 0 {
				dirs[best].Free = true
			}
		}
	}
	for k := range dirs {
		d := &dirs[k]
		a := cmplx.Abs(d.Lambda)
		tol := s.MarginalTol + 2*d.LambdaErr
		switch {
		case a > 1+tol:
			d.Relevance = Relevant
		case a < 1-tol:
			d.Relevance = Irrelevant
		default:
			d.Relevance = Marginal
		}
	}
	fp.Directions = dirs

	// Count.
	allRelevant := true
	counted := 0
	for _, d := range dirs {
		if !d.Counted() {
			continue
		}
		counted++
		if d.Relevance != Relevant {
			allRelevant = false
		}
		if d.Relevance == Marginal {
			fp.Marginal++
		}
		if d.Relevance != Relevant {
			continue
		}
		if !symmetric || d.Block == SymmetricBlock {
			fp.Relevant++
		} else {
			fp.RelevantBreaking++
		}
	}
	switch {
	case symmetryOf(m) == "" && n >= 2 && counted == n && allRelevant:
		fp.Kind = Source
	case fp.Relevant == 0:
		fp.Kind = Sink
	case fp.Relevant == 1:
		fp.Kind = Critical
	default:
		fp.Kind = Multicritical
	}

	// Exponents.
	d := m.Dimension()
	var ySym []float64
	yh, yhErr := math.NaN(), 0.0
	for _, dd := range dirs {
		if !dd.Counted() {
			continue
		}
		if (!symmetric || dd.Block == SymmetricBlock) && dd.Relevance == Relevant {
			ySym = append(ySym, dd.Y)
		}
		if symmetric && dd.Block == BreakingBlock && math.IsNaN(yh) {
			yh, yhErr = dd.Y, dd.YErr
		}
	}
	yt := math.NaN()
	if len(ySym) > 0 {
		yt = ySym[0]
	}
	tolH := 1e-6 + 3*yhErr
	if fp.ZeroTemperature && symmetric && !math.IsNaN(yh) && math.Abs(yh-d) <= tolH {
		fp.Discontinuity = true
	}
	switch fp.Kind {
	case Critical, Multicritical, Source:
		fp.Exponents = ScalingExponents(yt, yh, d, tolH)
		if fp.Kind == Multicritical && len(ySym) >= 2 {
			fp.Exponents = append(fp.Exponents, Exponent{"phi", ySym[1] / ySym[0], "phi = y_2/y_1 (crossover)"})
		}
	case Sink:
		if !math.IsNaN(yh) && fp.RelevantBreaking > 0 {
			fp.Exponents = []Exponent{{"y_h", yh, "leading symmetry-breaking eigenvalue: y_h = ln|lambda_h| / ln b"}}
		}
	}

	// Notes.
	if v, ok := Lookup(fp.Exponents, "delta"); ok && math.IsInf(v, 1) {
		fp.Notes = append(fp.Notes, "delta infinite: y_h = d")
	}
	if fp.Discontinuity {
		fp.Notes = append(fp.Notes, "discontinuity fixed point: y_h = d at zero temperature, a first-order transition in the field")
	}
	if !math.IsNaN(yh) && yh <= 0 && fp.Kind != Sink {
		fp.Notes = append(fp.Notes, "y_h <= 0: the model's symmetry-breaking couplings are irrelevant here, and exponents from y_h refer to them (an antiferromagnet's order parameter couples to a staggered field the model lacks)")
	}
	if fp.ZeroTemperature && fp.Kind == Critical {
		fp.Notes = append(fp.Notes, "zero-temperature critical point: T_c = 0")
	}
	if fam != nil {
		var names []string
		for _, j := range fam.Free {
			names = append(names, c.cs[j].Name)
		}
		fp.Notes = append(fp.Notes, "family of fixed points along "+strings.Join(names, ", ")+"; shown at one representative")
	}
	if zeroTwo && hasOneBody(c.cs) {
		fp.Notes = append(fp.Notes, "two-site couplings all zero: one-body directions not counted")
	}
	if !symmetric {
		fp.Notes = append(fp.Notes, "outside the symmetric subspace: classified by all relevant directions")
		var res []string
		for _, i := range c.face {
			if !c.cs[i].Symmetric && c.comp[i].Residual != "" {
				res = append(res, c.comp[i].Residual)
			}
		}
		if len(res) > 0 {
			fp.Notes = append(fp.Notes, "residual symmetry: "+strings.Join(res, "; "))
		}
	}
	if fp.Marginal > 0 {
		fp.Notes = append(fp.Notes, fmt.Sprintf("%d marginal direction(s) within %.0e", fp.Marginal, s.MarginalTol))
	}
	if !math.IsNaN(fp.Closure) && fp.Closure > 1e-10 {
		fp.Notes = append(fp.Notes, fmt.Sprintf("closure error %.3g: the step leaves the coupling basis", fp.Closure))
	}
	return fp
}

func hasOneBody(cs []Coupling) bool {
	for _, c := range cs {
		if c.Role.OneBody() {
			return true
		}
	}
	return false
}

func hasBreaking(cs []Coupling) bool {
	for _, c := range cs {
		if !c.Symmetric {
			return true
		}
	}
	return false
}

// SortPoints orders fixed points: finite ones first, then by the number of
// infinite couplings, then by coupling values.
func SortPoints(ps []FixedPoint) {
	sort.SliceStable(ps, func(a, b int) bool {
		na, nb := countInf(ps[a].Inf), countInf(ps[b].Inf)
		if na != nb {
			return na < nb
		}
		for i := range ps[a].U {
			if ps[a].Inf[i] != ps[b].Inf[i] {
				return ps[a].Inf[i] > ps[b].Inf[i]
			}
			if d := ps[a].U[i] - ps[b].U[i]; math.Abs(d) > 1e-9 {
				return d < 0
			}
		}
		return false
	})
}

func countInf(v []int) int {
	n := 0
	for _, x := range v {
		if x != 0 {
			n++
		}
	}
	return n
}
