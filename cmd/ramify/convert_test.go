package main

import (
	"context"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde/netfile"
)

// TestConvert converts an SWC morphology and a DOT graph to each output
// form and reads the result back with the matching reader: the same number
// of nodes and edges and the same lengths (bit for bit).
func TestConvert(t *testing.T) {
	swc := writeFile(t, "cell.swc", "1 1 0 0 0 6 -1\n2 3 40 0 0 1 1\n3 3 40 30 0 0.5 2\n")
	dot := writeFile(t, "g.dot", "graph { a -- b [len = 2, diffusivity = 1]; b -- c [len = \"30 cm\", diffusivity = 1]; a [fixed = 0] }")
	for _, in := range []string{swc, dot} {
		src, err := netfile.ReadFile(in)
		if err != nil {
			t.Fatal(err)
		}
		for _, to := range []string{"toml", "csv", "json"} {
			code, out, errs := runCLI(t, context.Background(), "convert", in, "--to", to)
			if code != 0 {
				t.Fatalf("%s --to %s: exit %d: %s", in, to, code, errs)
			}
			back, err := netfile.ReadFile(writeFile(t, "out."+to, out))
			if err != nil {
				t.Fatalf("%s --to %s: the output does not read back: %v\n%s", in, to, err, out)
			}
			if len(back.Nodes) != len(src.Nodes) || len(back.Edges) != len(src.Edges) {
				t.Fatalf("%s --to %s: %d nodes, %d edges; want %d, %d", in, to, len(back.Nodes), len(back.Edges), len(src.Nodes), len(src.Edges))
			}
			for i := range src.Edges {
				if back.Edges[i].Length != src.Edges[i].Length || back.Edges[i].A != src.Edges[i].A {
					t.Errorf("%s --to %s: edge %d differs", in, to, i)
				}
			}
		}
	}
	if code, _, errs := runCLI(t, context.Background(), "convert", dot, "--to", "xml"); code != 2 || !strings.Contains(errs, "want toml, csv or json") {
		t.Errorf("--to xml: exit %d, %s", code, errs)
	}
}

// TestHelpText checks every command's --help: no Go type names in the flag
// list, no "(default [])" or "(default NaN)", and at most one default per
// flag.
func TestHelpText(t *testing.T) {
	for _, c := range commands() {
		if c.name == "demo" || c.name == "bench" {
			continue
		}
		_, _, errs := runCLI(t, context.Background(), c.name, "--help")
		for _, line := range strings.Split(errs, "\n") {
			if strings.Contains(line, "Slice") || strings.Contains(line, "Array") || strings.Contains(line, "(default [])") ||
				strings.Contains(line, "(default NaN)") || strings.Count(line, "(default") > 1 {
				t.Errorf("%s --help: %q", c.name, line)
			}
		}
	}
}
