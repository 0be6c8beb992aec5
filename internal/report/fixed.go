package report

import (
	"fmt"
	"io"
	"math"
	"math/cmplx"
	"sort"
	"strings"
	"text/tabwriter"

	"scalewalk/flow"
)

// Meta identifies what a report is about.
type Meta struct {
	Model    string
	Scheme   string
	Params   map[string]any // model and scheme parameters, resolved
	Cautions []string       // warnings the scheme attaches to its results
	Scenario string         // the scenario's name, "" when none
}

// Coupling is a coupling as listed in reports.
type Coupling struct {
	Name      string `json:"name"`
	Role      string `json:"role"`
	Symmetric bool   `json:"symmetric"`
}

// Complex is a complex number in JSON.
type Complex struct {
	Re Num `json:"re"`
	Im Num `json:"im"`
}

// FamilyJSON describes a family of fixed points.
type FamilyJSON struct {
	Free      []string             `json:"free"`
	Range     map[string][2]Signed `json:"range"`
	Dimension int                  `json:"dimension"`
	// Directions are tangent vectors (coupling name -> component) in
	// reduced row-echelon form, in the coordinates of the analysis.
	Directions []map[string]Num `json:"directions"`
}

// FixedPointJSON is one fixed point in the `fixed --json` contract.
type FixedPointJSON struct {
	Values           map[string]Num    `json:"values"`
	Infinite         map[string]string `json:"infinite"`
	Coordinates      map[string]string `json:"coordinates"`
	Family           *FamilyJSON       `json:"family"`
	Kind             string            `json:"kind"`
	Discontinuity    bool              `json:"discontinuity"`
	ZeroTemperature  bool              `json:"zero_temperature"`
	Symmetric        bool              `json:"symmetric"`
	Relevant         int               `json:"relevant"`
	RelevantBreaking int               `json:"relevant_breaking"`
	Marginal         int               `json:"marginal"`
	Eigenvalues      []Complex         `json:"eigenvalues"`
	EigenvalueErr    []Num             `json:"eigenvalue_err"`
	Y                []Num             `json:"y"`
	YErr             []Num             `json:"y_err"`
	Blocks           []string          `json:"blocks"`
	Relevance        []string          `json:"relevance"`
	Counted          []bool            `json:"counted"`
	ScalingFields    [][]Complex       `json:"scaling_fields"`
	Exponents        map[string]Num    `json:"exponents"`
	Relations        map[string]string `json:"relations"`
	Residual         Num               `json:"residual"`
	Iterations       int               `json:"iterations"`
	Closure          Num               `json:"closure_error"`
	Notes            []string          `json:"notes"`
}

// FixedJSON is the document `fixed --json` writes.
type FixedJSON struct {
	Scenario    string           `json:"scenario,omitempty"`
	Model       string           `json:"model"`
	Scheme      string           `json:"scheme"`
	Params      map[string]any   `json:"parameters"`
	B           Num              `json:"b"`
	D           Num              `json:"d"`
	Symmetry    string           `json:"symmetry"`
	Couplings   []Coupling       `json:"couplings"`
	FixedPoints []FixedPointJSON `json:"fixed_points"`
	Search      SearchJSON       `json:"search"`
	Cautions    []string         `json:"cautions"`
}

// SearchJSON records the work of the search.
type SearchJSON struct {
	Charts    int `json:"charts"`
	Starts    int `json:"starts"`
	Converged int `json:"converged"`
	Dropped   int `json:"dropped_at_infinity"`
	Millis    Num `json:"milliseconds"`
}

// Couplings lists m's couplings for a report.
func Couplings(m flow.Map) []Coupling {
	var out []Coupling
	for _, c := range m.Couplings() {
		out = append(out, Coupling{c.Name, c.Role.String(), c.Symmetric})
	}
	return out
}

func symmetry(m flow.Map) string {
	if s, ok := m.(flow.Symmetrist); ok {
		return s.Symmetry()
	}
	return ""
}

