package flow

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"
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

// Family describes a connected set of fixed points: the couplings that vary
// along it, their range, and the directions that span it at the
// representative point.
type Family struct {
	Free  []int        // indices of the couplings that vary along the family
	Range [][2]float64 // per free coupling, [lo, hi]; ±Inf where unbounded
	Basis [][]float64  // orthonormal tangent directions in chart coordinates
	// Tangent spans the same directions in reduced row-echelon form: each
	// vector has a leading coupling of its own (axis-aligned families come
	// out as unit vectors), normalised to a leading entry of 1.
	Tangent [][]float64

	paths [][][]float64 // the walked points, for membership of curved families
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

	chart *chart // the coordinates of the analysis
}

// Place describes where the point is, e.g. "K=+inf, h=0".
func (p FixedPoint) Place(m Coupled) string {
	var parts []string
	for i, c := range m.Couplings() {
		v := "0"
		switch {
		case p.Inf[i] > 0:
			v = "+inf"
		case p.Inf[i] < 0:
			v = "-inf"
		case p.Family != nil && containsInt(p.Family.Free, i):
			v = "free"
		case math.Abs(p.X[i]) > 1e-12:
			v = strconv.FormatFloat(p.X[i], 'g', 6, 64)
		}
		parts = append(parts, c.Name+"="+v)
	}
	return strings.Join(parts, ", ")
}

// Coords returns x in the point's chart coordinates (u = 0 at its
// infinities).
func (p FixedPoint) Coords(x []float64) []float64 {
	y := make([]float64, len(x))
	if p.chart == nil {
		copy(y, x)
		return y
	}
	p.chart.toY(y, x)
	return y
}

// Distance returns the sup-norm distance from x to the point (to the
// nearest point of its family) in the point's chart coordinates.
func (p FixedPoint) Distance(x []float64) float64 {
	y := p.Coords(x)
	d := make([]float64, len(y))
	for i := range y {
		d[i] = y[i] - p.U[i]
		if math.IsNaN(d[i]) {
			return math.Inf(1)
		}
	}
	if p.Family != nil {
		for _, v := range p.Family.Basis {
			q := dot(d, v)
			for i := range d {
				d[i] -= q * v[i]
			}
		}
	}
	return maxAbs(d)
}

func containsInt(v []int, x int) bool {
	for _, e := range v {
		if e == x {
			return true
		}
	}
	return false
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
	MaxStarts   int       // starts per chart (a quarter on faces); default 160
	// Concurrent is the number of charts searched at once; 0 means
	// GOMAXPROCS. The map's Step must be safe for concurrent use.
	Concurrent int
	// Progress, if not nil, is called after each chart with the charts done
	// and the total; it may be called from several goroutines, one at a
	// time.
	Progress func(done, total int)
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
	Dropped   int // candidates at infinity whose linearization had no stable limit
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
	cs := append(charts(m, maxInfinite(len(m.Couplings()))), rays(m)...)
	type chartOut struct {
		pts               []found
		starts, converged int
	}
	results := make([]chartOut, len(cs))
	work := make(chan int)
	var wg sync.WaitGroup
	workers := s.Concurrent
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	var panicked error
	var pmu sync.Mutex
	done := 0
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range work {
				func() {
					defer func() {
						if r := recover(); r != nil {
							pmu.Lock()
							panicked = fmt.Errorf("flow: internal error in chart %s: %v", cs[k].name(), r)
							pmu.Unlock()
						}
					}()
					pts, st, cv := searchChart(ctx, cs[k], s)
					results[k] = chartOut{pts, st, cv}
					if s.Progress != nil {
						pmu.Lock()
						done++
						s.Progress(done, len(cs))
						pmu.Unlock()
					}
				}()
			}
		}()
	}
	for k := range cs {
		if ctx.Err() != nil {
			break
		}
		work <- k
	}
	close(work)
	wg.Wait()
	if panicked != nil {
		return out, panicked
	}
	var pts []found
	for _, r := range results {
		pts = append(pts, r.pts...)
		out.Stats.Starts += r.starts
		out.Stats.Converged += r.converged
	}
	out.Stats.Charts = len(cs)
	if ctx.Err() != nil {
		out.Stats.Runtime = time.Since(t0)
		return out, ErrCanceled
	}
	pts = mergeFaceEnds(pts)
	for _, p := range pts {
		fp := analyse(p.c, p.res.y, p.fam, s)
		fp.Residual = p.res.residual
		fp.Iterations = p.res.iters
		if samePlace(out.Points, fp) {
			// The same point reached through another chart (a ray chart
			// that shears onto a face the plain charts already hold):
			// keep the first, analysed in the simpler coordinates.
			continue
		}
		if len(p.c.face) > 0 && !reliable(fp) {
			// At infinite coupling the map may reach the face only
			// non-analytically; its one-sided Jacobian then has no stable
			// limit and the point is no fixed point one can linearize.
			out.Stats.Dropped++
			continue
		}
		out.Points = append(out.Points, fp)
	}
	out.Stats.Runtime = time.Since(t0)
	return out, nil
}

