package main

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
	"github.com/ramify-dev/ramify/vertex"
)

// switchNearHub: a junction with three unit arms (a = 1) to fixed ends 1,
// 0 and 0.5; on arm g the policy pushes back towards the hub (drift −3)
// for its first tenth and towards "good" (drift +3) beyond. The switch at
// x = 0.1 lies next to the hub, so visits to the hub freeze g's
// coefficients there (Result.Frozen) at a bias that shrinks with the star
// fraction.
const switchNearHub = `[network]
objective = "max"
[[node]]
id = "hub"
[[node]]
id = "good"
fixed = 1.0
[[node]]
id = "bad"
fixed = 0.0
[[node]]
id = "side"
fixed = 0.5
[[edge]]
id = "g"
from = "hub"
to = "good"
length = 1.0
diffusivity = 1.0
controls = [ { drift = -3.0 }, { drift = 3.0 } ]
[[edge]]
id = "b"
from = "hub"
to = "bad"
length = 1.0
diffusivity = 1.0
[[edge]]
id = "s"
from = "hub"
to = "side"
length = 1.0
diffusivity = 1.0
`

const switchPolicy = `{"policy": {"edges": [{"id": "g", "pieces": [{"from": 0, "to": 0.1, "control": 0}, {"from": 0.1, "to": 1, "control": 1}]}], "nodes": []}}`

func switchValue(t *testing.T) float64 {
	t.Helper()
	net, err := netfile.Read(strings.NewReader(switchNearHub), "switch.toml")
	if err != nil {
		t.Fatal(err)
	}
	pf := writeFile(t, "pol.json", switchPolicy)
	pol, err := readPolicy(pf, net)
	if err != nil {
		t.Fatal(err)
	}
	pn, _, err := net.Apply(pol)
	if err != nil {
		t.Fatal(err)
	}
	sol, err := graphpde.Solve(pn, nil)
	if err != nil {
		t.Fatal(err)
	}
	v, _ := net.NodeIndex("hub")
	u, err := sol.At(vertex.AtNode(v))
	if err != nil {
		t.Fatal(err)
	}
	return u
}