// Fixed builds the `fixed --json` document.
func Fixed(meta Meta, m flow.Map, res *flow.FindResult) FixedJSON {
	doc := FixedJSON{
		Scenario: meta.Scenario,
		Model:    meta.Model, Scheme: meta.Scheme, Params: meta.Params,
		B: Num(m.Rescale()), D: Num(m.Dimension()), Symmetry: symmetry(m),
		Couplings:   Couplings(m),
		FixedPoints: []FixedPointJSON{},
		Cautions:    append([]string{}, meta.Cautions...),
		Search: SearchJSON{res.Stats.Charts, res.Stats.Starts, res.Stats.Converged, res.Stats.Dropped,
			Num(float64(res.Stats.Runtime.Microseconds()) / 1000)},
	}
	for _, p := range res.Points {
		doc.FixedPoints = append(doc.FixedPoints, FixedPoint(m, p))
	}
	return doc
}

// FixedPoint converts one fixed point.
func FixedPoint(m flow.Map, p flow.FixedPoint) FixedPointJSON {
	cs := m.Couplings()
	j := FixedPointJSON{
		Values: map[string]Num{}, Infinite: map[string]string{}, Coordinates: map[string]string{},
		Kind: p.Kind.String(), Discontinuity: p.Discontinuity, ZeroTemperature: p.ZeroTemperature,
		Symmetric: p.Symmetric, Relevant: p.Relevant, RelevantBreaking: p.RelevantBreaking, Marginal: p.Marginal,
		Exponents: map[string]Num{}, Relations: map[string]string{},
		Residual: Num(p.Residual), Iterations: p.Iterations, Closure: Num(p.Closure), Notes: append([]string{}, p.Notes...),
		Eigenvalues: []Complex{}, EigenvalueErr: []Num{}, Y: []Num{}, YErr: []Num{},
		Blocks: []string{}, Relevance: []string{}, Counted: []bool{}, ScalingFields: [][]Complex{},
	}
	for i, c := range cs {
		j.Values[c.Name] = Num(p.X[i])
		j.Coordinates[c.Name] = p.Coordinates[i]
		switch {
		case p.Inf[i] > 0 || math.IsInf(p.X[i], 1):
			j.Infinite[c.Name] = "+inf"
		case p.Inf[i] < 0 || math.IsInf(p.X[i], -1):
			j.Infinite[c.Name] = "-inf"
		}
	}
	if p.Family != nil {
		f := &FamilyJSON{Range: map[string][2]Signed{}, Dimension: len(p.Family.Basis), Directions: []map[string]Num{}}
		for k, i := range p.Family.Free {
			f.Free = append(f.Free, cs[i].Name)
			f.Range[cs[i].Name] = [2]Signed{Signed(p.Family.Range[k][0]), Signed(p.Family.Range[k][1])}
		}
		for _, v := range p.Family.Tangent {
			d := map[string]Num{}
			for i, c := range cs {
				if v[i] != 0 {
					d[c.Name] = Num(v[i])
				}
			}
			f.Directions = append(f.Directions, d)
		}
		j.Family = f
	}
	for _, d := range p.Directions {
		j.Eigenvalues = append(j.Eigenvalues, Complex{Num(real(d.Lambda)), Num(imag(d.Lambda))})
		j.EigenvalueErr = append(j.EigenvalueErr, Num(d.LambdaErr))
		j.Y = append(j.Y, Num(d.Y))
		j.YErr = append(j.YErr, Num(d.YErr))
		j.Blocks = append(j.Blocks, d.Block.String())
		j.Relevance = append(j.Relevance, d.Relevance.String())
		j.Counted = append(j.Counted, d.Counted())
		var v []Complex
		for _, c := range d.Left {
			v = append(v, Complex{Num(real(c)), Num(imag(c))})
		}
		j.ScalingFields = append(j.ScalingFields, v)
	}
	for _, e := range p.Exponents {
		j.Exponents[e.Name] = Num(e.Value)
		j.Relations[e.Name] = e.Relation
	}
	return j
}

