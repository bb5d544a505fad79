// Command ramify solves diffusion problems on networks of thin conductors and
// cross-checks the junction conditions with random walkers.
//
// Run `ramify help` for the commands, `ramify COMMAND --help` for their flags.
package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	// After the first Ctrl-C the command prints what finished; a second one
	// ends the program at once, as if ramify had not caught the first.
	context.AfterFunc(ctx, stop)
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// command is one subcommand of ramify.
type command struct {
	name    string
	summary string
	run     func(ctx context.Context, args []string, stdout, stderr io.Writer) int
}

func commands() []command {
	return []command{
		{"solve", "steady field, node values, end fluxes and balance residuals", runSolve},
		{"walk", "random walkers: value, hitting probabilities, exit times", runWalk},
		{"merge", "combine the parts of a sharded walk (walk --shard I/N --json)", runMerge},
		{"exit", "first-passage statistics from the PDE", runExit},
		{"crosscheck", "PDE and walkers side by side, with a verdict", runCrosscheck},
		{"evolve", "transient field from the initial one: probe time series, crossing times, snapshots", runEvolve},
		{"sweep", "follow a steady solution in a parameter, through folds", runSweep},
		{"spectrum", "smallest eigenvalues (decay rates) and the slowest relaxation time", runSpectrum},
		{"convert", "read any supported format, write the network as toml, csv or json", runConvert},
		{"report", "one offline HTML page: drawing, tables, exit law and verdict", runReport},
		{"demo", "the built-in example network, end to end", runDemo},
		{"bench", "performance figures of the solvers on generated networks", runBench},
	}
}

// run is the whole program: it returns the exit status. Tests call it
// in-process.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	if len(args) == 2 && args[0] == "help" && args[1] != "help" {
		args = []string{args[1], "--help"} // 'ramify help walk' is 'ramify walk --help'
	}
	if len(args) == 0 || args[0] == "help" || args[0] == "--help" || args[0] == "-h" {
		usage(stdout)
		if len(args) == 0 {
			return 2
		}
		return 0
	}
	if args[0] == "version" || args[0] == "--version" {
		fmt.Fprintln(stdout, "ramify", version)
		return 0
	}
	for _, c := range commands() {
		if c.name == args[0] {
			out := &checkedWriter{w: stdout}
			code := c.run(ctx, args[1:], out, stderr)
			if out.err != nil && (code == 0 || code == exitInterrupted) {
				fmt.Fprintf(stderr, "ramify %s: writing standard output: %v\n", c.name, unwrapPath(out.err))
				return 1
			}
			return code
		}
	}
	fmt.Fprintf(stderr, "ramify: unknown command %q (commands: %s; see 'ramify help')\n", args[0], names())
	return exitUsage
}

const version = "0.1.0"

func names() string {
	var s []string
	for _, c := range commands() {
		s = append(s, c.name)
	}
	return strings.Join(s, ", ")
}

func usage(w io.Writer) {
	fmt.Fprintln(w, "ramify — diffusion on networks of thin conductors, checked by random walkers")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "usage: ramify COMMAND [flags] FILE")
	fmt.Fprintln(w)
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-11s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Run 'ramify COMMAND --help' (or 'ramify help COMMAND') for the flags of a command.")
	fmt.Fprintln(w, "Start with 'ramify demo'.")
}
