package tui

import (
	"context"
	"fmt"
	"math"
	"strings"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/spinner"
	"github.com/charmbracelet/bubbles/textinput"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"scalewalk/decimation"
	"scalewalk/flow"
	"scalewalk/internal/report"
	"scalewalk/scenarios"
)

func errorf(format string, a ...any) error { return fmt.Errorf(format, a...) }

type mode int

const (
	modeMain mode = iota
	modeHelp
	modeScenarios
	modeParams
	modeExport
)

// Model is the explorer: the only tea.Model of the package.
type Model struct {
	keys    keyMap
	styles  Styles
	help    help.Model
	spin    spinner.Model
	width   int
	height  int
	mode    mode
	src     *source
	slice   flow.Slice
	ax, ay  Axis
	cursor  [2]float64
	trail   []flow.TracePoint
	stop    string
	points  []flow.FixedPoint
	phases  *flow.SinkPhases
	lines   [][][2]float64
	fan     [][][2]float64
	bound   [][2]float64
	sel     int
	table   bool
	show    struct{ lines, boundary bool }
	cross   *crossMsg
	runID   int
	cancel  context.CancelFunc
	busy    string
	status  string
	err     string
	frame   Frame
	choices []string // scenario picker
	choice  int
	inputs  []textinput.Model // parameter form
	fields  []decimation.Param
	focus   int
	export  textinput.Model
	// the thermodynamics view
	thermoOn bool
	thermo   thermoMsg
	quantity int
	mapOn    bool
	qmap     mapMsg
	// the tensor engine's basin map
	basin  []Marker
	tcrits []decimation.TensorCritical
}

// New returns the explorer on the study the options name.
func New(o Options) (Model, error) {
	src, err := build(o)
	if err != nil {
		return Model{}, err
	}
	m := Model{keys: defaultKeyMap(), styles: DefaultStyles(), help: help.New(), spin: spinner.New(spinner.WithSpinner(spinner.Dot)),
		width: 80, height: 24, sel: -1}
	m.show.lines, m.show.boundary = true, true
	m.setSource(src)
	return m, nil
}

// setSource installs a study: the slice from the scenario (or the first
// two couplings), the axes, the cursor in the middle.
func (m *Model) setSource(src *source) {
	m.src = src
	cs := src.m.Couplings()
	xi, yi := 0, 0
	if len(cs) > 1 {
		yi = 1
	}
	base := make([]float64, len(cs))
	ax := Axis{Name: cs[xi].Name, Lo: 0, Hi: 1.5}
	ay := Axis{Name: cs[yi].Name, Lo: -1, Hi: 1}
	if sf := src.slice; sf != nil {
		if i := flow.Index(src.m, sf.X); i >= 0 {
			xi, ax.Name = i, sf.X
		}
		if i := flow.Index(src.m, sf.Y); i >= 0 {
			yi, ay.Name = i, sf.Y
		}
		if len(sf.XRange) == 2 && sf.XRange[1] > sf.XRange[0] {
			ax.Lo, ax.Hi = sf.XRange[0], sf.XRange[1]
		}
		if len(sf.YRange) == 2 && sf.YRange[1] > sf.YRange[0] {
			ay.Lo, ay.Hi = sf.YRange[0], sf.YRange[1]
		}
		for k, v := range sf.Held {
			if i := flow.Index(src.m, k); i >= 0 {
				base[i] = v
			}
		}
	}
	if xi == yi {
		ay = Axis{Name: cs[xi].Name + " (again: the map has one coupling)", Lo: ax.Lo, Hi: ax.Hi}
	}
	m.show.boundary = xi != yi
	m.slice = flow.Slice{M: src.m, X: xi, Y: yi, Base: base}
	m.ax, m.ay = ax, ay
	m.cursor = [2]float64{(ax.Lo + ax.Hi) / 2, (ay.Lo + ay.Hi) / 2}
	m.trail, m.points, m.lines, m.fan, m.bound, m.cross, m.sel = nil, nil, nil, nil, nil, nil, -1
	m.err, m.status = "", ""
}

// Init starts the first computation.
func (m Model) Init() tea.Cmd {
	return tea.Batch(m.spin.Tick, func() tea.Msg { return recomputeMsg{} })
}

