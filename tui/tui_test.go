package tui

import (
	"context"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/ansi"
	"github.com/charmbracelet/x/exp/teatest"

	"scalewalk/flow"
)

// updating reports whether -update was given; the flag is registered by
// the golden-file package teatest uses, and serves our goldens too.
func updating() bool {
	f := flag.Lookup("update")
	return f != nil && f.Value.String() == "true"
}

// newSolved returns the explorer on a study with its computation run
// synchronously, at the given size.
func newSolved(t testing.TB, o Options, w, h int) Model {
	t.Helper()
	m, err := New(o)
	if err != nil {
		t.Fatal(err)
	}
	mm, _ := m.Update(tea.WindowSizeMsg{Width: w, Height: h})
	m = mm.(Model)
	ctx, id := m.start("test")
	msg := solveCmd(ctx, id, m.slice, m.ax, m.ay)()
	mm, _ = m.Update(msg)
	return mm.(Model)
}

func press(m Model, keys ...string) Model {
	for _, k := range keys {
		var msg tea.KeyMsg
		switch k {
		case "tab":
			msg = tea.KeyMsg{Type: tea.KeyTab}
		case "enter":
			msg = tea.KeyMsg{Type: tea.KeyEnter}
		case "esc":
			msg = tea.KeyMsg{Type: tea.KeyEsc}
		case "up":
			msg = tea.KeyMsg{Type: tea.KeyUp}
		case "down":
			msg = tea.KeyMsg{Type: tea.KeyDown}
		case "left":
			msg = tea.KeyMsg{Type: tea.KeyLeft}
		case "right":
			msg = tea.KeyMsg{Type: tea.KeyRight}
		case " ":
			msg = tea.KeyMsg{Type: tea.KeySpace, Runes: []rune{' '}}
		default:
			msg = tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(k)}
		}
		mm, _ := m.Update(msg)
		m = mm.(Model)
	}
	return m
}

// kStar solves tanh K = tanh^2(2K) for the bond-moving Ising fixed point
// (R. K. Pathria, P. D. Beale, Statistical Mechanics, ch. 14) by bisection.
func kStar() float64 {
	lo, hi := 0.2, 0.5
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		if math.Atanh(math.Pow(math.Tanh(2*mid), 2)) < mid {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// The known fixed point is drawn in the cell its value maps to, on linear
// and on squeezed (tanh) axes: the cell is computed here from the axis
// definition (fraction along the axis times the dots across, two dots per
// cell), independently of the renderer.
func TestCanvasPlacesFixedPoint(t *testing.T) {
	ks := kStar()
	for _, squeeze := range []bool{false, true} {
		ax := Axis{Name: "K", Lo: 0, Hi: 1.5}
		ay := Axis{Name: "h", Lo: -1, Hi: 1}
		if squeeze {
			ax = Axis{Name: "K", Lo: -1, Hi: 1, Squeeze: true}
			ay = Axis{Name: "h", Lo: -1, Hi: 1, Squeeze: true}
		}
		p := Plot{AX: ax, AY: ay, Markers: []Marker{{X: ks, Y: 0, Rune: 'X', Style: styleFixed}}}
		const w, h = 60, 20
		f := p.Render(w, h)
		cw, ch := w-8, h-2
		fx := ks / 1.5
		if squeeze {
			fx = (math.Tanh(ks) + 1) / 2
		}
		col := 8 + int(math.Round(fx*float64(2*cw-1)))/2
		row := int(math.Round(0.5*float64(4*ch-1))) / 4
		got := []rune(f.Rows[row])
		if col >= len(got) || got[col] != 'X' {
			t.Errorf("squeeze=%v: cell (%d,%d) holds %q, want the critical point X (row %q)", squeeze, col, row, string(got[min(col, len(got)-1)]), f.Rows[row])
		}
		if c, r, ok := f.CellOf(ks, 0); !ok || c != col || r != row {
			t.Errorf("squeeze=%v: CellOf = (%d,%d,%v), want (%d,%d)", squeeze, c, r, ok, col, row)
		}
	}
}

// Stepping moves the point to the engine's value: the n-th row of the
// trail is the map applied n times to the cursor.
func TestStepMatchesEngine(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 80, 24)
	x0 := m.slice.Point(m.cursor[0], m.cursor[1])
	m = press(m, " ", " ", "n")
	if len(m.trail) != 4 {
		t.Fatalf("%d rows after three steps, want 4", len(m.trail))
	}
	want := append([]float64(nil), x0...)
	next := make([]float64, len(want))
	for k := 1; k <= 3; k++ {
		m.slice.M.Step(next, want)
		copy(want, next)
		for i := range want {
			if m.trail[k].X[i] != want[i] {
				t.Errorf("step %d coupling %d = %g, want the engine's %g", k, i, m.trail[k].X[i], want[i])
			}
		}
	}
	if v := ansi.Strip(m.View()); !strings.Contains(v, "steps from the cursor") || !strings.Contains(v, "3 K=") {
		t.Errorf("the step log is not shown:\n%s", v)
	}
	m = press(m, "c")
	if len(m.trail) != 0 {
		t.Error("c did not clear the steps")
	}
}

// A selected fixed point shows the engine's eigenvalues: the critical
// point's thermal eigenvalue 1.67857 (Pathria and Beale) in the table.
func TestFixedPointTable(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 100, 30)
	for i := 0; i < len(m.points); i++ {
		m = press(m, "tab")
		if m.points[m.sel].Kind == flow.Critical && m.points[m.sel].Inf[0] == 0 {
			break
		}
	}
	p := m.points[m.sel]
	if p.Kind != flow.Critical {
		t.Fatalf("no finite critical point selected")
	}
	v := ansi.Strip(m.View())
	if !strings.Contains(v, "1.67857") || !strings.Contains(v, "critical") || !strings.Contains(v, "nu") {
		t.Errorf("table does not show the eigenvalue 1.67857 and the exponents:\n%s", v)
	}
}

