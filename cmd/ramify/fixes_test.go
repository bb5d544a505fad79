package main

import (
	"context"
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestNumberForms checks the forms numbers are printed in: no "-0", no
// long rows of zeros for small values, 0 as "0".
func TestNumberForms(t *testing.T) {
	for _, c := range []struct {
		got, want string
	}{
		{fmtNum(math.Copysign(0, -1)), "0"},
		{fmtNum(3e-6), "3e-06"},
		{fmtNum(0.25), "0.25"},
		{fmtNum(12.62431234), "12.6243"},
		{fmtProb(1), "1"},
		{fmtProb(math.NaN()), "not reported"},
		{fmtErr(0), "0"},
		{fmtErr(0.0012345), "0.0012"},
		{fmtSmall(0), "0"},
		{fmtSmall(-3.5e-15), "-3.5e-15"},
		{plural(1, "unknown"), "1 unknown"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}

// star with a sticky hub: walkers are held at the node capacity, so the
// exit-time table must show that time for its rows to add up to the mean.
const stickyStar = `[[node]]
id = "hub"
capacity = 0.5
[[node]]
id = "a"
fixed = 0
[[node]]
id = "b"
fixed = 1
[[edge]]
id = "ea"
from = "hub"
to = "a"
length = 1
diffusivity = 1
[[edge]]
id = "eb"
from = "hub"
to = "b"
length = 2
diffusivity = 1
`

// TestExitTable checks that the exit command's table of where the time is
// spent adds up to the mean exit time (edges plus the time held at node
// capacities; round-off of the 5-digit print only), and that a survival
// probability below the inversion's accuracy is printed as a bound.
func TestExitTable(t *testing.T) {
	f := writeFile(t, "sticky.toml", stickyStar)
	code, out, errs := runCLI(t, context.Background(), "exit", f, "--from", "hub", "--times", "1,1e9")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var sum, mean float64
	held := false
	for _, line := range strings.Split(out, "\n") {
		fields := strings.Fields(line)
		if len(fields) < 2 {
			continue
		}
		v, err := strconv.ParseFloat(fields[len(fields)-1], 64)
		if err != nil {
			continue
		}
		switch {
		case fields[0] == "ea" || fields[0] == "eb":
			sum += v
		case strings.HasPrefix(line, "(held at node capacities)"):
			sum += v
			held = true
		case strings.HasPrefix(line, "(total"):
			mean = v
		}
	}
	if !held || mean == 0 || math.Abs(sum-mean) > 1e-4*mean {
		t.Errorf("rows add up to %g, mean %g, held row %v:\n%s", sum, mean, held, out)
	}
	if !strings.Contains(out, "P(τ > 1e+09) < 1e-10") {
		t.Errorf("tiny survival not printed as a bound:\n%s", out)
	}
}

// TestFixes checks the smaller repairs: a network without edges is refused,
// one unknown is "1 unknown", --fit-weights says why it fitted nothing,
// --field-step sets the spacing, and walker JSON has no "visits".
func TestFixes(t *testing.T) {
	ctx := context.Background()
	noEdges := writeFile(t, "none.toml", "[[node]]\nid = \"a\"\nfixed = 1\n[[node]]\nid = \"b\"\nfixed = 0\n")
	if code, _, errs := runCLI(t, ctx, "solve", noEdges); code != 1 || !strings.Contains(errs, "no edges") {
		t.Errorf("no edges: exit %d, %s", code, errs)
	}
	rod := writeFile(t, "rod.toml", "[[node]]\nid = \"a\"\nfixed = 1\n[[node]]\nid = \"b\"\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\ndecay = 1\n")
	if _, out, _ := runCLI(t, ctx, "solve", rod); !strings.Contains(out, "1 unknown (") {
		t.Errorf("solve: want \"1 unknown\":\n%s", out)
	}
	drift := writeFile(t, "drift.toml", "[[node]]\nid = \"a\"\nfixed = 0\n[[node]]\nid = \"hub\"\n[[node]]\nid = \"b\"\nfixed = 1\n[[node]]\nid = \"c\"\nfixed = 0\n"+
		"[[edge]]\nid = \"e1\"\nfrom = \"a\"\nto = \"hub\"\nlength = 1\ndiffusivity = 1\ndrift = 0.5\n"+
		"[[edge]]\nid = \"e2\"\nfrom = \"hub\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n"+
		"[[edge]]\nid = \"e3\"\nfrom = \"hub\"\nto = \"c\"\nlength = 1\ndiffusivity = 1\n")
	if _, out, _ := runCLI(t, ctx, "crosscheck", drift, "--from", "hub", "--particles", "2000", "--fit-weights"); !strings.Contains(out, "no weights fitted") {
		t.Errorf("--fit-weights on a drifting junction says nothing:\n%s", out)
	}
	field := filepath.Join(t.TempDir(), "f.csv")
	if code, _, errs := runCLI(t, ctx, "solve", rod, "--field", field, "--field-step", "0.3"); code != 0 {
		t.Fatalf("--field-step: exit %d: %s", code, errs)
	}
	fh, err := os.Open(field)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(fh).ReadAll()
	fh.Close()
	if err != nil {
		t.Fatal(err)
	}
	var xs []string
	for _, r := range rows[1:] {
		xs = append(xs, r[1])
	}
	if got := strings.Join(xs, " "); got != "0 0.3 0.6 0.9 1" && got != "0 0.3 0.6 0.8999999999999999 1" {
		t.Errorf("--field-step 0.3 on length 1: x = %s", got)
	}
	if code, _, errs := runCLI(t, ctx, "solve", rod, "--field", field, "--field-step", "1e-12"); code != 2 || !strings.Contains(errs, "over the limit") {
		t.Errorf("--field-step 1e-12: exit %d, %s", code, errs)
	}
	if _, out, _ := runCLI(t, ctx, "walk", rod, "--from", "b", "--particles", "500", "--json"); strings.Contains(out, "\"visits\"") {
		t.Errorf("walker JSON still has visits")
	}
}
