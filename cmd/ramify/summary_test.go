package main

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// solveOutJSON runs `ramify solve --json` on file and decodes the result.
func solveOutJSON(t *testing.T, file string) solveOutDecoded {
	t.Helper()
	code, out, errs := runCLI(t, context.Background(), "solve", "--json", file)
	if code != 0 {
		t.Fatalf("%s: exit %d: %s", file, code, errs)
	}
	var got solveOutDecoded
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("%s: %v", file, err)
	}
	return got
}

type solveOutDecoded struct {
	Summary struct {
		Fixed []struct {
			ID    string
			Kind  string
			Drawn float64
		} `json:"fixed_nodes"`
		Open []struct {
			ID      string
			Carried float64 `json:"carried_in"`
		} `json:"open_ends"`
		Balance *struct {
			Sources   float64
			Supplied  float64
			Losses    float64
			Imbalance float64
			Rel       float64 `json:"relative_imbalance"`
		}
		Highest struct {
			At string
			U  float64
		}
	}
	Units *struct {
		Field string
		U     string
	}
	Caution string
}

// TestSolveSummary checks the engineering summary: the heat drawn from the
// base of Incropera's copper pin fin (6th ed. §3.6.2, Table 3.4 case B:
// 5.160100 W with a convective tip, evaluated to 7 digits), the overall
// balance to round-off on every shipped physical example, and the safety
// caution only where heat or current is modelled.
func TestSolveSummary(t *testing.T) {
	fin := writeFile(t, "fin.toml", `[[node]]
id = "base"
fixed = "100 degC"
[[node]]
id = "tip"
convection = { film = "100 W/(m^2*K)", area = "19.634954 mm^2", ambient = "25 degC" }
[[edge]]
id = "pin"
from = "base"
to = "tip"
length = "50 mm"
wire = { conductivity = "398 W/(m*K)", diameter = "5 mm", film = "100 W/(m^2*K)", ambient = "25 degC" }
`)
	got := solveOutJSON(t, fin)
	if q := got.Summary.Fixed[0].Drawn; math.Abs(q-5.160100) > 2e-7*5.16 {
		t.Errorf("fin: heat drawn from the base %.8g W, want 5.160100", q)
	}
	if b := got.Summary.Balance; b == nil || math.Abs(b.Sources) != 0 || math.Abs(b.Losses-5.160100) > 2e-7*5.16 {
		t.Errorf("fin: balance %+v: want no Joule heat and losses equal to the heat drawn", b)
	}
	if got.Summary.Highest.At != "base" || math.Abs(got.Summary.Highest.U-100) > 1e-12 {
		t.Errorf("fin: hottest %+v, want the base at 100 °C", got.Summary.Highest)
	}
	// roundoff: the balance sums a few terms of size O(1) in float64.
	const roundoff = 1e-12
	for _, c := range []struct {
		file    string
		caution bool
	}{
		{fin, true},
		{"../../examples/deicing-wire.toml", true},
		{"../../examples/clock-spine.toml", true},
		{"../../examples/interneuron.toml", false},
		{"../../examples/fissure-tracer.toml", false},
		{"../../examples/handrail.toml", false},
	} {
		got := solveOutJSON(t, c.file)
		if b := got.Summary.Balance; b == nil || b.Rel > roundoff {
			t.Errorf("%s: balance %+v, want a relative imbalance below %g", c.file, b, roundoff)
		}
		if has := strings.Contains(got.Caution, "engineering review"); has != c.caution {
			t.Errorf("%s: caution present %v, want %v", c.file, has, c.caution)
		}
	}
	if got := solveOutJSON(t, "../../examples/fork.toml"); got.Summary.Balance != nil {
		t.Errorf("fork (end weights differ from the diffusivity): balance %+v, want null", got.Summary.Balance)
	}
	tr := solveOutJSON(t, "../../examples/fissure-tracer.toml")
	if len(tr.Summary.Open) != 1 || tr.Summary.Open[0].ID != "spring" || !(tr.Summary.Open[0].Carried < 0) {
		t.Errorf("tracer: open ends %+v, want tracer carried out at the spring", tr.Summary.Open)
	}
	if tr.Units == nil || tr.Units.U != "kg/m^3" {
		t.Errorf("tracer: units %+v", tr.Units)
	}
}
