package main

import (
	"context"
	"strings"
	"testing"
)

// diodeFile: a wire held at 1 feeding a node that loses u³ (a diode to
// ground). The tip solves 1 − u = u³ (derived: unit conductance), u =
// 0.6823278.
const diodeFile = `[[node]]
id = "supply"
fixed = 1.0
[[node]]
id = "tip"
loss = "u^3"
[[edge]]
id = "w"
from = "supply"
to = "tip"
length = 1.0
diffusivity = 1.0
`

// TestNodeLawSummary: with a node loss law the summary does not split the
// balance (it showed losses 0 and an imbalance of 50%, the law's loss
// left out); the balance is null with the note.
func TestNodeLawSummary(t *testing.T) {
	got := solveOutJSON(t, writeFile(t, "diode.toml", diodeFile))
	if got.Summary.Balance != nil {
		t.Errorf("balance %+v, want null (a nonlinear node law)", got.Summary.Balance)
	}
}

// TestReportRefusesNonlinear: report's exit law and cross-check are those
// of a linear problem; on a file with a node loss law they described the
// network without the law (value 1 against the field's 0.841), so report
// refuses such a file as exit and walk do.
func TestReportRefusesNonlinear(t *testing.T) {
	f := writeFile(t, "diode.toml", diodeFile)
	code, _, errs := runCLI(t, context.Background(), "report", f, "--from", "w@0.5", "--particles", "1000", "--out", t.TempDir()+"/r.html")
	if code != 1 || !strings.Contains(errs, "linear problems only") {
		t.Errorf("exit %d, stderr %q; want 1 and the refusal", code, errs)
	}
}
