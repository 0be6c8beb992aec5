package report

import (
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"scalewalk/internal/compare"
)

// CompareRowJSON is one row of `compare --json`.
type CompareRowJSON struct {
	Scheme        string            `json:"scheme"`
	Method        string            `json:"method"`
	Parameters    map[string]string `json:"parameters"`
	KC            Num               `json:"K_c"`
	KStar         Signed            `json:"K_star"`
	Nu            Num               `json:"nu"`
	YT            Num               `json:"y_t"`
	YH            Num               `json:"y_h"`
	Eta           Num               `json:"eta"`
	Exact         bool              `json:"exact"`
	Multicritical bool              `json:"multicritical"`
	Skipped       bool              `json:"skipped"`
	Closure       Num               `json:"closure_error"`
	Source        string            `json:"source,omitempty"`
	Note          string            `json:"note"`
}

// CompareJSON is the `compare --json` document.
type CompareJSON struct {
	Model   string           `json:"model"`
	Lattice string           `json:"lattice"`
	Rows    []CompareRowJSON `json:"rows"`
	Notes   []string         `json:"notes"`
}

// compareNotes explain how every row is read.
var compareNotes = []string{
	"K_c: critical nearest-neighbour coupling of the model with every other coupling 0, found by following the flow (bisection to 1e-9)",
	"K_star: nearest-neighbour coupling of the fixed point controlling K_c; the two differ when the scheme keeps further couplings",
	"Potts couplings multiply delta(s_i, s_j), so K_Potts = 2 K_Ising at q = 2",
	"every approximate row is an estimate; the exact row names its sources",
}

// Compare returns the JSON document of a comparison.
func Compare(model, lattice string, rows []compare.Row) CompareJSON {
	out := CompareJSON{Model: model, Lattice: lattice, Rows: []CompareRowJSON{}, Notes: compareNotes}
	for _, r := range rows {
		p := r.Params
		if p == nil {
			p = map[string]string{}
		}
		out.Rows = append(out.Rows, CompareRowJSON{Scheme: r.Scheme, Method: r.Method, Parameters: p,
			KC: Num(r.KC), KStar: Signed(r.KStar), Nu: Num(r.Nu), YT: Num(r.YT), YH: Num(r.YH), Eta: Num(r.Eta),
			Exact: r.Exact, Multicritical: r.Multicritical, Skipped: r.Skipped, Closure: Num(r.Closure), Source: r.Source, Note: r.Note})
	}
	return out
}

// CompareText writes the comparison as an aligned table, with the notes
// of each row and the exact row's sources below it.
func CompareText(w io.Writer, model, lattice string, rows []compare.Row) error {
	fmt.Fprintf(w, "model %s on the %s lattice: every scheme beside the exact values\n\n", model, lattice)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "#\tmethod\tsettings\tK_c\tK*\ty_t\tnu\ty_h\teta\t")
	var notes []string
	for i, r := range rows {
		name := r.Method
		if r.Scheme != "" {
			name += " [" + r.Scheme + "]"
		}
		if r.Multicritical && !r.Exact {
			name += " (tricritical)"
		}
		if r.Skipped {
			fmt.Fprintf(tw, "%d\t%s\t%s\tskipped, see [%d] below\t\t\t\t\t\t\n", i+1, name, settingsText(r.Params), i+1)
		} else {
			fmt.Fprintf(tw, "%d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t\n", i+1, name, settingsText(r.Params),
				cell(r.KC, 6), cell(r.KStar, 6), cell(r.YT, 4), cell(r.Nu, 4), cell(r.YH, 4), cell(r.Eta, 4))
		}
		if r.Note != "" {
			notes = append(notes, fmt.Sprintf("[%d] %s", i+1, r.Note))
		}
		if r.Source != "" {
			notes = append(notes, fmt.Sprintf("[%d] sources: %s", i+1, r.Source))
		}
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintln(w)
	for _, n := range notes {
		fmt.Fprintln(w, n)
	}
	fmt.Fprintln(w)
	for _, n := range compareNotes {
		fmt.Fprintln(w, "note: "+n)
	}
	return nil
}

func settingsText(p map[string]string) string {
	if len(p) == 0 {
		return "-"
	}
	a := map[string]any{}
	for k, v := range p {
		a[k] = v
	}
	return strings.ReplaceAll(paramString(a), ", ", " ")
}

func cell(v float64, digits int) string {
	switch {
	case math.IsNaN(v):
		return "-"
	case math.IsInf(v, 1):
		return "+inf"
	case math.IsInf(v, -1):
		return "-inf"
	}
	return fmt.Sprintf("%.*f", digits, v)
}
