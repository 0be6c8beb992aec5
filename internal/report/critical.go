package report

import (
	"fmt"
	"io"
	"math"
	"sort"
	"strings"
	"text/tabwriter"

	"scalewalk/flow"
)

// CriticalDoc is everything `critical` reports.
type CriticalDoc struct {
	Meta        Meta
	Map         flow.Coupled // a flow.Map, or the tensor engine
	Path        flow.Path
	Temperature bool
	At          map[string]float64
	Tolerance   float64
	Crossings   []flow.Crossing
	Points      []flow.FixedPoint
	Sweep       *SweepDoc
	Cautions    []string
	Material    *MaterialInfo
	// Tensor holds, parallel to Crossings, what the tensor engine read at
	// each transition (nil for the map schemes).
	Tensor []TensorTransition
}

// TensorTransition is what the tensor engine reads at a transition.
type TensorTransition struct {
	Plateau        float64   // the value X holds at the transition (NaN: none, first order)
	C              float64   // central charge (NaN if not read)
	Dimensions     []float64 // scaling dimensions, lowest first
	Step           int       // coarse-graining steps after which they were read
	XSpin, XEnergy float64
	Nu, Eta        float64
}

// TensorTransitionJSON is the tensor part of a transition in JSON.
type TensorTransitionJSON struct {
	Plateau           Num   `json:"degeneracy_plateau"`
	CentralCharge     Num   `json:"central_charge"`
	ScalingDimensions []Num `json:"scaling_dimensions"`
	SpectrumStep      int   `json:"spectrum_step"`
	XSpin             Num   `json:"x_spin"`
	XEnergy           Num   `json:"x_energy"`
	Nu                Num   `json:"nu"`
	Eta               Num   `json:"eta"`
	Undecided         bool  `json:"bisection_stopped_undecided"`
}

func nums(v []float64) []Num {
	out := make([]Num, len(v))
	for i, x := range v {
		out[i] = Num(x)
	}
	return out
}

// MaterialJSON names the material behind a temperature in kelvin.
type MaterialJSON struct {
	Name                string `json:"name"`
	Exchange            Num    `json:"exchange"`
	Unit                string `json:"unit"`
	Convention          string `json:"convention"`
	ModelExchangeKelvin Num    `json:"model_exchange_kelvin"`
}

// MaterialInfo is a material's exchange energy for transition temperatures
// in kelvin.
type MaterialInfo struct {
	Name           string
	Exchange       float64
	Unit           string
	Convention     string
	ConventionHelp string
	JModelK        float64 // the model's exchange over k_B, in kelvin
	Caution        string
}

// kelvin returns T_c in kelvin for a crossing, or NaN and the reason it is
// not given: a temperature path, or a path of the exchange alone with every
// other coupling zero, is needed.
func (d CriticalDoc) kelvin(c flow.Crossing) (float64, string) {
	if d.Material == nil {
		return math.NaN(), "no [material] in the scenario"
	}
	if c.Kind != flow.Continuous && c.Kind != flow.FirstOrder {
		return math.NaN(), "not a transition of identified kind, so no temperature is given"
	}
	if d.Temperature {
		return c.Value * d.Material.JModelK, ""
	}
	e := exchange(d.Map)
	if d.Path.Name == d.Map.Couplings()[e].Name {
		alone := true
		for _, v := range d.At {
			alone = alone && v == 0
		}
		if alone && c.Value > 0 {
			return d.Material.JModelK / c.Value, ""
		}
	}
	return math.NaN(), "T_c in kelvin needs a temperature path (--along T=...) or a path of the exchange alone with every other coupling 0; the critical coupling is printed alone"
}

// SweepDoc is the result of --sweep.
type SweepDoc struct {
	Name    string
	Rows    []SweepRow
	Changes []KindChange
}

// SweepRow is one sweep value with its crossings.
type SweepRow struct {
	Value     float64
	Crossings []flow.Crossing
}

// KindChange is where the kind of a transition changes along the sweep.
type KindChange struct {
	From, To  flow.TransitionKind
	Value     float64 // the sweep variable
	Bracket   [2]float64
	PathValue float64 // the path variable of the transition there
}