// A result for an older request is dropped.
func TestStaleResultDropped(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 80, 24)
	n := len(m.points)
	mm, _ := m.Update(solvedMsg{id: m.runID - 1, points: nil})
	if len(mm.(Model).points) != n {
		t.Error("a stale result replaced the current one")
	}
}

// Transitions along the horizontal line through the cursor: one continuous
// crossing at K* with T_c in kelvin and its caution.
func TestCrossingsThroughCursor(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 100, 30)
	m.cursor = [2]float64{0.6, 0}
	cmd := m.crossing(true)
	mm, _ := m.Update(cmd())
	m = mm.(Model)
	if m.cross == nil || len(m.cross.xs) != 1 || math.Abs(m.cross.xs[0].Value-kStar()) > 1e-9 {
		t.Fatalf("crossings %+v, want one at K* = %g", m.cross, kStar())
	}
	v := ansi.Strip(m.View())
	if !strings.Contains(v, "T_c = ") || !strings.Contains(v, "CAUTION") {
		t.Errorf("no T_c in kelvin with its caution:\n%s", v)
	}
}

func TestExportAtomic(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 80, 24)
	dir := t.TempDir()
	for _, name := range []string{"flow.csv", "flow.json"} {
		if err := m.writeExport(filepath.Join(dir, name)); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil || len(b) == 0 {
			t.Errorf("%s not written", name)
		}
	}
	if err := m.writeExport(filepath.Join(dir, "flow.txt")); err == nil {
		t.Error("a .txt export was accepted")
	}
	ents, _ := os.ReadDir(dir)
	for _, e := range ents {
		if strings.HasPrefix(e.Name(), ".scalewalk-export") {
			t.Errorf("temporary file %s left behind", e.Name())
		}
	}
}

