package tui

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/textinput"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/ansi"

	"scalewalk/decimation"
	"scalewalk/flow"
	"scalewalk/internal/report"
	"scalewalk/scenarios"
)

// sideView is the panel right of the plot: the open pane, or the step log.
func (m Model) sideView() string {
	st := m.styles
	var b strings.Builder
	w := m.sideWidth() - 2
	line := func(s string) { b.WriteString(ansi.Truncate(s, w, "") + "\n") }
	switch m.mode {
	case modeScenarios:
		line(st.PanelTitle.Render("open a built-in scenario"))
		for i, n := range m.choices {
			mark := "  "
			if i == m.choice {
				mark = "> "
			}
			line(mark + n)
		}
		line(st.Dim.Render("↑/↓ choose, enter opens, esc"))
		line(st.Dim.Render("(all invented for demonstration)"))
		return b.String()
	case modeParams:
		line(st.PanelTitle.Render("parameters"))
		for i, in := range m.inputs {
			line(in.View())
			if in.Err != nil && i == m.focus {
				line(st.Error.Render(in.Err.Error()))
			}
		}
		line(st.Dim.Render("tab next, enter applies, esc"))
		return b.String()
	case modeExport:
		line(st.PanelTitle.Render("export"))
		line(m.export.View())
		line(st.Dim.Render(".csv or .json; enter writes"))
		return b.String()
	}
	for _, c := range m.src.cautions {
		line(st.Caution.Render("CAUTION"))
		for _, l := range wrap(c, w) {
			line(l)
		}
	}
	if m.src.tensor != nil {
		m.tensorView(line)
		return b.String()
	}
	if m.cross != nil {
		m.crossView(line)
		return b.String()
	}
	if m.table && m.sel >= 0 && m.sel < len(m.points) {
		m.fixedView(line, m.points[m.sel])
		return b.String()
	}
	line(st.PanelTitle.Render("steps from the cursor"))
	if len(m.trail) == 0 {
		line(st.Dim.Render("space: one step, r: run"))
	}
	cs := m.slice.M.Couplings()
	start := max(0, len(m.trail)-(m.height-8))
	for k := start; k < len(m.trail); k++ {
		t := m.trail[k]
		var parts []string
		for i, c := range cs {
			parts = append(parts, c.Name+"="+report.Text(t.X[i], 4))
		}
		g := report.Text(t.G, 4)
		if t.G != t.G {
			g = "n/a"
		}
		line(fmt.Sprintf("%d %s g=%s", k, strings.Join(parts, " "), g))
	}
	if m.stop != "" {
		line(st.Dim.Render(m.stop))
	}
	return b.String()
}

func wrap(s string, w int) []string {
	var out []string
	cur := ""
	for _, word := range strings.Fields(s) {
		if len(cur)+len(word)+1 > w && cur != "" {
			out = append(out, cur)
			cur = ""
		}
		if cur != "" {
			cur += " "
		}
		cur += word
	}
	if cur != "" {
		out = append(out, cur)
	}
	return out
}

// fixedView is the table of a fixed point.
func (m Model) fixedView(line func(string), p flow.FixedPoint) {
	st := m.styles
	cs := m.slice.M.Couplings()
	kind := p.Kind.String()
	if p.Discontinuity {
		kind += ", discontinuity"
	}
	if p.Family != nil {
		kind += ", family"
	}
	line(st.PanelTitle.Render(fmt.Sprintf("fixed point %d/%d: %s", m.sel+1, len(m.points), kind)))
	for i, c := range cs {
		coord := ""
		if p.Inf[i] != 0 {
			coord = " in " + p.Coordinates[i]
		}
		line(fmt.Sprintf(" %s = %s%s", c.Name, report.Snap(p.X[i], 8), coord))
	}
	line(fmt.Sprintf(" relevant: %d sym, %d breaking", p.Relevant, p.RelevantBreaking))
	line(" lambda      +-       y")
	for _, d := range p.Directions {
		lam := report.Snap(real(d.Lambda), 6)
		if imag(d.Lambda) != 0 {
			lam = fmt.Sprintf("|%s|", report.Text(cmplx.Abs(d.Lambda), 5))
		}
		tag := d.Block.String()[:3]
		if d.Free {
			tag = "fam"
		} else if d.OneBody {
			tag = "1bd"
		}
		line(fmt.Sprintf(" %-10s %-7s %-7s %s", lam, report.Text(d.LambdaErr, 1), report.Snap(d.Y, 4), tag))
	}
	for _, e := range p.Exponents {
		line(fmt.Sprintf(" %-5s = %-9s %s", e.Name, report.Snap(e.Value, 5), relShort(e.Relation)))
	}
	for _, n := range p.Notes {
		line(st.Dim.Render(" " + n))
	}
}