// Digits returns the significant digits a value known to tol supports.
func Digits(v, tol float64) int {
	if v == 0 || tol <= 0 {
		return 10
	}
	d := int(math.Ceil(math.Log10(math.Abs(v)/tol))) + 1
	return max(1, min(d, 17))
}

func order(meta Meta) string {
	if o, ok := meta.Params["order"].(string); ok {
		return o
	}
	return ""
}

// TransitionJSON is one crossing in the `critical --json` contract.
type TransitionJSON struct {
	Coupling    string                `json:"coupling"`
	Value       Num                   `json:"value"`
	Bracket     [2]Num                `json:"bracket"`
	Kind        string                `json:"kind"`
	Controlling *ControllingJSON      `json:"controlling_fixed_point"`
	KTOverJ     *Num                  `json:"kT_over_J"`
	Exchange    *Num                  `json:"exchange_critical_coupling"`
	Point       map[string]Num        `json:"point"`
	Phases      map[string]string     `json:"phases"`
	Order       string                `json:"order,omitempty"`
	Digits      int                   `json:"significant_digits"`
	Refined     bool                  `json:"refined_by_scaling_field"`
	TcKelvin    *Num                  `json:"T_c_kelvin,omitempty"`
	Material    *MaterialJSON         `json:"material,omitempty"`
	KelvinNote  string                `json:"kelvin_note,omitempty"`
	Caution     string                `json:"caution,omitempty"`
	Tensor      *TensorTransitionJSON `json:"tensor,omitempty"`
}

// ControllingJSON is the fixed point controlling a crossing.
type ControllingJSON struct {
	Place string `json:"place"`
	FixedPointJSON
}

// CriticalJSON is the document `critical --json` writes.
type CriticalJSON struct {
	Model       string           `json:"model"`
	Scheme      string           `json:"scheme"`
	Order       *string          `json:"order"`
	Params      map[string]any   `json:"parameters"`
	Path        PathJSON         `json:"path"`
	Tolerance   Num              `json:"tolerance"`
	Transitions []TransitionJSON `json:"transitions"`
	Sweep       *SweepJSON       `json:"sweep,omitempty"`
	Notes       []string         `json:"notes"`
	Cautions    []string         `json:"cautions"`
}

// PathJSON describes the path.
type PathJSON struct {
	Variable    string         `json:"variable"`
	From        Num            `json:"from"`
	To          Num            `json:"to"`
	Samples     int            `json:"samples"`
	At          map[string]Num `json:"at"`
	Temperature bool           `json:"temperature"`
}

// SweepJSON is the --sweep result.
type SweepJSON struct {
	Variable string           `json:"variable"`
	Rows     []SweepRowJSON   `json:"rows"`
	Changes  []KindChangeJSON `json:"kind_changes"`
}

// SweepRowJSON is one sweep value.
type SweepRowJSON struct {
	Value       Num              `json:"value"`
	Transitions []TransitionJSON `json:"transitions"`
}

// KindChangeJSON is a change of the transition's kind along the sweep.
type KindChangeJSON struct {
	From      string `json:"from"`
	To        string `json:"to"`
	Value     Num    `json:"value"`
	Bracket   [2]Num `json:"bracket"`
	PathValue Num    `json:"path_value"`
}

func (d CriticalDoc) notes() []string {
	step := math.Abs(d.Path.To-d.Path.From) / float64(d.Path.Samples-1)
	n := []string{fmt.Sprintf("crossings closer together than the sampling step (%.3g) may be missed", step)}
	if d.Temperature {
		n = append(n, "temperature path: the exchange is 1/T and every held value an energy in units of the exchange")
	}
	// A critical phase (X on a non-integer plateau, clock q >= 5) between
	// two crossings: name both ends.
	const crit = "critical phase"
	for i, c := range d.Crossings {
		if strings.HasPrefix(c.Above.Label, crit) {
			end := "the end of the path"
			for _, e := range d.Crossings[i+1:] {
				if strings.HasPrefix(e.Below.Label, crit) {
					end = fmt.Sprintf("%s = %s", d.Path.Name, Text(e.Value, 8))
					break
				}
			}
			n = append(n, fmt.Sprintf("a critical phase (X on a non-integer plateau) from %s = %s to %s: there is no single critical coupling there, and with a finite chi its ends are estimates that move as chi grows",
				d.Path.Name, Text(c.Value, 8), end))
		}
	}
	return n
}