// The parameter form comes from the parameter metadata; a bad value is
// refused with the accepted range, a good one rebuilds the map.
func TestParamsForm(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 100, 30)
	m = press(m, "p")
	if m.mode != modeParams || len(m.inputs) != 5 {
		t.Fatalf("mode %v with %d inputs, want the form with model, scheme, d, b, order", m.mode, len(m.inputs))
	}
	if m.fields[2].Name != "d" {
		t.Fatalf("third field %s", m.fields[2].Name)
	}
	m.inputs[2].SetValue("3")
	mm, cmd := m.Update(tea.KeyMsg{Type: tea.KeyEnter})
	m = mm.(Model)
	if m.mode != modeMain || m.slice.M.Dimension() != 3 || cmd == nil {
		t.Errorf("after d=3: mode %v, d = %g", m.mode, m.slice.M.Dimension())
	}
	// Switching the model keeps the scheme's parameters.
	m = press(m, "p")
	m.inputs[0].SetValue("potts")
	mm, _ = m.Update(tea.KeyMsg{Type: tea.KeyEnter})
	m = mm.(Model)
	if m.src.model != "potts" || m.slice.M.Dimension() != 3 {
		t.Errorf("after model=potts: model %s, d = %g", m.src.model, m.slice.M.Dimension())
	}
	// A bad value is refused with its range and the form stays open.
	m = press(m, "p")
	if m.fields[3].Name != "d" {
		t.Fatalf("fourth field %s, want d", m.fields[3].Name)
	}
	m.inputs[3].SetValue("0.5") // d >= 1 is accepted
	mm, _ = m.Update(tea.KeyMsg{Type: tea.KeyEnter})
	if mm.(Model).mode != modeParams {
		t.Error("a bad parameter value closed the form")
	}
}

// Golden views at 80x24 and 120x40 (ANSI stripped); go test ./tui -update
// rewrites them.
func TestGoldenViews(t *testing.T) {
	for _, size := range [][2]int{{80, 24}, {120, 40}} {
		m := newSolved(t, Options{Scenario: "monolayer"}, size[0], size[1])
		got := ansi.Strip(m.View())
		name := filepath.Join("testdata", "monolayer-"+itoa(size[0])+"x"+itoa(size[1])+".golden")
		if updating() {
			os.MkdirAll("testdata", 0o755)
			os.WriteFile(name, []byte(got), 0o644)
			continue
		}
		want, err := os.ReadFile(name)
		if err != nil {
			t.Fatalf("%v (run go test ./tui -update to create it)", err)
		}
		if string(want) != got {
			t.Errorf("%s differs:\n%s", name, got)
		}
		for _, line := range strings.Split(got, "\n") {
			if n := len([]rune(line)); n > size[0] {
				t.Errorf("a line of %d cells at width %d: %q", n, size[0], line)
			}
		}
	}
}

func itoa(n int) string { return strconv.Itoa(n) }

// BenchmarkView renders a frame with 100 flow lines at 200x60.
func BenchmarkView(b *testing.B) {
	m := newSolved(b, Options{Scenario: "monolayer"}, 200, 60)
	var lines [][][2]float64
	for len(lines) < 100 {
		lines = append(lines, m.lines...)
	}
	m.lines = lines[:100]
	b.ReportAllocs()
	for b.Loop() {
		m.render()
		_ = m.View()
	}
}

// BenchmarkStepKey is a keypress that steps the flow, with the redraw.
func BenchmarkStepKey(b *testing.B) {
	m := newSolved(b, Options{Scenario: "monolayer"}, 120, 40)
	b.ReportAllocs()
	for b.Loop() {
		mm := press(m, " ")
		_ = mm.View()
	}
}

var _ = context.Background

// A whole-program run through bubbletea's test harness: the explorer
// starts, the fixed points arrive from the background command, a step
// moves the point, and q quits with the final model readable.
func TestProgramRun(t *testing.T) {
	m, err := New(Options{Scenario: "monolayer"})
	if err != nil {
		t.Fatal(err)
	}
	tm := teatest.NewTestModel(t, m, teatest.WithInitialTermSize(100, 30))
	teatest.WaitFor(t, tm.Output(), func(b []byte) bool { return strings.Contains(string(b), "fixed point(s)") },
		teatest.WithDuration(20*time.Second))
	tm.Send(tea.KeyMsg{Type: tea.KeySpace, Runes: []rune{' '}})
	tm.Send(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("q")})
	fm := tm.FinalModel(t, teatest.WithFinalTimeout(10*time.Second)).(Model)
	if len(fm.points) == 0 || len(fm.trail) != 2 {
		t.Errorf("final model: %d fixed points, %d trail rows; want the points and one step", len(fm.points), len(fm.trail))
	}
}

// BenchmarkFirstFrame is the start to the first frame (axes, status,
// spinner), before any computation has returned.
func BenchmarkFirstFrame(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		m, _ := New(Options{Scenario: "monolayer"})
		mm, _ := m.Update(tea.WindowSizeMsg{Width: 120, Height: 40})
		_ = mm.View()
	}
}

