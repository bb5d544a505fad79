package main

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestEvolveCLI runs `ramify evolve --json` on a rod held at 1 at both ends
// from t = 0, initially 0 (u_t = u_xx on (0, 1)), and compares the middle
// with the Fourier series u(1/2, t) = 1 − (4/π) Σ (−1)^k e^{−(2k+1)²π²t}/(2k+1)
// (Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed. 1959, §3.3 — from
// memory): 0.0248386613 at t = 0.02 and 0.5255125396 at t = 0.1. Tolerance
// 1e-3: the grid of 64 cells and the steps to --tol 1e-4 give about 2e-4
// here (measured). The output times must be exactly 0, 0.02, …, 0.1, and the
// CSV and SVG files must be written.
func TestEvolveCLI(t *testing.T) {
	const tol = 1e-3
	f := writeFile(t, "rod.toml", `
[[node]]
id = "a"
fixed = 1.0
[[node]]
id = "b"
fixed = 1.0
[[edge]]
id = "rod"
from = "a"
to = "b"
length = 1.0
diffusivity = 1.0
initial = 0.0
`)
	dir := t.TempDir()
	csvPath, svgPath := filepath.Join(dir, "p.csv"), filepath.Join(dir, "p.svg")
	code, out, errs := runCLI(t, context.Background(), "evolve", f, "--until", "0.1", "--every", "0.02", "--probe", "rod@0.5",
		"--crossing", "0.5", "--csv", csvPath, "--plot", svgPath, "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Times  []float64
		Probes []struct {
			At       string
			U        []float64
			Crossing *float64
		}
		Status string
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	wantT := []float64{0, 0.02, 0.04, 0.06, 0.08, 0.1}
	if len(got.Times) != len(wantT) {
		t.Fatalf("times %v, want %v", got.Times, wantT)
	}
	for i, w := range wantT {
		if math.Abs(got.Times[i]-w) > 1e-12 {
			t.Errorf("time %d = %g, want %g", i, got.Times[i], w)
		}
	}
	u := got.Probes[0].U
	for _, c := range []struct {
		i    int
		want float64
	}{{1, 0.0248386613}, {5, 0.5255125396}} {
		if math.Abs(u[c.i]-c.want) > tol {
			t.Errorf("u(0.5, %g) = %.7f, want %.7f", wantT[c.i], u[c.i], c.want)
		}
	}
	// Half of the steady value 1 is reached at the t where the series is
	// 0.5: t = 0.0947 (bisection on the series, derived).
	if c := got.Probes[0].Crossing; c == nil || math.Abs(*c-0.09468) > 1e-3 {
		t.Errorf("crossing %v, want about 0.09468", c)
	}
	if b, err := os.ReadFile(csvPath); err != nil || !strings.HasPrefix(string(b), "t,rod@0.5\n0,0\n") {
		t.Errorf("CSV: %v\n%s", err, b)
	}
	if b, err := os.ReadFile(svgPath); err != nil || !strings.Contains(string(b), "<svg") {
		t.Errorf("SVG plot not written: %v", err)
	}
	if code, _, _ := runCLI(t, context.Background(), "evolve", f); code != 2 {
		t.Errorf("without --until: exit %d, want 2", code)
	}
}

// TestEvolveSchedule drives the near end of a distributed RC line (RC = 1)
// from a schedule file: 0 before t = 0.2, then 1 (steps). The far end then
// crosses 50% at 0.2 + 0.3787478 (Rabaey, Chandrakasan & Nikolić, Digital
// Integrated Circuits, 2nd ed. 2003, §4.4.4); 200 cells and --tol 1e-6 give
// the grid's 2e-4. A schedule naming an unknown node is an error with the
// file and line.
func TestEvolveSchedule(t *testing.T) {
	f := writeFile(t, "line.toml", `
[[node]]
id = "drive"
fixed = 0.0
[[node]]
id = "far"
[[edge]]
id = "line"
from = "drive"
to = "far"
length = 1.0
diffusivity = 1.0
`)
	sched := writeFile(t, "s.csv", "t,drive\n0,0\n0.2,1\n")
	code, out, errs := runCLI(t, context.Background(), "evolve", f, "--until", "1", "--probe", "far", "--schedule", sched, "--steps",
		"--crossing", "0.5", "--cells", "200", "--tol", "1e-6", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Probes []struct{ Crossing *float64 }
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if c := got.Probes[0].Crossing; c == nil || math.Abs(*c-0.5787478) > 2e-4 {
		t.Errorf("crossing %v, want 0.5787478", c)
	}
	bad := writeFile(t, "bad.csv", "t,nowhere\n0,1\n")
	code, _, errs = runCLI(t, context.Background(), "evolve", f, "--until", "1", "--schedule", bad)
	if code != 1 || !strings.Contains(errs, "bad.csv:1: no node \"nowhere\"") {
		t.Errorf("exit %d, %q", code, errs)
	}
}

// TestEvolveInterrupted: a cancelled run (Ctrl-C) exits with 130, for
// evolve and spectrum (the library's partial results are tested in
// graphpde).
func TestEvolveInterrupted(t *testing.T) {
	f := writeFile(t, "rod.toml", "[[node]]\nid = \"a\"\nfixed = 1.0\n[[node]]\nid = \"b\"\n[[edge]]\nid = \"rod\"\nfrom = \"a\"\nto = \"b\"\nlength = 1.0\ndiffusivity = 1.0\n")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	for _, args := range [][]string{{"evolve", f, "--until", "1", "--probe", "b"}, {"spectrum", f}} {
		if code, _, errs := runCLI(t, ctx, args...); code != exitInterrupted {
			t.Errorf("%s on a cancelled context: exit %d, %s", args[0], code, errs)
		}
	}
}

// TestEvolveCaution: the safety caution follows the network's physical model,
// as in solve — a de-icing wire (heat, current) carries it, a passive nerve
// cable and a plain-number file do not (it was printed under every evolve).
func TestEvolveCaution(t *testing.T) {
	for _, c := range []struct {
		file string
		want bool
	}{
		{"../../examples/deicing-wire.toml", true},
		{"../../examples/interneuron.toml", false},
		{"../../examples/fork.toml", false},
	} {
		code, out, errs := runCLI(t, context.Background(), "evolve", c.file, "--until", "0.001", "--step", "0.0005")
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", c.file, code, errs)
		}
		if has := strings.Contains(out, "engineering review"); has != c.want {
			t.Errorf("%s: text caution present %v, want %v", c.file, has, c.want)
		}
		code, out, errs = runCLI(t, context.Background(), "evolve", c.file, "--until", "0.001", "--step", "0.0005", "--json")
		if code != 0 {
			t.Fatalf("%s --json: exit %d: %s", c.file, code, errs)
		}
		var got struct{ Caution string }
		if err := json.Unmarshal([]byte(out), &got); err != nil {
			t.Fatal(err)
		}
		if has := got.Caution != ""; has != c.want {
			t.Errorf("%s --json: caution present %v, want %v", c.file, has, c.want)
		}
	}
}
