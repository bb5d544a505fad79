package main

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"math"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
	"github.com/ramify-dev/ramify/graphpde/netfile"
)

// secondsLine is the one line of solve --json that differs between two
// runs of the same solve (its wall time).
var secondsLine = regexp.MustCompile(`(?m)^  "seconds": [^\n]*$`)

// TestSolveJSONStream: solve --json written in one pass (writeSolveJSON)
// is byte for byte what encoding/json's indenting encoder writes
// (writeJSON) for every example network, with probes, and with the
// solve time, the one thing that differs between runs, blanked out.
func TestSolveJSONStream(t *testing.T) {
	files, err := filepath.Glob("../../examples/*.*")
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, f := range files {
		if filepath.Ext(f) == ".go" {
			continue
		}
		t.Run(filepath.Base(f), func(t *testing.T) {
			var outs [2]string
			var codes [2]int
			for i, stream := range []bool{true, false} {
				streamSolveJSON = stream
				codes[i], outs[i], _ = runCLI(t, context.Background(), "solve", "--json", f)
				streamSolveJSON = true
			}
			if codes[0] != codes[1] {
				t.Fatalf("exit %d streamed, %d encoded", codes[0], codes[1])
			}
			if codes[0] != 0 {
				return
			}
			n++
			a := secondsLine.ReplaceAllString(outs[0], `  "seconds": 0,`)
			b := secondsLine.ReplaceAllString(outs[1], `  "seconds": 0,`)
			if a != b {
				t.Fatalf("streamed JSON differs from encoded:\n%s\n----\n%s", a, b)
			}
		})
	}
	if n < 5 {
		t.Fatalf("only %d examples solved", n)
	}
}

// TestSolveJSONStreamCases: what the examples do not show (numbers that
// are null, strings that encoding/json escapes, empty arrays, the
// nonlinear and control parts) comes out as writeJSON writes it.
func TestSolveJSONStreamCases(t *testing.T) {
	it, r, u := 3, num(1e-12), true
	scale := 0.25
	base := func() solveOut {
		return solveOut{
			Network: "wire <a> & \"b\"\u2028é", Status: "converged", Method: "mixed",
			Nodes: []nodeOut{
				{ID: "a", Kind: "fixed", U: 1, Residual: 0},
				{ID: "b.2-x_y", Kind: "balance", U: num(math.NaN()), Residual: num(math.Inf(1))},
				{ID: "c", Kind: "balance", U: 1e-7, Residual: -3.5e21},
			},
			Edges: []edgeOut{
				{ID: "e1", From: "a", To: "b.2-x_y", Flux: [2]num{0.5, num(math.Inf(-1))}},
				{ID: "é<&>", From: "b", To: "c", Flux: [2]num{-0, 123456789.125}},
			},
			Probes: []probeOut{{At: "e1@0.5", U: 0.75}},
			Summary: summaryOut{
				Fixed: []fixedSupply{{ID: "a", Kind: "fixed", U: 1, Drawn: 0.5}},
				Extremes: []edgeExtreme{
					{ID: "e1", Max: 1, AtMax: 0, Min: num(math.NaN()), AtMin: 0.5, Exact: true},
					{ID: "e<2>", Max: 2e-9, AtMax: 1, Min: -1, AtMin: 0, Flat: true},
				},
				Highest: placeOut{At: "a", U: 1},
			},
			Notes: []string{"a note <with> markup"},
		}
	}
	cases := map[string]func(o *solveOut){
		"plain":       func(o *solveOut) {},
		"no edges":    func(o *solveOut) { o.Edges = []edgeOut{} },
		"nil edges":   func(o *solveOut) { o.Edges = nil },
		"no nodes":    func(o *solveOut) { o.Nodes = nil },
		"neither":     func(o *solveOut) { o.Nodes, o.Edges = nil, nil },
		"no extremes": func(o *solveOut) { o.Summary.Extremes = nil },
		"policy": func(o *solveOut) {
			o.controlOut = controlOut{Objective: "max", Policy: &policyOut{Edges: []policyEdgeOut{}}}
		},
		"nonlinear": func(o *solveOut) {
			o.nonlinearOut = nonlinearOut{Iterations: &it, Residual: &r, History: []num{1, num(math.NaN())}, Unique: &u, Notes: []string{"hidden"}}
		},
		"controls": func(o *solveOut) {
			o.controlOut = controlOut{Objective: "min", PolicySwitches: []int{2, 0}, ViscosityScale: &scale}
			o.Caution = "no substitute"
		},
	}
	for name, edit := range cases {
		t.Run(name, func(t *testing.T) {
			o := base()
			edit(&o)
			var got, want bytes.Buffer
			if err := writeSolveJSON(&got, o); err != nil {
				t.Fatal(err)
			}
			if err := writeJSON(&want, o); err != nil {
				t.Fatal(err)
			}
			if got.String() != want.String() {
				t.Fatalf("streamed:\n%s\nencoded:\n%s", got.String(), want.String())
			}
		})
	}
}