// The thermodynamics view draws the engine's values: ln Z/N along the
// line through the cursor equals flow.FreeEnergy at those points, and at
// zero couplings it is ln 2 (Z = 2^N).
func TestThermoView(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 100, 30)
	m.cursor = [2]float64{0.5, 0}
	ctx, id := m.start("test")
	msg := thermoCmd(ctx, id, m.slice, m.ax, 0, 20)().(thermoMsg)
	mm, _ := m.Update(msg)
	m = mm.(Model)
	m.thermoOn = true
	m.render()
	for i, v := range m.thermo.values {
		want := flow.FreeEnergy(m.slice.M, m.slice.Point(m.thermo.xs[i], 0)).Value
		if math.Abs(v.F-want) > 1e-12 {
			t.Errorf("x = %g: ln Z/N %g, want %g", m.thermo.xs[i], v.F, want)
		}
	}
	z := flow.Thermo(m.slice.M, []float64{0, 0}, []int{0, 1})
	if math.Abs(z.F-math.Ln2) > 1e-12 {
		t.Errorf("ln Z/N at zero couplings = %g, want ln 2", z.F)
	}
	if v := ansi.Strip(m.View()); !strings.Contains(v, "thermodynamics: ln Z/N") {
		t.Errorf("the view does not name the quantity:\n%s", v)
	}
	m = press(m, "Q")
	if m.quantity != 1 {
		t.Error("Q did not change the quantity")
	}
}

// Keys typed fast arrive as one message with several runes: each acts.
func TestKeysTogether(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 80, 24)
	mm, _ := m.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("nnn")})
	if got := len(mm.(Model).trail); got != 4 {
		t.Errorf("after nnn: %d rows, want 4", got)
	}
}

// A failed export names the user's path, and the error clears on the next
// action.
func TestExportErrorClears(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 80, 24)
	err := m.writeExport("/nonexistent-dir-scalewalk/x.csv")
	if err == nil || !strings.Contains(err.Error(), "/nonexistent-dir-scalewalk/x.csv") || strings.Contains(err.Error(), ".scalewalk-export") {
		t.Errorf("export error %v", err)
	}
	m.err = err.Error()
	m = press(m, "n")
	if m.err != "" {
		t.Error("the error stayed after the next action")
	}
}

// Every view key acts: pan and zoom move the axes (and ask for a
// recomputation), squeeze switches to tanh axes, v and b hide lines and the
// boundary, o opens the picker and esc closes it, ? opens the help, ctrl+x
// cancels, q quits.
func TestViewKeys(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 80, 24)
	lo := m.ax.Lo
	mm, cmd := m.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("L")})
	m = mm.(Model)
	if m.ax.Lo <= lo || cmd == nil {
		t.Errorf("pan right: Lo %g -> %g, cmd %v", lo, m.ax.Lo, cmd != nil)
	}
	w := m.ax.Hi - m.ax.Lo
	m = press(m, "+")
	if got := m.ax.Hi - m.ax.Lo; math.Abs(got-w/2) > 1e-12 {
		t.Errorf("zoom in: width %g, want %g", got, w/2)
	}
	m = press(m, "s")
	if !m.ax.Squeeze || m.ax.Lo < -1 || m.ax.Hi > 1 {
		t.Errorf("squeeze: %+v", m.ax)
	}
	m = press(m, "v", "b")
	if m.show.lines || m.show.boundary {
		t.Error("v and b did not hide lines and boundary")
	}
	m = press(m, "o")
	if m.mode != modeScenarios {
		t.Error("o did not open the scenario picker")
	}
	m = press(m, "esc", "?")
	if m.mode != modeHelp || !strings.Contains(ansi.Strip(m.View()), "any key returns") {
		t.Error("? did not open the help")
	}
	m = press(m, "x")
	if m.mode != modeMain {
		t.Error("a key did not close the help")
	}
	m.busy = "test"
	m.cancel = func() {}
	mm, _ = m.Update(tea.KeyMsg{Type: tea.KeyCtrlX})
	if mm.(Model).busy != "" || mm.(Model).status != "cancelled" {
		t.Error("ctrl+x did not cancel")
	}
	_, cmd = mm.(Model).Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("q")})
	if cmd == nil {
		t.Fatal("q returned no command")
	}
	if _, ok := cmd().(tea.QuitMsg); !ok {
		t.Error("q did not quit")
	}
}

