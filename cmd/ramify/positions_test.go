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
// resolve). A network whose walkers cannot be stopped at fixed times (a
// leaky node whose arms decay at different rates) is refused with one line
// naming the node, exit 1.
func TestCrosscheckPositions(t *testing.T) {
	code, out, errs := runCLI(t, context.Background(), "crosscheck", "../../examples/fork.toml", "--from", "l@0.3",
		"--positions-at", "0.5,0.05", "--particles", "20000", "--seed", "4", "--resolution", "0.05", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r struct {
		Checks []struct {
			Quantity string
			P        float64
			Pass     bool
		}
		Verdict string
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, c := range r.Checks {
		seen[c.Quantity] = true
		if !c.Pass {
			t.Errorf("%s: p = %g", c.Quantity, c.P)
		}
	}
	for _, q := range []string{"on-network:t=0.05", "position:t=0.05", "on-network:t=0.5", "position:t=0.5"} {
		if !seen[q] {
			t.Errorf("no check %s in %v", q, seen)
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
	code, _, errs = runCLI(t, context.Background(), "crosscheck", mixed, "--from", "arm@0.5", "--positions-at", "0.1", "--particles", "100")
	if code != 1 || !strings.Contains(errs, `node "hub"`) || strings.Count(strings.TrimSpace(errs), "\n") != 0 {
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
	var r struct {
		Checks []struct {
			Quantity string
			P        float64
			Pass     bool
		}
		Verdict string
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, c := range r.Checks {
		seen[c.Quantity] = true
		if !c.Pass {
			t.Errorf("%s: p = %g", c.Quantity, c.P)
		}
	}
	for _, q := range []string{"held:hub:t=0.1", "held:hub:t=0.5", "on-network:t=0.5", "position:t=0.5"} {
		if !seen[q] {
			t.Errorf("no check %s in %v", q, seen)
		}
	}
	if r.Verdict != "agree" {
		t.Errorf("verdict %s", r.Verdict)
	}
}
