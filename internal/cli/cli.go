// Package cli implements scalewalk's batch commands. It parses flags,
// resolves models, schemes and parameters, calls package flow, and hands
// the results to package report. It does no physics of its own.
package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"scalewalk/scenarios"
	"scalewalk/tui"
)

// UsageError is bad input from the user: exit status 2.
type UsageError struct{ Msg string }

func (e *UsageError) Error() string { return e.Msg }

func usagef(format string, a ...any) error { return &UsageError{fmt.Sprintf(format, a...)} }

// Main runs scalewalk with args (without the program name) and returns the
// exit status: 0 success, 1 a computation failed, 2 bad input.
func Main(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) (code int) {
	defer func() {
		if r := recover(); r != nil {
			fmt.Fprintf(stderr, "scalewalk: internal error: %v (please report this with the command that caused it)\n", r)
			code = 1
		}
	}()
	root := newRoot(ctx, stdin, stdout, stderr)
	root.SetArgs(args)
	root.SetIn(stdin)
	root.SetOut(stdout)
	root.SetErr(stderr)
	err := root.ExecuteContext(ctx)
	if err == nil {
		return 0
	}
	msg := strings.TrimSpace(err.Error())
	msg = strings.ReplaceAll(msg, "\n", "; ")
	fmt.Fprintf(stderr, "scalewalk: %s\n", msg)
	var ue *UsageError
	if errors.As(err, &ue) || isCobraUsage(msg) {
		return 2
	}
	return 1
}

// isCobraUsage recognises the flag and argument errors cobra returns.
func isCobraUsage(msg string) bool {
	for _, p := range []string{"unknown flag", "unknown shorthand", "unknown command", "flag needs an argument",
		"invalid argument", "accepts ", "requires ", "bad flag", "unknown help topic"} {
		if strings.Contains(msg, p) {
			return true
		}
	}
	return false
}

func newRoot(ctx context.Context, stdin io.Reader, stdout, stderr io.Writer) *cobra.Command {
	root := &cobra.Command{
		Use:   "scalewalk",
		Short: "real-space renormalization-group workbench for lattice spin models",
		Long: `scalewalk derives and analyses real-space renormalization-group (RG) flows of
lattice spin models (Ising, Potts, clock, spin-1): recursion relations,
fixed points and their classification, eigenvalues and scaling exponents,
and trajectories.

With no command, on a terminal, it opens the explorer; without a terminal
(in a script) it prints the fixed-point report of the default built-in
scenario (` + "`monolayer`" + `, an invented adsorbed monolayer studied by bond moving).

Every command that takes a model also takes a scenario: a TOML file, or the
name of a built-in one ('scalewalk scenarios' lists them), which sets the
model, the scheme and its parameters, a material's exchange energy, and,
when no built-in engine fits, recursion relations written as formulas.

Conventions: couplings are dimensionless (K = J/kT, h = H/kT); one RG step
rescales lengths by b and returns g, the constant per site of the lattice
before the step, so that ln Z/N = sum over n of b^(-d n) g(x_n).`,
		SilenceUsage:  true,
		SilenceErrors: true,
		Args:          cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if isTerminal(stdout) {
				return tui.Run(tui.Options{Scenario: scenarios.DefaultScenario}, stdin, stdout)
			}
			o := &options{scenario: scenarios.DefaultScenario}
			return runFixed(cmd.Context(), o, stdout)
		},
	}
	root.CompletionOptions.DisableDefaultCmd = true
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return usagef("%v (see '%s --help')", err, c.CommandPath())
	})
	root.AddCommand(newList(stdout), newFixed(stdout), newTrace(stdout, stderr), newCritical(stdout), newScenarios(stdout), newExplore(stdin, stdout), newThermo(stdout), newCompare(stdout))
	return root
}
