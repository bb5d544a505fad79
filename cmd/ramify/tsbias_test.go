package main

import (
	"context"
	"encoding/json"
	"math"
	"testing"
)

// pushRightExact is the value at x = 0.25 of the contract case
// pushright.toml under its optimal policy (drift +2 everywhere): the scale
// function of u” + 2u' = 0 with u(0) = 0, u(1) = 1,
// P(x) = (1 − e^{−2x})/(1 − e^{−2}) (derived).
var pushRightExact = (1 - math.Exp(-0.5)) / (1 - math.Exp(-2))

// pushRightFile writes the track of the reference case pushright (the
// pushRight network of controls_test.go) with 400 cells.
func pushRightFile(t *testing.T) string {
	t.Helper()
	return writeFile(t, "pushright.toml", pushRight+"cells = 400\n")
}

type tsBias struct {
	Halved            []string `json:"halved"`
	Estimate, StdErr  float64
	FinerStepFactor   float64                        `json:"finer_step_factor"`
	StarFraction      float64                        `json:"star_fraction"`
	FinerStarFraction float64                        `json:"finer_star_fraction"`
	FinerValue        struct{ Mean, StdErr float64 } `json:"finer_value"`
	Extrapolated      struct{ Mean, StdErr float64 } `json:"extrapolated"`
}

// TestWalkReportsStepBias: walk on the time-stepped track of pushright
// reports a bias estimate that halved the step (not the star: no visit is
// frozen), whose finer value and extrapolation lie within 4 of their
// standard errors of the exact 0.4550542339 (fixed seed), and whose
// estimate is 2·(value − finer). --bias-pass=false drops it.
func TestWalkReportsStepBias(t *testing.T) {
	if math.Abs(pushRightExact-0.4550542339) > 1e-10 {
		t.Fatalf("closed form %.10f", pushRightExact)
	}
	f := pushRightFile(t)
	code, out, errs := runCLI(t, context.Background(), "walk", f, "--from", "track@0.25", "--particles", "40000", "--seed", "5", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var w struct {
		Value struct{ Mean, StdErr float64 } `json:"value"`
		Bias  *tsBias                        `json:"bias_estimate"`
	}
	if err := json.Unmarshal([]byte(out), &w); err != nil {
		t.Fatal(err)
	}
	b := w.Bias
	if b == nil {
		t.Fatalf("no bias_estimate on a time-stepped edge: %s", out)
	}
	t.Logf("exact %.5f; value %.5f ± %.4f; finer %.5f ± %.4f; bias %.4f ± %.4f; extrapolated %.5f ± %.4f",
		pushRightExact, w.Value.Mean, w.Value.StdErr, b.FinerValue.Mean, b.FinerValue.StdErr, b.Estimate, b.StdErr, b.Extrapolated.Mean, b.Extrapolated.StdErr)
	if len(b.Halved) != 1 || b.Halved[0] != "step" || b.FinerStepFactor != 0.5 || b.FinerStarFraction != b.StarFraction {
		t.Errorf("halved %v, step factor %g, star %g → %g; want the step alone halved", b.Halved, b.FinerStepFactor, b.StarFraction, b.FinerStarFraction)
	}
	if math.Abs(b.Estimate-2*(w.Value.Mean-b.FinerValue.Mean)) > 1e-12 {
		t.Errorf("estimate %g is not 2·(value − finer)", b.Estimate)
	}
	if d := math.Abs(b.FinerValue.Mean - pushRightExact); d > 4*b.FinerValue.StdErr {
		t.Errorf("finer run %.5f ± %.4f, exact %.5f", b.FinerValue.Mean, b.FinerValue.StdErr, pushRightExact)
	}
	if d := math.Abs(b.Extrapolated.Mean - pushRightExact); d > 4*b.Extrapolated.StdErr {
		t.Errorf("extrapolation %.5f ± %.4f, exact %.5f", b.Extrapolated.Mean, b.Extrapolated.StdErr, pushRightExact)
	}
	_, out, _ = runCLI(t, context.Background(), "walk", f, "--from", "track@0.25", "--particles", "2000", "--bias-pass=false", "--json")
	var off struct {
		Bias *tsBias `json:"bias_estimate"`
	}
	if err := json.Unmarshal([]byte(out), &off); err != nil || off.Bias != nil {
		t.Errorf("--bias-pass=false still estimates the bias (%v): %s", err, out)
	}
}

// driftTrack is pushright's track with the drift +2 given outright
// (no controls): crosscheck takes the linear path.
const driftTrack = `[[node]]
id = "left"
fixed = 0.0
[[node]]
id = "right"
fixed = 1.0
[[edge]]
id = "track"
from = "left"
to = "right"
length = 1.0
diffusivity = 1.0
drift = 2.0
`

// TestCrosscheckWidensByStepBias: on a linear time-stepped network,
// crosscheck reports the bias estimate, and the value check's standard
// error is the walkers' widened by the bias and its standard error in
// quadrature, √(se² + b² + se_b²) (the formula the check documents);
// the hitting-probability checks widen too. The PDE value is the closed
// form of TestWalkReportsStepBias.
func TestCrosscheckWidensByStepBias(t *testing.T) {
	f := writeFile(t, "drift.toml", driftTrack)
	run := func(extra ...string) (cc struct {
		Verdict string
		Checks  []struct {
			Quantity    string
			PDE, StdErr float64
			Walker      float64
		}
		Bias *tsBias `json:"bias_estimate"`
	}) {
		args := append([]string{"crosscheck", f, "--from", "track@0.25", "--particles", "20000", "--seed", "3", "--json"}, extra...)
		code, out, errs := runCLI(t, context.Background(), args...)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		if err := json.Unmarshal([]byte(out), &cc); err != nil {
			t.Fatal(err)
		}
		return cc
	}
	on, off := run(), run("--bias-pass=false")
	if on.Bias == nil || off.Bias != nil {
		t.Fatalf("bias_estimate with the pass %v, without %v", on.Bias, off.Bias)
	}
	se := map[string]float64{}
	for _, c := range off.Checks {
		se[c.Quantity] = c.StdErr
	}
	for _, c := range on.Checks {
		switch c.Quantity {
		case "value":
			if math.Abs(c.PDE-pushRightExact) > 1e-6 {
				t.Errorf("PDE value %.8f, closed form %.8f", c.PDE, pushRightExact)
			}
			b, sb := on.Bias.Estimate, on.Bias.StdErr
			want := math.Sqrt(se["value"]*se["value"] + b*b + sb*sb)
			if math.Abs(c.StdErr-want) > 1e-12*want {
				t.Errorf("value check standard error %g, want %g widened to %g", c.StdErr, se["value"], want)
			}
		case "hit:left", "hit:right", "exit-time:mean":
			if !(c.StdErr > 2*se[c.Quantity]) {
				t.Errorf("%s: standard error %g not widened (%g without the pass)", c.Quantity, c.StdErr, se[c.Quantity])
			}
		}
	}
	if on.Verdict == "disagree" {
		t.Errorf("verdict %s", on.Verdict)
	}
}
