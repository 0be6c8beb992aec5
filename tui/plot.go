package tui

import (
	"fmt"
	"math"
	"strings"

	"scalewalk/flow"
)

// Style indices of canvas marks.
const (
	styleNone = iota
	styleFixed
	styleCursor
	styleTrail
	styleBoundary
	styleArrow
)

// Marker is a labelled point on the plot, in coupling coordinates.
type Marker struct {
	X, Y  float64
	Rune  rune
	Style int
}

// Plot is what the flow view draws: plain data in coupling coordinates.
type Plot struct {
	AX, AY   Axis
	Lines    [][][2]float64 // flow lines
	Boundary [][2]float64   // points between basins
	Markers  []Marker
}

// kindRune is the symbol of a fixed point of each kind (our own legend).
func kindRune(p flow.FixedPoint) rune {
	switch {
	case p.Discontinuity:
		return '#'
	case p.Kind == flow.Sink:
		return 'o'
	case p.Kind == flow.Critical:
		return 'X'
	case p.Kind == flow.Multicritical:
		return '*'
	}
	return '+'
}

// TensorLegend explains the basin map of the tensor engine.
const TensorLegend = ". disordered or field-polarized  2-9 ordered with that many states  ~ critical phase  ? undecided  : boundary  @ cursor"

// Legend explains the symbols.
const Legend = "o sink X critical * multicritical # discontinuity + source : boundary @ cursor 0-9 steps"

// Frame is a rendered plot: the rows of the drawing area with axes, and
// the cell geometry to map a click back to couplings.
type Frame struct {
	Rows      []string
	Styles    [][]int
	Left, Top int // offset of the canvas in the frame
	CanvasW   int
	CanvasH   int
	AX, AY    Axis
}

// Render draws the plot into w×h cells: a y-axis gutter of 8 cells on the
// left, two rows of x-axis ticks and label at the bottom.
func (p Plot) Render(w, h int) Frame {
	const gutter = 8
	cw, ch := max(4, w-gutter), max(3, h-2)
	c := NewCanvas(cw, ch)
	px := func(x float64) (int, bool) {
		f := p.AX.Frac(x)
		if math.IsNaN(f) {
			return 0, false
		}
		return int(math.Round(f * float64(2*cw-1))), f >= 0 && f <= 1
	}
	py := func(y float64) (int, bool) {
		f := p.AY.Frac(y)
		if math.IsNaN(f) {
			return 0, false
		}
		return int(math.Round((1 - f) * float64(4*ch-1))), f >= 0 && f <= 1
	}
	for _, l := range p.Lines {
		for k := 1; k < len(l); k++ {
			x0, ok0 := px(l[k-1][0])
			y0, ok1 := py(l[k-1][1])
			x1, ok2 := px(l[k][0])
			y1, ok3 := py(l[k][1])
			if !(ok0 || ok2) && !(ok1 || ok3) {
				continue
			}
			if abs(x1-x0) > 8*cw || abs(y1-y0) > 8*ch {
				continue
			}
			c.Line(x0, y0, x1, y1)
			if k == 1 {
				// The direction of the flow, once per line, at the middle
				// of its first segment.
				mx, my := (x0+x1)/2, (y0+y1)/2
				if abs(x1-x0)+abs(y1-y0) >= 6 {
					c.Mark(mx/2, my/4, arrow(x1-x0, y1-y0), styleArrow)
				}
			}
		}
	}
	for _, b := range p.Boundary {
		if x, ok := px(b[0]); ok {
			if y, ok := py(b[1]); ok {
				c.Mark(x/2, y/4, ':', styleBoundary)
			}
		}
	}
	for _, m := range p.Markers {
		x, okx := px(m.X)
		y, oky := py(m.Y)
		if okx && oky {
			c.Mark(x/2, y/4, m.Rune, m.Style)
		}
	}
	f := Frame{Left: gutter, Top: 0, CanvasW: cw, CanvasH: ch, AX: p.AX, AY: p.AY}
	// y ticks
	ylab := make([]string, ch)
	for _, v := range ticks(p.AY.Lo, p.AY.Hi, max(2, ch/4)) {
		fr := (v - p.AY.Lo) / (p.AY.Hi - p.AY.Lo)
		row := int(math.Round((1 - fr) * float64(ch-1)))
		if row >= 0 && row < ch {
			ylab[row] = tickText(axisTick(p.AY, v))
		}
	}
	for y := 0; y < ch; y++ {
		var b strings.Builder
		fmt.Fprintf(&b, "%7s", trunc(ylab[y], 7))
		b.WriteRune('┤')
		st := make([]int, gutter+cw)
		for x := 0; x < cw; x++ {
			r, s := c.Cell(x, y)
			b.WriteRune(r)
			st[gutter+x] = s
		}
		f.Rows = append(f.Rows, b.String())
		f.Styles = append(f.Styles, st)
	}
	// x ticks
	axis := []rune(strings.Repeat(" ", gutter-1) + "└" + strings.Repeat("─", cw))
	labels := []rune(strings.Repeat(" ", gutter+cw))
	for _, v := range ticks(p.AX.Lo, p.AX.Hi, max(2, cw/12)) {
		fr := (v - p.AX.Lo) / (p.AX.Hi - p.AX.Lo)
		col := gutter + int(math.Round(fr*float64(cw-1)))
		if col < len(axis) {
			axis[col] = '┬'
		}
		t := []rune(tickText(axisTick(p.AX, v)))
		start := min(col-len(t)/2, len(labels)-len(t))
		for i, r := range t {
			if start+i >= 0 && start+i < len(labels) {
				labels[start+i] = r
			}
		}
	}
	f.Rows = append(f.Rows, string(axis), strings.TrimRight(string(labels), " "))
	f.Styles = append(f.Styles, nil, nil)
	return f
}