// tensorDigits caps the digits a tensor-engine crossing is printed to: its
// truncation error (about 1e-4 to 1e-3 in K_c at chi = 8 to 32), not the
// bisection tolerance, limits it.
const tensorDigits = 5

// digits is how many significant digits the crossing value supports.
func (d CriticalDoc) digits(v float64) int {
	n := Digits(v, d.Tolerance)
	if len(d.Tensor) > 0 && n > tensorDigits {
		return tensorDigits
	}
	return n
}

func (d CriticalDoc) tensorAt(c flow.Crossing) *TensorTransition {
	for k, x := range d.Crossings {
		if x.Value == c.Value && k < len(d.Tensor) {
			return &d.Tensor[k]
		}
	}
	return nil
}

func (d CriticalDoc) transition(c flow.Crossing) TransitionJSON {
	t := TransitionJSON{
		Coupling: d.Path.Name, Value: Num(c.Value), Bracket: [2]Num{Num(c.Bracket[0]), Num(c.Bracket[1])},
		Kind: c.Kind.String(), Point: map[string]Num{},
		Phases: map[string]string{"below": c.Below.Label, "above": c.Above.Label},
		Order:  order(d.Meta), Digits: d.digits(c.Value), Refined: c.Refined,
	}
	x := make([]float64, len(d.Map.Couplings()))
	d.Path.Point(x, c.Value)
	for i, name := range flow.Names(d.Map) {
		t.Point[name] = Num(x[i])
	}
	if d.Temperature {
		k := Num(c.Value)
		t.KTOverJ = &k
		e := Num(1 / c.Value)
		t.Exchange = &e
	}
	if c.Controlling >= 0 && c.Controlling < len(d.Points) {
		p := d.Points[c.Controlling]
		if mm, ok := d.Map.(flow.Map); ok {
			t.Controlling = &ControllingJSON{Place: p.Place(d.Map), FixedPointJSON: FixedPoint(mm, p)}
		}
	}
	if tt := d.tensorAt(c); tt != nil {
		t.Tensor = &TensorTransitionJSON{Plateau: Num(tt.Plateau), CentralCharge: Num(tt.C), ScalingDimensions: nums(tt.Dimensions),
			SpectrumStep: tt.Step, XSpin: Num(tt.XSpin), XEnergy: Num(tt.XEnergy), Nu: Num(tt.Nu), Eta: Num(tt.Eta), Undecided: c.Undecided}
	}
	if d.Material != nil {
		if tk, why := d.kelvin(c); why == "" {
			v := Num(tk)
			t.TcKelvin = &v
			t.Caution = d.Material.Caution
			t.Material = &MaterialJSON{Name: d.Material.Name, Exchange: Num(d.Material.Exchange), Unit: d.Material.Unit,
				Convention: d.Material.Convention, ModelExchangeKelvin: Num(d.Material.JModelK)}
		} else {
			t.KelvinNote = why
		}
	}
	return t
}

// Critical builds the `critical --json` document.
func Critical(d CriticalDoc) CriticalJSON {
	j := CriticalJSON{Model: d.Meta.Model, Scheme: d.Meta.Scheme, Params: d.Meta.Params,
		Path: PathJSON{Variable: d.Path.Name, From: Num(d.Path.From), To: Num(d.Path.To), Samples: d.Path.Samples,
			At: map[string]Num{}, Temperature: d.Temperature},
		Tolerance: Num(d.Tolerance), Transitions: []TransitionJSON{}, Notes: d.notes(), Cautions: append([]string{}, d.Cautions...)}
	if o := order(d.Meta); o != "" {
		j.Order = &o
	}
	for k, v := range d.At {
		j.Path.At[k] = Num(v)
	}
	for _, c := range d.Crossings {
		j.Transitions = append(j.Transitions, d.transition(c))
	}
	if d.Sweep != nil {
		s := &SweepJSON{Variable: d.Sweep.Name, Rows: []SweepRowJSON{}, Changes: []KindChangeJSON{}}
		for _, r := range d.Sweep.Rows {
			row := SweepRowJSON{Value: Num(r.Value), Transitions: []TransitionJSON{}}
			dd := d
			dd.At = withAt(d.At, d.Sweep.Name, r.Value)
			dd.Path = repath(d, dd.At)
			for _, c := range r.Crossings {
				row.Transitions = append(row.Transitions, dd.transition(c))
			}
			s.Rows = append(s.Rows, row)
		}
		for _, c := range d.Sweep.Changes {
			s.Changes = append(s.Changes, KindChangeJSON{c.From.String(), c.To.String(), Num(c.Value),
				[2]Num{Num(c.Bracket[0]), Num(c.Bracket[1])}, Num(c.PathValue)})
		}
		j.Sweep = s
	}
	return j
}

