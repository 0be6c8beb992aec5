package flow

import (
	"context"
	"math"
	"math/cmplx"
	"sort"
	"strings"
)

// Phase is the outcome of following a start point: which phase (sink) the
// flow reaches.
type Phase struct {
	Index int    // the engine's index of the phase; −1 when undecided
	Label string // e.g. "K=0, h=0"
	Steps int    // steps taken to decide
	// Signature lists the couplings at infinity with their signs, e.g.
	// "J=+inf, K=-inf"; Runaway marks a flow that ran off to infinity
	// without meeting a known sink.
	Signature string
	Runaway   bool
	// Breaking lists the symmetry-breaking couplings at infinity, e.g.
	// "h=+inf": a field-dominated phase.
	Breaking string
	// Undecided marks an outcome the engine could not decide within its
	// step limit; bisection stops there.
	Undecided bool
}

// Same reports whether two outcomes are the same phase: the same label; or
// both dominated by the same symmetry-breaking couplings at the same
// infinities (a field-dominated phase, where the symmetric couplings are
// redundant); or a runaway flow and a sink (or another runaway) with the
// same couplings at the same infinities.
func (p Phase) Same(q Phase) bool {
	if p.Label == q.Label {
		return true
	}
	if p.Breaking != "" || q.Breaking != "" {
		return p.Breaking == q.Breaking
	}
	return (p.Runaway || q.Runaway) && p.Signature != "" && p.Signature == q.Signature
}

// Phaser decides which phase a point flows to. Map engines get one from
// [NewSinkPhases]; an engine without a low-dimensional flow (tensor
// renormalization) supplies its own decision.
type Phaser interface {
	Phase(ctx context.Context, x []float64) Phase
}

// SinkPhases decides phases for a map by following its flow to the sinks
// found by [FindAll].
type SinkPhases struct {
	m        Map
	cs       []Coupling
	points   []FixedPoint
	sinks    []int   // indices into points
	stable   []bool  // no relevant direction at all
	symOnly  []bool  // relevant directions only symmetry-breaking ones
	MaxSteps int     // default 600
	Capture  float64 // distance within which a sink captures; default 1e-6
}

// NewSinkPhases returns the phase decision for m, with points the fixed
// points of m (from FindAll).
func NewSinkPhases(m Map, points []FixedPoint) *SinkPhases {
	sp := &SinkPhases{m: m, cs: m.Couplings(), points: points, MaxSteps: 600, Capture: 1e-6}
	for i, p := range points {
		if p.Kind != Sink {
			continue
		}
		sp.sinks = append(sp.sinks, i)
		stable, symOnly := true, true
		for _, d := range p.Directions {
			if d.Free || d.Relevance == Irrelevant {
				continue
			}
			stable = false
			if d.Block != BreakingBlock {
				symOnly = false
			}
		}
		sp.stable = append(sp.stable, stable)
		sp.symOnly = append(sp.symOnly, symOnly)
	}
	return sp
}

// Points returns the fixed points the decision uses.
func (sp *SinkPhases) Points() []FixedPoint { return sp.points }

