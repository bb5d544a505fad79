package main

import (
	"context"
	"encoding/json"
	"strings"
	"testing"
)

// TestCrosscheckPositions runs crosscheck --positions-at on the biased fork
// (examples/fork.toml, released on an arm): every position time adds an
// on-network proportion and a KS check of the walkers' places against the
// forward solution, and the verdict over all checks (family-wise bound)
// stays "agree" (2·10⁴ walkers, fixed seed, resolution 0.05, which they
// resolve). A leaky node whose arms decay at different rates stops the
// walkers too (exit 0, a position check).
func TestCrosscheckPositions(t *testing.T) {
	code, out, errs := runCLI(t, context.Background(), "crosscheck", "../../examples/fork.toml", "--from", "l@0.3",
		"--positions-at", "0.5,0.05", "--particles", "20000", "--seed", "4", "--resolution", "0.05", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	r := passingChecks(t, out)
	for _, q := range []string{"on-network:t=0.05", "position:t=0.05", "on-network:t=0.5", "position:t=0.5"} {
		if !r.seen[q] {
			t.Errorf("no check %s in %v", q, r.seen)
		}
	}
	if r.Verdict != "agree" {
		t.Errorf("verdict %s", r.Verdict)
	}
	mixed := writeFile(t, "mixed.toml", `[[node]]
id = "hub"
leak = 0.5
[[node]]
id = "tip"
fixed = 1.0
[[node]]
id = "tip2"
fixed = 0.0
[[edge]]
id = "arm"
from = "hub"
to = "tip"
length = 1.0
diffusivity = 1.0
decay = 1.0
[[edge]]
id = "arm2"
from = "hub"
to = "tip2"
length = 1.0
diffusivity = 1.0
`)
	code, out, errs = runCLI(t, context.Background(), "crosscheck", mixed, "--from", "arm@0.5", "--positions-at", "0.1", "--particles", "2000", "--json")
	if code != 0 || !strings.Contains(out, `"position:t=0.1"`) {
		t.Errorf("leaky hub with arms decaying at different rates: exit %d, stderr %q", code, errs)
	}
}

// TestCrosscheckPositionsSticky: at a junction with a capacity and a leak
// (walkers held and killed there) crosscheck --positions-at compares the
// share held at the node with the forward solution's point mass
// ("held:hub:t=T") besides the on-network share and the KS test of the
// places on the edges; all pass and the verdict is "agree" (2·10⁴
// walkers, fixed seed, resolution 0.05).
func TestCrosscheckPositionsSticky(t *testing.T) {
	sticky := writeFile(t, "sticky.toml", `[[node]]
id = "hub"
capacity = 0.6
leak = 0.8
[[node]]
id = "tip"
fixed = 1.0
[[node]]
id = "end"
[[edge]]
id = "arm"
from = "hub"
to = "tip"
length = 1.0
diffusivity = 1.0
[[edge]]
id = "stub"
from = "hub"
to = "end"
length = 0.8
diffusivity = 0.5
`)
	code, out, errs := runCLI(t, context.Background(), "crosscheck", sticky, "--from", "arm@0.25",
		"--positions-at", "0.1,0.5", "--particles", "20000", "--seed", "6", "--resolution", "0.05", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	r := passingChecks(t, out)
	for _, q := range []string{"held:hub:t=0.1", "held:hub:t=0.5", "on-network:t=0.5", "position:t=0.5"} {
		if !r.seen[q] {
			t.Errorf("no check %s in %v", q, r.seen)
		}
	}
	if r.Verdict != "agree" {
		t.Errorf("verdict %s", r.Verdict)
	}
}

// TestCrosscheckPositionsBias: on a junction with drifting (time-stepped)
// arms, the bias pass's finer run records places too and the position
// checks are widened by it: a note says so, each KS check carries its
// "bias" in JSON, and the bias estimate halved both the step and the star
// fraction (2000 walkers, fixed seed; the verdict is not asserted at this
// size).
func TestCrosscheckPositionsBias(t *testing.T) {
	file := writeFile(t, "drift.toml", `[[node]]
id = "c"
[[node]]
id = "e1"
fixed = 1.0
[[node]]
id = "e2"
fixed = 0.0
[[edge]]
id = "a1"
from = "c"
to = "e1"
length = 1.0
diffusivity = 1.0
drift = 0.8
weights = [2.0, 1.0]
[[edge]]
id = "a2"
from = "e2"
to = "c"
length = 1.0
diffusivity = 0.5
drift = -0.4
decay = 0.2
weights = [0.5, 0.25]
`)
	code, out, errs := runCLI(t, context.Background(), "crosscheck", file, "--from", "a1@0.3", "--positions-at", "0.05", "--particles", "2000", "--seed", "3", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r struct {
		Checks []struct {
			Quantity string
			Bias     *float64
		}
		Notes        []string
		BiasEstimate struct{ Halved []string } `json:"bias_estimate"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, c := range r.Checks {
		if c.Quantity == "position:t=0.05" {
			found = c.Bias != nil && *c.Bias > 0
		}
	}
	if !found {
		t.Errorf("no bias on the KS check of the places: %s", out)
	}
	if !strings.Contains(strings.Join(r.Notes, "\n"), "position checks are widened") {
		t.Errorf("no note on the widening: %q", r.Notes)
	}
	if strings.Join(r.BiasEstimate.Halved, ",") != "star_fraction,step" {
		t.Errorf("halved %v, want star_fraction and step", r.BiasEstimate.Halved)
	}
}

// crossChecks is what the position tests read of crosscheck --json.
type crossChecks struct {
	Checks []struct {
		Quantity string
		P        float64
		Pass     bool
	}
	Verdict string
	seen    map[string]bool // the quantities checked
}

// passingChecks parses crosscheck's JSON output and reports every check
// that did not pass.
func passingChecks(t *testing.T, out string) *crossChecks {
	t.Helper()
	var r crossChecks
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	r.seen = map[string]bool{}
	for _, c := range r.Checks {
		r.seen[c.Quantity] = true
		if !c.Pass {
			t.Errorf("%s: p = %g", c.Quantity, c.P)
		}
	}
	return &r
}
