package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// TestEvolveInterruptedSaysSo: Ctrl-C during the time stepping keeps the
// output times reached and says that the run was interrupted, in the text
// and in JSON (status "interrupted" and a note), as spectrum does; it said
// "iteration limit" with no note, as if a limit had been met.
func TestEvolveInterruptedSaysSo(t *testing.T) {
	f := writeFile(t, "rod.toml", "[[node]]\nid = \"a\"\nfixed = 1.0\n[[node]]\nid = \"b\"\n[[edge]]\nid = \"rod\"\nfrom = \"a\"\nto = \"b\"\nlength = 1.0\ndiffusivity = 1.0\n")
	base := []string{"evolve", f, "--until", "1", "--every", "0.1", "--probe", "b"}
	full := &laterCtx{n: math.MaxInt64}
	if code, _, errs := runCLI(t, full, base...); code != 0 {
		t.Fatalf("uninterrupted run: exit %d: %s", code, errs)
	}
	looks := full.calls.Load()
	code, out, errs := runCLI(t, &laterCtx{n: looks - 3}, append(base, "--json")...)
	if code != exitInterrupted {
		t.Fatalf("exit %d, want %d (stderr %q)", code, exitInterrupted, errs)
	}
	var got struct {
		Status string
		Times  []float64
		Notes  []string
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if got.Status != "interrupted" || len(got.Notes) == 0 || !strings.Contains(strings.Join(got.Notes, "|"), "interrupted") {
		t.Errorf("status %q, notes %q: the JSON does not say the run was interrupted", got.Status, got.Notes)
	}
	code, text, _ := runCLI(t, &laterCtx{n: looks - 3}, base...)
	if code != exitInterrupted || !strings.Contains(strings.SplitN(text, "\n", 2)[0], "interrupted") {
		t.Errorf("exit %d; the text's first line does not say interrupted:\n%s", code, text)
	}
}