// axisTick returns the coupling value shown at axis coordinate v.
func axisTick(a Axis, v float64) float64 {
	if a.Squeeze {
		if v >= 1 {
			return math.Inf(1)
		}
		if v <= -1 {
			return math.Inf(-1)
		}
		return math.Atanh(v)
	}
	return v
}

func trunc(s string, n int) string {
	r := []rune(s)
	if len(r) > n {
		return string(r[:n])
	}
	return s
}

func arrow(dx, dy int) rune {
	a := math.Atan2(float64(-dy), float64(dx)) // screen y grows downward
	dirs := []rune{'→', '↗', '↑', '↖', '←', '↙', '↓', '↘'}
	k := int(math.Round(a/(math.Pi/4))) % 8
	if k < 0 {
		k += 8
	}
	return dirs[k]
}

// CellAt returns the couplings under a frame cell, and whether the cell is
// on the canvas.
func (f Frame) CellAt(col, row int) (x, y float64, ok bool) {
	cx, cy := col-f.Left, row-f.Top
	if cx < 0 || cy < 0 || cx >= f.CanvasW || cy >= f.CanvasH {
		return 0, 0, false
	}
	fx := (float64(cx) + 0.5) / float64(f.CanvasW)
	fy := 1 - (float64(cy)+0.5)/float64(f.CanvasH)
	return f.AX.Value(fx), f.AY.Value(fy), true
}

// CellOf returns the frame cell of the couplings (x, y).
func (f Frame) CellOf(x, y float64) (col, row int, ok bool) {
	fx, fy := f.AX.Frac(x), f.AY.Frac(y)
	if math.IsNaN(fx) || math.IsNaN(fy) || fx < 0 || fx > 1 || fy < 0 || fy > 1 {
		return 0, 0, false
	}
	px := int(math.Round(fx * float64(2*f.CanvasW-1)))
	py := int(math.Round((1 - fy) * float64(4*f.CanvasH-1)))
	return f.Left + px/2, f.Top + py/4, true
}