func relShort(r string) string {
	if i := strings.Index(r, " ("); i > 0 {
		r = r[:i]
	}
	if strings.HasPrefix(r, "leading") {
		return ""
	}
	return r
}

func (m Model) crossView(line func(string)) {
	st := m.styles
	c := m.cross
	line(st.PanelTitle.Render(fmt.Sprintf("transitions along %s", c.name)))
	if len(c.xs) == 0 {
		line(" none on this line")
	}
	for k, x := range c.xs {
		line(fmt.Sprintf("[%d] %s", k+1, x.Kind))
		line(fmt.Sprintf("  %s_c = %s", c.name, report.Text(x.Value, 10)))
		if o, ok := m.src.params["order"]; ok {
			line(fmt.Sprintf("  (order %v)", o))
		}
		if x.Controlling >= 0 && m.phases != nil {
			p := m.phases.Points()[x.Controlling]
			line("  by " + p.Kind.String() + " at " + p.Place(m.slice.M))
		}
		// T_c in kelvin when the line is the exchange alone.
		if mat := m.src.material; mat != nil {
			e := -1
			for i, cc := range m.slice.M.Couplings() {
				if cc.Role == flow.Exchange && cc.Symmetric {
					e = i
					break
				}
			}
			alone := true
			pt := make([]float64, len(m.slice.Base))
			c.path.Point(pt, x.Value)
			for i, v := range pt {
				if i != e && v != 0 {
					alone = false
				}
			}
			if e >= 0 && c.name == m.slice.M.Couplings()[e].Name && alone && x.Value > 0 {
				line(fmt.Sprintf("  T_c = %s K (%s)", report.Text(mat.TcKelvin(1/x.Value), 5), mat.Convention))
				line(st.Caution.Render("  CAUTION: an estimate, not a"))
				line(st.Caution.Render("  measurement: the scheme's"))
				line(st.Caution.Render("  approximation error carries"))
				line(st.Caution.Render("  into T_c"))
			} else {
				line(st.Dim.Render("  T_c in K: needs the exchange alone"))
			}
		}
	}
	line(st.Dim.Render(" c clears"))
}

func (m Model) keyScenarios(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	switch {
	case key.Matches(msg, m.keys.Back):
		m.mode = modeMain
	case key.Matches(msg, m.keys.Up):
		m.choice = (m.choice + len(m.choices) - 1) % len(m.choices)
	case key.Matches(msg, m.keys.Down):
		m.choice = (m.choice + 1) % len(m.choices)
	case msg.String() == "enter":
		src, err := build(Options{Scenario: m.choices[m.choice]})
		m.mode = modeMain
		if err != nil {
			m.err = err.Error()
			return m, nil
		}
		m.setSource(src)
		return m, m.recompute()
	case key.Matches(msg, m.keys.Quit) && msg.String() == "ctrl+c":
		return m, tea.Quit
	}
	return m, nil
}

// openParams builds the form from the parameter metadata.
// formSpecs are the fields of the parameter form: the model and the
// scheme (for a built-in engine), then their parameters, all from the
// metadata the command line uses.
func (m *Model) formSpecs() []decimation.Param {
	var out []decimation.Param
	if m.src.engine {
		var models, schemes []string
		for _, ms := range decimation.Models() {
			models = append(models, ms.Name)
		}
		for _, ss := range decimation.Schemes() {
			schemes = append(schemes, ss.Name)
		}
		out = append(out,
			decimation.Param{Name: "model", Kind: decimation.Choice, Choices: models, Help: "spin model"},
			decimation.Param{Name: "scheme", Kind: decimation.Choice, Choices: schemes, Help: "RG scheme"})
	}
	return append(out, m.src.specs...)
}

