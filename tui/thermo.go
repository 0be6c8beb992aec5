package tui

import (
	"context"
	"math"

	tea "github.com/charmbracelet/bubbletea"

	"scalewalk/flow"
)

// The second view: thermodynamic curves along the horizontal line through
// the cursor (the x coupling varies, the others as at the cursor).

// quantities the thermo view cycles through.
var quantities = []struct {
	name string
	get  func(v flow.ThermoValues) float64
}{
	{"ln Z/N", func(v flow.ThermoValues) float64 { return v.F }},
	{"specific heat C/k", func(v flow.ThermoValues) float64 { return v.C }},
	{"energy u/J", func(v flow.ThermoValues) float64 { return v.U }},
	{"magnetization m", func(v flow.ThermoValues) float64 { return v.M }},
	{"susceptibility chi", func(v flow.ThermoValues) float64 { return v.Chi }},
	{"spontaneous magnetization m0", func(v flow.ThermoValues) float64 { return v.M0 }},
	{"correlation length xi", func(v flow.ThermoValues) float64 { return v.Xi }},
	{"curvature R", func(v flow.ThermoValues) float64 { return v.R }},
}

type thermoMsg struct {
	id     int
	xs     []float64
	values []flow.ThermoValues
}

// thermoCmd computes the quantities at n points of the line.
func thermoCmd(ctx context.Context, id int, sl flow.Slice, ax Axis, y float64, n int) tea.Cmd {
	return func() (msg tea.Msg) {
		defer func() {
			if r := recover(); r != nil {
				msg = thermoMsg{id: id}
			}
		}()
		metric := []int{sl.X, sl.Y}
		if sl.X == sl.Y {
			metric = []int{sl.X}
		}
		out := thermoMsg{id: id}
		for i := 0; i < n; i++ {
			if ctx.Err() != nil {
				return thermoMsg{id: id}
			}
			x := ax.Value((float64(i) + 0.5) / float64(n))
			if math.IsInf(x, 0) {
				continue
			}
			out.xs = append(out.xs, x)
			out.values = append(out.values, flow.Thermo(sl.M, sl.Point(x, y), metric))
		}
		return out
	}
}

// thermoPlot draws the chosen quantity against the x coupling.
func (m *Model) thermoPlot() Plot {
	q := quantities[m.quantity]
	var line [][2]float64
	lo, hi := math.Inf(1), math.Inf(-1)
	var lines [][][2]float64
	for i, v := range m.thermo.values {
		y := q.get(v)
		if math.IsNaN(y) || math.IsInf(y, 0) {
			if len(line) > 1 {
				lines = append(lines, line)
			}
			line = nil
			continue
		}
		line = append(line, [2]float64{m.thermo.xs[i], y})
		lo, hi = math.Min(lo, y), math.Max(hi, y)
	}
	if len(line) > 1 {
		lines = append(lines, line)
	}
	if !(hi > lo) {
		lo, hi = lo-1, lo+1
		if math.IsInf(lo, 0) {
			lo, hi = 0, 1
		}
	}
	pad := (hi - lo) * 0.05
	return Plot{AX: m.ax, AY: Axis{Name: q.name, Lo: lo - pad, Hi: hi + pad}, Lines: lines}
}
