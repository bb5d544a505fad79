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
// leaky node) is refused with one line naming the node, exit 1.
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
	leaky := writeFile(t, "leaky.toml", `[[node]]
id = "hub"
leak = 0.5
[[node]]
id = "tip"
fixed = 1.0
[[edge]]
id = "arm"
from = "hub"
to = "tip"
length = 1.0
diffusivity = 1.0
`)
	code, _, errs = runCLI(t, context.Background(), "crosscheck", leaky, "--from", "arm@0.5", "--positions-at", "0.1", "--particles", "100")
	if code != 1 || !strings.Contains(errs, `node "hub"`) || strings.Count(strings.TrimSpace(errs), "\n") != 0 {
		t.Errorf("leaky hub: exit %d, stderr %q", code, errs)
	}
}
