package report

import (
	"fmt"
	"io"
	"math"
	"strings"
)

// TensorFixedDoc is what `fixed --scheme tensor` reports: the critical
// points on the default path with what the coarse tensor says of them.
type TensorFixedDoc struct {
	Meta     Meta
	Path     string // e.g. "K from 0.05 to 3 at zero field"
	Points   []TensorFixedPoint
	Cautions []string
}

// TensorFixedPoint is one critical point found by the tensor engine.
type TensorFixedPoint struct {
	Coupling string
	Value    float64
	Bracket  [2]float64
	Kind     string
	TensorTransition
}

// TensorFixedPointJSON is one fixed point in `fixed --json` for the tensor
// scheme: kind critical, no eigenvalues.
type TensorFixedPointJSON struct {
	Kind              string         `json:"kind"`
	Transition        string         `json:"transition"`
	Coupling          string         `json:"coupling"`
	CriticalCoupling  Num            `json:"critical_coupling"`
	Bracket           [2]Num         `json:"bracket"`
	CentralCharge     Num            `json:"central_charge"`
	ScalingDimensions []Num          `json:"scaling_dimensions"`
	Y                 []Num          `json:"y"`
	Exponents         map[string]Num `json:"exponents"`
	Eigenvalues       []Complex      `json:"eigenvalues"`
	SpectrumStep      int            `json:"spectrum_step"`
	Plateau           Num            `json:"degeneracy_plateau"`
}

// TensorFixedJSON is the `fixed --json` document for the tensor scheme.
type TensorFixedJSON struct {
	Model       string                 `json:"model"`
	Scheme      string                 `json:"scheme"`
	Params      map[string]any         `json:"parameters"`
	Path        string                 `json:"path"`
	FixedPoints []TensorFixedPointJSON `json:"fixed_points"`
	Notes       []string               `json:"notes"`
	Cautions    []string               `json:"cautions"`
}

var tensorFixedNotes = []string{
	"the tensor engine has no flow of couplings: it locates the critical coupling by bisection on the phase the coarse-graining reaches and reads the critical point from the coarse tensor there",
	"central charge and scaling dimensions from the transfer matrices of cylinders one and two coarse tensors around (Gu and Wen 2009); y = 2 - x; nu = 1/(2 - x_energy), eta = 2 x_spin, x_spin the lowest dimension and x_energy the lowest that is not x_spin plus a whole number (dimensions of 2 and more are not used)",
}

// TensorFixed builds the JSON document.
func TensorFixed(d TensorFixedDoc) TensorFixedJSON {
	j := TensorFixedJSON{Model: d.Meta.Model, Scheme: d.Meta.Scheme, Params: d.Meta.Params, Path: d.Path,
		FixedPoints: []TensorFixedPointJSON{}, Notes: tensorFixedNotes, Cautions: append([]string{}, d.Cautions...)}
	for _, p := range d.Points {
		fp := TensorFixedPointJSON{Kind: "critical", Transition: p.Kind, Coupling: p.Coupling, CriticalCoupling: Num(p.Value),
			Bracket: [2]Num{Num(p.Bracket[0]), Num(p.Bracket[1])}, CentralCharge: Num(p.C),
			ScalingDimensions: nums(p.Dimensions), Y: []Num{}, SpectrumStep: p.Step, Plateau: Num(p.Plateau),
			Exponents: map[string]Num{"nu": Num(p.Nu), "eta": Num(p.Eta), "y_t": Num(2 - p.XEnergy), "y_h": Num(2 - p.XSpin)}}
		for _, x := range p.Dimensions {
			fp.Y = append(fp.Y, Num(2-x))
		}
		if p.Kind != "continuous" {
			fp.Kind = "discontinuity"
		}
		j.FixedPoints = append(j.FixedPoints, fp)
	}
	return j
}

