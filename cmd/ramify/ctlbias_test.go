package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
	"github.com/ramify-dev/ramify/vertex"
)

// switchNearHub: a junction with three unit arms (a = 1) to fixed ends 1,
// 0 and 0.5; on arm g the policy pushes back towards the hub (drift −3)
// for a first stretch and towards "good" (drift +3) beyond.
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

// switchPolicy switches arm g from control 0 to 1 at x.
func switchPolicy(x float64) string {
	return fmt.Sprintf(`{"policy": {"edges": [{"id": "g", "pieces": [{"from": 0, "to": %g, "control": 0}, {"from": %g, "to": 1, "control": 1}]}], "nodes": []}}`, x, x)
}

// switchClosed is the hub's value under switchPolicy(s): on arm g
// a u' = C e^{−∫b}, so 1 − u0 = C·I with
// I = (e^{3s} − 1)/3 + e^{3s}(1 − e^{−3(1−s)})/3, and Kirchhoff at the
// hub, C − u0 + (0.5 − u0) = 0, gives u0 = (0.5 + 1/I)/(2 + 1/I)
// (derived). 0.6118527251 at s = 0.1.
func switchClosed(s float64) float64 {
	I := (math.Exp(3*s)-1)/3 + math.Exp(3*s)*(1-math.Exp(-3*(1-s)))/3
	return (0.5 + 1/I) / (2 + 1/I)
}

