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

// mapMsg is a thermodynamic quantity over the slice.
type mapMsg struct {
	id     int
	xs, ys []float64
	values [][]flow.ThermoValues // [iy][ix]
}

// mapCmd computes the quantities on a gx×gy grid of the slice.
func mapCmd(ctx context.Context, id int, sl flow.Slice, ax, ay Axis, gx, gy int) tea.Cmd {
	return func() (msg tea.Msg) {
		defer func() {
			if r := recover(); r != nil {
				msg = mapMsg{id: id}
			}
		}()
		metric := []int{sl.X, sl.Y}
		if sl.X == sl.Y {
			metric = []int{sl.X}
		}
		out := mapMsg{id: id}
		for i := 0; i < gx; i++ {
			out.xs = append(out.xs, ax.Value((float64(i)+0.5)/float64(gx)))
		}
		for j := 0; j < gy; j++ {
			out.ys = append(out.ys, ay.Value((float64(j)+0.5)/float64(gy)))
		}
		for _, y := range out.ys {
			row := make([]flow.ThermoValues, gx)
			for i, x := range out.xs {
				if ctx.Err() != nil {
					return mapMsg{id: id}
				}
				if math.IsInf(x, 0) || math.IsInf(y, 0) {
					row[i] = flow.ThermoValues{F: math.NaN(), C: math.NaN(), U: math.NaN(), M: math.NaN(), Chi: math.NaN(), M0: math.NaN(), Xi: math.NaN(), R: math.NaN()}
					continue
				}
				row[i] = flow.Thermo(sl.M, sl.Point(x, y), metric)
			}
			out.values = append(out.values, row)
		}
		return out
	}
}

// shades from low to high.
var shades = []rune(" .:-=+*#%&")

// mapPlot shades each canvas cell by the quantity at the nearest grid
// point, by rank among the finite values (so a diverging response does not
// wash out the rest); cells where it is not available stay blank.
func (m *Model) mapPlot(cw, ch int) Plot {
	q := quantities[m.quantity]
	var vals []float64
	for _, row := range m.qmap.values {
		for _, v := range row {
			if x := q.get(v); !math.IsNaN(x) && !math.IsInf(x, 0) {
				vals = append(vals, x)
			}
		}
	}
	sortFloats(vals)
	rank := func(x float64) int {
		if len(vals) == 0 {
			return 0
		}
		lo, hi := 0, len(vals)
		for lo < hi {
			mid := (lo + hi) / 2
			if vals[mid] < x {
				lo = mid + 1
			} else {
				hi = mid
			}
		}
		return 1 + lo*(len(shades)-2)/max(1, len(vals)-1)
	}
	p := Plot{AX: m.ax, AY: m.ay}
	gx, gy := len(m.qmap.xs), len(m.qmap.ys)
	if gx == 0 || gy == 0 {
		return p
	}
	for cy := 0; cy < ch; cy++ {
		for cx := 0; cx < cw; cx++ {
			fx := (float64(cx) + 0.5) / float64(cw)
			fy := 1 - (float64(cy)+0.5)/float64(ch)
			i := min(gx-1, int(fx*float64(gx)))
			j := min(gy-1, int(fy*float64(gy)))
			x := q.get(m.qmap.values[j][i])
			if math.IsNaN(x) || math.IsInf(x, 0) {
				continue
			}
			p.Markers = append(p.Markers, Marker{X: m.ax.Value(fx), Y: m.ay.Value(fy), Rune: shades[min(len(shades)-1, rank(x))], Style: styleNone})
		}
	}
	return p
}

func sortFloats(v []float64) {
	// insertion sort is enough for a few thousand values
	for i := 1; i < len(v); i++ {
		for j := i; j > 0 && v[j] < v[j-1]; j-- {
			v[j], v[j-1] = v[j-1], v[j]
		}
	}
}
