package report

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"scalewalk/flow"
)

// TracePointJSON is one row of a trajectory.
type TracePointJSON struct {
	N      int            `json:"n"`
	Values map[string]Num `json:"values"`
	G      Num            `json:"g"`
}

// TraceJSON is the document `trace --json` writes.
type TraceJSON struct {
	Model     string           `json:"model"`
	Scheme    string           `json:"scheme"`
	Params    map[string]any   `json:"parameters"`
	B         Num              `json:"b"`
	D         Num              `json:"d"`
	Couplings []Coupling       `json:"couplings"`
	Points    []TracePointJSON `json:"points"`
	Stop      string           `json:"stop"`
	Detail    string           `json:"detail"`
}

// Trace builds the `trace --json` document.
func Trace(meta Meta, m flow.Map, t *flow.Trajectory) TraceJSON {
	doc := TraceJSON{Model: meta.Model, Scheme: meta.Scheme, Params: meta.Params,
		B: Num(m.Rescale()), D: Num(m.Dimension()), Couplings: Couplings(m),
		Points: []TracePointJSON{}, Stop: t.Stop.String(), Detail: t.Detail}
	names := flow.Names(m)
	for n, p := range t.Points {
		v := map[string]Num{}
		for i, name := range names {
			v[name] = Num(p.X[i])
		}
		doc.Points = append(doc.Points, TracePointJSON{N: n, Values: v, G: Num(p.G)})
	}
	return doc
}

// TraceCSV writes the trajectory with a header row n, couplings…, g.
func TraceCSV(w io.Writer, m flow.Map, t *flow.Trajectory) error {
	hdr := append(append([]string{"n"}, flow.Names(m)...), "g")
	rows := [][]string{hdr}
	for n, p := range t.Points {
		r := []string{fmt.Sprint(n)}
		for _, v := range p.X {
			r = append(r, CSV(v))
		}
		rows = append(rows, append(r, CSV(p.G)))
	}
	return writeCSV(w, rows)
}

// TraceText writes the trajectory as an aligned table and the reason it
// stopped.
func TraceText(w io.Writer, meta Meta, m flow.Map, t *flow.Trajectory) error {
	var b strings.Builder
	fmt.Fprintf(&b, "model %s, scheme %s", meta.Model, meta.Scheme)
	if len(meta.Params) > 0 {
		fmt.Fprintf(&b, " (%s)", paramString(meta.Params))
	}
	fmt.Fprintf(&b, "; b = %s, d = %s\n", Text(m.Rescale(), 6), Text(m.Dimension(), 6))
	b.WriteString("row n: couplings x_n and the constant g(x_n) per site of the step out of x_n\n")
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "n\t%s\tg\t\n", strings.Join(flow.Names(m), "\t"))
	for n, p := range t.Points {
		var cols []string
		for _, v := range p.X {
			cols = append(cols, Text(v, 12))
		}
		g := Text(p.G, 12)
		if p.G != p.G {
			g = "n/a"
		}
		fmt.Fprintf(tw, "%d\t%s\t%s\t\n", n, strings.Join(cols, "\t"), g)
	}
	tw.Flush()
	if hc, ok := m.(interface{ HasConstant() bool }); ok && !hc.HasConstant() {
		b.WriteString("g: n/a, this recursion gives no constant (add constant = \"...\" to its [recursion] for thermodynamics)\n")
	}
	fmt.Fprintf(&b, "stopped: %s", t.Stop)
	if t.Detail != "" {
		fmt.Fprintf(&b, " (%s)", t.Detail)
	}
	b.WriteString("\n")
	_, err := io.WriteString(w, b.String())
	return err
}
