package main

import (
	"context"
	"strings"
	"testing"
)

// TestRefusalsNameTheLine: a solver's refusal that names a node or an edge
// of the file (evolve --method exact on an expression of t or an initial
// field that varies along the edge; positions at fixed times next to a
// drifting arm) names the file and the line of that node or edge, as every
// other input error does (it named neither the line nor, for crosscheck,
// the file).
func TestRefusalsNameTheLine(t *testing.T) {
	base := "[[node]]\nid = \"drv\"\nfixed = %s\n[[node]]\nid = \"j\"\nleak = 0.5\n[[node]]\nid = \"t\"\nfixed = 0.0\n" +
		"[[edge]]\nid = \"a\"\nfrom = \"drv\"\nto = \"j\"\nlength = 1.0\ndiffusivity = 1.0\n%s" +
		"[[edge]]\nid = \"b\"\nfrom = \"j\"\nto = \"t\"\nlength = 1.0\ndiffusivity = 1.0\n"
	for _, tc := range []struct {
		name, fixed, extra string
		args               []string
		want               string
	}{
		{"expression of t", "\"sin(t)\"", "", []string{"evolve", "--until", "1", "--method", "exact"}, ":2: node \"drv\""},
		{"initial along the edge", "1.0", "initial = \"x\"\n", []string{"evolve", "--until", "1", "--method", "exact"}, ":11: edge \"a\""},
		{"positions next to drift", "1.0", "drift = 0.5\n", []string{"crosscheck", "--from", "a@0.5", "--positions-at", "0.5", "--particles", "100"}, ":5: node \"j\""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			f := writeFile(t, "net.toml", strings.Replace(strings.Replace(base, "%s", tc.fixed, 1), "%s", tc.extra, 1))
			args := append([]string{tc.args[0], f}, tc.args[1:]...)
			code, _, errs := runCLI(t, context.Background(), args...)
			if code != 1 || !strings.Contains(errs, "net.toml"+tc.want) {
				t.Errorf("exit %d, stderr %q: want net.toml%s", code, errs, tc.want)
			}
		})
	}
}

// TestPositionTimesTwice: a time given twice to --positions-at is a usage
// error (it made the same three checks twice, counted twice in the
// family-wise level).
func TestPositionTimesTwice(t *testing.T) {
	f := writeFile(t, "rod.toml", "[[node]]\nid = \"a\"\nfixed = 1.0\n[[node]]\nid = \"b\"\nleak = 1\n[[edge]]\nid = \"rod\"\nfrom = \"a\"\nto = \"b\"\nlength = 1.0\ndiffusivity = 1.0\n")
	code, _, errs := runCLI(t, context.Background(), "crosscheck", f, "--from", "b", "--positions-at", "0.5,0.2,0.5", "--particles", "100")
	if code != 2 || !strings.Contains(errs, "time 0.5 is given twice") {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
}