// Phase follows the flow from x and returns the phase it reaches.
//
// A start in the symmetric subspace (every symmetry-breaking coupling
// exactly 0) stays there: its symmetry-breaking couplings are kept at 0,
// which removes rounding noise along relevant fields. A sink captures the
// flow when the flow comes within Capture of it and the sink has no
// relevant direction, or only symmetry-breaking ones and the flow is
// symmetric. A flow that converges onto a sink is decided too. A flow that
// runs off to infinity without meeting a sink is labelled by the couplings
// that diverge and their signs. Otherwise, after MaxSteps, the nearest sink
// within 1e-3, or "undecided" (Index −1).
func (sp *SinkPhases) Phase(ctx context.Context, x []float64) Phase {
	n := len(x)
	cur := append([]float64(nil), x...)
	next := make([]float64, n)
	sym := true
	for i, c := range sp.cs {
		if !c.Symmetric && x[i] != 0 {
			sym = false
		}
	}
	escaped := false
	for step := 0; step <= sp.MaxSteps; step++ {
		if step%32 == 0 && ctx.Err() != nil {
			break
		}
		for k, i := range sp.sinks {
			if (sp.stable[k] || (sym && sp.symOnly[k])) && sp.points[i].Distance(cur) <= sp.Capture {
				return sp.sinkPhase(i, step)
			}
		}
		sp.m.Step(next, cur)
		if sym {
			for i, c := range sp.cs {
				if !c.Symmetric {
					next[i] = 0
				}
			}
		}
		bad := false
		for _, v := range next {
			bad = bad || math.IsNaN(v)
		}
		if bad {
			break
		}
		for k, i := range sp.sinks {
			if !(sp.stable[k] || (sym && sp.symOnly[k])) {
				continue // a relevant direction may still carry the flow away
			}
			p := sp.points[i]
			if p.Distance(cur) < 1e-3 && maxDiff(p.Coords(next), p.Coords(cur)) < 1e-13 {
				return sp.sinkPhase(i, step)
			}
		}
		cur, next = next, cur
		saturate(cur)
		if maxAbs(cur) > escapeAt {
			escaped = true
			break
		}
	}
	best, bd := -1, 1e-3
	for _, i := range sp.sinks {
		if d := sp.points[i].Distance(cur); d < bd {
			best, bd = i, d
		}
	}
	if best >= 0 {
		return sp.sinkPhase(best, sp.MaxSteps)
	}
	if escaped {
		var parts []string
		for i, c := range sp.cs {
			if math.Abs(cur[i]) > saturateOthers {
				sign := "+inf"
				if cur[i] < 0 {
					sign = "-inf"
				}
				parts = append(parts, c.Name+"="+sign)
			}
		}
		sig := strings.Join(parts, ", ")
		var brk []string
		for i, c := range sp.cs {
			if !c.Symmetric && math.Abs(cur[i]) > saturateOthers {
				brk = append(brk, c.Name+map[bool]string{true: "=+inf", false: "=-inf"}[cur[i] > 0])
			}
		}
		return Phase{Index: -2, Label: "runs off to " + sig, Steps: sp.MaxSteps, Signature: sig, Runaway: true,
			Breaking: strings.Join(brk, ", ")}
	}
	return Phase{Index: -1, Label: "undecided", Steps: sp.MaxSteps}
}

const (
	saturateAt     = 300 // a coupling alone beyond this is held there
	saturateOthers = 30  // ... when every other coupling is below this
	escapeAt       = 1e5 // beyond this the flow has run off to infinity
)

// saturate holds at ±saturateAt a coupling that runs off alone (every
// other coupling below saturateOthers): the flow of the others no longer
// depends on them (their compactified coordinates are below e^{−300}),
// and letting them grow without bound would only feed rounding noise
// (of relative size 1e-16 times the largest coupling) into the rest while
// a slow flow, near a critical point, is still undecided.
func saturate(x []float64) {
	var big []int
	for i, v := range x {
		if math.Abs(v) > saturateAt {
			big = append(big, i)
		} else if math.Abs(v) > saturateOthers {
			return
		}
	}
	// Several couplings running off together may keep finite
	// combinations (a ray at zero temperature): leave those alone.
	if len(big) == 1 && len(x) > 1 {
		x[big[0]] = math.Copysign(saturateAt, x[big[0]])
	}
}

func (sp *SinkPhases) sinkPhase(i, steps int) Phase {
	p := sp.points[i]
	var parts, brk []string
	for j, c := range sp.cs {
		v := ""
		switch {
		case p.Inf[j] > 0:
			v = c.Name + "=+inf"
		case p.Inf[j] < 0:
			v = c.Name + "=-inf"
		default:
			continue
		}
		parts = append(parts, v)
		if !c.Symmetric {
			brk = append(brk, v)
		}
	}
	return Phase{Index: i, Label: p.Place(sp.m), Steps: steps, Signature: strings.Join(parts, ", "), Breaking: strings.Join(brk, ", ")}
}

func maxDiff(a, b []float64) float64 {
	var d float64
	for i := range a {
		d = math.Max(d, math.Abs(a[i]-b[i]))
	}
	return d
}

// Controlling returns the index of the fixed point that controls the
// transition between xa and xb (two points on either side of a crossing,
// close together): the two flows stay together until they reach that point
// and separate along its relevant direction there. Counting the steps the
// common flow spends near each fixed point (in that point's chart
// coordinates, within radius) up to the separation, the point with the most
// is returned; −1 if none.
func (sp *SinkPhases) Controlling(xa, xb []float64, radius float64) int {
	n := len(xa)
	a := append([]float64(nil), xa...)
	b := append([]float64(nil), xb...)
	na := make([]float64, n)
	nb := make([]float64, n)
	mid := make([]float64, n)
	count := make([]int, len(sp.points))
	for k := 0; k < sp.MaxSteps; k++ {
		var sep float64
		for i := range a {
			mid[i] = (a[i] + b[i]) / 2
			sep = math.Max(sep, math.Abs(math.Atan(a[i])-math.Atan(b[i])))
		}
		if sep > 1e-3 || math.IsNaN(sep) {
			break
		}
		for i, p := range sp.points {
			if p.Distance(mid) <= radius*(1+maxAbs(p.U)) {
				count[i]++
			}
		}
		sp.m.Step(na, a)
		sp.m.Step(nb, b)
		a, na = na, a
		b, nb = nb, b
	}
	best, bc := -1, 0
	for i, c := range count {
		if c > bc {
			best, bc = i, c
		}
	}
	return best
}