type recomputeMsg struct{}

// start begins a background computation, cancelling the previous one.
func (m *Model) start(what string) (context.Context, int) {
	if m.cancel != nil {
		m.cancel()
	}
	ctx, cancel := context.WithCancel(context.Background())
	m.cancel = cancel
	m.runID++
	m.busy = what
	return ctx, m.runID
}

func (m *Model) solve() tea.Cmd {
	if m.src.tensor != nil {
		ctx, id := m.start("deciding the phase of every start (tensor renormalization)")
		return tensorSolveCmd(ctx, id, m.src.tensor, m.slice, m.axX(), m.axY(), m.cursor[1])
	}
	ctx, id := m.start("finding fixed points and flow lines")
	return solveCmd(ctx, id, m.slice, m.axX(), m.axY())
}

// axX and axY are the axes in coupling terms for the computation (a
// squeezed axis computes on the coupling range it shows).
func (m *Model) axX() Axis { return m.ax }
func (m *Model) axY() Axis { return m.ay }

// Update handles messages.
func (m Model) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		m.width, m.height = msg.Width, msg.Height
		m.help.Width = msg.Width
		m.render()
		return m, nil
	case recomputeMsg:
		cmd := m.solve()
		m.render()
		return m, cmd
	case spinner.TickMsg:
		var cmd tea.Cmd
		m.spin, cmd = m.spin.Update(msg)
		return m, cmd
	case solvedMsg:
		if msg.id != m.runID {
			return m, nil // a stale result: a newer request is running
		}
		m.busy = ""
		if msg.err != nil {
			if msg.err != flow.ErrCanceled {
				m.err = msg.err.Error()
			}
			m.render()
			return m, nil
		}
		m.points, m.phases, m.lines, m.bound = msg.points, msg.phases, msg.lines, msg.boundary
		m.basin, m.tcrits = msg.basin, msg.tcrits
		m.status = fmt.Sprintf("%d fixed point(s)", len(m.points))
		if m.src.tensor != nil {
			m.status = fmt.Sprintf("basin map: the phase each start flows to; %d transition(s) along %s through the cursor", len(m.tcrits), m.ax.Name)
		}
		m.render()
		return m, nil
	case crossMsg:
		if msg.id != m.runID {
			return m, nil
		}
		m.busy = ""
		if msg.err != nil {
			m.err = msg.err.Error()
		} else {
			mm := msg
			m.cross = &mm
			m.table = false
			m.status = fmt.Sprintf("%d transition(s) along %s", len(msg.xs), msg.name)
		}
		m.render()
		return m, nil
	case thermoMsg:
		if msg.id != m.runID {
			return m, nil
		}
		m.busy = ""
		m.thermo = msg
		m.status = "thermodynamics along " + m.ax.Name + " through the cursor; Q changes the quantity, T returns"
		m.render()
		return m, nil
	case mapMsg:
		if msg.id != m.runID {
			return m, nil
		}
		m.busy = ""
		m.qmap = msg
		m.status = "map of the slice; Q changes the quantity, M returns"
		m.render()
		return m, nil
	case fanMsg:
		if msg.id != m.runID {
			return m, nil
		}
		m.busy = ""
		m.fan = append(m.fan, msg.lines...)
		m.render()
		return m, nil
	case tea.MouseMsg:
		if m.mode == modeMain && msg.Action == tea.MouseActionPress && msg.Button == tea.MouseButtonLeft {
			if x, y, ok := m.frame.CellAt(msg.X, msg.Y-1); ok && !math.IsInf(x, 0) && !math.IsInf(y, 0) {
				m.cursor = [2]float64{x, y}
				m.trail = nil
				m.render()
			}
		}
		return m, nil
	case tea.KeyMsg:
		if msg.Type == tea.KeyRunes && len(msg.Runes) > 1 && !msg.Paste && m.mode == modeMain {
			// Keys typed fast arrive together: take them one by one.
			var cmds []tea.Cmd
			var cur tea.Model = m
			for _, r := range msg.Runes {
				var cmd tea.Cmd
				cur, cmd = cur.(Model).key(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{r}})
				cmds = append(cmds, cmd)
			}
			return cur, tea.Batch(cmds...)
		}
		return m.key(msg)
	}
	return m, nil
}