func (m *Model) openParams() {
	m.inputs = nil
	m.fields = m.formSpecs()
	vals := map[string]string{"model": m.src.model, "scheme": m.src.scheme}
	for k, v := range m.src.values {
		vals[k] = v
	}
	for _, p := range m.fields {
		p := p
		in := textinput.New()
		in.Prompt = fmt.Sprintf("%-6s ", p.Name)
		in.SetValue(vals[p.Name])
		in.Placeholder = p.Range()
		in.Validate = func(s string) error {
			if p.Kind == decimation.Real && math.IsInf(p.Min, -1) {
				_, err := decimation.Param{Name: p.Name, Kind: decimation.Real, Min: math.Inf(-1), Max: math.Inf(1)}.Parse(s)
				return err
			}
			_, err := p.Parse(s)
			return err
		}
		m.inputs = append(m.inputs, in)
	}
	if len(m.inputs) == 0 {
		m.status = "this study has no parameters"
		return
	}
	m.focus = 0
	m.inputs[0].Focus()
	m.mode = modeParams
}

func (m Model) keyParams(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	switch {
	case key.Matches(msg, m.keys.Back):
		m.mode = modeMain
		return m, nil
	case msg.String() == "tab" || msg.String() == "down":
		m.inputs[m.focus].Blur()
		m.focus = (m.focus + 1) % len(m.inputs)
		m.inputs[m.focus].Focus()
		return m, nil
	case msg.String() == "shift+tab" || msg.String() == "up":
		m.inputs[m.focus].Blur()
		m.focus = (m.focus + len(m.inputs) - 1) % len(m.inputs)
		m.inputs[m.focus].Focus()
		return m, nil
	case msg.String() == "enter":
		set := map[string]string{}
		for k, v := range m.src.opts.Set {
			set[k] = v
		}
		model, scheme := m.src.model, m.src.scheme
		for i, p := range m.fields {
			if m.inputs[i].Err != nil {
				m.focus = i
				return m, nil
			}
			v := strings.TrimSpace(m.inputs[i].Value())
			switch p.Name {
			case "model":
				model = v
			case "scheme":
				scheme = v
			default:
				set[p.Name] = v
			}
		}
		o := m.src.opts
		o.Set = set
		if model != m.src.model || scheme != m.src.scheme {
			// A new model or scheme: keep the values of the parameters it
			// shares with the old ones, defaults for the rest.
			ms, err1 := decimation.LookupModel(model)
			ss, err2 := decimation.LookupScheme(scheme)
			if err1 != nil || err2 != nil {
				m.err = "unknown model or scheme"
				return m, nil
			}
			keep := map[string]string{}
			for k, v := range set {
				if hasParam(ms.Params, k) || hasParam(ss.Params, k) {
					keep[k] = v
				}
			}
			o = Options{Model: model, Scheme: scheme, Set: keep}
		}
		src, err := build(o)
		if err != nil {
			m.err = err.Error()
			return m, nil
		}
		m.mode = modeMain
		m.setSource(src)
		return m, m.recompute()
	}
	var cmd tea.Cmd
	m.inputs[m.focus], cmd = m.inputs[m.focus].Update(msg)
	return m, cmd
}

func (m Model) keyExport(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	switch {
	case key.Matches(msg, m.keys.Back):
		m.mode = modeMain
		return m, nil
	case msg.String() == "enter":
		name := strings.TrimSpace(m.export.Value())
		m.mode = modeMain
		if err := m.writeExport(name); err != nil {
			m.err = err.Error()
		} else {
			m.err = ""
			m.status = "wrote " + name
		}
		m.render()
		return m, nil
	}
	var cmd tea.Cmd
	m.export, cmd = m.export.Update(msg)
	return m, cmd
}

// exportDoc is what `w` writes: the slice, its flow lines and fixed points.
type exportDoc struct {
	Study       string                  `json:"study"`
	X           string                  `json:"x"`
	Y           string                  `json:"y"`
	Held        map[string]report.Num   `json:"held"`
	Lines       [][][2]report.Num       `json:"flow_lines"`
	FixedPoints []report.FixedPointJSON `json:"fixed_points"`
}

