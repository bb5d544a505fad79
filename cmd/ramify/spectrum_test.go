package main

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// TestSpectrumCLI runs `ramify spectrum --json` on an equilateral star of
// three arms of length 1 with tips held at 0 (Berkolaiko & Kuchment,
// Introduction to Quantum Graphs, AMS 2013, ch. 1 — from memory; values
// derived): λ = (π/2)² once, π² twice (the arms' own modes, which a Σ cot
// secular equation misses), (3π/2)² once. The count is exact, so the
// tolerance is round-off; the human output names the relaxation time.
func TestSpectrumCLI(t *testing.T) {
	const roundoff = 1e-10
	f := writeFile(t, "star.toml", `
[[node]]
id = "c"
[[node]]
id = "t1"
fixed = 0.0
[[node]]
id = "t2"
fixed = 0.0
[[node]]
id = "t3"
fixed = 0.0
[defaults]
length = 1.0
diffusivity = 1.0
[[edge]]
id = "a1"
from = "c"
to = "t1"
[[edge]]
id = "a2"
from = "c"
to = "t2"
[[edge]]
id = "a3"
from = "c"
to = "t3"
`)
	code, out, errs := runCLI(t, context.Background(), "spectrum", "--count", "4", "--json", f)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Eigenvalues []struct {
			Value        float64
			Multiplicity int
		}
		RelaxationTime float64 `json:"relaxation_time"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	p := math.Pi * math.Pi
	want := []struct {
		v float64
		m int
	}{{p / 4, 1}, {p, 2}, {9 * p / 4, 1}}
	if len(got.Eigenvalues) != len(want) {
		t.Fatalf("eigenvalues %+v, want %v", got.Eigenvalues, want)
	}
	for i, w := range want {
		e := got.Eigenvalues[i]
		if math.Abs(e.Value-w.v) > roundoff*w.v || e.Multiplicity != w.m {
			t.Errorf("eigenvalue %d: %.12g ×%d, want %.12g ×%d", i, e.Value, e.Multiplicity, w.v, w.m)
		}
	}
	if math.Abs(got.RelaxationTime-4/p) > roundoff {
		t.Errorf("relaxation time %g, want %g", got.RelaxationTime, 4/p)
	}
	code, out, _ = runCLI(t, context.Background(), "spectrum", f)
	if code != 0 || !strings.Contains(out, "slowest relaxation time 1/λ₁ = 0.4052847") {
		t.Errorf("human output lacks the relaxation time:\n%s", out)
	}
	if code, _, _ := runCLI(t, context.Background(), "spectrum", "--count", "0", f); code != 2 {
		t.Errorf("--count 0: exit %d, want 2 (usage error)", code)
	}
}