// TransitionKind says whether a crossing is continuous or first order.
type TransitionKind int

const (
	UnknownKind TransitionKind = iota
	Continuous                 // controlled by a critical or multicritical point
	FirstOrder                 // controlled by a discontinuity fixed point
	// OneBodyArtefact: controlled by a sink at zero two-site couplings
	// whose one-body field is relevant (bond moving makes the field
	// relevant at the disordered sink): not a transition of the model.
	OneBodyArtefact
)

func (k TransitionKind) String() string {
	switch k {
	case Continuous:
		return "continuous"
	case FirstOrder:
		return "first order"
	case OneBodyArtefact:
		return "artefact: a field relevant at the disordered sink by construction of the scheme"
	}
	return "undetermined"
}

// Path is a line through coupling space, parametrised by s from From to
// To. Point writes the couplings at s into dst.
type Path struct {
	Name     string // the path variable (a coupling's name, or T)
	From, To float64
	Samples  int // evenly spaced samples including both ends; at least 2
	Point    func(dst []float64, s float64)
}

// Crossing is a transition found on a path.
type Crossing struct {
	Value       float64    // the path variable at the transition
	Bracket     [2]float64 // the final bracket; its width is at most the tolerance
	Below       Phase      // the phase at Bracket[0]
	Above       Phase      // the phase at Bracket[1]
	Controlling int        // index of the controlling fixed point, −1 if none
	Kind        TransitionKind
	Refined     bool // refined with the linear scaling field of the controlling point
	// Undecided: the bisection stopped at a flow the engine could not
	// decide; the transition lies in Bracket, wider than the tolerance.
	Undecided bool
}

// CrossingSettings controls [Crossings]. A zero field takes its default.
type CrossingSettings struct {
	Tol float64 // bracket width in the path variable; default 1e-10
}

// Crossings samples the path, bisects every bracket whose ends reach
// different phases down to the tolerance, and, when ph is a *SinkPhases,
// names the fixed point controlling each crossing and whether the
// transition is continuous or first order. Crossings closer together than
// the sampling step can be missed.
func Crossings(ctx context.Context, ph Phaser, path Path, s *CrossingSettings) ([]Crossing, error) {
	tol := 1e-10
	if s != nil && s.Tol > 0 {
		tol = s.Tol
	}
	ns := path.Samples
	if ns < 2 {
		ns = 2
	}
	n := 0
	probe := func(v float64) Phase {
		x := make([]float64, dimOf(ph))
		path.Point(x, v)
		n++
		return ph.Phase(ctx, x)
	}
	vals := make([]float64, ns)
	phs := make([]Phase, ns)
	for i := range vals {
		vals[i] = path.From + (path.To-path.From)*float64(i)/float64(ns-1)
		phs[i] = probe(vals[i])
		if ctx.Err() != nil {
			return nil, ErrCanceled
		}
	}
	var out []Crossing
	for i := 1; i < ns; i++ {
		if phs[i].Same(phs[i-1]) {
			continue
		}
		a, b := vals[i-1], vals[i]
		pa, pb := phs[i-1], phs[i]
		undecided := pa.Undecided || pb.Undecided
		for math.Abs(b-a) > tol && !undecided {
			mid := (a + b) / 2
			if mid == a || mid == b {
				break
			}
			pm := probe(mid)
			if ctx.Err() != nil {
				return out, ErrCanceled
			}
			if pm.Undecided {
				undecided = true
				break
			}
			if pm.Same(pa) {
				a, pa = mid, pm
			} else {
				b, pb = mid, pm
			}
		}
		if a > b {
			a, b = b, a
			pa, pb = pb, pa
		}
		c := Crossing{Value: (a + b) / 2, Bracket: [2]float64{a, b}, Below: pa, Above: pb, Controlling: -1, Undecided: undecided}
		if sp, ok := ph.(*SinkPhases); ok && len(sp.points) > 0 {
			xa := make([]float64, len(sp.points[0].X))
			xb := make([]float64, len(sp.points[0].X))
			path.Point(xa, a)
			path.Point(xb, b)
			c.Controlling = sp.Controlling(xa, xb, 0.05)
			if c.Controlling >= 0 {
				fp := sp.points[c.Controlling]
				switch {
				case fp.Discontinuity:
					c.Kind = FirstOrder
				case fp.Kind == Critical || fp.Kind == Multicritical:
					c.Kind = Continuous
				case fp.Kind == Sink && oneBodyRelevant(fp):
					c.Kind = OneBodyArtefact
				}
				if c.Kind == Continuous {
					if v, ok := sp.refine(ctx, path, c, fp, tol); ok {
						c.Value, c.Refined = v, true
					}
				}
			}
		}
		out = append(out, c)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Value < out[j].Value })
	return mergeIsolated(out, tol), nil
}

