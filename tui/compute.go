package tui

import (
	"context"
	"math"
	"runtime"
	"sync"

	tea "github.com/charmbracelet/bubbletea"

	"scalewalk/decimation"
	"scalewalk/flow"
)

// Messages of the explorer's background work. Each carries the id of the
// request it answers; a reply to an older request is dropped.

type solvedMsg struct {
	id       int
	points   []flow.FixedPoint
	phases   *flow.SinkPhases
	lines    [][][2]float64
	boundary [][2]float64
	err      error
	// the tensor engine's basin map and the transitions along the
	// horizontal line through the cursor
	basin  []Marker
	tcrits []decimation.TensorCritical
}

type crossMsg struct {
	id     int
	path   flow.Path
	xs     []flow.Crossing
	err    error
	name   string
	temp   bool
	horizo bool
}

type fanMsg struct {
	id    int
	lines [][][2]float64
}

// solveCmd finds the fixed points, then draws flow lines from a grid of
// starts on the slice and marks the boundary between basins.
func solveCmd(ctx context.Context, id int, sl flow.Slice, ax, ay Axis) tea.Cmd {
	return func() (msg tea.Msg) {
		defer func() {
			if r := recover(); r != nil {
				msg = solvedMsg{id: id, err: errorf("internal error in the computation: %v", r)}
			}
		}()
		res, err := flow.FindAll(ctx, sl.M, nil)
		if err != nil {
			return solvedMsg{id: id, err: err}
		}
		flow.SortPoints(res.Points)
		ph := flow.NewSinkPhases(sl.M, res.Points)
		ph.MaxSteps = 200
		var starts [][2]float64
		const nx, ny = 7, 5
		for j := 0; j < ny; j++ {
			for i := 0; i < nx; i++ {
				fx := (float64(i) + 0.5) / nx
				fy := (float64(j) + 0.5) / ny
				starts = append(starts, [2]float64{ax.Value(fx), ay.Value(fy)})
			}
		}
		var lines [][][2]float64
		for _, l := range sl.FlowLines(ctx, starts, 40) {
			lines = append(lines, l.XY)
		}
		// Basins on a coarse grid; a boundary point between neighbours
		// that reach different phases.
		const gx, gy = 48, 24
		xs := make([]float64, gx)
		ys := make([]float64, gy)
		for i := range xs {
			xs[i] = ax.Value((float64(i) + 0.5) / gx)
		}
		for j := range ys {
			ys[j] = ay.Value((float64(j) + 0.5) / gy)
		}
		grid := sl.Phases(ctx, ph, finite(xs), finite(ys))
		var boundary [][2]float64
		for j := range grid {
			for i := range grid[j] {
				if i+1 < len(grid[j]) && !grid[j][i].Same(grid[j][i+1]) {
					boundary = append(boundary, [2]float64{(xs[i] + xs[i+1]) / 2, ys[j]})
				}
				if j+1 < len(grid) && !grid[j][i].Same(grid[j+1][i]) {
					boundary = append(boundary, [2]float64{xs[i], (ys[j] + ys[j+1]) / 2})
				}
			}
		}
		if ctx.Err() != nil {
			return solvedMsg{id: id, err: flow.ErrCanceled}
		}
		return solvedMsg{id: id, points: res.Points, phases: ph, lines: lines, boundary: boundary}
	}
}

func finite(v []float64) []float64 {
	out := append([]float64(nil), v...)
	for i := range out {
		if math.IsInf(out[i], 1) {
			out[i] = 50
		} else if math.IsInf(out[i], -1) {
			out[i] = -50
		}
	}
	return out
}

// crossCmd locates the transitions on a path.
func crossCmd(ctx context.Context, id int, ph *flow.SinkPhases, p flow.Path, horizontal bool) tea.Cmd {
	return func() (msg tea.Msg) {
		defer func() {
			if r := recover(); r != nil {
				msg = crossMsg{id: id, err: errorf("internal error in the computation: %v", r)}
			}
		}()
		xs, err := flow.Crossings(ctx, ph, p, &flow.CrossingSettings{Tol: 1e-10})
		return crossMsg{id: id, path: p, xs: xs, err: err, name: p.Name, horizo: horizontal}
	}
}