// TestWalkReportsStarBias: walkers following a policy that switches inside
// the hub's star report a bias estimate; the finer run and the
// extrapolation agree with the PDE value of the same policy (fixed seed, 4
// standard errors), and the estimated bias of the coarse run covers its
// actual distance from the PDE value within 4 of its (conservative)
// standard errors.
func TestWalkReportsStarBias(t *testing.T) {
	exact := switchValue(t)
	f := writeFile(t, "switch.toml", switchNearHub)
	pf := writeFile(t, "pol.json", switchPolicy)
	// Arm g is time-stepped too (drift), so the finer run halves the step
	// as well. --step 1e-3 (half: 5e-4) keeps the hand-off zone 4·√(2a·dt)
	// beyond the switch at x = 0.1 in both runs, so the test isolates the
	// star's bias. Below dt ≈ 3.5e-4 the walkers on this network settle
	// near 0.604, about 0.013 (4–5 se) under the PDE value: an open
	// question (the zone then ends before the drift's jump).
	code, out, errs := runCLI(t, context.Background(), "walk", f, "--from", "hub", "--policy", pf, "--particles", "20000", "--seed", "7", "--step", "1e-3", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var w struct {
		Value struct{ Mean, StdErr float64 } `json:"value"`
		Bias  *struct {
			Estimate, StdErr  float64
			StarFraction      float64                        `json:"star_fraction"`
			FinerStarFraction float64                        `json:"finer_star_fraction"`
			FinerValue        struct{ Mean, StdErr float64 } `json:"finer_value"`
			Extrapolated      struct{ Mean, StdErr float64 } `json:"extrapolated"`
		} `json:"bias_estimate"`
	}
	if err := json.Unmarshal([]byte(out), &w); err != nil {
		t.Fatal(err)
	}
	b := w.Bias
	if b == nil {
		t.Fatalf("no bias_estimate next to a frozen hub: %s", out)
	}
	t.Logf("PDE %.5f; coarse %.5f ± %.4f; finer %.5f ± %.4f; bias %.4f ± %.4f; extrapolated %.5f ± %.4f",
		exact, w.Value.Mean, w.Value.StdErr, b.FinerValue.Mean, b.FinerValue.StdErr, b.Estimate, b.StdErr, b.Extrapolated.Mean, b.Extrapolated.StdErr)
	if b.StarFraction != 1.0/8 || b.FinerStarFraction != 1.0/16 {
		t.Errorf("star fractions %g, %g, want 1/8, 1/16", b.StarFraction, b.FinerStarFraction)
	}
	if math.Abs(b.Estimate-2*(w.Value.Mean-b.FinerValue.Mean)) > 1e-12 {
		t.Errorf("estimate %g is not 2·(coarse − finer)", b.Estimate)
	}
	if d := math.Abs(b.FinerValue.Mean - exact); d > 4*b.FinerValue.StdErr {
		t.Errorf("finer run %.5f ± %.4f, PDE %.5f", b.FinerValue.Mean, b.FinerValue.StdErr, exact)
	}
	if d := math.Abs(b.Extrapolated.Mean - exact); d > 4*b.Extrapolated.StdErr {
		t.Errorf("extrapolation %.5f ± %.4f, PDE %.5f", b.Extrapolated.Mean, b.Extrapolated.StdErr, exact)
	}
	if d := math.Abs(b.Estimate - (w.Value.Mean - exact)); d > 4*b.StdErr {
		t.Errorf("bias estimate %.4f ± %.4f, actual coarse − PDE %.4f", b.Estimate, b.StdErr, w.Value.Mean-exact)
	}
}

// courierStub: least expected time (a = 0.3, cost 1 per unit time, drift
// ±1) from a hub with a controlled arm g of length 2 to exit a and a plain
// arm h of length 0.9 to exit b. The optimal policy on g pushes back to
// the hub up to x ≈ 0.1 (where the value peaks) and on to a beyond: a
// switch inside the hub's star at the default star fraction.
const courierStub = `[network]
objective = "min"
[defaults]
diffusivity = 0.3
source = 1.0
[[node]]
id = "a"
fixed = 0.0
[[node]]
id = "b"
fixed = 0.0
[[node]]
id = "hub"
[[edge]]
id = "g"
from = "hub"
to = "a"
length = 2.0
controls = [ { drift = -1.0 }, { drift = 1.0 } ]
[[edge]]
id = "h"
from = "hub"
to = "b"
length = 0.9
`

// TestCrosscheckWidensByStarBias: crosscheck on a network whose optimal
// policy switches next to the junction reports the bias estimate, widens
// the two-sided check by it (its standard error grows, the walkers' own
// stays in "walker"), and the finer run agrees with the optimum within 4
// of its standard errors (fixed seed).
func TestCrosscheckWidensByStarBias(t *testing.T) {
	f := writeFile(t, "stub.toml", courierStub)
	code, out, errs := runCLI(t, context.Background(), "crosscheck", f, "--from", "hub", "--particles", "20000", "--seed", "3", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var cc struct {
		Verdict string  `json:"verdict"`
		Optimum float64 `json:"optimum"`
		Walker  struct{ Mean, StdErr float64 }
		Checks  []struct {
			StdErr float64 `json:"stderr"`
		} `json:"checks"`
		Bias *struct {
			Estimate, StdErr float64
			FinerValue       struct{ Mean, StdErr float64 } `json:"finer_value"`
		} `json:"bias_estimate"`
	}
	if err := json.Unmarshal([]byte(out), &cc); err != nil {
		t.Fatal(err)
	}
	if cc.Bias == nil || len(cc.Checks) == 0 {
		t.Fatalf("no bias_estimate or no checks: %s", out)
	}
	want := math.Sqrt(cc.Walker.StdErr*cc.Walker.StdErr + cc.Bias.Estimate*cc.Bias.Estimate + cc.Bias.StdErr*cc.Bias.StdErr)
	if math.Abs(cc.Checks[0].StdErr-want) > 1e-12*want {
		t.Errorf("check standard error %g, want the walkers' %g widened by the bias to %g", cc.Checks[0].StdErr, cc.Walker.StdErr, want)
	}
	if cc.Verdict != "agree" {
		t.Errorf("verdict %s: %s", cc.Verdict, out)
	}
	if d := math.Abs(cc.Bias.FinerValue.Mean - cc.Optimum); d > 4*cc.Bias.FinerValue.StdErr {
		t.Errorf("finer run %.5f ± %.4f, optimum %.5f", cc.Bias.FinerValue.Mean, cc.Bias.FinerValue.StdErr, cc.Optimum)
	}
}