// A mouse click moves the cursor to the couplings under it.
func TestMouseClick(t *testing.T) {
	m := newSolved(t, Options{Scenario: "monolayer"}, 80, 24)
	col, row, ok := m.frame.CellOf(0.3, 0.5)
	if !ok {
		t.Fatal("point off the canvas")
	}
	mm, _ := m.Update(tea.MouseMsg{X: col, Y: row + 1, Action: tea.MouseActionPress, Button: tea.MouseButtonLeft})
	c := mm.(Model).cursor
	x, y, _ := m.frame.CellAt(col, row)
	if c[0] != x || c[1] != y || math.Abs(c[0]-0.3) > 0.05 || math.Abs(c[1]-0.5) > 0.1 {
		t.Errorf("cursor %v after a click at (0.3, 0.5)", c)
	}
}

// The map view shades the engine's values: each grid value is flow.Thermo
// at that point of the slice (the chain's specific heat, checked against
// Baxter's closed form in the decimation tests).
func TestMapView(t *testing.T) {
	m := newSolved(t, Options{Scenario: "chain-compound"}, 100, 30)
	ctx, id := m.start("test")
	msg := mapCmd(ctx, id, m.slice, m.ax, m.ay, 6, 4)().(mapMsg)
	mm, _ := m.Update(msg)
	m = mm.(Model)
	m.mapOn = true
	m.quantity = 1
	m.render()
	for j, y := range m.qmap.ys {
		for i, x := range m.qmap.xs {
			want := flow.Thermo(m.slice.M, m.slice.Point(x, y), []int{0, 1}).C
			got := m.qmap.values[j][i].C
			if !(got == want || (math.IsNaN(got) && math.IsNaN(want))) {
				t.Errorf("(%g, %g): C = %g, want %g", x, y, got, want)
			}
		}
	}
	if v := ansi.Strip(m.View()); !strings.Contains(v, "map: specific heat") {
		t.Errorf("the map view does not name its quantity:\n%s", v)
	}
}

// The tensor scheme opens as a basin map: on the zero-field row the starts
// above the critical coupling are ordered with two states and those below
// disordered (the square Ising K_c = ln(1 + √2)/2, Kramers and Wannier
// 1941, lies between them), the side pane names the transition with its
// central charge, and flow keys say they do not apply.
func TestTensorBasinMap(t *testing.T) {
	m, err := New(Options{Model: "ising", Scheme: "tensor", Set: map[string]string{"chi": "8"}})
	if err != nil {
		t.Fatal(err)
	}
	mm, _ := m.Update(tea.WindowSizeMsg{Width: 150, Height: 40})
	m = mm.(Model)
	ctx, id := m.start("test")
	msg := m.solve()
	_ = ctx
	res := msg().(solvedMsg)
	res.id = id + 1 // solve started a newer request
	mm, _ = m.Update(res)
	m = mm.(Model)
	kc := math.Log(1+math.Sqrt2) / 2
	var below, above int
	for _, b := range m.basin {
		if b.Y != 0 {
			continue
		}
		switch {
		case b.X < kc-0.05 && b.Rune == '.':
			below++
		case b.X > kc+0.05 && b.Rune == '2':
			above++
		}
	}
	if below < 5 || above < 5 {
		t.Errorf("zero-field row: %d disordered below K_c, %d ordered above; basin %v", below, above, m.basin)
	}
	if len(m.tcrits) != 1 || math.Abs(m.tcrits[0].Crossing.Value-kc) > 0.01 {
		t.Errorf("transitions through the cursor: %+v", m.tcrits)
	}
	v := m.View()
	for _, want := range []string{"transitions along K", "c = ", TensorLegend[:20]} {
		if !strings.Contains(v, want) {
			t.Errorf("view lacks %q", want)
		}
	}
	m = press(m, " ")
	if !strings.Contains(m.View(), "no flow of couplings") {
		t.Error("space did not say the tensor scheme has no flow")
	}
}
