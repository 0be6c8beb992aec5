package flow

import (
	"context"
	"math"
)

// Slice is a two-dimensional cut through coupling space: couplings X and Y
// vary, the others are held at Base. Flow lines drawn on a slice are
// projections when the map has more couplings: the held couplings drift
// along a trajectory.
type Slice struct {
	M    Map
	X, Y int       // indices of the varying couplings
	Base []float64 // the held values (entries X and Y are ignored)
}

// Point returns the couplings at (x, y) on the slice.
func (s Slice) Point(x, y float64) []float64 {
	p := append([]float64(nil), s.Base...)
	p[s.X], p[s.Y] = x, y
	return p
}

// Projected reports whether flow lines on the slice are projections (the
// map has couplings besides X and Y).
func (s Slice) Projected() bool { return len(s.M.Couplings()) > 2 }

// Line is a trajectory projected onto the slice: the (x, y) of each step
// and the full couplings, with the reason it stopped.
type Line struct {
	XY   [][2]float64
	Full [][]float64
	Stop Stop
}

// FlowLines traces a trajectory of at most steps steps from each start and
// projects it onto the slice. Trajectories stop where Trace stops them.
func (s Slice) FlowLines(ctx context.Context, starts [][2]float64, steps int) []Line {
	out := make([]Line, 0, len(starts))
	for _, st := range starts {
		if ctx.Err() != nil {
			break
		}
		t := Trace(s.M, s.Point(st[0], st[1]), steps, &TraceSettings{Escape: 50})
		var l Line
		for _, p := range t.Points {
			l.XY = append(l.XY, [2]float64{p.X[s.X], p.X[s.Y]})
			l.Full = append(l.Full, p.X)
		}
		l.Stop = t.Stop
		out = append(out, l)
	}
	return out
}

// Phases returns the phase reached from every point of a grid on the
// slice, indexed [iy][ix].
func (s Slice) Phases(ctx context.Context, ph Phaser, xs, ys []float64) [][]Phase {
	out := make([][]Phase, len(ys))
	for j, y := range ys {
		out[j] = make([]Phase, len(xs))
		for i, x := range xs {
			if ctx.Err() != nil {
				return out
			}
			out[j][i] = ph.Phase(ctx, s.Point(x, y))
		}
	}
	return out
}

// OnSlice reports whether a fixed point lies on the slice: its held
// couplings equal Base (within tol; infinite ones never do).
func (s Slice) OnSlice(p FixedPoint, tol float64) bool {
	for i := range p.X {
		if i == s.X || i == s.Y {
			continue
		}
		if p.Inf[i] != 0 || math.Abs(p.X[i]-s.Base[i]) > tol*(1+math.Abs(s.Base[i])) {
			return false
		}
	}
	return true
}
