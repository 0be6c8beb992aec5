package cli

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"

	"scalewalk/decimation"
	"scalewalk/flow"
	"scalewalk/internal/report"
)

const exponentHelp = `Each fixed point is linearized: the eigenvalues lambda_i of the Jacobian
dx'/dx give y_i = ln|lambda_i| / ln b, with error bars from the Jacobian's
error estimate. The kind follows from r, the number of relevant
(|lambda| > 1) symmetric directions: r = 0 sink, r = 1 critical, r >= 2
multicritical; directions along a family of fixed points, and one-body
directions (field, crystal field) at a point whose two-site couplings are all
zero, are not counted. A zero-temperature point whose leading
symmetry-breaking exponent y_h equals d is a discontinuity fixed point (a
first-order transition).

Exponents from y_t (leading symmetric) and y_h (leading symmetry-breaking):
  nu    = 1/y_t                (definition of the correlation-length exponent)
  eta   = d + 2 - 2 y_h        (scaling relation)
  alpha = 2 - d/y_t            (hyperscaling, Josephson relation)
  beta  = (d - y_h)/y_t        (scaling relation)
  gamma = (2 y_h - d)/y_t      (scaling relation, Fisher)
  delta = y_h/(d - y_h)        (scaling relation, Widom)
  phi   = y_2/y_1              (crossover exponent at a multicritical point)

Fixed points at infinite coupling are analysed in a compactified coordinate
declared per coupling (Ising exchange exp(-2K), Potts exp(-K), a field
exp(-2|h|)); the output names it, since exponents there depend on it.`

func newFixed(stdout io.Writer) *cobra.Command {
	o := &options{}
	c := &cobra.Command{
		Use:   "fixed [SCENARIO] [--model M] [--scheme S] [--set NAME=VALUE]... [--json|--csv]",
		Short: "find, linearize and classify every fixed point of a model's RG map",
		Long: `fixed searches the map of the chosen model and scheme for every fixed point:
damped Newton from many starts over the couplings, and on every face where
couplings sit at +infinity or -infinity. Families of fixed points are
reported once, with their free couplings and range.

` + exponentHelp,
		Example: `  scalewalk fixed --model ising --scheme chain --set b=2
  scalewalk fixed --model potts --set q=3 --set b=3 --json
  scalewalk fixed --model spin1 --csv`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := o.takeArgs(cmd, args); err != nil {
				return err
			}
			return runFixed(cmd.Context(), o, stdout)
		},
	}
	o.addModelFlags(c.Flags())
	o.addFormatFlags(c.Flags())
	return c
}

func runFixed(ctx context.Context, o *options, stdout io.Writer) error {
	if err := o.checkFormat(); err != nil {
		return err
	}
	b, err := o.build()
	if err != nil {
		return err
	}
	if b.tensor != nil {
		return runFixedTensor(ctx, o, b, stdout)
	}
	var res *flow.FindResult
	err = safely(func() error {
		var e error
		res, e = flow.FindAll(ctx, b.m, progressSettings())
		return e
	})
	clearProgress()
	if err != nil {
		if errors.Is(err, flow.ErrCanceled) {
			return fmt.Errorf("interrupted: fixed-point search canceled")
		}
		return err
	}
	flow.SortPoints(res.Points)
	switch {
	case o.json:
		return writeJSON(stdout, report.Fixed(b.meta, b.m, res))
	case o.csv:
		return report.FixedCSV(stdout, b.m, res)
	}
	return report.FixedText(stdout, b.meta, b.m, res)
}

