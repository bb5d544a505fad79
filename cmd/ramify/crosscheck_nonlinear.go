package main

import (
	"context"
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/vertex"
)

// secantCannotSee says what a walker check of a nonlinear solution cannot
// tell.
const secantCannotSee = "the check confirms that the field solves the nonlinear equations (to the walkers' error bars); it cannot tell which solution branch that is: every solution passes it (see ramify sweep)"

// nonlinearCheck is the outcome of a walker check of a nonlinear solution.
type nonlinearCheck struct {
	compare.Report
	Compared   string   `json:"compared"`
	CannotSee  string   `json:"cannot_see"`
	Particles  int64    `json:"particles"`
	Seed       uint64   `json:"seed"`
	Iterations int      `json:"iterations"`
	Residual   num      `json:"residual"`
	Notes      []string `json:"notes"`
	Partial    bool     `json:"partial,omitempty"`
	// MaxWeight is the largest growth weight of any walker (1: none grew).
	MaxWeight num `json:"max_weight"`
}

// checkNonlinear solves net by Newton, builds the linear problem that the
// field solves (graphpde.SecantNetwork) and compares the field with that
// problem's walkers at every point of specs (the start first).
func checkNonlinear(ctx context.Context, net *graphpde.Network, specs []string, m graphpde.Method,
	wset *montecarlo.Settings, cset *compare.Settings, growth bool) (*nonlinearCheck, error) {
	pts, err := parsePoints(net, specs)
	if err != nil {
		return nil, err
	}
	sol, nl, err := solveField(ctx, net, m, 0)
	if err != nil {
		return nil, err
	}
	sec, info, err := graphpde.SecantNetwork(net, sol, &graphpde.SecantSettings{Growth: growth})
	if err != nil {
		return nil, err
	}
	out := &nonlinearCheck{Compared: info.Note, CannotSee: secantCannotSee, Particles: wset.Particles, Seed: wset.Seed,
		Iterations: nl.Iterations, Residual: num(nl.Residual), Notes: append([]string{}, nl.Notes...), MaxWeight: 1}
	if info.Growth {
		wset.Growth = true
	}
	var checks []compare.Check
	for i, p := range pts {
		if p.Edge < 0 && net.Nodes[p.Node].Law.Kind == vertex.Fixed {
			out.Notes = append(out.Notes, fmt.Sprintf("%s is a fixed node: nothing to compare there", specs[i]))
			continue
		}
		u, err := sol.At(p)
		if err != nil {
			return nil, err
		}
		res, err := montecarlo.Run(ctx, sec, p, wset)
		if err != nil {
			return nil, err
		}
		if res.Status == montecarlo.Cancelled {
			out.Partial = true
		}
		out.MaxWeight = num(max(float64(out.MaxWeight), res.MaxWeight))
		name := "value"
		if i > 0 {
			name = "value@" + specs[i]
		}
		c := compare.Mean(name, u, res.Value.Mean, res.Value.StdErr)
		c.N = res.Finished
		checks = append(checks, c)
		if res.Status == montecarlo.Cancelled {
			break
		}
	}
	out.Report = compare.Decide(checks, cset)
	return out, nil
}

func (c *nonlinearCheck) print(w io.Writer, file string) {
	fmt.Fprintf(w, "%s: nonlinear field (Newton, %s, scaled residual %.2e) against the walkers of the linear problem it solves\n",
		file, plural(c.Iterations, "iteration"), float64(c.Residual))
	fmt.Fprintln(w, "compared:", c.Compared)
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "quantity\tPDE\twalkers\tstderr\tz\tpass")
	for _, k := range c.Checks {
		fmt.Fprintf(tw, "%s\t%.6g\t%.6g\t%.2g\t%.2f\t%v\n", k.Quantity, k.PDE, k.Walker, k.StdErr, k.Z, k.Pass)
	}
	tw.Flush()
	if c.MaxWeight > 1 {
		fmt.Fprintf(w, "\nwalkers carried growth weights where the law grows with u: largest weight %.3g (the error bars above include their variance, which grows as a fold nears)\n", float64(c.MaxWeight))
	}
	fmt.Fprintf(w, "\nverdict: %s (%s)\n", c.Verdict, c.Explain)
	fmt.Fprintln(w, "cannot see:", c.CannotSee)
	for _, n := range c.Notes {
		fmt.Fprintln(w, "note:", n)
	}
}

// crosscheckNonlinear is ramify crosscheck on a file with nonlinear laws.
func crosscheckNonlinear(ctx context.Context, net *graphpde.Network, file string, specs []string, m graphpde.Method,
	wset *montecarlo.Settings, cset *compare.Settings, growth, asJSON bool, stdout, stderr io.Writer) int {
	wset.KeepSamples = false
	c, err := checkNonlinear(ctx, net, specs, m, wset, cset, growth)
	if bar, ok := wset.Recorder.(*progressBar); ok {
		bar.Done()
	}
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	if asJSON {
		if err := writeJSON(stdout, c); err != nil {
			return fail(stderr, "crosscheck", err)
		}
	} else {
		c.print(stdout, file)
	}
	return partialCode(c.Partial)
}
