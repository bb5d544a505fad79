package main

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
	"github.com/ramify-dev/ramify/montecarlo"
)

// TestCrosscheckNonlinear: walkers of the secant problem reproduce Newton's
// field of Bratu's problem (λ = 1) at the start and at a probe: each |z| < 4
// (one estimate each, 4 standard errors: a false alarm about once in 16 000
// runs per check; fixed seed). The output says what was compared and what
// the check cannot see. The secant problem's coefficients vary along the
// edge, so its walkers time-step it: each point gets a bias pass (the
// start's bias_estimate, the probe's in probe_bias_estimates), its check's
// standard error is the walkers' own widened by the bias and its standard
// error in quadrature, √(se² + b² + se_b²) (to 1e−12), and each finer run
// lies within 4 of its standard errors of Newton's field (fixed seed).
// --bias-pass=false drops the pass and says so.
func TestCrosscheckNonlinear(t *testing.T) {
	file := writeFile(t, "bratu.toml", bratuFile)
	code, out, errs := runCLI(t, context.Background(), "crosscheck", file, "--from", "s@0.5", "--probe", "s@0.2",
		"--particles", "12000", "--seed", "3", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	type bias struct {
		Quantity         string   `json:"quantity"`
		Halved           []string `json:"halved"`
		Estimate, StdErr float64
		FinerValue       struct{ Mean, StdErr float64 } `json:"finer_value"`
	}
	var got struct {
		Checks []struct {
			Quantity string  `json:"quantity"`
			Z        float64 `json:"z"`
			StdErr   float64 `json:"stderr"`
			PDE      float64 `json:"pde"`
		} `json:"checks"`
		Verdict   string                           `json:"verdict"`
		Compared  string                           `json:"compared"`
		CannotSee string                           `json:"cannot_see"`
		Walkers   []struct{ Mean, StdErr float64 } `json:"walkers"`
		Bias      *bias                            `json:"bias_estimate"`
		Probes    []bias                           `json:"probe_bias_estimates"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if len(got.Checks) != 2 || got.Checks[0].Quantity != "value" || got.Checks[1].Quantity != "value@s@0.2" || len(got.Walkers) != 2 {
		t.Fatalf("checks %+v, walkers %+v", got.Checks, got.Walkers)
	}
	for _, c := range got.Checks {
		if math.Abs(c.Z) > 4 || !(c.StdErr > 0) {
			t.Errorf("%s: z = %.2f, stderr %g", c.Quantity, c.Z, c.StdErr)
		}
	}
	if got.Verdict == "disagree" || !strings.Contains(got.Compared, "secant") || !strings.Contains(got.CannotSee, "branch") {
		t.Errorf("verdict %q, compared %q, cannot see %q", got.Verdict, got.Compared, got.CannotSee)
	}
	if got.Bias == nil || len(got.Probes) != 1 || got.Probes[0].Quantity != "value@s@0.2" {
		t.Fatalf("bias estimates %+v, %+v: %s", got.Bias, got.Probes, out)
	}
	for i, b := range []bias{*got.Bias, got.Probes[0]} {
		c, w := got.Checks[i], got.Walkers[i]
		t.Logf("%s: PDE %.5f; walkers %.5f ± %.4f; finer %.5f ± %.4f; bias %.4f ± %.4f; check ± %.4f", c.Quantity, c.PDE, w.Mean, w.StdErr, b.FinerValue.Mean, b.FinerValue.StdErr, b.Estimate, b.StdErr, c.StdErr)
		if len(b.Halved) == 0 || b.Halved[0] != "step" {
			t.Errorf("%s: halved %v, want the step first", c.Quantity, b.Halved)
		}
		want := math.Sqrt(w.StdErr*w.StdErr + b.Estimate*b.Estimate + b.StdErr*b.StdErr)
		if math.Abs(c.StdErr-want) > 1e-12*want {
			t.Errorf("%s: check standard error %g, want the walkers' %g widened to %g", c.Quantity, c.StdErr, w.StdErr, want)
		}
		if d := math.Abs(b.FinerValue.Mean - c.PDE); d > 4*b.FinerValue.StdErr {
			t.Errorf("%s: finer run %.5f ± %.4f, Newton %.5f", c.Quantity, b.FinerValue.Mean, b.FinerValue.StdErr, c.PDE)
		}
	}
	code, out, errs = runCLI(t, context.Background(), "crosscheck", file, "--from", "s@0.5", "--particles", "12000", "--growth=false", "--bias-pass=false")
	if code != 0 || !strings.Contains(out, "carried as the source") || strings.Contains(out, "growth weights where") {
		t.Errorf("--growth=false: exit %d, %s%s", code, out, errs)
	}
	if !strings.Contains(out, "no bias estimate (--bias-pass=false)") || strings.Contains(out, "bias of the approximate steps") {
		t.Errorf("--bias-pass=false: %s", out)
	}
	code, _, errs = runCLI(t, context.Background(), "exit", file, "--from", "s@0.5")
	if code != 1 || !strings.Contains(errs, "linear problems only") {
		t.Errorf("exit on a nonlinear file: %d %q", code, errs)
	}
}

// TestCrosscheckCatchesWrongField: a field that leaves a small residual is
// caught. The field of Bratu's problem at λ = 1.05 is offered as the
// solution at λ = 1: it leaves the residual 0.05·e^û (5 % of the source).
// The walkers of the secant problem built from it at λ = 1 reproduce the
// solution of a problem with the right source, not the offered field: the
// difference (measured 0.0063 at the centre, z = −10.7 at 40 000 walkers
// with the growth carried as a source, similar with growth weights; z scales
// as √walkers, so about −7.5 at the 20 000 used here) must be more than 6
// standard errors in both representations.
func TestCrosscheckCatchesWrongField(t *testing.T) {
	file := writeFile(t, "bratu.toml", bratuFile)
	net, err := netfile.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	if err := net.Params.Set("lambda", 1.05); err != nil {
		t.Fatal(err)
	}
	res, err := graphpde.SolveNonlinear(net, nil)
	if err != nil || res.Status != graphpde.Converged {
		t.Fatalf("%v %v", err, res.Status)
	}
	net.Params.Set("lambda", 1)
	p, _ := net.ParsePoint("s@0.5")
	u, _ := res.Solution.At(p)
	for _, growth := range []bool{false, true} {
		sec, info, err := graphpde.SecantNetwork(net, res.Solution, &graphpde.SecantSettings{Growth: growth})
		if err != nil {
			t.Fatal(err)
		}
		if info.Growth != growth || info.Moved == growth {
			t.Errorf("growth %v: info %+v", growth, info)
		}
		w, err := montecarlo.Run(context.Background(), sec, p, &montecarlo.Settings{Particles: 20000, Seed: 5, Growth: growth})
		if err != nil {
			t.Fatal(err)
		}
		z := (w.Value.Mean - u) / w.Value.StdErr
		t.Logf("growth %v: offered %.5f, walkers %.5f ± %.5f, z = %.1f, max weight %.3g", growth, u, w.Value.Mean, w.Value.StdErr, z, w.MaxWeight)
		if math.Abs(z) < 6 {
			t.Errorf("growth %v: wrong field not caught: z = %.2f", growth, z)
		}
	}
}
