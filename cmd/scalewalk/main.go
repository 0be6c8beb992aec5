// Command scalewalk is a workbench for real-space renormalization-group
// studies of lattice spin models: recursion relations, fixed points,
// exponents and flows. Run "scalewalk --help" for the commands.
package main

import (
	"context"
	"os"
	"os/signal"

	"scalewalk/internal/cli"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	code := cli.Main(ctx, os.Args[1:], os.Stdin, os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}