// refine sharpens a continuous crossing with the thermal scaling field of
// the controlling fixed point: flowing both bracket ends n steps, to where
// the flow sits nearest the point, the linear scaling field u = l·(y − y*)
// is linear in the path variable near the crossing and vanishes on the
// critical surface, so a secant on u gives the crossing. The result is
// kept only if it lies inside the bracket.
func (sp *SinkPhases) refine(ctx context.Context, path Path, c Crossing, fp FixedPoint, tol float64) (float64, bool) {
	field, _, ok := LeadingField(fp)
	if !ok {
		return 0, false
	}
	n := len(fp.X)
	a, b := c.Bracket[0], c.Bracket[1]
	// Find the step at which the flow from the middle is nearest fp.
	x := make([]float64, n)
	next := make([]float64, n)
	path.Point(x, (a+b)/2)
	bestN, bestD := 0, math.Inf(1)
	for k := 0; k < 200; k++ {
		if d := fp.Distance(x); d < bestD {
			bestN, bestD = k, d
		}
		sp.m.Step(next, x)
		x, next = next, x
	}
	if bestD > 1e-2 {
		return 0, false
	}
	u := func(s float64) float64 {
		y := make([]float64, n)
		path.Point(y, s)
		z := make([]float64, n)
		for k := 0; k < bestN; k++ {
			sp.m.Step(z, y)
			y, z = z, y
		}
		return real(ScalingFieldValue(fp, field, y))
	}
	ua, ub := u(a), u(b)
	if ua == ub || math.IsNaN(ua) || math.IsNaN(ub) || (ua > 0) == (ub > 0) {
		return 0, false
	}
	v := a - ua*(b-a)/(ub-ua)
	if !(v >= a && v <= b) {
		return 0, false
	}
	return v, true
}

// mergeIsolated joins two crossings that enclose a single phase no wider
// than a few tolerances (a path sample sitting exactly on a coexistence
// line, such as h = 0 below T_c): they are one transition.
func mergeIsolated(xs []Crossing, tol float64) []Crossing {
	var out []Crossing
	for i := 0; i < len(xs); i++ {
		c := xs[i]
		if i+1 < len(xs) {
			d := xs[i+1]
			if d.Bracket[0]-c.Bracket[1] <= 4*tol && c.Above.Same(d.Below) && !c.Below.Same(d.Above) {
				m := c
				m.Bracket = [2]float64{c.Bracket[0], d.Bracket[1]}
				m.Value = (m.Bracket[0] + m.Bracket[1]) / 2
				m.Above = d.Above
				if m.Kind == UnknownKind {
					m.Kind, m.Controlling = d.Kind, d.Controlling
				}
				out = append(out, m)
				i++
				continue
			}
		}
		out = append(out, c)
	}
	return out
}

func oneBodyRelevant(p FixedPoint) bool {
	found := false
	for _, d := range p.Directions {
		if d.Relevance == Relevant {
			if !d.OneBody {
				return false
			}
			found = true
		}
	}
	return found
}

func dimOf(ph Phaser) int {
	if sp, ok := ph.(*SinkPhases); ok {
		return len(sp.m.Couplings())
	}
	if d, ok := ph.(interface{ Couplings() []Coupling }); ok {
		return len(d.Couplings())
	}
	return 0
}

// LeadingField returns, for a critical point, the left eigenvector of its
// most relevant symmetric direction (the thermal scaling field) and its
// eigenvalue; ok is false when there is none.
func LeadingField(p FixedPoint) (field []complex128, lambda complex128, ok bool) {
	for _, d := range p.Directions {
		if d.Counted() && d.Relevance == Relevant && (!p.Symmetric || d.Block == SymmetricBlock) {
			return d.Left, d.Lambda, true
		}
	}
	return nil, 0, false
}

// ScalingFieldValue returns the linear scaling field l·(y − y*) of the
// point at x (in the point's chart coordinates).
func ScalingFieldValue(p FixedPoint, field []complex128, x []float64) complex128 {
	y := p.Coords(x)
	var s complex128
	for i := range y {
		s += field[i] * complex(y[i]-p.U[i], 0)
	}
	return s
}

var _ = cmplx.Abs
