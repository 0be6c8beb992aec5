package flow

import (
	"fmt"
	"math"
)

// Stop says why a trajectory ended.
type Stop int

const (
	MaxSteps   Stop = iota // the requested number of steps was taken
	Converged              // successive points agree: a finite fixed point
	Escaped                // a coupling passed the escape threshold (runs to infinity)
	LeftDomain             // the map's domain check failed
	NotFinite              // the step produced NaN or Inf
)

func (s Stop) String() string {
	switch s {
	case MaxSteps:
		return "steps done"
	case Converged:
		return "converged"
	case Escaped:
		return "escaped to infinite coupling"
	case LeftDomain:
		return "left the physical domain"
	case NotFinite:
		return "not finite"
	}
	return "unknown"
}

// TracePoint is one row of a trajectory: the couplings xₙ and the constant
// g(xₙ) of the step out of xₙ (NaN when that step failed).
type TracePoint struct {
	X []float64
	G float64
}

// Trajectory is the flow from a start point.
type Trajectory struct {
	Points []TracePoint
	Stop   Stop
	Detail string // e.g. which coupling escaped, or the domain error
}

// TraceSettings controls [Trace]. A zero field takes its default.
type TraceSettings struct {
	Tol    float64 // convergence: ‖xₙ₊₁ − xₙ‖∞ ≤ Tol (1 + ‖xₙ‖∞); default 1e-12
	Escape float64 // |xᵢ| beyond this is an escape to infinity; default 1e3
}

// Trace iterates m from x0 for at most steps steps. Row 0 is the start;
// it stops early, with the reason, when the flow converges, escapes to
// infinite coupling, leaves the map's domain, or produces NaN or Inf
// (never silently carried on).
func Trace(m Map, x0 []float64, steps int, s *TraceSettings) *Trajectory {
	tol, esc := 1e-12, 1e3
	if s != nil {
		if s.Tol > 0 {
			tol = s.Tol
		}
		if s.Escape > 0 {
			esc = s.Escape
		}
	}
	cs := m.Couplings()
	n := len(x0)
	t := &Trajectory{}
	x := append([]float64(nil), x0...)
	if d, ok := m.(Domainer); ok {
		if err := d.Domain(x); err != nil {
			t.Points = append(t.Points, TracePoint{X: x, G: math.NaN()})
			t.Stop, t.Detail = LeftDomain, err.Error()
			return t
		}
	}
	for k := 0; ; k++ {
		xp := make([]float64, n)
		g := m.Step(xp, x)
		// A map may give no constant (g NaN, e.g. user formulas without
		// one): only the couplings decide whether the step failed.
		bad := false
		for _, v := range xp {
			bad = bad || math.IsNaN(v) || math.IsInf(v, 0)
		}
		if bad || math.IsInf(g, 0) {
			g = math.NaN()
		}
		t.Points = append(t.Points, TracePoint{X: x, G: g})
		if bad {
			t.Stop, t.Detail = NotFinite, "the step out of this point is not finite"
			if d, ok := m.(Domainer); ok {
				if err := d.Domain(x); err != nil {
					t.Stop, t.Detail = LeftDomain, err.Error()
				}
			}
			return t
		}
		if k == steps {
			t.Stop = MaxSteps
			return t
		}
		var diff, norm float64
		for i := range xp {
			diff = math.Max(diff, math.Abs(xp[i]-x[i]))
			norm = math.Max(norm, math.Abs(x[i]))
		}
		for i, v := range xp {
			if math.Abs(v) > esc {
				sign := "+"
				if v < 0 {
					sign = "-"
				}
				tmp := make([]float64, n)
				ge := m.Step(tmp, xp)
				if math.IsInf(ge, 0) {
					ge = math.NaN()
				}
				t.Points = append(t.Points, TracePoint{X: xp, G: ge})
				t.Stop = Escaped
				t.Detail = fmt.Sprintf("%s ran past %s%g (toward %sinf)", cs[i].Name, sign, esc, sign)
				return t
			}
		}
		if d, ok := m.(Domainer); ok {
			if err := d.Domain(xp); err != nil {
				t.Points = append(t.Points, TracePoint{X: xp, G: math.NaN()})
				t.Stop, t.Detail = LeftDomain, err.Error()
				return t
			}
		}
		if diff <= tol*(1+norm) {
			t.Stop = Converged
			return t
		}
		x = xp
	}
}