func (m Model) key(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	k := m.keys
	switch m.mode {
	case modeHelp:
		if key.Matches(msg, k.Quit) && msg.String() == "ctrl+c" {
			return m, tea.Quit
		}
		m.mode = modeMain
		return m, nil
	case modeScenarios:
		return m.keyScenarios(msg)
	case modeParams:
		return m.keyParams(msg)
	case modeExport:
		return m.keyExport(msg)
	}
	m.err = "" // an error stays until the next action
	move := func(fx, fy float64) {
		x := m.ax.Value(m.ax.Frac(m.cursor[0]) + fx)
		y := m.ay.Value(m.ay.Frac(m.cursor[1]) + fy)
		if !math.IsInf(x, 0) && !math.IsInf(y, 0) {
			m.cursor = [2]float64{x, y}
			m.trail = nil
		}
	}
	switch {
	case key.Matches(msg, k.Quit):
		if m.cancel != nil {
			m.cancel()
		}
		return m, tea.Quit
	case key.Matches(msg, k.Help):
		m.mode = modeHelp
	case key.Matches(msg, k.Left):
		move(-1.0/40, 0)
	case key.Matches(msg, k.Right):
		move(1.0/40, 0)
	case key.Matches(msg, k.Up):
		move(0, 1.0/20)
	case key.Matches(msg, k.Down):
		move(0, -1.0/20)
	case key.Matches(msg, k.PanLeft), key.Matches(msg, k.PanRight), key.Matches(msg, k.PanUp), key.Matches(msg, k.PanDown):
		sx := (m.ax.Hi - m.ax.Lo) / 5
		sy := (m.ay.Hi - m.ay.Lo) / 5
		switch {
		case key.Matches(msg, k.PanLeft):
			m.ax.Lo, m.ax.Hi = m.ax.Lo-sx, m.ax.Hi-sx
		case key.Matches(msg, k.PanRight):
			m.ax.Lo, m.ax.Hi = m.ax.Lo+sx, m.ax.Hi+sx
		case key.Matches(msg, k.PanUp):
			m.ay.Lo, m.ay.Hi = m.ay.Lo+sy, m.ay.Hi+sy
		case key.Matches(msg, k.PanDown):
			m.ay.Lo, m.ay.Hi = m.ay.Lo-sy, m.ay.Hi-sy
		}
		m.clampSqueeze()
		return m, m.recompute()
	case key.Matches(msg, k.ZoomIn), key.Matches(msg, k.ZoomOut):
		f := 0.5
		if key.Matches(msg, k.ZoomOut) {
			f = 2
		}
		cx, cy := m.ax.fwd(m.cursor[0]), m.ay.fwd(m.cursor[1])
		m.ax.Lo, m.ax.Hi = cx+(m.ax.Lo-cx)*f, cx+(m.ax.Hi-cx)*f
		m.ay.Lo, m.ay.Hi = cy+(m.ay.Lo-cy)*f, cy+(m.ay.Hi-cy)*f
		m.clampSqueeze()
		return m, m.recompute()
	case key.Matches(msg, k.Squeeze):
		m.toggleSqueeze()
		return m, m.recompute()
	case m.src.tensor != nil && (key.Matches(msg, k.Step) || key.Matches(msg, k.Run) || key.Matches(msg, k.Fan) ||
		key.Matches(msg, k.Thermo) || key.Matches(msg, k.Map) || key.Matches(msg, k.CrossX) || key.Matches(msg, k.CrossY) || key.Matches(msg, k.NextFixed)):
		m.status = "the tensor scheme has no flow of couplings: the view shows the phase of each start, and the pane the transitions along " + m.ax.Name + " through the cursor (enter recomputes there)"
	case m.src.tensor != nil && msg.String() == "enter":
		return m, m.recompute()
	case key.Matches(msg, k.Step):
		m.step(1)
	case key.Matches(msg, k.Run):
		m.step(200)
	case key.Matches(msg, k.Clear):
		m.trail, m.fan, m.cross, m.stop = nil, nil, nil, ""
	case key.Matches(msg, k.Fan):
		ctx, id := m.start("drawing a fan of flow lines")
		rx := (m.ax.Value(m.ax.Frac(m.cursor[0])+0.03) - m.cursor[0])
		ry := (m.ay.Value(m.ay.Frac(m.cursor[1])+0.03) - m.cursor[1])
		m.render()
		return m, fanCmd(ctx, id, m.slice, m.cursor[0], m.cursor[1], rx, ry)
	case key.Matches(msg, k.NextFixed):
		if len(m.points) > 0 {
			m.sel = (m.sel + 1) % len(m.points)
			m.table = true
			m.cross = nil
		}
	case key.Matches(msg, k.Table):
		m.table = !m.table
		if m.table && m.sel < 0 && len(m.points) > 0 {
			m.sel = 0
		}
	case key.Matches(msg, k.Lines):
		m.show.lines = !m.show.lines
	case key.Matches(msg, k.Boundary):
		m.show.boundary = !m.show.boundary
	case key.Matches(msg, k.CrossX), key.Matches(msg, k.CrossY):
		return m, m.crossing(key.Matches(msg, k.CrossX))
	case key.Matches(msg, k.Thermo):
		m.thermoOn = !m.thermoOn
		if m.thermoOn {
			ctx, id := m.start("computing thermodynamics along the line through the cursor")
			m.render()
			return m, thermoCmd(ctx, id, m.slice, m.ax, m.cursor[1], 120)
		}
	case key.Matches(msg, k.Map):
		m.mapOn = !m.mapOn
		m.thermoOn = false
		if m.mapOn {
			pw, ph := m.plotSize()
			ctx, id := m.start("computing the map of the slice")
			m.render()
			return m, mapCmd(ctx, id, m.slice, m.ax, m.ay, min(48, pw), min(24, ph))
		}
	case key.Matches(msg, k.Quantity):
		m.quantity = (m.quantity + 1) % len(quantities)
	case key.Matches(msg, k.Cancel):
		if m.cancel != nil {
			m.cancel()
			m.runID++
			m.busy = ""
			m.status = "cancelled"
		}
	case key.Matches(msg, k.Scenarios):
		m.choices = scenarios.BuiltinNames()
		m.choice = 0
		m.mode = modeScenarios
	case key.Matches(msg, k.Params):
		m.openParams()
	case key.Matches(msg, k.Export):
		m.export = textinput.New()
		m.export.Placeholder = "flow.csv or flow.json"
		m.export.Prompt = "write to file: "
		m.export.Focus()
		m.mode = modeExport
	}
	m.render()
	return m, nil
}

