package main

import (
	"context"
	"encoding/json"
	"math"
	"testing"
)

// radiatingFinFile is a fin held at 1 at its base, radiating along its
// length (an edge equation) and at its tip (a general node law, with
// capacity): what evolve could not step before the general stepper.
const radiatingFinFile = `[network]
name = "radiating fin"
[parameters]
m = 0.5
[[node]]
id = "base"
fixed = 1.0
[[node]]
id = "tip"
capacity = 0.05
law = "0.1*u^4 - d.fin"
[[edge]]
id = "fin"
from = "base"
to = "tip"
length = 1.0
equation = "uxx - m*u^4"
weight = 1.0
cells = 32
`

// TestEvolveEquationAndNodeLaw: ramify evolve steps the radiating fin to
// rest; the values at t = 12 (the slowest mode, rate above (π/2)², is down
// by e^{−29}) and the steady values behind the crossing times must be those
// of ramify solve on the same grid to 1e-8 (Newton tolerances and the
// stepping's 1e-7 on what is left of the transient).
func TestEvolveEquationAndNodeLaw(t *testing.T) {
	f := writeFile(t, "fin.toml", radiatingFinFile)
	code, out, errs := runCLI(t, context.Background(), "evolve", f, "--until", "12", "--probe", "tip", "--probe", "fin@0.5",
		"--crossing", "0.5", "--tol", "1e-7", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Probes []struct {
			At       string
			U        []float64
			Steady   *float64
			Crossing *float64
		}
		Status string
		Notes  []string
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	code, sout, errs := runCLI(t, context.Background(), "solve", f, "--probe", "tip", "--probe", "fin@0.5", "--json")
	if code != 0 {
		t.Fatalf("solve: exit %d: %s", code, errs)
	}
	var st struct {
		Probes []struct {
			At string
			U  float64
		}
	}
	if err := json.Unmarshal([]byte(sout), &st); err != nil {
		t.Fatalf("solve output is not JSON: %v\n%s", err, sout)
	}
	if got.Status != "converged" || len(got.Notes) != 0 || len(got.Probes) != 2 || len(st.Probes) != 2 {
		t.Fatalf("status %q, notes %q, %d and %d probes", got.Status, got.Notes, len(got.Probes), len(st.Probes))
	}
	for k, p := range got.Probes {
		want := st.Probes[k].U
		last := p.U[len(p.U)-1]
		if math.Abs(last-want) > 1e-8 || p.Steady == nil || math.Abs(*p.Steady-want) > 1e-8 {
			t.Errorf("%s: u(12) = %.10f, steady %v, solve %.10f", p.At, last, p.Steady, want)
		}
		if p.Crossing == nil || !(*p.Crossing > 0 && *p.Crossing < 12) {
			t.Errorf("%s: crossing time %v", p.At, p.Crossing)
		}
	}
}

// TestEvolveRadiatingBoom runs the README's worked example: the plate
// settles on solve's steady temperature (at t = 40000 s, about 14 of the
// slowest time constants of ~3000 s, 1e-6 relative), and the plate's 90 %
// crossing time stays where the README prints it (5866.57 s at the default
// tolerance, within 1 %: the stepping's error at --tol 1e-4).
func TestEvolveRadiatingBoom(t *testing.T) {
	const file = "../../examples/radiating-boom.toml"
	code, out, errs := runCLI(t, context.Background(), "evolve", file, "--until", "40000", "--probe", "plate", "--crossing", "0.9", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Probes []struct {
			U        []float64
			Steady   *float64
			Crossing *float64
		}
		Status string
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	code, sout, errs := runCLI(t, context.Background(), "solve", file, "--probe", "plate", "--json")
	if code != 0 {
		t.Fatalf("solve: exit %d: %s", code, errs)
	}
	var st struct{ Probes []struct{ U float64 } }
	if err := json.Unmarshal([]byte(sout), &st); err != nil || len(st.Probes) != 1 || len(got.Probes) != 1 {
		t.Fatalf("solve output %v: %s", err, sout)
	}
	p := got.Probes[0]
	want := st.Probes[0].U
	if last := p.U[len(p.U)-1]; got.Status != "converged" || math.Abs(last-want) > 1e-6*want {
		t.Errorf("status %q, plate at 40000 s %.6f K, steady %.6f K", got.Status, last, want)
	}
	if p.Crossing == nil || math.Abs(*p.Crossing-5866.57) > 0.01*5866.57 {
		t.Errorf("crossing time %v, README says 5866.57 s", p.Crossing)
	}
}