// FixedText writes an aligned, human-readable report of the fixed points.
func FixedText(w io.Writer, meta Meta, m flow.Map, res *flow.FindResult) error {
	cs := m.Couplings()
	var b strings.Builder
	if meta.Scenario != "" {
		fmt.Fprintf(&b, "scenario %s\n", meta.Scenario)
	}
	fmt.Fprintf(&b, "model %s, scheme %s", meta.Model, meta.Scheme)
	if len(meta.Params) > 0 {
		fmt.Fprintf(&b, " (%s)", paramString(meta.Params))
	}
	fmt.Fprintf(&b, "; b = %s, d = %s\n", Text(m.Rescale(), 6), Text(m.Dimension(), 6))
	var names []string
	for _, c := range cs {
		s := "symmetric"
		if !c.Symmetric {
			s = "symmetry-breaking"
		}
		names = append(names, fmt.Sprintf("%s (%s, %s)", c.Name, c.Role, s))
	}
	fmt.Fprintf(&b, "couplings: %s\n", strings.Join(names, ", "))
	if sym := symmetry(m); sym != "" {
		fmt.Fprintf(&b, "symmetry: %s\n", sym)
	}
	for _, c := range meta.Cautions {
		fmt.Fprintf(&b, "CAUTION: %s\n", c)
	}
	fmt.Fprintf(&b, "%d fixed point(s) found (%d charts, %d starts, %d converged, %.1f ms)\n",
		len(res.Points), res.Stats.Charts, res.Stats.Starts, res.Stats.Converged, float64(res.Stats.Runtime.Microseconds())/1000)
	if res.Stats.Dropped > 0 {
		fmt.Fprintf(&b, "%d candidate(s) at infinite coupling dropped: the map reaches them only non-analytically, so their linearization has no stable limit\n", res.Stats.Dropped)
	}
	for k, p := range res.Points {
		fmt.Fprintf(&b, "\n[%d] %s", k+1, p.Kind)
		if p.Discontinuity {
			b.WriteString(", discontinuity (first order)")
		}
		if p.Family != nil {
			b.WriteString(", family")
		}
		b.WriteString("\n")
		var loc []string
		for i, c := range cs {
			loc = append(loc, c.Name+" = "+Snap(p.X[i], 10))
		}
		fmt.Fprintf(&b, "    at        %s\n", strings.Join(loc, ", "))
		var coords []string
		anyInf := false
		for i := range cs {
			coords = append(coords, p.Coordinates[i])
			anyInf = anyInf || p.Inf[i] != 0
		}
		if anyInf {
			fmt.Fprintf(&b, "    analysed in the coordinates (%s)\n", strings.Join(coords, ", "))
		}
		if p.Family != nil {
			var fr []string
			for k, i := range p.Family.Free {
				fr = append(fr, fmt.Sprintf("%s in [%s, %s]", cs[i].Name, Text(p.Family.Range[k][0], 6), Text(p.Family.Range[k][1], 6)))
			}
			fmt.Fprintf(&b, "    family    %d-dimensional, along %s; %s (values above are one representative)\n",
				len(p.Family.Basis), tangentText(cs, p.Family.Tangent), strings.Join(fr, ", "))
		}
		if p.Symmetric {
			fmt.Fprintf(&b, "    relevant  %d symmetric, %d symmetry-breaking", p.Relevant, p.RelevantBreaking)
		} else {
			fmt.Fprintf(&b, "    relevant  %d (all directions: the point is off the symmetric subspace)", p.Relevant)
		}
		if p.Marginal > 0 {
			fmt.Fprintf(&b, ", %d marginal", p.Marginal)
		}
		b.WriteString("\n")
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
		fmt.Fprintf(tw, "    \tlambda\t+-\ty\t+-\tblock\t\n")
		for _, d := range p.Directions {
			extra := d.Relevance.String()
			if d.Free {
				extra = "along the family"
			} else if d.OneBody {
				extra += ", one-body (not counted)"
			}
			fmt.Fprintf(tw, "    \t%s\t%s\t%s\t%s\t%s\t%s\n", complexText(d.Lambda), Text(d.LambdaErr, 2),
				Snap(d.Y, 8), Text(d.YErr, 2), d.Block, extra)
		}
		tw.Flush()
		if len(p.Exponents) > 0 {
			tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
			for _, e := range p.Exponents {
				fmt.Fprintf(tw, "    \t%s\t= %s\t(%s)\n", e.Name, Snap(e.Value, 8), e.Relation)
			}
			tw.Flush()
		}
		for _, n := range p.Notes {
			fmt.Fprintf(&b, "    note: %s\n", n)
		}
		fmt.Fprintf(&b, "    found with residual %s after %d Newton iteration(s)\n", Text(p.Residual, 2), p.Iterations)
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func complexText(z complex128) string {
	if imag(z) == 0 {
		return Snap(real(z), 10)
	}
	sign := "+"
	if imag(z) < 0 {
		sign = "-"
	}
	return fmt.Sprintf("%s%s%si (|%s|)", Text(real(z), 7), sign, Text(math.Abs(imag(z)), 7), Text(cmplx.Abs(z), 7))
}

func paramString(p map[string]any) string {
	var keys []string
	for k := range p {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	var parts []string
	for _, k := range keys {
		parts = append(parts, fmt.Sprintf("%s=%v", k, p[k]))
	}
	return strings.Join(parts, ", ")
}

// FixedCSV writes one row per fixed point: kind, flags, each coupling's
// value and coordinate, then the eigenvalues and exponents y in order.
func FixedCSV(w io.Writer, m flow.Map, res *flow.FindResult) error {
	cs := m.Couplings()
	n := len(cs)
	hdr := []string{"index", "kind", "discontinuity", "family", "relevant", "relevant_breaking"}
	for _, c := range cs {
		hdr = append(hdr, c.Name)
	}
	for _, c := range cs {
		hdr = append(hdr, "coord_"+c.Name)
	}
	for i := 1; i <= n; i++ {
		hdr = append(hdr, fmt.Sprintf("lambda%d_re", i), fmt.Sprintf("lambda%d_im", i), fmt.Sprintf("y%d", i), fmt.Sprintf("y%d_err", i))
	}
	expNames := []string{"y_t", "y_h", "nu", "eta", "alpha", "beta", "gamma", "delta", "phi"}
	hdr = append(hdr, expNames...)
	rows := [][]string{hdr}
	for k, p := range res.Points {
		fam := ""
		if p.Family != nil {
			var f []string
			for _, i := range p.Family.Free {
				f = append(f, cs[i].Name)
			}
			fam = strings.Join(f, " ")
		}
		r := []string{fmt.Sprint(k + 1), p.Kind.String(), fmt.Sprint(p.Discontinuity), fam, fmt.Sprint(p.Relevant), fmt.Sprint(p.RelevantBreaking)}
		for i := range cs {
			r = append(r, CSV(p.X[i]))
		}
		r = append(r, p.Coordinates...)
		for i := 0; i < n; i++ {
			if i < len(p.Directions) {
				d := p.Directions[i]
				r = append(r, CSV(real(d.Lambda)), CSV(imag(d.Lambda)), CSV(d.Y), CSV(d.YErr))
			} else {
				r = append(r, "", "", "", "")
			}
		}
		for _, e := range expNames {
			if v, ok := flow.Lookup(p.Exponents, e); ok {
				r = append(r, CSV(v))
			} else {
				r = append(r, "")
			}
		}
		rows = append(rows, r)
	}
	return writeCSV(w, rows)
}

// tangentText describes tangent directions: a unit vector along one
// coupling as its name, others as proportions, e.g. "(h, Kfav) ∝ (1, -1)".
func tangentText(cs []flow.Coupling, ts [][]float64) string {
	var parts []string
	for _, v := range ts {
		var names, comps []string
		for i, c := range cs {
			if v[i] != 0 {
				names = append(names, c.Name)
				comps = append(comps, Text(v[i], 6))
			}
		}
		if len(names) == 1 {
			parts = append(parts, names[0])
		} else {
			parts = append(parts, "("+strings.Join(names, ", ")+") ∝ ("+strings.Join(comps, ", ")+")")
		}
	}
	return strings.Join(parts, " and ")
}