func (m *Model) recompute() tea.Cmd {
	m.render()
	return m.solve()
}

func (m *Model) toggleSqueeze() {
	for _, a := range []*Axis{&m.ax, &m.ay} {
		if a.Squeeze {
			a.Squeeze = false
			a.Lo, a.Hi = a.Value(0), a.Value(1)
			if math.IsInf(a.Lo, 0) {
				a.Lo = -3
			}
			if math.IsInf(a.Hi, 0) {
				a.Hi = 3
			}
		} else {
			lo, hi := math.Tanh(a.Lo), math.Tanh(a.Hi)
			a.Squeeze = true
			a.Lo, a.Hi = math.Min(lo, 0)-0.02, 1.0
			if hi < 0 {
				a.Hi = 0.02
			}
			a.Lo = math.Max(a.Lo, -1)
			if lo < -0.5 {
				a.Lo = -1
			}
		}
	}
}

func (m *Model) clampSqueeze() {
	for _, a := range []*Axis{&m.ax, &m.ay} {
		if a.Squeeze {
			a.Lo, a.Hi = math.Max(a.Lo, -1), math.Min(a.Hi, 1)
			if a.Hi-a.Lo < 1e-6 {
				a.Lo, a.Hi = -1, 1
			}
		}
	}
}

// step takes n RG steps from the cursor (or from the end of the trail).
func (m *Model) step(n int) {
	if len(m.trail) == 0 {
		m.trail = []flow.TracePoint{{X: m.slice.Point(m.cursor[0], m.cursor[1]), G: math.NaN()}}
	}
	last := m.trail[len(m.trail)-1].X
	t := flow.Trace(m.slice.M, last, n, nil)
	// The first row of t is the last point again, now with its g.
	m.trail[len(m.trail)-1] = t.Points[0]
	m.trail = append(m.trail, t.Points[1:]...)
	m.stop = t.Stop.String()
	if t.Detail != "" {
		m.stop += " (" + t.Detail + ")"
	}
	if len(m.trail) > 500 {
		m.trail = m.trail[len(m.trail)-500:]
	}
}