// fanCmd draws flow lines from a small ring around the cursor.
func fanCmd(ctx context.Context, id int, sl flow.Slice, cx, cy, rx, ry float64) tea.Cmd {
	return func() tea.Msg {
		var starts [][2]float64
		for k := 0; k < 12; k++ {
			a := 2 * math.Pi * float64(k) / 12
			starts = append(starts, [2]float64{cx + rx*math.Cos(a), cy + ry*math.Sin(a)})
		}
		var lines [][][2]float64
		for _, l := range sl.FlowLines(ctx, starts, 40) {
			lines = append(lines, l.XY)
		}
		return fanMsg{id: id, lines: lines}
	}
}

// tensorSolveCmd draws the basin map of the tensor engine: the phase each
// start on a coarse grid of the slice flows to, the boundary between
// neighbours in different phases, and the transitions along the
// horizontal line through the cursor with the central charge and scaling
// dimensions there.
func tensorSolveCmd(ctx context.Context, id int, t *decimation.TensorRG, sl flow.Slice, ax, ay Axis, cy float64) tea.Cmd {
	return func() (msg tea.Msg) {
		defer func() {
			if r := recover(); r != nil {
				msg = solvedMsg{id: id, err: errorf("internal error in the computation: %v", r)}
			}
		}()
		// Edges included, so that a symmetric range has a row at 0 (the
		// zero-field line, where the ordered phases live).
		gx, gy := 21, 11
		if t.Method == "hotrg" { // about ten times the cost of a TRG decision
			gx, gy = 11, 7
		}
		xs := make([]float64, gx)
		ys := make([]float64, gy)
		for i := range xs {
			xs[i] = ax.Value(float64(i) / float64(gx-1))
		}
		for j := range ys {
			ys[j] = ay.Value(float64(j) / float64(gy-1))
		}
		xs, ys = finite(xs), finite(ys)
		grid := make([][]flow.Phase, gy)
		for j := range grid {
			grid[j] = make([]flow.Phase, gx)
		}
		var wg sync.WaitGroup
		work := make(chan [2]int)
		for w := 0; w < runtime.GOMAXPROCS(0); w++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				for c := range work {
					grid[c[1]][c[0]] = t.Phase(ctx, sl.Point(xs[c[0]], ys[c[1]]))
				}
			}()
		}
		for j := range ys {
			for i := range xs {
				if ctx.Err() == nil {
					work <- [2]int{i, j}
				}
			}
		}
		close(work)
		wg.Wait()
		if ctx.Err() != nil {
			return solvedMsg{id: id, err: flow.ErrCanceled}
		}
		var basin []Marker
		var boundary [][2]float64
		for j := range grid {
			for i := range grid[j] {
				basin = append(basin, Marker{X: xs[i], Y: ys[j], Rune: phaseRune(grid[j][i]), Style: styleTrail})
				if i+1 < gx && !grid[j][i].Same(grid[j][i+1]) {
					boundary = append(boundary, [2]float64{(xs[i] + xs[i+1]) / 2, ys[j]})
				}
				if j+1 < gy && !grid[j][i].Same(grid[j+1][i]) {
					boundary = append(boundary, [2]float64{xs[i], (ys[j] + ys[j+1]) / 2})
				}
			}
		}
		path := flow.Path{Name: sl.M.Couplings()[sl.X].Name, From: xs[0], To: xs[gx-1], Samples: gx,
			Point: func(dst []float64, v float64) { copy(dst, sl.Point(v, cy)) }}
		tcs, err := t.Critical(ctx, path, 1e-5)
		if err != nil {
			return solvedMsg{id: id, err: err}
		}
		return solvedMsg{id: id, basin: basin, boundary: boundary, tcrits: tcs}
	}
}

// phaseRune marks a start by its phase: . disordered, the number of
// ordered states, ~ a critical phase, ? undecided.
func phaseRune(p flow.Phase) rune {
	switch {
	case p.Undecided || p.Index < 0:
		return '?'
	case p.Index == 0:
		return '~'
	case p.Index == 1:
		return '.'
	case p.Index < 10:
		return rune('0' + p.Index)
	}
	return '#'
}
