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
		fmt.Fprintf(&b, "    central charge c = %s (read after %d steps, where the spectrum changes least)\n", Text(p.C, 6), p.Step)
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