func (m *Model) crossing(horizontal bool) tea.Cmd {
	if m.phases == nil {
		m.status = "wait for the fixed points before locating transitions"
		return nil
	}
	cs := m.slice.M.Couplings()
	base := m.slice.Point(m.cursor[0], m.cursor[1])
	idx, ax := m.slice.X, m.ax
	if !horizontal {
		idx, ax = m.slice.Y, m.ay
	}
	lo, hi := ax.Value(0.001), ax.Value(0.999)
	p := flow.Path{Name: cs[idx].Name, From: lo, To: hi, Samples: 64, Point: func(dst []float64, s float64) {
		copy(dst, base)
		dst[idx] = s
	}}
	ctx, id := m.start("locating transitions along " + cs[idx].Name)
	m.render()
	return crossCmd(ctx, id, m.phases, p, horizontal)
}

// legend explains the marks of the plot.
func (m Model) legend() string {
	if m.src.tensor != nil {
		return TensorLegend
	}
	return Legend
}

// render rebuilds the plot frame from the data; View only reads it.
func (m *Model) render() {
	pw, ph := m.plotSize()
	if m.thermoOn {
		m.frame = m.thermoPlot().Render(pw, ph)
		return
	}
	if m.mapOn {
		p := m.mapPlot(max(4, pw-8), max(3, ph-2))
		for i, fp := range m.points {
			if m.slice.OnSlice(fp, 1e-6) {
				r := kindRune(fp)
				if i == m.sel {
					r = '['
				}
				p.Markers = append(p.Markers, Marker{X: fp.X[m.slice.X], Y: fp.X[m.slice.Y], Rune: r, Style: styleFixed})
			}
		}
		p.Markers = append(p.Markers, Marker{X: m.cursor[0], Y: m.cursor[1], Rune: '@', Style: styleCursor})
		m.frame = p.Render(pw, ph)
		return
	}
	p := Plot{AX: m.ax, AY: m.ay}
	p.Markers = append(p.Markers, m.basin...)
	if m.show.lines {
		p.Lines = append(append(p.Lines, m.lines...), m.fan...)
	}
	if m.show.boundary {
		p.Boundary = m.bound
	}
	for i, fp := range m.points {
		if !m.slice.OnSlice(fp, 1e-6) {
			continue
		}
		r := kindRune(fp)
		if i == m.sel {
			r = '['
		}
		p.Markers = append(p.Markers, Marker{X: fp.X[m.slice.X], Y: fp.X[m.slice.Y], Rune: r, Style: styleFixed})
	}
	for k, t := range m.trail {
		p.Markers = append(p.Markers, Marker{X: t.X[m.slice.X], Y: t.X[m.slice.Y], Rune: rune('0' + k%10), Style: styleTrail})
	}
	if m.cross != nil {
		for _, c := range m.cross.xs {
			x := make([]float64, len(m.slice.Base))
			m.cross.path.Point(x, c.Value)
			r := '|'
			if !m.cross.horizo {
				r = '='
			}
			p.Markers = append(p.Markers, Marker{X: x[m.slice.X], Y: x[m.slice.Y], Rune: r, Style: styleCursor})
		}
	}
	p.Markers = append(p.Markers, Marker{X: m.cursor[0], Y: m.cursor[1], Rune: '@', Style: styleCursor})
	m.frame = p.Render(pw, ph)
}

// sideWidth is the width of the panel right of the plot: a third of the
// terminal, at least 32 and at most 64 columns.
func (m Model) sideWidth() int { return min(64, max(32, m.width/3)) }

func (m Model) plotSize() (int, int) {
	return max(20, m.width-m.sideWidth()), max(6, m.height-5)
}