// samePlace reports whether fp sits where a point of ps does: the same
// couplings at the same infinities and the same finite values.
func samePlace(ps []FixedPoint, fp FixedPoint) bool {
	for _, q := range ps {
		same := true
		for i := range fp.X {
			if fp.Inf[i] != q.Inf[i] {
				same = false
				break
			}
			if fp.Inf[i] == 0 && math.Abs(fp.X[i]-q.X[i]) > 1e-6*(1+math.Abs(q.X[i])) {
				same = false
				break
			}
		}
		if same {
			return true
		}
	}
	return false
}

// reliable reports whether every eigenvalue is known to 1e-4 relative.
func reliable(fp FixedPoint) bool {
	if len(fp.Directions) == 0 {
		return false
	}
	for _, d := range fp.Directions {
		if d.LambdaErr > 1e-4*math.Max(1, cmplx.Abs(d.Lambda)) {
			return false
		}
	}
	return true
}

// searchChart runs every start of one chart and returns the distinct fixed
// points (families once), with the counts of starts and converged solves.
func searchChart(ctx context.Context, c *chart, s *FindSettings) ([]found, int, int) {
	// A face the map does not keep (u′ ≠ 0 everywhere on a probe) holds no
	// fixed point: skip it cheaply. Faces get fewer starts: they have
	// fewer free coordinates and their evaluations cost more.
	cs := *s
	if len(c.face) > 0 {
		if !c.faceMayHold(s) {
			return nil, 0, 0
		}
		cs.MaxStarts = max(24, s.MaxStarts/4)
	}
	var local []found
	starts, converged := 0, 0
	for _, y0 := range c.starts(&cs) {
		if ctx.Err() != nil {
			break
		}
		starts++
		r := c.solve(y0, s)
		if !r.ok || r.faceRes > 1e-8 || math.IsNaN(r.residual) || r.limErr > 1e-7 || c.faceRatio(r.y) > maxFaceRatio || !c.pathIndependent(r.y) {
			continue
		}
		converged++
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
		f.fam, f.res = c.family(r, s)
		if f.fam != nil {
			// Drop earlier members of the family.
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
	return local, starts, converged
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

// onFamily reports whether y lies on the family through rep: within its
// range, and on the affine span of its tangent directions.
func onFamily(f *Family, rep, y []float64) bool {
	for k, j := range f.Free {
		if y[j] < f.Range[k][0]-1e-9*(1+math.Abs(f.Range[k][0])) || y[j] > f.Range[k][1]+1e-9*(1+math.Abs(f.Range[k][1])) {
			return false
		}
	}
	d := make([]float64, len(y))
	for i := range y {
		d[i] = y[i] - rep[i]
	}
	for _, v := range f.Basis {
		p := dot(d, v)
		for i := range d {
			d[i] -= p * v[i]
		}
	}
	onSpan := true
	for i := range d {
		if math.Abs(d[i]) > 1e-6*(1+math.Abs(y[i])) {
			onSpan = false
		}
	}
	if onSpan {
		return true
	}
	// A curved family: near a segment of a walked path.
	for _, path := range f.paths {
		for k := 1; k < len(path); k++ {
			if segmentDist(y, path[k-1], path[k]) <= 1e-5*(1+maxAbs(y)) {
				return true
			}
		}
	}
	return false
}

// segmentDist is the Euclidean distance from y to the segment [a, b].
func segmentDist(y, a, b []float64) float64 {
	var ab2, t float64
	for i := range y {
		ab2 += (b[i] - a[i]) * (b[i] - a[i])
		t += (y[i] - a[i]) * (b[i] - a[i])
	}
	if ab2 > 0 {
		t = clamp(t/ab2, 0, 1)
	} else {
		t = 0
	}
	var d2 float64
	for i := range y {
		e := y[i] - (a[i] + t*(b[i]-a[i]))
		d2 += e * e
	}
	return math.Sqrt(d2)
}

func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// mergeFaceEnds drops face points that are the ends at infinity of a family
// found in a chart with those couplings finite.
func mergeFaceEnds(pts []found) []found {
	var out []found
	for _, p := range pts {
		merged := false
		for _, q := range pts {
			if q.fam == nil || len(q.c.face) >= len(p.c.face) || p.c.shear != nil || q.c.shear != nil {
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

// endOf reports whether the face point p is an end at infinity of the
// family q: some tangent direction v of q, followed one way, sends exactly
// the couplings p has at an infinity (and q has finite) to those
// infinities, q's range reaches them, and p's other couplings are values
// the family takes (q's representative, or within range along another
// tangent direction).
func endOf(q, p found) bool {
	var gone []int
	for i := range p.c.inf {
		if p.c.inf[i] == q.c.inf[i] {
			continue
		}
		if q.c.inf[i] != 0 {
			return false
		}
		gone = append(gone, i)
	}
	if len(gone) == 0 {
		return false
	}
	fk := map[int]int{}
	for k, j := range q.fam.Free {
		fk[j] = k
	}
	const tiny = 1e-6
	covered := map[int]bool{}
	used := make([]bool, len(q.fam.Tangent))
	for bi, v := range q.fam.Tangent {
		touches := false
		for _, i := range gone {
			touches = touches || math.Abs(v[i]) > tiny
		}
		if !touches {
			continue
		}
		// Following v one way must send exactly gone couplings, all to
		// p's infinities.
		sign := 0.0
		for i := range v {
			if math.Abs(v[i]) <= tiny {
				continue
			}
			if !contains(gone, i) {
				return false
			}
			want := 1.0
			if p.c.inf[i] < 0 {
				want = -1
			}
			sg := want * math.Copysign(1, v[i])
			if sign != 0 && sg != sign {
				return false
			}
			sign = sg
			covered[i] = true
		}
		used[bi] = true
	}
	for _, i := range gone {
		k, free := fk[i]
		if !covered[i] || !free {
			return false
		}
		if (p.c.inf[i] > 0 && !math.IsInf(q.fam.Range[k][1], 1)) || (p.c.inf[i] < 0 && !math.IsInf(q.fam.Range[k][0], -1)) {
			return false
		}
	}
	for i := range p.c.inf {
		if p.c.inf[i] != 0 || contains(gone, i) {
			continue
		}
		other := false
		for bj, w := range q.fam.Tangent {
			other = other || (!used[bj] && math.Abs(w[i]) > tiny)
		}
		if other {
			k, free := fk[i]
			if !free || p.res.y[i] < q.fam.Range[k][0] || p.res.y[i] > q.fam.Range[k][1] {
				return false
			}
		} else if math.Abs(p.res.y[i]-q.res.y[i]) > 1e-6*(1+math.Abs(q.res.y[i])) {
			return false
		}
	}
	return true
}

func contains(v []int, x int) bool {
	for _, e := range v {
		if e == x {
			return true
		}
	}
	return false
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

// family decides whether the fixed point r.y is isolated or lies on a
// family: the null space of (J − I) over the chart's free coordinates gives
// candidate directions; a direction is kept when Newton, started a small
// step along it, converges to another fixed point there. Each kept direction
// is walked both ways to find the family's range, and the representative is
// moved to the family's point nearest the origin. It returns nil and r
// unchanged for an isolated point.
func (c *chart) family(r newtonResult, s *FindSettings) (*Family, newtonResult) {
	y := r.y
	n := len(y)
	k := len(c.free)
	if k == 0 {
		return nil, r
	}
	jac := mat.NewDense(k, k, nil)
	fy := make([]float64, n)
	c.eval(fy, y)
	c.newtonJac(jac, y, fy)
	var svd mat.SVD
	if !finiteMatrix(jac) || !svd.Factorize(jac, mat.SVDFull) {
		return nil, r
	}
	vals := svd.Values(nil)
	var v mat.Dense
	svd.VTo(&v)
	sub := *s
	sub.MaxIter = 30
	sub.Escape = 4 * walkLimit
	var basis [][]float64
	for q := k - 1; q >= 0; q-- {
		if vals[q] > 1e-5*math.Max(1, vals[0]) {
			break
		}
		dir := make([]float64, n)
		for a, i := range c.free {
			dir[i] = v.At(a, q)
		}
		if c.alongFamily(y, dir, 1e-3, &sub) && c.alongFamily(y, dir, -1e-3, &sub) {
			basis = append(basis, dir)
		}
	}
	if len(basis) == 0 {
		return nil, r
	}
	// Components below 1e-6 of a direction's largest are noise of the
	// null-space computation: drop them before naming the directions.
	clean := make([][]float64, len(basis))
	for k, v := range basis {
		big := maxAbs(v)
		clean[k] = make([]float64, n)
		for i := range v {
			if math.Abs(v[i]) > 1e-6*big {
				clean[k][i] = v[i]
			}
		}
	}
	fam := &Family{Basis: basis, Tangent: echelon(clean)}
	lo := make([]float64, n)
	hi := make([]float64, n)
	copy(lo, y)
	copy(hi, y)
	var paths [][][]float64
	for _, dir := range basis {
		for _, sign := range []float64{-1, 1} {
			paths = append(paths, c.walk(y, dir, sign, &sub, lo, hi))
		}
	}
	fam.paths = paths
	for _, i := range c.free {
		moves := false
		for _, dir := range basis {
			moves = moves || math.Abs(dir[i]) > 1e-6
		}
		if moves {
			fam.Free = append(fam.Free, i)
			fam.Range = append(fam.Range, [2]float64{lo[i], hi[i]})
		}
	}
	// Representative: the point of the span nearest the origin, if it is
	// a fixed point within the range.
	rep := append([]float64(nil), y...)
	for _, dir := range basis {
		p := dot(rep, dir)
		for i := range rep {
			rep[i] -= p * dir[i]
		}
	}
	for k, i := range fam.Free {
		rep[i] = clamp(rep[i], fam.Range[k][0], fam.Range[k][1])
	}
	if res := c.residual(fy, rep); res <= s.LooseTol*(1+supNorm(rep, c.free)) {
		for i := range rep {
			if math.Abs(rep[i]) < 1e-12 {
				rep[i] = 0
			}
		}
		r.y = rep
		r.residual = c.residual(fy, rep)
	}
	return fam, r
}

// alongFamily reports whether a Newton solve started at y + t·dir converges
// to a fixed point near there (not back to y).
func (c *chart) alongFamily(y, dir []float64, t float64, s *FindSettings) bool {
	z, ok := c.correct(y, dir, t, s)
	if !ok {
		return false
	}
	var dist float64
	for i := range z {
		dist = math.Max(dist, math.Abs(z[i]-y[i]))
	}
	return dist > 0.5*math.Abs(t)*maxAbs(dir)
}

// correct returns the fixed point Newton reaches from y + t·dir, and
// whether it stayed close to that prediction.
func (c *chart) correct(y, dir []float64, t float64, s *FindSettings) ([]float64, bool) {
	z0 := make([]float64, len(y))
	for i := range y {
		z0[i] = y[i] + t*dir[i]
	}
	r := c.solve(z0, s)
	if !r.ok || r.faceRes > 1e-8 {
		return nil, false
	}
	var dev float64
	for i := range z0 {
		dev = math.Max(dev, math.Abs(r.y[i]-z0[i]))
	}
	return r.y, dev <= 0.1*math.Abs(t)+1e-9
}

func maxAbs(v []float64) float64 {
	var m float64
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// walkLimit is where a walk along a family concludes that it runs to
// infinity.
const walkLimit = 500

// maxFaceRatio bounds |u′|/u on a face that holds fixed points: the
// eigenvalue of a face direction; larger means the face is kept only
// non-analytically.
const maxFaceRatio = 1e6

// walkLimit is the walk's limit in this chart: on a face, half the
// smallest coupling at which the limit u → 0 is evaluated, beyond which the
// face is no longer resolved and the family is taken to run to infinity.
func (c *chart) walkLimit() float64 {
	l := float64(walkLimit)
	for _, i := range c.face {
		l = math.Min(l, 0.5*math.Abs(c.comp[i].X(limitEps)))
	}
	return l
}

// walk follows the family from y along sign·dir by continuation: predict
// a step along the current tangent, correct with Newton, accept when the
// correction is small against the step (then the step grows), halve the
// step otherwise. It updates the per-coupling extremes lo and hi and
// returns the accepted points. It ends at a finite end (the step shrinks
// below 1e-7) or at infinity (past walkLimit; the couplings still moving
// then run to ±∞).
func (c *chart) walk(y, dir []float64, sign float64, s *FindSettings, lo, hi []float64) [][]float64 {
	limit := c.walkLimit()
	n := len(y)
	cur := append([]float64(nil), y...)
	d := make([]float64, n)
	for i := range d {
		d[i] = sign * dir[i]
	}
	path := [][]float64{cur}
	step := 0.05
	for it := 0; it < 400 && step > 1e-7; it++ {
		z, ok := c.correct(cur, d, step, s)
		if !ok {
			step /= 2
			continue
		}
		// New tangent: the chord, normalised.
		var norm float64
		nd := make([]float64, n)
		for i := range nd {
			nd[i] = z[i] - cur[i]
			norm += nd[i] * nd[i]
		}
		norm = math.Sqrt(norm)
		if norm == 0 {
			step /= 2
			continue
		}
		for i := range nd {
			nd[i] /= norm
		}
		for i := range z {
			lo[i] = math.Min(lo[i], z[i])
			hi[i] = math.Max(hi[i], z[i])
		}
		path = append(path, z)
		cur, d = z, nd
		if maxAbs(z) > limit {
			for i := range d {
				if math.Abs(d[i]) > 1e-3 {
					if d[i] > 0 {
						hi[i] = math.Inf(1)
					} else {
						lo[i] = math.Inf(-1)
					}
				}
			}
			break
		}
		step *= 2
	}
	return path
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
		Inf:         c.infinities(),
		Coordinates: make([]string, n),
		U:           append([]float64(nil), y...),
		Family:      fam,
		Closure:     math.NaN(),
		chart:       c,
	}
	c.toX(fp.X, y)
	for i := range c.cs {
		fp.Coordinates[i] = c.coordName(i)
	}
	closureGrows := false
	var closureNear, closureFar float64
	if cl, ok := m.(Closer); ok {
		if len(c.face) == 0 {
			fp.Closure = cl.Closure(fp.X)
		} else {
			// At infinite coupling, measure the closure error on the way
			// there, at two depths.
			at := func(u float64) float64 {
				yy := append([]float64(nil), y...)
				for _, i := range c.face {
					yy[i] = u
				}
				x := make([]float64, n)
				c.toX(x, yy)
				return cl.Closure(x)
			}
			closureNear, closureFar = at(1e-6), at(1e-12)
			fp.Closure = math.Max(closureNear, closureFar)
			closureGrows = closureFar > 1e-8 && closureFar > 1.5*closureNear
		}
	}
	jac, errs := c.jacobian(y)
	fp.Jacobian, fp.JacobianErr = jac, errs

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
		if cp.TwoSite() && cp.Symmetric && fp.Inf[i] != 0 {
			fp.ZeroTemperature = true
		}
	}
	if !hasBreaking(c.cs) {
		symmetric = true
	}
	fp.Symmetric = symmetric
	split := symmetric && hasBreaking(c.cs)
	// At a symmetric point the symmetric and breaking blocks decouple (x′_s
	// is even and x′_b odd in x_b), and at zero two-site couplings the
	// two-site couplings do not respond to one-body ones. Entries that
	// these identities make zero are set to exactly zero when they are
	// zero within their error, so eigenvectors do not mix across blocks.
	clean := mat.DenseCopyOf(jac)
	for i, ci := range c.cs {
		for j, cj := range c.cs {
			cross := split && ci.Symmetric != cj.Symmetric
			oneToTwo := zeroTwo && ci.TwoSite() && cj.Role.OneBody()
			if (cross || oneToTwo) && math.Abs(clean.At(i, j)) <= 10*errs.At(i, j)+1e-12 {
				clean.Set(i, j, 0)
			}
		}
	}
	var blocks [][]int
	var blockKind []Block
	if split {
		var sIdx, bIdx []int
		for i, cp := range c.cs {
			if cp.Symmetric {
				sIdx = append(sIdx, i)
			} else {
				bIdx = append(bIdx, i)
			}
		}
		blocks, blockKind = [][]int{sIdx, bIdx}, []Block{SymmetricBlock, BreakingBlock}
	} else {
		all := make([]int, n)
		for i := range all {
			all[i] = i
		}
		kind := MixedBlock
		if symmetric {
			kind = SymmetricBlock
		}
		blocks, blockKind = [][]int{all}, []Block{kind}
	}
	var dirs []Direction
	for bk, idx := range blocks {
		if len(idx) == 0 {
			continue
		}
		sub := subMatrix(clean, idx)
		subErr := subMatrix(errs, idx)
		bd, ok := eigenDirections(sub, subErr, m.Rescale())
		if !ok {
			fp.Notes = append(fp.Notes, "eigen-decomposition failed")
			return fp
		}
		var two, one []int
		for a, i := range idx {
			if zeroTwo && c.cs[i].Role.OneBody() {
				one = append(one, a)
			} else {
				two = append(two, a)
			}
		}
		if zeroTwo && len(one) > 0 {
			tagBlocks(bd, sub, [][]int{two, one}, func(d *Direction, g int) { d.OneBody = g == 1 })
		}
		for k := range bd {
			bd[k].Block = blockKind[bk]
			bd[k].Right = embed(bd[k].Right, idx, n)
			bd[k].Left = embed(bd[k].Left, idx, n)
		}
		dirs = append(dirs, bd...)
	}
	sort.SliceStable(dirs, func(i, j int) bool { return cmplx.Abs(dirs[i].Lambda) > cmplx.Abs(dirs[j].Lambda) })
	if fam != nil {
		// The k directions nearest λ = 1 are along the family.
		for range fam.Basis {
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
	case symmetryOf(m) == "" && counted == n && allRelevant:
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
	if !math.IsNaN(yh) && yh > d+tolH && fp.Kind != Sink {
		fp.Notes = append(fp.Notes, fmt.Sprintf("unphysical: y_h = %.4g > d = %g, so beta = (d - y_h)/y_t < 0 and eta < 2 - d; an artefact of the approximation", yh, d))
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
	if closureGrows {
		fp.Notes = append(fp.Notes, fmt.Sprintf("closure error grows toward this point (%.3g, then %.3g closer in): the coupling basis does not hold the flow here, so this fixed point may be an artefact of the projection", closureNear, closureFar))
	} else if !math.IsNaN(fp.Closure) && fp.Closure > 1e-10 {
		fp.Notes = append(fp.Notes, fmt.Sprintf("closure error %.3g: the step leaves the coupling basis", fp.Closure))
	}
	return fp
}

func subMatrix(a *mat.Dense, idx []int) *mat.Dense {
	out := mat.NewDense(len(idx), len(idx), nil)
	for p, i := range idx {
		for q, j := range idx {
			out.Set(p, q, a.At(i, j))
		}
	}
	return out
}

func embed(v []complex128, idx []int, n int) []complex128 {
	out := make([]complex128, n)
	for p, i := range idx {
		out[i] = v[p]
	}
	return out
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

// echelon returns the reduced row-echelon form of the rows vs (linearly
// independent), with entries below 1e-12 set to 0.
func echelon(vs [][]float64) [][]float64 {
	k := len(vs)
	if k == 0 {
		return nil
	}
	n := len(vs[0])
	a := make([][]float64, k)
	for i := range vs {
		a[i] = append([]float64(nil), vs[i]...)
	}
	row := 0
	for col := 0; col < n && row < k; col++ {
		piv := row
		for r := row + 1; r < k; r++ {
			if math.Abs(a[r][col]) > math.Abs(a[piv][col]) {
				piv = r
			}
		}
		if math.Abs(a[piv][col]) < 1e-9 {
			continue
		}
		a[row], a[piv] = a[piv], a[row]
		p := a[row][col]
		for j := range a[row] {
			a[row][j] /= p
		}
		for r := 0; r < k; r++ {
			if r == row {
				continue
			}
			f := a[r][col]
			for j := range a[r] {
				a[r][j] -= f * a[row][j]
			}
		}
		row++
	}
	for i := range a {
		for j := range a[i] {
			if math.Abs(a[i][j]) < 1e-12 {
				a[i][j] = 0
			}
		}
	}
	return a
}
