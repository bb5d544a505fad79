package netfile

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// TestCSVEqualsTOML reads the sample junction in both formats: the CSV,
// which has node rows after and before the edges that use them, must give
// the same network as the TOML file less what CSV cannot say (the split, the
// name and description).
func TestCSVEqualsTOML(t *testing.T) {
	want, err := ReadFile(filepath.Join(testdata, "junction.toml"))
	if err != nil {
		t.Fatal(err)
	}
	for i := range want.Nodes {
		want.Nodes[i].Split = nil
	}
	want.Name, want.Description = "", ""
	got, err := ReadFile(filepath.Join(testdata, "junction.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if d := diffNetworks(got, want, 0); d != "" {
		t.Error(d)
	}
}

// TestCSVImplicitNodes checks that an edge list without node rows creates
// balance nodes in order of first appearance and the documented defaults.
func TestCSVImplicitNodes(t *testing.T) {
	net, err := ReadFile(filepath.Join(testdata, "plain.csv"))
	if err != nil {
		t.Fatal(err)
	}
	var ids []string
	for _, nd := range net.Nodes {
		ids = append(ids, nd.ID)
		if nd.Law != (vertex.Law{}) || nd.XY != nil {
			t.Errorf("node %q: law %+v xy %v, want a plain balance node", nd.ID, nd.Law, nd.XY)
		}
	}
	if got := strings.Join(ids, ","); got != "n0,n1,n2,n3" {
		t.Errorf("nodes %s, want n0,n1,n2,n3", got)
	}
	want := graphpde.Edge{ID: "b", From: 1, To: 2, Length: 2, A: 0.5, Rho: 1}
	if net.Edges[1] != want {
		t.Errorf("edge b: %+v, want %+v", net.Edges[1], want)
	}
}

const csvHead = "kind,id,from,to,length,diffusivity,capacity,weight,weight_from,weight_to,cells,fixed,leak,x,y\n"

// TestCSVErrors checks each error class of the CSV reader: one line naming
// the file, the line of the row and the edge or node.
func TestCSVErrors(t *testing.T) {
	for _, tc := range []struct {
		name string
		src  string
		line int
		obj  string
		msg  string
	}{
		{"empty", "# only a comment\n", 0, "", "empty file"},
		{"unknown column", "id,from,to,length,diffusivity,lenght\n", 1, "", `header: unknown column "lenght"`},
		{"missing column", "# c\nid,from,to,length\n", 2, "", `header: missing column "diffusivity"`},
		{"duplicate column", "id,from,to,length,diffusivity,id\n", 1, "", `column "id" appears twice`},
		{"node column without kind", "id,from,to,length,diffusivity,fixed\n", 1, "", "need a kind column"},
		{"field count", "id,from,to,length,diffusivity\na,b,c,1,1\nd,b,c,1\n", 3, "", "row has 4 fields but the header has 5"},
		{"bad quote", "id,from,to,length,diffusivity\na,b,c,1,1\nd,b\"x,c,1,1\n", 3, "", "bare \""},
		{"not a number", "id,from,to,length,diffusivity\na,b,c,1,1\ne,b,c,abc,1\n", 3, `edge "e"`, `length = "abc" is not a number`},
		{"negative length", "id,from,to,length,diffusivity\ne,b,c,-1,1\n", 2, `edge "e"`, "length = -1 must be a finite number > 0"},
		{"nan diffusivity", "id,from,to,length,diffusivity\ne,b,c,1,NaN\n", 2, `edge "e"`, "diffusivity = NaN must be a finite number > 0"},
		{"overflow", "id,from,to,length,diffusivity\ne,b,c,1e999,1\n", 2, `edge "e"`, "length = +Inf must be a finite number > 0"},
		{"missing length", "id,from,to,length,diffusivity\ne,b,c,,1\n", 2, `edge "e"`, "missing length"},
		{"missing from", "id,from,to,length,diffusivity\ne,,c,1,1\n", 2, `edge "e"`, "missing from"},
		{"missing id", "id,from,to,length,diffusivity\n,b,c,1,1\n", 2, "", "edge row without an id"},
		{"bad id", "id,from,to,length,diffusivity\ne f,b,c,1,1\n", 2, "", `edge id "e f" must be letters`},
		{"bad node id", "id,from,to,length,diffusivity\ne,b,c/d,1,1\n", 2, `edge "e"`, `to: node id "c/d" must be letters`},
		{"duplicate edge", "id,from,to,length,diffusivity\n\ne,b,c,1,1\n# gap\ne,c,b,1,1\n", 5, `edge "e"`, "duplicate id (first used at line 3)"},
		{"zero capacity", csvHead + "edge,e,a,b,1,1,0,,,,,,,,\n", 2, `edge "e"`, "capacity = 0 must be a finite number > 0"},
		{"zero weight", csvHead + "edge,e,a,b,1,1,,0,,,,,,,\n", 2, `edge "e"`, "weight = 0 must be a finite number > 0"},
		{"weight twice", csvHead + "edge,e,a,b,1,1,,1,,2,,,,,\n", 2, `edge "e"`, "give weight (both ends) or weight_from and weight_to, not both"},
		{"zero cells", csvHead + "edge,e,a,b,1,1,,,,,0,,,,\n", 2, `edge "e"`, "cells = 0 must be an integer ≥ 1"},
		{"bad cells", csvHead + "edge,e,a,b,1,1,,,,,3.5,,,,\n", 2, `edge "e"`, `cells = "3.5" is not an integer`},
		{"huge cells", csvHead + "edge,e,a,b,1,1,,,,,1000000000,,,,\n", 2, `edge "e"`, "is over the limit of 100000000 cells on one edge"},
		{"float cells", csvHead + "edge,e,a,b,1,1,,,,,1e9,,,,\n", 2, `edge "e"`, `cells = "1e9" is not an integer`},
		{"total cells", csvHead + "edge,e1,a,b,1,1,,,,,100000000,,,,\nedge,e2,a,b,1,1,,,,,100000000,,,,\nedge,e3,a,b,1,1,,,,,100000000,,,,\n", 4, `edge "e3"`, "over the 16 GiB limit"},
		{"bad kind", csvHead + "pipe,e,a,b,1,1,,,,,,,,,\n", 2, "", `kind "pipe" must be edge or node`},
		{"fixed on edge row", csvHead + "edge,e,a,b,1,1,,,,,,1,,,\n", 2, `edge "e"`, "column fixed is not used on edge rows"},
		{"from on node row", csvHead + "node,a,b,,,,,,,,,,,,\n", 2, `node "a"`, "column from is not used on node rows"},
		{"fixed and leak", csvHead + "node,a,,,,,,,,,,1,0.5,,\n", 2, `node "a"`, "leak is not allowed on a fixed node"},
		{"negative leak", csvHead + "node,a,,,,,,,,,,,-1,,\n", 2, `node "a"`, "leak = -1 must be a finite number ≥ 0"},
		{"negative node capacity", csvHead + "node,a,,,,,-2,,,,,,,,\n", 2, `node "a"`, "capacity = -2 must be a finite number ≥ 0"},
		{"x without y", csvHead + "node,a,,,,,,,,,,,,1,\n", 2, `node "a"`, "give both x and y"},
		{"duplicate node row", csvHead + "node,a,,,,,,,,,,1,,,\nedge,e,a,b,1,1,,,,,,,,,\nnode,a,,,,,,,,,,2,,,\n", 4, `node "a"`, "duplicate node row (first at line 2)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			net, err := ReadCSV(strings.NewReader(tc.src), "net.csv")
			if err == nil {
				t.Fatalf("no error; read %d nodes, %d edges", len(net.Nodes), len(net.Edges))
			}
			var fe *Error
			if !errors.As(err, &fe) {
				t.Fatalf("error %T is not *Error: %v", err, err)
			}
			msg := err.Error()
			t.Log(msg)
			if strings.Contains(msg, "\n") {
				t.Errorf("message spans lines: %q", msg)
			}
			if fe.Line != tc.line || fe.Object != tc.obj {
				t.Errorf("got line %d object %q, want line %d object %q (%s)", fe.Line, fe.Object, tc.line, tc.obj, msg)
			}
			prefix := "net.csv:"
			if tc.line > 0 {
				prefix += fmt.Sprintf("%d:", tc.line)
			}
			if tc.obj != "" {
				prefix += " " + tc.obj + ":"
			}
			if !strings.HasPrefix(msg, prefix) || !strings.Contains(msg, tc.msg) {
				t.Errorf("message %q\nwant prefix %q and fragment %q", msg, prefix, tc.msg)
			}
		})
	}
}

