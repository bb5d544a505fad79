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

const bratuFile = `[network]
name = "slab"
[parameters]
lambda = 1.0
[[node]]
id = "l"
fixed = 0.0
[[node]]
id = "r"
fixed = 0.0
[[edge]]
id = "s"
from = "l"
to = "r"
length = 1.0
equation = "uxx + lambda*exp(u)"
weight = 1.0
cells = 200
`

// TestSweepHeatedWire runs the shipped example through the fold of thermal
// runaway. The critical current of a wire long against its thermal length
// √(kA/hP) approaches that of an infinitely long one, where the uniform
// balance hPθ = I²r0·e^{θ/θr} has a double root at θ = θr:
// I∞ = √(hP·θr/(r0·e)) = 0.56128 A (derived). Cold terminals take heat away,
// so the finite wire needs a little more: between I∞ and I∞ + 1 %.
func TestSweepHeatedWire(t *testing.T) {
	code, out, errs := runCLI(t, context.Background(), "sweep", "../../examples/heated-wire.toml",
		"--param", "current", "--to", "1", "--probe", "wire@0.15", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Param  string `json:"param"`
		Points []struct {
			Value  float64 `json:"value"`
			Probes []struct {
				At string  `json:"at"`
				U  float64 `json:"u"`
			} `json:"probes"`
		} `json:"points"`
		Fold *struct {
			Value float64 `json:"value"`
		} `json:"fold"`
		FoldConfirmed bool   `json:"fold_confirmed"`
		Status        string `json:"status"`
		Caution       string `json:"caution"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	inf := math.Sqrt(0.0314 * 150 / (5.5 * math.E))
	if got.Fold == nil || got.Fold.Value < inf || got.Fold.Value > 1.01*inf {
		t.Fatalf("fold %+v, want in [%.5f, %.5f]", got.Fold, inf, 1.01*inf)
	}
	if !got.FoldConfirmed || got.Status != "fold" || got.Param != "current" {
		t.Errorf("confirmed %v, status %q, param %q", got.FoldConfirmed, got.Status, got.Param)
	}
	if !strings.Contains(got.Caution, "no substitute") {
		t.Errorf("no caution in the output")
	}
	if len(got.Points) < 5 || got.Points[0].Value != 0.2 || got.Points[0].Probes[0].At != "wire@0.15" {
		t.Errorf("points %+v", got.Points[:min(2, len(got.Points))])
	}
}

// TestSweepCommand: the table, the plot and the errors of ramify sweep, and
// the nonlinear fields of ramify solve's JSON.
func TestSweepCommand(t *testing.T) {
	file := writeFile(t, "bratu.toml", bratuFile)
	plot := filepath.Join(t.TempDir(), "branch.svg")
	code, out, errs := runCLI(t, context.Background(), "sweep", file, "--param", "lambda", "--to", "4", "--probe", "s@0.5", "--plot", plot)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"fold (turning point) at lambda = 3.51", "← fold", "u(s@0.5)", "no substitute", "other solutions may exist"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	svg, err := os.ReadFile(plot)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(string(svg), "<svg") || !strings.Contains(string(svg), "fold lambda = 3.51") {
		t.Errorf("plot lacks the fold mark")
	}

	code, _, errs = runCLI(t, context.Background(), "sweep", file, "--param", "mu", "--to", "4")
	if code != 1 || !strings.Contains(errs, `no parameter "mu"`) || !strings.Contains(errs, "lambda") {
		t.Errorf("unknown parameter: exit %d, %q", code, errs)
	}
	code, _, errs = runCLI(t, context.Background(), "sweep", file, "--to", "4")
	if code != exitUsage || !strings.Contains(errs, "--param") {
		t.Errorf("missing --param: exit %d, %q", code, errs)
	}
	code, _, errs = runCLI(t, context.Background(), "sweep", file, "--param", "lambda", "--to", "4", "--plot", file)
	if code != exitUsage {
		t.Errorf("plot over the input: exit %d, %q", code, errs)
	}

	code, out, errs = runCLI(t, context.Background(), "solve", file, "--probe", "s@0.5", "--json")
	if code != 0 {
		t.Fatalf("solve: exit %d: %s", code, errs)
	}
	var sol struct {
		Iterations *int     `json:"iterations"`
		Residual   *float64 `json:"residual"`
		Status     string   `json:"status"`
		Probes     []struct {
			U float64 `json:"u"`
		} `json:"probes"`
	}
	if err := json.Unmarshal([]byte(out), &sol); err != nil {
		t.Fatal(err)
	}
	// Bratu at λ = 1, u(½) = 0.1405392144 (docs/references.md NL1), grid error
	// about 4e−6 at 200 cells (TestBratuBranches' measured order).
	if sol.Iterations == nil || sol.Residual == nil || *sol.Residual > 1e-10 || sol.Status != "converged" ||
		math.Abs(sol.Probes[0].U-0.1405392144) > 1e-5 {
		t.Errorf("solve JSON: %s", out)
	}
}

// TestSolveNonlinearRefusals: a nonlinear file that Newton cannot solve is an
// error with the reason, and no field.
func TestSolveNonlinearRefusals(t *testing.T) {
	past := writeFile(t, "past.toml", strings.Replace(bratuFile, "lambda = 1.0", "lambda = 5.0", 1))
	code, out, errs := runCLI(t, context.Background(), "solve", past, "--json")
	if code != 1 || out != "" || !strings.Contains(errs, "no steady solution found (fold") {
		t.Errorf("past the fold: exit %d, stdout %q, stderr %q", code, out, errs)
	}
	bad := writeFile(t, "bad.toml", strings.Replace(bratuFile, "uxx + lambda*exp(u)", "-uxx + lambda", 1))
	code, _, errs = runCLI(t, context.Background(), "solve", bad)
	if code != 1 || !strings.Contains(errs, "∂E/∂uxx") || !strings.Contains(errs, `edge "s"`) {
		t.Errorf("not elliptic: exit %d, stderr %q", code, errs)
	}
}

// TestSolvePastFold: above the runaway current of the heated-wire example
// (0.5618 A: TestSweepHeatedWire) the wire has no steady state; solve must
// say so (status fold, with the evidence), exit 1 and print no field. Just
// below it the solve converges.
func TestSolvePastFold(t *testing.T) {
	src, err := os.ReadFile("../../examples/heated-wire.toml")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		current string
		fold    bool
	}{{"0.55", false}, {"0.7", true}, {"1.0", true}} {
		text := strings.Replace(string(src), "\ncurrent = 0.2 ", "\ncurrent = "+c.current+" ", 1)
		if text == string(src) {
			t.Fatal("the example no longer sets current = 0.2 on a line of its own")
		}
		file := filepath.Join(t.TempDir(), "wire.toml")
		if err := os.WriteFile(file, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		code, out, errs := runCLI(t, context.Background(), "solve", file)
		t.Logf("current %s: exit %d: %.200s", c.current, code, errs)
		switch {
		case !c.fold && code != 0:
			t.Errorf("current %s: exit %d: %s", c.current, code, errs)
		case c.fold && (code != 1 || out != "" || !strings.Contains(errs, "no steady solution found (fold") || !strings.Contains(errs, "singular Jacobian")):
			t.Errorf("current %s: exit %d, stdout %q, stderr %q; want exit 1, no output and the fold with its evidence", c.current, code, out, errs)
		}
	}
}

// TestSweepTableTrimmed: the rows of the sweep table carry no trailing
// spaces (the fold marker's column padded every row).
func TestSweepTableTrimmed(t *testing.T) {
	file := writeFile(t, "bratu.toml", bratuFile)
	code, out, errs := runCLI(t, context.Background(), "sweep", file, "--param", "lambda", "--to", "4", "--max-points", "60")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "← fold") {
		t.Fatalf("no fold row in\n%s", out)
	}
	for i, line := range strings.Split(out, "\n") {
		if strings.HasSuffix(line, " ") {
			t.Errorf("line %d ends in spaces: %q", i+1, line)
		}
	}
}