// writeExport writes CSV or JSON by the file's extension, through a
// temporary file renamed into place, so no file is left half written.
func (m Model) writeExport(name string) error {
	ext := strings.ToLower(filepath.Ext(name))
	if ext != ".csv" && ext != ".json" {
		return fmt.Errorf("export %q: the name must end in .csv or .json", name)
	}
	dir := filepath.Dir(name)
	tmp, err := os.CreateTemp(dir, ".scalewalk-export-*")
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return fmt.Errorf("export %s: cannot write in %s: %v", name, dir, err)
	}
	defer os.Remove(tmp.Name())
	cs := m.slice.M.Couplings()
	// What is on screen: flow lines when shown, fixed points on the slice.
	var lines [][][2]float64
	if m.show.lines {
		lines = append(append(lines, m.lines...), m.fan...)
	}
	var shown []flow.FixedPoint
	for _, p := range m.points {
		if m.slice.OnSlice(p, 1e-6) {
			shown = append(shown, p)
		}
	}
	if ext == ".json" {
		d := exportDoc{Study: m.src.title, X: cs[m.slice.X].Name, Y: cs[m.slice.Y].Name, Held: map[string]report.Num{}, FixedPoints: []report.FixedPointJSON{}}
		for i, c := range cs {
			if i != m.slice.X && i != m.slice.Y {
				d.Held[c.Name] = report.Num(m.slice.Base[i])
			}
		}
		for _, l := range lines {
			var pl [][2]report.Num
			for _, p := range l {
				pl = append(pl, [2]report.Num{report.Num(p[0]), report.Num(p[1])})
			}
			d.Lines = append(d.Lines, pl)
		}
		for _, p := range shown {
			d.FixedPoints = append(d.FixedPoints, report.FixedPoint(m.slice.M, p))
		}
		enc := json.NewEncoder(tmp)
		enc.SetIndent("", "  ")
		if err := enc.Encode(d); err != nil {
			tmp.Close()
			return fmt.Errorf("export: %v", err)
		}
	} else {
		w := csv.NewWriter(tmp)
		w.Write([]string{"kind", "line", "step", cs[m.slice.X].Name, cs[m.slice.Y].Name, "fixed_point_kind"})
		for li, l := range lines {
			for k, p := range l {
				w.Write([]string{"flow", fmt.Sprint(li), fmt.Sprint(k), report.CSV(p[0]), report.CSV(p[1]), ""})
			}
		}
		for _, p := range shown {
			w.Write([]string{"fixed", "", "", report.CSV(p.X[m.slice.X]), report.CSV(p.X[m.slice.Y]), p.Kind.String()})
		}
		w.Flush()
		if err := w.Error(); err != nil {
			tmp.Close()
			return fmt.Errorf("export: %v", err)
		}
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("export: %v", err)
	}
	if err := os.Chmod(tmp.Name(), 0o644); err != nil {
		return fmt.Errorf("export: %v", err)
	}
	if err := os.Rename(tmp.Name(), name); err != nil {
		return fmt.Errorf("export: %v", err)
	}
	return nil
}

var _ = scenarios.DefaultScenario

// tensorView is the side pane of the tensor engine: what the marks mean
// and the transitions along the line through the cursor, with the central
// charge and scaling dimensions read from the coarse tensor.
func (m Model) tensorView(line func(string)) {
	st := m.styles
	t := m.src.tensor
	line(st.PanelTitle.Render(fmt.Sprintf("%s, chi = %d", strings.ToUpper(t.Method), t.Chi)))
	line(st.Dim.Render(". disordered  2-9 ordered (states)  ~ critical phase  ? undecided"))
	line(st.PanelTitle.Render("transitions along " + m.ax.Name + " at " + m.ay.Name + " = " + report.Text(m.cursor[1], 4)))
	if len(m.tcrits) == 0 {
		line(st.Dim.Render("none found on the axis range"))
	}
	for k, c := range m.tcrits {
		line(fmt.Sprintf("[%d] %s %s_c = %s", k+1, c.Kind, m.ax.Name, report.Text(c.Crossing.Value, 8)))
		if c.Have {
			line(fmt.Sprintf("    c = %s  (step %d)", report.Text(c.Spectrum.C, 5), c.Spectrum.Step))
			var ds []string
			for _, x := range c.Spectrum.Dimensions[:min(4, len(c.Spectrum.Dimensions))] {
				ds = append(ds, report.Text(x, 4))
			}
			line("    x = " + strings.Join(ds, ", "))
			line(fmt.Sprintf("    nu = %s  eta = %s", report.Text(c.Nu, 4), report.Text(c.Eta, 4)))
		}
	}
}
