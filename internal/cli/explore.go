package cli

import (
	"io"
	"os"

	"github.com/spf13/cobra"

	"scalewalk/scenarios"
	"scalewalk/tui"
)

// isTerminal reports whether w is a terminal.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

func newExplore(stdin io.Reader, stdout io.Writer) *cobra.Command {
	o := &options{}
	c := &cobra.Command{
		Use:   "explore [SCENARIO] [--model M] [--scheme S] [--set NAME=VALUE]...",
		Short: "open the interactive explorer (a full-screen terminal UI)",
		Long: `explore opens the explorer on a scenario (default: the built-in
` + scenarios.DefaultScenario + `) or on a model and scheme: the flow diagram of a
two-dimensional slice of coupling space with flow lines, fixed points and
the boundary between basins; step the RG from a cursor, read a fixed
point's eigenvalues and exponents, locate transitions along a line, change
scenario and parameters. Press ? inside for every key.`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := o.takeArgs(cmd, args); err != nil {
				return err
			}
			if !isTerminal(stdout) {
				return usagef("explore needs a terminal; for scripts use fixed, trace or critical")
			}
			opts := tui.Options{Scenario: o.scenario}
			if o.scenario == "" && !o.modelFlags {
				opts.Scenario = scenarios.DefaultScenario
			}
			set, err := o.setMap()
			if err != nil {
				return err
			}
			opts.Set = set
			if opts.Scenario == "" {
				opts.Model, opts.Scheme = o.model, o.scheme
			}
			return tui.Run(opts, stdin, stdout)
		},
	}
	o.addModelFlags(c.Flags())
	return c
}
