package tui

import (
	"math"
	"strconv"
	"strings"
)

// Axis maps a coupling onto a screen direction, linearly or squeezed by
// tanh so that ±infinity appear at the ends.
type Axis struct {
	Name    string
	Lo, Hi  float64 // the visible range, in the coupling (linear) or in tanh of it (squeezed)
	Squeeze bool
}

// fwd returns the axis coordinate of a coupling value.
func (a Axis) fwd(v float64) float64 {
	if a.Squeeze {
		return math.Tanh(v)
	}
	return v
}

// Frac returns the position of v along the axis, 0 at Lo and 1 at Hi
// (outside [0, 1] when off screen; NaN for a non-finite value on a linear
// axis).
func (a Axis) Frac(v float64) float64 {
	if !a.Squeeze && math.IsInf(v, 0) {
		return math.NaN()
	}
	return (a.fwd(v) - a.Lo) / (a.Hi - a.Lo)
}

// Value returns the coupling at fraction f of the axis.
func (a Axis) Value(f float64) float64 {
	u := a.Lo + f*(a.Hi-a.Lo)
	if a.Squeeze {
		if u >= 1 {
			return math.Inf(1)
		}
		if u <= -1 {
			return math.Inf(-1)
		}
		return math.Atanh(u)
	}
	return u
}

// Label names the axis: the coupling, squeezed or not.
func (a Axis) Label() string {
	if a.Squeeze {
		return "tanh " + a.Name + " (squeezed: ends are ±infinity)"
	}
	return a.Name
}

// Canvas is a braille-dot canvas of W×H cells (2×4 dots per cell), with a
// layer of marker runes on top.
type Canvas struct {
	W, H   int
	dots   []uint8 // per cell, the braille bits
	marks  []rune
	styles []int // per cell, a style index for the mark (0 none)
}

// NewCanvas returns an empty canvas.
func NewCanvas(w, h int) *Canvas {
	return &Canvas{W: w, H: h, dots: make([]uint8, w*h), marks: make([]rune, w*h), styles: make([]int, w*h)}
}

// braille bit of dot (dx, dy) in a cell, dx 0..1, dy 0..3.
var brailleBits = [4][2]uint8{{0x01, 0x08}, {0x02, 0x10}, {0x04, 0x20}, {0x40, 0x80}}

// Dot sets the dot at pixel (px, py), origin top left; pixels outside are
// ignored.
func (c *Canvas) Dot(px, py int) {
	if px < 0 || py < 0 || px >= 2*c.W || py >= 4*c.H {
		return
	}
	c.dots[(py/4)*c.W+px/2] |= brailleBits[py%4][px%2]
}

// Line draws a straight line of dots between two pixels.
func (c *Canvas) Line(x0, y0, x1, y1 int) {
	dx, dy := abs(x1-x0), -abs(y1-y0)
	sx, sy := 1, 1
	if x0 > x1 {
		sx = -1
	}
	if y0 > y1 {
		sy = -1
	}
	err := dx + dy
	for n := 0; n < 4*(c.W+c.H)*4; n++ {
		c.Dot(x0, y0)
		if x0 == x1 && y0 == y1 {
			return
		}
		e2 := 2 * err
		if e2 >= dy {
			err += dy
			x0 += sx
		}
		if e2 <= dx {
			err += dx
			y0 += sy
		}
	}
}

func abs(v int) int {
	if v < 0 {
		return -v
	}
	return v
}

// Mark puts a rune in a cell with a style index, over the dots.
func (c *Canvas) Mark(cx, cy int, r rune, style int) {
	if cx < 0 || cy < 0 || cx >= c.W || cy >= c.H {
		return
	}
	c.marks[cy*c.W+cx] = r
	c.styles[cy*c.W+cx] = style
}

// Cell returns the rune and style index of a cell.
func (c *Canvas) Cell(cx, cy int) (rune, int) {
	i := cy*c.W + cx
	if c.marks[i] != 0 {
		return c.marks[i], c.styles[i]
	}
	if c.dots[i] == 0 {
		return ' ', 0
	}
	return rune(0x2800 + int(c.dots[i])), 0
}

// Rows returns the canvas as plain text rows.
func (c *Canvas) Rows() []string {
	out := make([]string, c.H)
	for y := 0; y < c.H; y++ {
		var b strings.Builder
		for x := 0; x < c.W; x++ {
			r, _ := c.Cell(x, y)
			b.WriteRune(r)
		}
		out[y] = b.String()
	}
	return out
}

// ticks returns about n round tick values in [lo, hi].
func ticks(lo, hi float64, n int) []float64 {
	if !(hi > lo) || n < 1 {
		return nil
	}
	raw := (hi - lo) / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := mag
	for _, m := range []float64{1, 2, 5, 10} {
		if m*mag >= raw {
			step = m * mag
			break
		}
	}
	var out []float64
	for v := math.Ceil(lo/step) * step; v <= hi+1e-9*step; v += step {
		if math.Abs(v) < 1e-12*step {
			v = 0
		}
		out = append(out, v)
	}
	return out
}

func tickText(v float64) string {
	if math.IsInf(v, 1) {
		return "+inf"
	}
	if math.IsInf(v, -1) {
		return "-inf"
	}
	s := strconv.FormatFloat(v, 'g', 3, 64)
	if s == "-0" {
		s = "0"
	}
	return s
}