// BenchmarkSolveJSON writes the solve --json of a 300×300 wire mesh in
// one pass (stream) and through encoding/json's indenting encoder
// (encoder, the reference), in the same run.
func BenchmarkSolveJSON(b *testing.B) {
	net := gen.SquareMesh(300, 300)
	sol, nl, err := solveField(context.Background(), net, graphpde.MethodAuto, 0)
	if err != nil {
		b.Fatal(err)
	}
	out := solveJSON(net, sol, nil, nil)
	out.nonlinearOut = nonlinearJSON(nl)
	for _, c := range []struct {
		name  string
		write func(io.Writer, solveOut) error
	}{
		{"stream", writeSolveJSON},
		{"encoder", func(w io.Writer, o solveOut) error { return writeJSON(w, o) }},
	} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if err := c.write(io.Discard, out); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// TestSolveJSONNonlinearNotes: the notes of a nonlinear solve (here that
// Bratu's law is not monotone in u, so other solutions may exist) reach the
// JSON's "notes"; they were dropped when the nonlinear part carried a
// "notes" key of its own beside the solve's.
func TestSolveJSONNonlinearNotes(t *testing.T) {
	file := writeFile(t, "bratu.toml", `[parameters]
lambda = 1.0
[[node]]
id = "l"
fixed = 0
[[node]]
id = "r"
fixed = 0
[[edge]]
id = "slab"
from = "l"
to = "r"
length = 1
equation = "uxx + lambda*exp(u)"
weight = 1
cells = 100
`)
	code, out, errs := runCLI(t, context.Background(), "solve", file, "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct{ Notes []string }
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.Join(got.Notes, " "), "not monotone") {
		t.Errorf("notes %q, want the note that the law is not monotone in u", got.Notes)
	}
}

// BenchmarkSolveJSONWhole runs the whole `ramify solve FILE --json` on the
// 300×300 mesh (the file written by netfile.Write, about 20 MB) and, in
// turn, the solve alone on the network already read, and reports the
// ratio of the two minima over the iterations (whole/solve; the issue's
// goal is ≤ 2). Run with -benchtime 3x or more.
func BenchmarkSolveJSONWhole(b *testing.B) {
	file := filepath.Join(b.TempDir(), "mesh.toml")
	if err := writeMeshFile(file, 300); err != nil {
		b.Fatal(err)
	}
	net, err := load(context.Background(), file)
	if err != nil {
		b.Fatal(err)
	}
	whole, solve := math.Inf(1), math.Inf(1)
	for b.Loop() {
		t0 := time.Now()
		if code := run(context.Background(), []string{"solve", file, "--json"}, io.Discard, io.Discard); code != 0 {
			b.Fatalf("exit %d", code)
		}
		whole = min(whole, time.Since(t0).Seconds())
		t0 = time.Now()
		if _, _, err := solveField(context.Background(), net, graphpde.MethodAuto, 0); err != nil {
			b.Fatal(err)
		}
		solve = min(solve, time.Since(t0).Seconds())
	}
	b.ReportMetric(whole/solve, "whole/solve")
	b.ReportMetric(whole, "whole-s")
	b.ReportMetric(solve, "solve-s")
}

// writeMeshFile writes the n×n square mesh to path as a network file
// (netfile.Write; 300×300 is about 20 MB).
func writeMeshFile(path string, n int) error {
	return writeNetFile(path, gen.SquareMesh(n, n), netfile.Write)
}