// View draws the screen from the model.
func (m Model) View() string {
	st := m.styles
	title := ansi.Truncate(st.Title.Render("scalewalk explorer")+"  "+m.src.title, max(10, m.width), "…")
	if m.mode == modeHelp {
		return lipgloss.JoinVertical(lipgloss.Left, title, "", m.helpView())
	}
	var plot strings.Builder
	for i, row := range m.frame.Rows {
		if i > 0 {
			plot.WriteByte('\n')
		}
		plot.WriteString(m.styleRow(row, m.frame.Styles[i]))
	}
	side := m.sideView()
	body := lipgloss.JoinHorizontal(lipgloss.Top, plot.String(), st.Panel.Width(m.sideWidth()-1).Render(side))
	axes := st.Dim.Render(trunc(fmt.Sprintf("x: %s   y: %s", m.ax.Label(), m.ay.Label()), max(10, m.width))) + "\n" +
		st.Dim.Render(trunc(m.legend(), max(10, m.width)))
	if m.mapOn {
		axes = st.Dim.Render(trunc(fmt.Sprintf("map: %s over the slice, shaded by rank low \" .:-=+*#%%&\" high; blank: not available (Q next quantity, M back)",
			quantities[m.quantity].name), max(10, m.width))) + "\n"
	}
	if m.thermoOn {
		axes = st.Dim.Render(trunc(fmt.Sprintf("thermodynamics: %s against %s at %s = %s (Q next quantity, T back to the flow)",
			quantities[m.quantity].name, m.ax.Name, m.ay.Name, report.Text(m.cursor[1], 4)), max(10, m.width))) + "\n"
	}
	return lipgloss.JoinVertical(lipgloss.Left, title, body, axes, m.statusLine())
}

func (m Model) styleRow(row string, styles []int) string {
	if styles == nil {
		return m.styles.Dim.Render(row)
	}
	var b strings.Builder
	runes := []rune(row)
	// Render runs of equal style at once.
	for i := 0; i < len(runes); {
		s := 0
		if i < len(styles) {
			s = styles[i]
		}
		j := i + 1
		for j < len(runes) && j < len(styles) && styles[j] == s {
			j++
		}
		if st, ok := m.styles.Marks[s]; ok && s != 0 {
			b.WriteString(st.Render(string(runes[i:j])))
		} else {
			b.WriteString(string(runes[i:j]))
		}
		i = j
	}
	return b.String()
}

func (m Model) statusLine() string {
	st := m.styles
	cs := m.slice.M.Couplings()
	left := fmt.Sprintf("%s/%s %s | cursor %s=%s %s=%s", m.src.model, m.src.scheme, m.src.paramText(),
		cs[m.slice.X].Name, report.Text(m.cursor[0], 4), cs[m.slice.Y].Name, report.Text(m.cursor[1], 4))
	if m.slice.Projected() {
		left += " | projected: held couplings drift"
	}
	if m.busy != "" {
		left = m.spin.View() + " " + m.busy + " (ctrl+x cancels) | " + left
	}
	if m.err != "" {
		return st.Error.Render("error: "+m.err) + " " + st.Status.Render(left)
	}
	if m.status != "" {
		left += " | " + m.status
	}
	hints := m.help.View(m.keys)
	if m.src.tensor != nil {
		hints = "arrows move • enter transitions through the cursor • +/- zoom • p edit parameters • ? help • q quit"
	}
	return st.Status.Render(trunc(left, max(10, m.width))) + "\n" + ansi.Truncate(hints, max(10, m.width), "")
}

func (m Model) helpView() string {
	var all []key.Binding
	for _, col := range m.keys.FullHelp() {
		all = append(all, col...)
	}
	ncol := 3
	if m.width < 120 {
		ncol = 2
	}
	per := (len(all) + ncol - 1) / ncol
	w := max(20, m.width/ncol-1)
	var cols []string
	for c := 0; c < ncol; c++ {
		var lines []string
		for _, kb := range all[c*per : min(len(all), (c+1)*per)] {
			h := kb.Help()
			lines = append(lines, ansi.Truncate(fmt.Sprintf("%-8s %s", h.Key, h.Desc), w, "…"))
		}
		cols = append(cols, lipgloss.NewStyle().Width(w+1).Render(strings.Join(lines, "\n")))
	}
	return lipgloss.JoinHorizontal(lipgloss.Top, cols...) + "\n" + trunc(Legend, max(10, m.width)) + "\nany key returns"
}
