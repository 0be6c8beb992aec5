package cli

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"scalewalk/scenarios"
)

func newScenarios(stdout io.Writer) *cobra.Command {
	c := &cobra.Command{
		Use:   "scenarios [show NAME]",
		Short: "list the built-in scenarios, or print one as a TOML file to start your own from",
		Long: `scenarios lists the built-in scenarios, one line each beginning with its
name. 'scenarios show NAME' prints one as a commented TOML file that runs
unchanged when saved (scalewalk fixed my-study.toml).

Every built-in scenario is invented for demonstration: its materials and
numbers are made up.

A scenario file has the tables:
  [scenario]   name, title, invented, description
  [model]      name and the model's parameters (see 'scalewalk list')
  [scheme]     name and the scheme's parameters
  [recursion]  instead of [model]/[scheme]: b, d, symmetry, constant (g),
               [recursion.parameters], and [[recursion.coupling]] tables with
               name, role, symmetric, next (the formula for the renormalized
               value) and plus/minus = { u = "...", x = "..." }
  [material]   name, exchange, unit (meV or K), convention
  [path]       along, at: the default path of 'critical'
  [slice]      x, y, x_range, y_range, held: the explorer's view
Formulas use numbers, the couplings, the file's parameters, pi, + - * / and ^
(or **), parentheses and the functions ` + strings.Join(scenarios.FunctionNames(), ", ") + `.

Exchange conventions (` + strings.Join(scenarios.ConventionNames(), ", ") + `):
  ising        ` + scenarios.ConventionHelp("ising") + `
  spin-half    ` + scenarios.ConventionHelp("spin-half") + `
  minus-two-j  ` + scenarios.ConventionHelp("minus-two-j") + `
These factors of 2 to 4 are the commonest error in such estimates.`,
		Args: cobra.MaximumNArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			switch len(args) {
			case 0:
				tw := tabwriter.NewWriter(stdout, 0, 0, 2, ' ', 0)
				for _, n := range scenarios.BuiltinNames() {
					sc, err := scenarios.Load(n)
					if err != nil {
						return err
					}
					mark := ""
					if sc.File.Scenario.Invented {
						mark = " (invented)"
					}
					def := ""
					if n == scenarios.DefaultScenario {
						def = " [default]"
					}
					fmt.Fprintf(tw, "%s\t%s%s%s\n", n, sc.File.Scenario.Title, mark, def)
				}
				return tw.Flush()
			case 2:
				if args[0] != "show" {
					return usagef("scenarios %s: expected 'scenarios' or 'scenarios show NAME'", strings.Join(args, " "))
				}
				b, ok := scenarios.BuiltinText(args[1])
				if !ok {
					return usagef("no built-in scenario %q; built-ins: %s", args[1], strings.Join(scenarios.BuiltinNames(), ", "))
				}
				_, err := stdout.Write(b)
				return err
			}
			return usagef("scenarios %s: expected 'scenarios' or 'scenarios show NAME'", strings.Join(args, " "))
		},
	}
	return c
}