// switchValue is the PDE value at the hub of the policy network of
// switchPolicy(x) (graphpde's grid, fitted across the switch).
func switchValue(t *testing.T, x float64) float64 {
	t.Helper()
	net, err := netfile.Read(strings.NewReader(switchNearHub), "switch.toml")
	if err != nil {
		t.Fatal(err)
	}
	pf := writeFile(t, "pol.json", switchPolicy(x))
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

type switchWalk struct {
	Value struct{ Mean, StdErr float64 } `json:"value"`
	Notes []string                       `json:"notes"`
	Bias  *struct {
		Halved            []string `json:"halved"`
		Estimate, StdErr  float64
		StarFraction      float64                        `json:"star_fraction"`
		FinerStarFraction float64                        `json:"finer_star_fraction"`
		FinerValue        struct{ Mean, StdErr float64 } `json:"finer_value"`
		Extrapolated      struct{ Mean, StdErr float64 } `json:"extrapolated"`
	} `json:"bias_estimate"`
}

func walkSwitch(t *testing.T, x float64, args ...string) switchWalk {
	t.Helper()
	f := writeFile(t, "switch.toml", switchNearHub)
	pf := writeFile(t, "pol.json", switchPolicy(x))
	code, out, errs := runCLI(t, context.Background(), append([]string{"walk", f, "--from", "hub", "--policy", pf, "--json"}, args...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var w switchWalk
	if err := json.Unmarshal([]byte(out), &w); err != nil {
		t.Fatal(err)
	}
	if w.Bias == nil {
		t.Fatalf("no bias_estimate on a time-stepped arm: %s", out)
	}
	return w
}

// TestWalkAcrossSwitch: walkers following a policy whose drift jumps from
// −3 to +3 at x = 0.1 next to the hub reproduce the hub's value. The PDE of
// the policy network equals the closed form (1e−10: its grid is fitted
// across the switch; at 64 cells with the switch moved to a cell face it
// was 0.6174). The walkers step onto the switch and across it by the two
// pieces' exact law, and the hub's star is clipped at the switch, so no
// visit is frozen: at --step 2.5e−4 (where the walkers, freezing the drift
// across the switch, sat 0.013 low, 9 standard errors at 80 000 walkers)
// the value lies within 4 standard errors of the closed form, and at the
// coarse --step 4e−3 the bias estimate covers the value's distance from it
// within 4 of its standard errors (fixed seeds).
func TestWalkAcrossSwitch(t *testing.T) {
	exact := switchClosed(0.1)
	if math.Abs(exact-0.6118527251) > 1e-10 {
		t.Fatalf("closed form %.10f", exact)
	}
	if u := switchValue(t, 0.1); math.Abs(u-exact) > 1e-10 {
		t.Errorf("PDE of the policy network %.10f, closed form %.10f", u, exact)
	}
	for _, tc := range []struct {
		step      string
		particles string
	}{{"2.5e-4", "40000"}, {"4e-3", "40000"}} {
		w := walkSwitch(t, 0.1, "--particles", tc.particles, "--seed", "7", "--step", tc.step)
		b := w.Bias
		t.Logf("step %s: exact %.5f; value %.5f ± %.4f; finer %.5f ± %.4f; bias %.4f ± %.4f", tc.step,
			exact, w.Value.Mean, w.Value.StdErr, b.FinerValue.Mean, b.FinerValue.StdErr, b.Estimate, b.StdErr)
		for _, n := range w.Notes {
			if strings.Contains(n, "freeze") {
				t.Errorf("step %s: a visit froze coefficients: %s", tc.step, n)
			}
		}
		if len(b.Halved) != 1 || b.Halved[0] != "step" {
			t.Errorf("step %s: halved %v, want the step alone", tc.step, b.Halved)
		}
		if d := math.Abs(w.Value.Mean - exact); d > 4*w.Value.StdErr {
			t.Errorf("step %s: value %.5f ± %.4f, exact %.5f", tc.step, w.Value.Mean, w.Value.StdErr, exact)
		}
		if d := math.Abs(b.Estimate - (w.Value.Mean - exact)); d > 4*b.StdErr {
			t.Errorf("step %s: bias estimate %.4f ± %.4f, actual %.4f", tc.step, b.Estimate, b.StdErr, w.Value.Mean-exact)
		}
	}
}

// TestWalkReportsStarBias: a switch closer to the hub (x = 0.005) than the
// smallest star the walkers clip at (--star-fraction 1/8 of the hand-off
// zone, 0.0156 at --step 1e−3) is frozen in the hub's visits, so the bias
// pass halves the star fraction as well; the finer run and the
// extrapolation agree with the closed form (fixed seed, 4 standard
// errors), and the estimated bias of the coarse run covers its actual
// distance from it within 4 of its standard errors.
func TestWalkReportsStarBias(t *testing.T) {
	exact := switchClosed(0.005)
	if u := switchValue(t, 0.005); math.Abs(u-exact) > 1e-10 {
		t.Errorf("PDE of the policy network %.10f, closed form %.10f", u, exact)
	}
	w := walkSwitch(t, 0.005, "--particles", "20000", "--seed", "7", "--step", "1e-3")
	b := w.Bias
	t.Logf("exact %.5f; coarse %.5f ± %.4f; finer %.5f ± %.4f; bias %.4f ± %.4f; extrapolated %.5f ± %.4f",
		exact, w.Value.Mean, w.Value.StdErr, b.FinerValue.Mean, b.FinerValue.StdErr, b.Estimate, b.StdErr, b.Extrapolated.Mean, b.Extrapolated.StdErr)
	if b.StarFraction != 1.0/8 || b.FinerStarFraction != 1.0/16 {
		t.Errorf("star fractions %g, %g, want 1/8, 1/16", b.StarFraction, b.FinerStarFraction)
	}
	if math.Abs(b.Estimate-2*(w.Value.Mean-b.FinerValue.Mean)) > 1e-12 {
		t.Errorf("estimate %g is not 2·(coarse − finer)", b.Estimate)
	}
	if d := math.Abs(b.FinerValue.Mean - exact); d > 4*b.FinerValue.StdErr {
		t.Errorf("finer run %.5f ± %.4f, exact %.5f", b.FinerValue.Mean, b.FinerValue.StdErr, exact)
	}
	if d := math.Abs(b.Extrapolated.Mean - exact); d > 4*b.Extrapolated.StdErr {
		t.Errorf("extrapolation %.5f ± %.4f, exact %.5f", b.Extrapolated.Mean, b.Extrapolated.StdErr, exact)
	}
	if d := math.Abs(b.Estimate - (w.Value.Mean - exact)); d > 4*b.StdErr {
		t.Errorf("bias estimate %.4f ± %.4f, actual coarse − exact %.4f", b.Estimate, b.StdErr, w.Value.Mean-exact)
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