func newTrace(stdout, stderr io.Writer) *cobra.Command {
	o := &options{}
	var from string
	var steps int
	c := &cobra.Command{
		Use:   "trace [SCENARIO] --from NAME=VALUE[,...] [--steps N] [--model M] [--scheme S] [--set NAME=VALUE]... [--json|--csv]",
		Short: "follow the RG flow from a point, step by step",
		Long: `trace iterates the map from the point given with --from (couplings not named
are 0) and prints the trajectory: row 0 is the start, row n holds the
couplings x_n and the constant g(x_n) per site of the step out of x_n. It
stops early, with the reason, when the flow converges to a fixed point,
escapes to infinite coupling (|x| > 1000), leaves the physical domain, or
produces NaN or Inf.`,
		Example: `  scalewalk trace --model ising --scheme chain --set b=3 --from K=0.8,h=0.1 --steps 12 --csv
  scalewalk trace --model potts --set q=2.5 --from K=-0.3 --json`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := o.takeArgs(cmd, args); err != nil {
				return err
			}
			if err := o.checkFormat(); err != nil {
				return err
			}
			if !cmd.Flags().Changed("from") {
				return usagef("trace needs a start point: --from NAME=VALUE[,NAME=VALUE...]")
			}
			if steps < 0 || steps > 100000 {
				return usagef("--steps %d: expected a whole number from 0 to 100000", steps)
			}
			b, err := o.build()
			if err != nil {
				return err
			}
			if b.tensor != nil {
				return usagef("trace follows a flow of couplings; the tensor scheme has none: use critical, fixed or thermo with --scheme tensor")
			}
			x, err := parsePoint("--from", from, b.m, b.absent)
			if err != nil {
				return err
			}
			if d, ok := b.m.(flow.Domainer); ok {
				if err := d.Domain(x); err != nil {
					return usagef("--from %s: %v", from, err)
				}
			}
			var t *flow.Trajectory
			if err := safely(func() error { t = flow.Trace(b.m, x, steps, nil); return nil }); err != nil {
				return err
			}
			switch {
			case o.json:
				return writeJSON(stdout, report.Trace(b.meta, b.m, t))
			case o.csv:
				if err := report.TraceCSV(stdout, b.m, t); err != nil {
					return err
				}
				if t.Stop != flow.MaxSteps {
					msg := t.Stop.String()
					if t.Detail != "" {
						msg += " (" + t.Detail + ")"
					}
					fmt.Fprintf(stderr, "scalewalk: trace stopped after %d step(s): %s\n", len(t.Points)-1, msg)
				}
				return nil
			}
			return report.TraceText(stdout, b.meta, b.m, t)
		},
	}
	c.Flags().StringVar(&from, "from", "", "start point, NAME=VALUE[,NAME=VALUE...] over the couplings (others 0)")
	c.Flags().IntVar(&steps, "steps", 20, "number of RG steps")
	o.addModelFlags(c.Flags())
	o.addFormatFlags(c.Flags())
	return c
}