// TensorFixedText writes the report as text.
func TensorFixedText(w io.Writer, d TensorFixedDoc) error {
	var b strings.Builder
	fmt.Fprintf(&b, "model %s, scheme %s (%s)\n", d.Meta.Model, d.Meta.Scheme, paramString(d.Meta.Params))
	fmt.Fprintf(&b, "path: %s\n", d.Path)
	for _, n := range tensorFixedNotes {
		fmt.Fprintf(&b, "note: %s\n", n)
	}
	for _, c := range d.Cautions {
		fmt.Fprintf(&b, "caution: %s\n", c)
	}
	fmt.Fprintf(&b, "%d critical point(s)\n", len(d.Points))
	for k, p := range d.Points {
		fmt.Fprintf(&b, "\n[%d] %s transition\n", k+1, p.Kind)
		fmt.Fprintf(&b, "    %s_c      = %s  bracket [%s, %s]\n", p.Coupling, Text(p.Value, 10), Text(p.Bracket[0], 12), Text(p.Bracket[1], 12))
		if math.IsNaN(p.C) {
			b.WriteString("    no spectrum read (not a continuous transition)\n")
			continue
		}
		fmt.Fprintf(&b, "    central charge c = %s (read after %d steps, where the spectrum first stops changing)\n", Text(p.C, 6), p.Step)
		b.WriteString("    scaling dimensions x (y = 2 - x):\n")
		for _, x := range p.Dimensions {
			fmt.Fprintf(&b, "      %-10s %s\n", Text(x, 6), Text(2-x, 6))
		}
		fmt.Fprintf(&b, "    x_spin = %s, x_energy = %s: nu = %s, eta = %s, y_t = %s, y_h = %s\n",
			Text(p.XSpin, 6), Text(p.XEnergy, 6), Text(p.Nu, 6), Text(p.Eta, 6), Text(2-p.XEnergy, 6), Text(2-p.XSpin, 6))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// ChiRow is the transitions found at one bond dimension.
type ChiRow struct {
	Chi    int
	Values []float64
	Nu     []float64
}

// ChiDoc is `critical --chis`: each transition at growing chi and its
// extrapolation.
type ChiDoc struct {
	Variable     string
	Rows         []ChiRow
	Extrapolated []float64 // per transition; NaN when not possible
	Error        []float64 // an estimate of the error of the last value
	Method       string
}

// Extrapolate fills Extrapolated and Error transition by transition, when
// every chi found the same number of transitions: with three or more
// values, Aitken's delta-squared on the last three (a truncation error
// falling geometrically as chi grows); with two, the last value and their
// difference as its error.
func (d *ChiDoc) Extrapolate() {
	n := len(d.Rows[0].Values)
	for _, r := range d.Rows {
		if len(r.Values) != n {
			d.Method = "the number of transitions changes with chi: no extrapolation"
			return
		}
	}
	k := len(d.Rows)
	for i := 0; i < n; i++ {
		last := d.Rows[k-1].Values[i]
		prev := d.Rows[k-2].Values[i]
		if k >= 3 {
			first := d.Rows[k-3].Values[i]
			den := (last - prev) - (prev - first)
			if den != 0 && math.Abs(last-prev) < math.Abs(prev-first) {
				x := last - (last-prev)*(last-prev)/den
				d.Extrapolated = append(d.Extrapolated, x)
				d.Error = append(d.Error, math.Abs(x-last))
				d.Method = "Aitken's delta-squared on the last three chi (a truncation error falling geometrically)"
				continue
			}
		}
		d.Extrapolated = append(d.Extrapolated, math.NaN())
		d.Error = append(d.Error, math.Abs(last-prev))
		if d.Method == "" {
			d.Method = "the last value, its error estimated by the change from the previous chi (no geometric convergence seen)"
		}
	}
}

// ChiJSON is the JSON form.
type ChiJSON struct {
	Variable     string       `json:"variable"`
	Rows         []ChiRowJSON `json:"rows"`
	Extrapolated []Num        `json:"extrapolated"`
	Error        []Num        `json:"error_estimate"`
	Method       string       `json:"method"`
}

// ChiRowJSON is one chi.
type ChiRowJSON struct {
	Chi    int   `json:"chi"`
	Values []Num `json:"values"`
	Nu     []Num `json:"nu"`
}

// JSON returns the document.
func (d ChiDoc) JSON() ChiJSON {
	j := ChiJSON{Variable: d.Variable, Extrapolated: nums(d.Extrapolated), Error: nums(d.Error), Method: d.Method}
	for _, r := range d.Rows {
		j.Rows = append(j.Rows, ChiRowJSON{Chi: r.Chi, Values: nums(r.Values), Nu: nums(r.Nu)})
	}
	return j
}

// Text writes the table.
func (d ChiDoc) Text(w io.Writer) error {
	var b strings.Builder
	fmt.Fprintf(&b, "transitions in %s at growing chi\n", d.Variable)
	for _, r := range d.Rows {
		var v []string
		for k, x := range r.Values {
			v = append(v, fmt.Sprintf("%s (nu %s)", Text(x, 10), Text(r.Nu[k], 4)))
		}
		fmt.Fprintf(&b, "  chi %-4d %s\n", r.Chi, strings.Join(v, "; "))
	}
	var v []string
	for k, x := range d.Extrapolated {
		v = append(v, fmt.Sprintf("%s (error about %s)", Text(x, 10), Text(d.Error[k], 2)))
	}
	fmt.Fprintf(&b, "  chi -> inf  %s\n  method: %s\n", strings.Join(v, "; "), d.Method)
	_, err := io.WriteString(w, b.String())
	return err
}
