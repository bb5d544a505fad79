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
// the check cannot see.
func TestCrosscheckNonlinear(t *testing.T) {
	file := writeFile(t, "bratu.toml", bratuFile)
	code, out, errs := runCLI(t, context.Background(), "crosscheck", file, "--from", "s@0.5", "--probe", "s@0.2",
		"--particles", "20000", "--seed", "3", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Checks []struct {
			Quantity string  `json:"quantity"`
			Z        float64 `json:"z"`
			StdErr   float64 `json:"stderr"`
		} `json:"checks"`
		Verdict   string `json:"verdict"`
		Compared  string `json:"compared"`
		CannotSee string `json:"cannot_see"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if len(got.Checks) != 2 || got.Checks[0].Quantity != "value" || got.Checks[1].Quantity != "value@s@0.2" {
		t.Fatalf("checks %+v", got.Checks)
	}
	for _, c := range got.Checks {
		if math.Abs(c.Z) > 4 || !(c.StdErr > 0) {
			t.Errorf("%s: z = %.2f, stderr %g", c.Quantity, c.Z, c.StdErr)
		}
	}
	if got.Verdict == "disagree" || !strings.Contains(got.Compared, "secant") || !strings.Contains(got.CannotSee, "branch") {
		t.Errorf("verdict %q, compared %q, cannot see %q", got.Verdict, got.Compared, got.CannotSee)
	}
	code, out, errs = runCLI(t, context.Background(), "crosscheck", file, "--from", "s@0.5", "--particles", "20000", "--growth=false")
	if code != 0 || !strings.Contains(out, "carried as the source") || strings.Contains(out, "growth weights where") {
		t.Errorf("--growth=false: exit %d, %s%s", code, out, errs)
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
