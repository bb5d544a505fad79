package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/ramify-dev/ramify/examples"
	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/vertex"
)

const demoFile = "karst.toml"

func runDemo(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("demo", "demo [flags]", "  ramify demo\n  ramify demo --particles 1000000 --seed 3\n", stderr)
	particles := newCount(fs, "particles", 100000, "number of walkers in the walker and cross-check steps")
	seed := fs.Uint64("seed", 1, "random seed")
	workers := fs.Int("workers", 0, "parallel workers (0: all cores)")
	if _, code, ok := parseFlags(fs, args, stderr, false); !ok {
		return code
	}
	if *particles <= 0 {
		return badFlag(stderr, "demo", fmt.Errorf("--particles %d: must be > 0", *particles))
	}
	net, err := demoNetwork(demoFile)
	if err != nil {
		return fail(stderr, "demo", err)
	}
	w := stdout
	fmt.Fprintf(w, "ramify demo: %s (examples/%s)\n", net.Name, demoFile)
	fmt.Fprintln(w, "Dye poured into a well spreads along 7 water-filled fractures (one loop, a cave")
	fmt.Fprintln(w, "pocket that stores dye, a drain where some sorbs onto clay) until it reaches the")
	fmt.Fprintln(w, "east spring, the west spring or a swallow hole. Lengths in m, time in days.")

	// 1. Steady field.
	sol, err := graphpde.Solve(net, nil)
	if err != nil {
		return fail(stderr, "demo", err)
	}
	fmt.Fprintln(w, "\n1. Steady field (exact elements, one unknown per junction): u = 1 at the east")
	fmt.Fprintln(w, "   spring and 0 at the other outlets, so u(x) is the chance that dye released at")
	fmt.Fprintln(w, "   x is first seen at the east spring (Kirchhoff balance at every junction).")
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Balance {
			fmt.Fprintf(tw, "   %s\tu = %.4f\tbalance residual %.1e\n", nd.ID, sol.U[v], sol.Residual[v])
		}
	}
	tw.Flush()

	// 2. PDE first passage.
	start, _ := net.ParsePoint("well")
	x, err := graphpde.ExitStatistics(net, start, nil)
	if err != nil {
		return fail(stderr, "demo", err)
	}
	fmt.Fprintln(w, "\n2. First passage from the well, from the PDE (Laplace transform, Talbot inversion):")
	tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			fmt.Fprintf(tw, "   first seen at %s\t%.4f\n", nd.ID, x.Hit[v])
		}
	}
	fmt.Fprintf(tw, "   lost by sorption\t%.4f\n", x.Killed)
	tw.Flush()
	fmt.Fprintf(w, "   transit time: mean %.0f days, sd %.0f days", x.Mean, x.SD)
	for _, q := range x.Quantiles {
		if q.P == 0.5 {
			fmt.Fprintf(w, ", median %.0f days", q.T)
		}
	}
	fmt.Fprintln(w)

	// 3. Walkers.
	set := &montecarlo.Settings{Particles: *particles, Seed: *seed, Workers: *workers, KeepSamples: true}
	if isTerminal(stderr) {
		set.Recorder = newProgressBar(stderr, "walkers")
	}
	cc, err := crossCheck(ctx, net, start, "well", graphpde.MethodAuto, set, &compare.Settings{}, crossOptions{}, nil, true)
	if bar, ok := set.Recorder.(*progressBar); ok {
		bar.Done()
	}
	if err != nil {
		return fail(stderr, "demo", err)
	}
	r := cc.walk
	fmt.Fprintf(w, "\n3. %d random walkers from the well (exact walk on intervals and stars, %.2g s):\n", r.Finished, r.Stats.Elapsed.Seconds())
	fmt.Fprintln(w, "   at each junction a walker picks a fracture with probability set by the")
	fmt.Fprintln(w, "   junction weights; the pocket holds it for a while; sorption kills it.")
	tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			fmt.Fprintf(tw, "   first seen at %s\t%.4f ± %.4f\n", nd.ID, r.Hit[v].Mean, r.Hit[v].StdErr)
		}
	}
	fmt.Fprintf(tw, "   lost by sorption\t%.4f ± %.4f\n", r.Killed.Mean, r.Killed.StdErr)
	tw.Flush()
	fmt.Fprintf(w, "   transit time: mean %.0f ± %.1f days\n", r.ExitTime.Mean, r.ExitTime.StdErr)
	if r.Status == montecarlo.Cancelled {
		fmt.Fprintf(w, "   (interrupted: %d of %d walkers finished)\n", r.Finished, r.Particles)
	}

	// 4. Verdict.
	fmt.Fprintf(w, "\n4. Cross-check of %d quantities (z-scores, split frequencies at the junctions,\n", len(cc.Report.Checks))
	fmt.Fprintln(w, "   and a Kolmogorov–Smirnov test of the transit-time law):")
	fmt.Fprintf(w, "   verdict: %s — %s\n", cc.Report.Verdict, cc.Report.Explain)
	fmt.Fprintln(w, "\nNext: ramify solve examples/karst.toml --probe east-a@15")
	fmt.Fprintln(w, "      ramify crosscheck examples/fork.toml --from fork --plot figures")
	return partialCode(r.Status == montecarlo.Cancelled)
}

// demoNetwork reads an embedded example (used by tests and the bench command).
func demoNetwork(name string) (*graphpde.Network, error) {
	src, err := examples.Files.ReadFile(name)
	if err != nil {
		return nil, err
	}
	return netfile.Read(bytes.NewReader(src), "examples/"+name)
}