func withAt(at map[string]float64, name string, v float64) map[string]float64 {
	out := map[string]float64{}
	for k, x := range at {
		out[k] = x
	}
	out[name] = v
	return out
}

// repath rebuilds the path's point function for other held values, for
// reporting the couplings at a sweep row's crossings.
func repath(d CriticalDoc, at map[string]float64) flow.Path {
	p := d.Path
	cs := d.Map.Couplings()
	base := make([]float64, len(cs))
	for name, v := range at {
		if i := flow.Index(d.Map, name); i >= 0 {
			base[i] = v
		}
	}
	orig := d.Path.Point
	probe := make([]float64, len(cs))
	p.Point = func(dst []float64, s float64) {
		orig(probe, s)
		for i := range dst {
			if _, held := at[cs[i].Name]; held {
				if d.Temperature {
					dst[i] = base[i] / s
				} else {
					dst[i] = base[i]
				}
			} else {
				dst[i] = probe[i]
			}
		}
	}
	return p
}

// CriticalText writes the aligned report.
func CriticalText(w io.Writer, d CriticalDoc) error {
	var b strings.Builder
	fmt.Fprintf(&b, "model %s, scheme %s", d.Meta.Model, d.Meta.Scheme)
	if len(d.Meta.Params) > 0 {
		fmt.Fprintf(&b, " (%s)", paramString(d.Meta.Params))
	}
	b.WriteString("\n")
	fmt.Fprintf(&b, "path: %s from %s to %s, %d samples", d.Path.Name, Text(d.Path.From, 8), Text(d.Path.To, 8), d.Path.Samples)
	if len(d.At) > 0 {
		var keys []string
		for k := range d.At {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		var at []string
		for _, k := range keys {
			at = append(at, fmt.Sprintf("%s=%s", k, Text(d.At[k], 8)))
		}
		fmt.Fprintf(&b, "; held %s", strings.Join(at, ", "))
	}
	b.WriteString("\n")
	for _, n := range d.notes() {
		fmt.Fprintf(&b, "note: %s\n", n)
	}
	for _, c := range d.Cautions {
		fmt.Fprintf(&b, "CAUTION: %s\n", c)
	}
	fmt.Fprintf(&b, "tolerance %s in %s; %d transition(s)\n", Text(d.Tolerance, 3), d.Path.Name, len(d.Crossings))
	ord := order(d.Meta)
	ordText := ""
	if ord != "" {
		ordText = " [order " + ord + "]"
	}
	for k, c := range d.Crossings {
		dig := d.digits(c.Value)
		if c.Kind == flow.OneBodyArtefact {
			fmt.Fprintf(&b, "\n[%d] not a phase transition: %s\n", k+1, c.Kind)
		} else {
			fmt.Fprintf(&b, "\n[%d] %s transition\n", k+1, c.Kind)
		}
		if d.Temperature {
			e := d.Map.Couplings()[exchange(d.Map)].Name
			fmt.Fprintf(&b, "    kT_c/J    = %s%s\n", Text(c.Value, dig), ordText)
			fmt.Fprintf(&b, "    %s_c       = %s (= J/kT_c)%s\n", e, Text(1/c.Value, dig), ordText)
		} else {
			fmt.Fprintf(&b, "    %s_c = %s%s (kT_c/J applies only on a temperature path)\n", d.Path.Name, Text(c.Value, dig), ordText)
		}
		fmt.Fprintf(&b, "    bracket   [%s, %s]", Text(c.Bracket[0], 17), Text(c.Bracket[1], 17))
		if c.Refined {
			b.WriteString("; value refined inside it by the thermal scaling field (left eigenvector) of the controlling point")
		}
		b.WriteString("\n")
		if d.Material != nil {
			if tk, why := d.kelvin(c); why == "" {
				fmt.Fprintf(&b, "    T_c       = %s K for %s (exchange %s %s, convention %s: %s; scheme %s%s)\n",
					Text(tk, min(dig, 6)), d.Material.Name, Text(d.Material.Exchange, 6), d.Material.Unit,
					d.Material.Convention, d.Material.ConventionHelp, d.Meta.Scheme, ordText)
				fmt.Fprintf(&b, "              (kT_c/J above is in units of the model's exchange, J_model/k_B = %s K for this material and convention)\n", Text(d.Material.JModelK, 6))
				fmt.Fprintf(&b, "    CAUTION   %s\n", d.Material.Caution)
			} else {
				fmt.Fprintf(&b, "    T_c in kelvin: not given (%s)\n", why)
			}
		}
		x := make([]float64, len(d.Map.Couplings()))
		d.Path.Point(x, c.Value)
		var pt []string
		for i, name := range flow.Names(d.Map) {
			pt = append(pt, name+"="+Snap(x[i], 10))
		}
		fmt.Fprintf(&b, "    couplings %s\n", strings.Join(pt, ", "))
		fmt.Fprintf(&b, "    phases    %s below, %s above\n", quoted(c.Below.Label), quoted(c.Above.Label))
		if c.Controlling >= 0 && c.Controlling < len(d.Points) {
			p := d.Points[c.Controlling]
			desc := p.Kind.String()
			if p.Discontinuity {
				desc += ", discontinuity"
			}
			fmt.Fprintf(&b, "    controlled by the %s fixed point at %s", desc, p.Place(d.Map))
			if yt, ok := flow.Lookup(p.Exponents, "y_t"); ok {
				fmt.Fprintf(&b, " (y_t = %s", Snap(yt, 8))
				if nu, ok := flow.Lookup(p.Exponents, "nu"); ok {
					fmt.Fprintf(&b, ", nu = %s", Snap(nu, 8))
				}
				b.WriteString(")")
			}
			b.WriteString("\n")
		} else if tt := d.tensorAt(c); tt != nil {
			b.WriteString("    controlled by: no fixed point (tensor renormalization has no flow of couplings)\n")
			if c.Undecided {
				b.WriteString("    bisection stopped at a flow still undecided: the transition lies in the bracket above\n")
			}
			if !math.IsNaN(tt.Plateau) {
				fmt.Fprintf(&b, "    degeneracy X holds %s at the transition (a continuous transition)\n", Text(tt.Plateau, 4))
			} else if c.Kind == flow.FirstOrder {
				b.WriteString("    degeneracy X goes straight to a whole number at the transition (first order)\n")
			} else {
				b.WriteString("    degeneracy X drifts without a plateau at the transition: the kind is not decided at this chi\n")
			}
			if !math.IsNaN(tt.C) {
				var ds []string
				for _, x := range tt.Dimensions {
					ds = append(ds, Text(x, 5))
				}
				fmt.Fprintf(&b, "    central charge %s, scaling dimensions %s (read after %d steps); nu = %s, eta = %s\n",
					Text(tt.C, 5), strings.Join(ds, ", "), tt.Step, Text(tt.Nu, 5), Text(tt.Eta, 5))
			}
		} else {
			b.WriteString("    controlled by: no fixed point identified\n")
		}
	}
	if d.Sweep != nil {
		fmt.Fprintf(&b, "\nsweep over %s:\n", d.Sweep.Name)
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
		fmt.Fprintf(tw, "  %s\ttransitions (%s: kind)\n", d.Sweep.Name, d.Path.Name)
		for _, r := range d.Sweep.Rows {
			var parts []string
			for _, c := range r.Crossings {
				parts = append(parts, fmt.Sprintf("%s: %s", Text(c.Value, 8), c.Kind))
			}
			if len(parts) == 0 {
				parts = []string{"none"}
			}
			fmt.Fprintf(tw, "  %s\t%s\n", Text(r.Value, 8), strings.Join(parts, "; "))
		}
		tw.Flush()
		if len(d.Sweep.Changes) == 0 {
			b.WriteString("the kind of the transition does not change over the sweep\n")
		}
		for _, ch := range d.Sweep.Changes {
			fmt.Fprintf(&b, "the transition changes from %s to %s at %s = %s (bracket [%s, %s]), %s = %s there: a multicritical (tricritical) point%s\n",
				ch.From, ch.To, d.Sweep.Name, Text(ch.Value, 7), Text(ch.Bracket[0], 9), Text(ch.Bracket[1], 9), d.Path.Name, Text(ch.PathValue, 7), ordText)
		}
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func quoted(s string) string { return "(" + s + ")" }

func exchange(m flow.Coupled) int {
	for i, c := range m.Couplings() {
		if c.Role == flow.Exchange && c.Symmetric {
			return i
		}
	}
	return 0
}

// CriticalCSV writes one row per transition.
func CriticalCSV(w io.Writer, d CriticalDoc) error {
	names := flow.Names(d.Map)
	hdr := []string{"variable", "value", "bracket_lo", "bracket_hi", "kind", "kT_over_J", "order", "controlling", "below", "above"}
	hdr = append(hdr, names...)
	rows := [][]string{hdr}
	add := func(c flow.Crossing, p flow.Path) {
		kt := ""
		if d.Temperature {
			kt = CSV(c.Value)
		}
		ctl := ""
		if c.Controlling >= 0 && c.Controlling < len(d.Points) {
			ctl = d.Points[c.Controlling].Place(d.Map)
		}
		r := []string{p.Name, CSV(c.Value), CSV(c.Bracket[0]), CSV(c.Bracket[1]), c.Kind.String(), kt, order(d.Meta), ctl, c.Below.Label, c.Above.Label}
		x := make([]float64, len(names))
		p.Point(x, c.Value)
		for _, v := range x {
			r = append(r, CSV(v))
		}
		rows = append(rows, r)
	}
	for _, c := range d.Crossings {
		add(c, d.Path)
	}
	return writeCSV(w, rows)
}

// PhaseGrid is the phase reached from each point of a grid.
type PhaseGrid struct {
	Meta             Meta
	Map              flow.Map
	A, B             string
	AValues, BValues []float64
	Labels           []string
	Phase            [][]int // [b][a] index into Labels
}

// JSON returns the grid as a JSON-ready value.
func (g PhaseGrid) JSON() any {
	av := make([]Num, len(g.AValues))
	for i, v := range g.AValues {
		av[i] = Num(v)
	}
	bv := make([]Num, len(g.BValues))
	for i, v := range g.BValues {
		bv[i] = Num(v)
	}
	return map[string]any{"model": g.Meta.Model, "scheme": g.Meta.Scheme, "parameters": g.Meta.Params,
		"a": g.A, "b": g.B, "a_values": av, "b_values": bv, "phases": g.Labels, "phase": g.Phase}
}

// CSV writes one row per grid point.
func (g PhaseGrid) CSV(w io.Writer) error {
	rows := [][]string{{g.A, g.B, "phase"}}
	for j, row := range g.Phase {
		for i, k := range row {
			rows = append(rows, []string{CSV(g.AValues[i]), CSV(g.BValues[j]), g.Labels[k]})
		}
	}
	return writeCSV(w, rows)
}

// Text draws the grid with one character per phase and a legend.
func (g PhaseGrid) Text(w io.Writer) error {
	var b strings.Builder
	marks := "abcdefghijklmnopqrstuvwxyz"
	fmt.Fprintf(&b, "phases reached from each point: %s across (%s to %s), %s down (%s to %s)\n",
		g.A, Text(g.AValues[0], 6), Text(g.AValues[len(g.AValues)-1], 6), g.B, Text(g.BValues[len(g.BValues)-1], 6), Text(g.BValues[0], 6))
	for j := len(g.Phase) - 1; j >= 0; j-- {
		b.WriteString("  ")
		for _, k := range g.Phase[j] {
			if k < len(marks) {
				b.WriteByte(marks[k])
			} else {
				b.WriteByte('?')
			}
		}
		b.WriteString("\n")
	}
	for k, l := range g.Labels {
		m := "?"
		if k < len(marks) {
			m = string(marks[k])
		}
		fmt.Fprintf(&b, "  %s  %s\n", m, l)
	}
	_, err := io.WriteString(w, b.String())
	return err
}