func newList(stdout io.Writer) *cobra.Command {
	var asJSON bool
	c := &cobra.Command{
		Use:   "list [--json]",
		Short: "list the models, schemes, couplings and parameters",
		Long: `list shows every model with its couplings (name, role, symmetric or
symmetry-breaking) and parameters, and every scheme with its parameters
(type, range, default), each with one line of explanation. Parameters are
set with --set NAME=VALUE; couplings are given with --from.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if asJSON {
				return writeJSON(stdout, listDoc())
			}
			return listText(stdout)
		},
	}
	c.Flags().BoolVar(&asJSON, "json", false, "write JSON")
	return c
}

type paramDoc struct {
	Name    string   `json:"name"`
	Type    string   `json:"type"`
	Range   string   `json:"range"`
	Choices []string `json:"choices,omitempty"`
	Default string   `json:"default"`
	Help    string   `json:"help"`
}

type couplingDoc struct {
	Name      string `json:"name"`
	Role      string `json:"role"`
	Symmetric bool   `json:"symmetric"`
	Help      string `json:"help"`
	Plus      string `json:"coordinate_plus_inf,omitempty"`
	Minus     string `json:"coordinate_minus_inf,omitempty"`
}

type entryDoc struct {
	Name      string        `json:"name"`
	Help      string        `json:"help"`
	Params    []paramDoc    `json:"parameters"`
	Couplings []couplingDoc `json:"couplings,omitempty"`
	Note      string        `json:"note,omitempty"`
}

func params(ps []decimation.Param) []paramDoc {
	out := []paramDoc{}
	for _, p := range ps {
		out = append(out, paramDoc{p.Name, p.Kind.String(), p.Range(), p.Choices, p.Default, p.Help})
	}
	return out
}

func listDoc() map[string][]entryDoc {
	doc := map[string][]entryDoc{"models": {}, "schemes": {}}
	for _, ms := range decimation.Models() {
		e := entryDoc{Name: ms.Name, Help: ms.Help, Params: params(ms.Params)}
		if m, err := ms.New(defaultValues(ms.Params)); err == nil {
			for _, c := range m.Couplings() {
				cd := couplingDoc{Name: c.Name, Role: c.Role.String(), Symmetric: c.Symmetric, Help: c.Help}
				if c.Plus != nil {
					cd.Plus = c.Plus.Name
				}
				if c.Minus != nil {
					cd.Minus = c.Minus.Name
				}
				e.Couplings = append(e.Couplings, cd)
			}
			if len(ms.Params) > 0 {
				e.Note = "couplings shown for the default parameters"
			}
		}
		doc["models"] = append(doc["models"], e)
	}
	for _, ss := range decimation.Schemes() {
		doc["schemes"] = append(doc["schemes"], entryDoc{Name: ss.Name, Help: ss.Help, Params: params(ss.Params)})
	}
	return doc
}

func listText(w io.Writer) error {
	doc := listDoc()
	var b strings.Builder
	b.WriteString("MODELS\n")
	for _, e := range doc["models"] {
		fmt.Fprintf(&b, "\n%s: %s\n", e.Name, e.Help)
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
		if len(e.Couplings) > 0 {
			note := ""
			if e.Note != "" {
				note = " (" + e.Note + ")"
			}
			fmt.Fprintf(tw, "  couplings%s:\n", note)
			for _, c := range e.Couplings {
				sym := "symmetric"
				if !c.Symmetric {
					sym = "symmetry-breaking"
				}
				fmt.Fprintf(tw, "    %s\t%s\t%s\t%s\n", c.Name, c.Role, sym, c.Help)
			}
		}
		writeParams(tw, e.Params)
		tw.Flush()
	}
	b.WriteString("\nSCHEMES\n")
	for _, e := range doc["schemes"] {
		fmt.Fprintf(&b, "\n%s: %s\n", e.Name, e.Help)
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
		writeParams(tw, e.Params)
		tw.Flush()
	}
	b.WriteString("\nSet parameters with --set NAME=VALUE; give couplings with --from NAME=VALUE,...\n")
	_, err := io.WriteString(w, b.String())
	return err
}

func writeParams(tw *tabwriter.Writer, ps []paramDoc) {
	if len(ps) == 0 {
		fmt.Fprintf(tw, "  parameters: none\n")
		return
	}
	fmt.Fprintf(tw, "  parameters:\n")
	for _, p := range ps {
		fmt.Fprintf(tw, "    %s\t%s\tdefault %s\t%s\n", p.Name, p.Range, p.Default, p.Help)
	}
}

func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// safely runs f, turning a panic from deep in the numerics into an error.
func safely(f func() error) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("internal error in the computation: %v (please report this with the command that caused it)", r)
		}
	}()
	return f()
}

// progressSettings reports the search's progress on a terminal's standard
// error once it has run for more than a second.
func progressSettings() *flow.FindSettings {
	if !isTerminal(os.Stderr) {
		return nil
	}
	start := time.Now()
	return &flow.FindSettings{Progress: func(done, total int) {
		if time.Since(start) > time.Second {
			fmt.Fprintf(os.Stderr, "\rsearching for fixed points: chart %d of %d ", done, total)
			progressShown = true
		}
	}}
}

var progressShown bool

func clearProgress() {
	if progressShown {
		fmt.Fprint(os.Stderr, "\r\033[K")
		progressShown = false
	}
}