// TestCSVNodeRowForms checks node rows that define a node no edge uses, that
// come after the edges of their node, and spacing and letter case that the
// reader tolerates.
func TestCSVNodeRowForms(t *testing.T) {
	src := "\uFEFFKind, ID ,from,to,length,diffusivity,fixed,leak,inject,capacity,x,y\n" +
		"edge, e ,a,b,1,1,,,,,,\n" +
		"NODE,b,,,,,,0.5,2,3,,\n" +
		"node,lonely,,,,,7,,,,1,2\n"
	net, err := ReadCSV(strings.NewReader(src), "n.csv")
	if err != nil {
		t.Fatal(err)
	}
	want := []graphpde.Node{
		{ID: "a"},
		{ID: "b", Law: vertex.Law{Kind: vertex.Balance, Leak: 0.5, Inject: 2, Capacity: 3}},
		{ID: "lonely", XY: &[2]float64{1, 2}, Law: vertex.Law{Kind: vertex.Fixed, Value: 7}},
	}
	wantNet := &graphpde.Network{Nodes: want, Edges: []graphpde.Edge{{ID: "e", From: 0, To: 1, Length: 1, A: 1, Rho: 1}}}
	if d := diffNetworks(net, wantNet, 0); d != "" {
		t.Error(d)
	}
}

