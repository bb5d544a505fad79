package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
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
	// BiasEstimate is the bias pass at the start (absent when every step
	// of the secant problem's walkers was exact, or with
	// --bias-pass=false), ProbeBiasEstimates those at the probes, in the
	// order of their checks.
	BiasEstimate *biasOut `json:"bias_estimate,omitempty"`
	// Walkers are the walkers' own values and standard errors, in the
	// order of the checks (whose standard errors include the bias).
	Walkers            []estOut       `json:"walkers"`
	ProbeBiasEstimates []probeBiasOut `json:"probe_bias_estimates,omitempty"`
}

// probeBiasOut is the bias estimate of the walkers at one probe.
type probeBiasOut struct {
	Quantity string `json:"quantity"`
	biasOut
}

// checkNonlinear solves net by Newton, builds the linear problem that the
// field solves (graphpde.SecantNetwork) and compares the field with that
// problem's walkers at every point of specs (the start first). The secant
// problem's coefficients vary along its edges, so its walkers time-step
// them and freeze visits next to them: with biasPass, each point's walkers
// are run a second time with the same seed at half the step and star
// fraction (walkBias), and its check is widened by the estimated bias and
// its standard error in quadrature, √(se² + b² + se_b²), as the linear
// crosscheck does.
func checkNonlinear(ctx context.Context, net *graphpde.Network, specs []string, m graphpde.Method,
	wset *montecarlo.Settings, cset *compare.Settings, growth, biasPass bool) (*nonlinearCheck, error) {
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
	wset.KeepBlocks = biasPass // pairs the bias pass with each run
	unmeasured, widened := false, false
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
		se := res.Value.StdErr
		if res.Status != montecarlo.Cancelled && needsBiasPass(res) {
			if !biasPass {
				unmeasured = true
			} else {
				b, _, err := walkBias(ctx, sec, p, *wset, res)
				switch {
				case errors.Is(err, errInterrupted):
					out.Partial = true
					out.Notes = append(out.Notes, fmt.Sprintf("%s: the second run that estimates the bias of the approximate steps was interrupted: the check is not widened by it", name))
				case err != nil:
					return nil, err
				case b != nil:
					e, sb := float64(b.Estimate), float64(b.StdErr)
					se = math.Sqrt(se*se + e*e + sb*sb)
					widened = true
					out.Notes = append(out.Notes, name+": "+biasLine(b))
					if i == 0 {
						out.BiasEstimate = b
					} else {
						out.ProbeBiasEstimates = append(out.ProbeBiasEstimates, probeBiasOut{Quantity: name, biasOut: *b})
					}
				}
			}
		}
		c := compare.Mean(name, u, res.Value.Mean, se)
		c.N = res.Finished
		out.Walkers = append(out.Walkers, estOut{num(res.Value.Mean), num(res.Value.StdErr)})
		checks = append(checks, c)
		if res.Status == montecarlo.Cancelled || out.Partial {
			break
		}
	}
	if widened {
		out.Notes = append(out.Notes, "each check is widened by its walkers' estimated bias, 2·(walkers − finer run), and that estimate's standard error, added in quadrature to the walkers' standard error (the finer run's values are in the notes above)")
	}
	if unmeasured {
		out.Notes = append(out.Notes, "no bias estimate (--bias-pass=false): the time stepping or frozen node visits of the secant problem's walkers bias them by an unmeasured amount the checks do not allow for")
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
	wset *montecarlo.Settings, cset *compare.Settings, growth, biasPass, asJSON bool, stdout, stderr io.Writer) int {
	wset.KeepSamples = false
	c, err := checkNonlinear(ctx, net, specs, m, wset, cset, growth, biasPass)
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