// TestCSVLarge reads a generated chain of 10^4 edges (the 10^6 case is a
// benchmark) and checks its size and one edge in the middle.
func TestCSVLarge(t *testing.T) {
	const n = 10_000
	net, err := ReadCSV(chainCSV(n), "chain.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(net.Edges) != n || len(net.Nodes) != n+1 {
		t.Fatalf("%d edges, %d nodes; want %d, %d", len(net.Edges), len(net.Nodes), n, n+1)
	}
	e := net.Edges[n/2]
	if e.ID != fmt.Sprint("e", n/2) || e.From != n/2 || e.To != n/2+1 || e.Cells != 8 {
		t.Errorf("edge %d: %+v", n/2, e)
	}
	if net.Nodes[0].Law.Kind != vertex.Fixed || net.Nodes[n].Law.Leak != 1 {
		t.Errorf("end nodes %+v, %+v", net.Nodes[0].Law, net.Nodes[n].Law)
	}
	// From a reader of known size ReadCSV presizes its slices after
	// presizeAfter rows; the network must be the same.
	data, err := io.ReadAll(chainCSV(n))
	if err != nil {
		t.Fatal(err)
	}
	sized, err := ReadCSV(bytes.NewReader(data), "chain.csv")
	if err != nil {
		t.Fatal(err)
	}
	if d := diffNetworks(sized, net, 0); d != "" {
		t.Errorf("presized read differs: %s", d)
	}
	// The early rows of the chain are shorter (fewer digits), so the
	// extrapolation overshoots, by about 15% here; doubling would reach 2n.
	if c := cap(sized.Edges); c < n || c > n+n/4 {
		t.Errorf("presized capacity %d for %d edges, want within 1/4 above", c, n)
	}
}

// chainCSV generates a chain of n edges e0..e{n-1} between nodes v0..vn,
// with v0 fixed and vn leaky, without holding the text in memory.
func chainCSV(n int) io.Reader {
	pr, pw := io.Pipe()
	go func() {
		w := &strings.Builder{}
		w.WriteString("kind,id,from,to,length,diffusivity,drift,cells,fixed,leak\nnode,v0,,,,,,,1,\n")
		for i := range n {
			fmt.Fprintf(w, "edge,e%d,v%d,v%d,0.5,1.25,0.1,8,,\n", i, i, i+1)
			if w.Len() > 1<<16 {
				if _, err := io.WriteString(pw, w.String()); err != nil {
					return
				}
				w.Reset()
			}
		}
		fmt.Fprintf(w, "node,v%d,,,,,,,,1\n", n)
		io.WriteString(pw, w.String())
		pw.Close()
	}()
	return pr
}

// TestReadCSVFileErrors checks that a missing CSV file is an *Error.
func TestReadCSVFileErrors(t *testing.T) {
	_, err := ReadFile(filepath.Join(t.TempDir(), "no.csv"))
	if !errors.Is(err, os.ErrNotExist) {
		t.Errorf("got %v", err)
	}
}

// TestReadCSVNoRows: a header with no rows (or only comments) is an error
// naming the file, not an empty network that every command would report as
// "0 nodes, 0 edges; converged".
func TestReadCSVNoRows(t *testing.T) {
	for _, src := range []string{"id,from,to,length,diffusivity\n", "id,from,to,length,diffusivity\n# none\n"} {
		net, err := ReadCSV(strings.NewReader(src), "e.csv")
		if err == nil || !strings.HasPrefix(err.Error(), "e.csv: ") {
			t.Errorf("%q: got %v, %v; want an error naming the file", src, net, err)
		}
	}
}
