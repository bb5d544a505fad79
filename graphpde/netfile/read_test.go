package netfile

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/BurntSushi/toml"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

const testdata = "../../testdata/netfile"

// roundoff bounds the error of one normalisation p/Σp in float64: a few ulps.
const roundoff = 1e-15

// twoNodes starts a file with nodes "a" (line 2) and "b" (line 5); cases
// append an edge from line 7 on.
const twoNodes = `[[node]]
id = "a"
fixed = 0
[[node]]
id = "b"
fixed = 1
`

// TestReadErrors checks every class of error a file can hold: each must be
// one *Error whose one-line message names the file, the line of the
// offending key (or of the table header when a key is missing), the object
// and the reason.
func TestReadErrors(t *testing.T) {
	for _, tc := range []struct {
		name string
		src  string
		line int
		obj  string // printed object, "" for the whole file
		msg  string // a fragment of the message
	}{
		{"syntax", "[[node]\nid = \"a\"\n", 1, "", "invalid TOML"},
		{"syntax later line", twoNodes + "[[edge]]\nid = \"e\"\nlength = 1 2\n", 9, "", "invalid TOML"},
		{"duplicate key is TOML's", "[[node]]\nid = \"a\"\nid = \"b\"\n", 3, "", "invalid TOML"},
		{"unknown node key", "[[node]]\nid = \"hub\"\nlek = 0.5\n", 3, `node "hub"`, `unknown key "lek" (did you mean "leak"?)`},
		{"after byte-order mark", "\uFEFF[[node]]\nid = \"hub\"\nlek = 0.5\n", 3, `node "hub"`, `unknown key "lek"`},
		{"CRLF line ends", "[[node]]\r\nid = \"hub\"\r\n\r\nlek = 0.5\r\n", 4, `node "hub"`, `unknown key "lek"`},
		{"unknown edge key", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\ndrfit = 2\n", 13, `edge "e"`, `unknown key "drfit"`},
		{"unknown table", "[network]\nname = \"x\"\n\n[solver]\nsteps = 3\n", 4, "", "unknown table [solver]"},
		{"unknown top key", "# comment\nlength = 1\n", 2, "", `unknown key "length" at the top level`},
		{"unknown network key", "[network]\nname = \"x\"\ntitle = \"y\"\n", 3, "[network]", `unknown key "title"`},
		{"node key in defaults", "[defaults]\ncells = 4\nleak = 1\n", 3, "[defaults]", `unknown key "leak"`},
		{"id in defaults", "[defaults]\nid = \"x\"\n", 2, "[defaults]", "edge values other than id"},
		{"duplicate node", twoNodes + "[[node]]\nid = \"a\"\n", 8, `node "a"`, "duplicate id (first used at line 2)"},
		{"duplicate edge", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n",
			14, `edge "e"`, "duplicate id (first used at line 8)"},
		{"unknown from node", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"hbu\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n", 9, `edge "e"`, `from: no node "hbu"`},
		{"unknown to node", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"c\"\nlength = 1\ndiffusivity = 1\n", 10, `edge "e"`, `to: no node "c"`},
		{"missing from", twoNodes + "\n[[edge]]\nid = \"e\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n", 8, `edge "e"`, `missing key "from"`},
		{"negative length", twoNodes + "[[edge]]\nid = \"arm1\"\nfrom = \"a\"\nto = \"b\"\nlength = -1\ndiffusivity = 1\n", 11, `edge "arm1"`, "length = -1 must be a finite number > 0"},
		// A length whose element would overflow (it used to reach the node
		// system as "singular at node …, pivot +Inf" with no file or edge).
		{"subnormal length", twoNodes + "[[edge]]\nid = \"arm1\"\nfrom = \"a\"\nto = \"b\"\nlength = 5e-324\ndiffusivity = 1\n", 11, `edge "arm1"`, "length = 5e-324 is out of range"},
		{"conductance overflow", twoNodes + "[[edge]]\nid = \"arm1\"\nfrom = \"a\"\nto = \"b\"\nlength = 1e-200\ndiffusivity = 1e100\n", 12, `edge "arm1"`, "diffusivity = 1e+100 with length 1e-200 gives a/L = 1e+300, out of range"},
		{"missing length", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\ndiffusivity = 1\n", 7, `edge "e"`, `missing key "length"`},
		{"missing diffusivity", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\n", 7, `edge "e"`, `missing key "diffusivity" (give it here or in [defaults])`},
		{"zero diffusivity", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 0\n", 12, `edge "e"`, "diffusivity = 0 must be a finite number > 0"},
		{"zero capacity", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\ncapacity = 0\n", 13, `edge "e"`, "capacity = 0 must be a finite number > 0"},
		{"negative decay", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\ndecay = -0.1\n", 13, `edge "e"`, "decay = -0.1 must be a finite number ≥ 0"},
		{"nan length", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = nan\ndiffusivity = 1\n", 11, `edge "e"`, "length = NaN must be a finite number > 0"},
		{"inf drift", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\ndrift = inf\n", 13, `edge "e"`, "drift = +Inf must be a finite number"},
		{"-inf source", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\nsource = -inf\n", 13, `edge "e"`, "source = -Inf must be a finite number"},
		{"string length", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = \"1\"\ndiffusivity = 1\n", 11, `edge "e"`, "length must be a number, not a string"},
		{"zero weight", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\nweight = 0\n", 13, `edge "e"`, "weight = 0 must be a finite number > 0"},
		{"zero in weights", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\nweights = [1, 0]\n", 13, `edge "e"`, "weights = [1, 0]: both values must be finite numbers > 0"},
		{"short weights", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\nweights = [1]\n", 13, `edge "e"`, "weights must be an array of two numbers [from, to], but has 1 value"},
		{"weight and weights", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nweight = 2\nlength = 1\ndiffusivity = 1\nweights = [1, 2]\n", 14, `edge "e"`, "not both"},
		{"zero cells", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\ncells = 0\n", 13, `edge "e"`, "cells = 0 must be an integer ≥ 1"},
		{"fractional cells", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\ncells = 1.5\n", 13, `edge "e"`, "cells must be an integer, not a float"},
		{"huge cells", twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\ncells = 200_000_000\n", 13, `edge "e"`, "over the limit of 100000000 cells on one edge"},
		{"total cells", "[defaults]\nlength = 1\ndiffusivity = 1\ncells = 100_000_000\n" + twoNodes +
			"[[edge]]\nid = \"e1\"\nfrom = \"a\"\nto = \"b\"\n[[edge]]\nid = \"e2\"\nfrom = \"a\"\nto = \"b\"\n[[edge]]\nid = \"e3\"\nfrom = \"a\"\nto = \"b\"\n",
			4, `edge "e3"`, "over the 16 GiB limit"},
		{"defaults bad", "[defaults]\ndiffusivity = 1\nlength = -2\n", 3, "[defaults]", "length = -2 must be a finite number > 0"},
		{"node id type", "[[node]]\nid = 3\n", 2, "node #1", "id must be a string, not an integer"},
		{"node id chars", "[[node]]\nid = \"a b\"\n", 2, "node #1", `id "a b" must be letters, digits`},
		{"node id missing", "[[node]]\nid = \"a\"\n[[node]]\nfixed = 1\n", 3, "node #2", `missing key "id"`},
		{"negative leak", "[[node]]\nid = \"v\"\nleak = -1\n", 3, `node "v"`, "leak = -1 must be a finite number ≥ 0"},
		{"negative node capacity", "[[node]]\nid = \"v\"\ncapacity = -1\n", 3, `node "v"`, "capacity = -1 must be a finite number ≥ 0"},
		{"nan inject", "[[node]]\nid = \"v\"\ninject = nan\n", 3, `node "v"`, "inject = NaN must be a finite number"},
		{"inf fixed", "[[node]]\nid = \"v\"\nfixed = -inf\n", 3, `node "v"`, "fixed = -Inf must be a finite number"},
		{"fixed with leak", "[[node]]\nid = \"v\"\nfixed = 1\nleak = 0.5\n", 4, `node "v"`, "leak is not allowed on a fixed node"},
		{"fixed with split", twoNodes + "[[node]]\nid = \"c\"\nfixed = 2\nsplit = { e = 1 }\n", 10, `node "c"`, "split is not allowed on a fixed node"},
		{"xy length", "[[node]]\nid = \"v\"\nxy = [1, 2, 3]\n", 3, `node "v"`, "xy must be an array of two numbers [x, y], but has 3 values"},
		{"xy inf", "[[node]]\nid = \"v\"\nxy = [1, inf]\n", 3, `node "v"`, "both values must be finite numbers"},
		{"node table not array", "[node]\nid = \"v\"\n", 1, "", "node must be an array of tables: write [[node]]"},
		{"network name type", "[network]\nname = 5\n", 2, "[network]", "name must be a string, not an integer"},
		{"split unknown edge", splitNet("arm1 = 1, arm9 = 1"), 2, `node "hub"`, `split: no edge "arm9"`},
		{"split far edge", splitNet("arm1 = 1, far = 1"), 2, `node "hub"`, `split: edge "far" does not touch this node`},
		{"split negative", splitNet("arm1 = 1, arm2 = -1"), 2, `node "hub"`, `split "arm2" = -1 must be a finite number ≥ 0`},
		{"split zero sum", splitNet("arm1 = 0, arm2 = 0"), 2, `node "hub"`, "split: the values sum to 0"},
		{"split not table", "[[node]]\nid = \"v\"\nsplit = 1\n", 3, `node "v"`, "split must be a table"},
		{"split value type", splitNet(`arm1 = "half"`), 2, `node "hub"`, `split: "arm1" must be a number, not a string`},
		{"split subtable line", "[[node]]\nid = \"hub\"\n[node.split]\narm1 = 1\narm7 = 1\n" + splitEdges, 5, `node "hub"`, `split: no edge "arm7"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			net, err := Read(strings.NewReader(tc.src), "net.toml")
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
			if fe.File != "net.toml" || fe.Line != tc.line || fe.Object != tc.obj {
				t.Errorf("got file %q line %d object %q, want net.toml line %d object %q (%s)", fe.File, fe.Line, fe.Object, tc.line, tc.obj, msg)
			}
			prefix := fmt.Sprintf("net.toml:%d: ", tc.line)
			if tc.obj != "" {
				prefix += tc.obj + ": "
			}
			if !strings.HasPrefix(msg, prefix) || !strings.Contains(msg, tc.msg) {
				t.Errorf("message %q\nwant prefix %q and fragment %q", msg, prefix, tc.msg)
			}
		})
	}
}

// splitEdges are three edges for the split cases: arm1 and arm2 touch hub,
// far does not.
const splitEdges = `[[node]]
id = "t1"
[[node]]
id = "t2"
[[edge]]
id = "arm1"
from = "hub"
to = "t1"
length = 1
diffusivity = 1
[[edge]]
id = "arm2"
from = "t2"
to = "hub"
length = 1
diffusivity = 1
[[edge]]
id = "far"
from = "t1"
to = "t2"
length = 1
diffusivity = 1
`

// splitNet puts the given split table on hub, at line 2.
func splitNet(split string) string {
	return "[[node]]\nsplit = { " + split + " }\nid = \"hub\"\n" + splitEdges
}

// TestReadErrorCauses checks that value errors wrap a *graphpde.ModelError
// naming the field, syntax errors the library's toml.ParseError.
func TestReadErrorCauses(t *testing.T) {
	_, err := Read(strings.NewReader(twoNodes+"[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = -1\ndiffusivity = 1\n"), "x.toml")
	var me *graphpde.ModelError
	if !errors.As(err, &me) || me.Object != "edge" || me.ID != "e" || me.Field != "length" {
		t.Errorf("length error: cause %#v, want ModelError for edge e, field length (%v)", me, err)
	}
	_, err = Read(strings.NewReader("[[node]\n"), "x.toml")
	var pe toml.ParseError
	if !errors.As(err, &pe) {
		t.Errorf("syntax error does not wrap toml.ParseError: %v", err)
	}
}

// TestReadJunction reads the sample file and checks every value it sets,
// including defaults, overrides and the normalised split.
func TestReadJunction(t *testing.T) {
	net, err := ReadFile(filepath.Join(testdata, "junction.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if net.Name != "solder junction" || !strings.Contains(net.Description, "# and = inside") {
		t.Errorf("network %q / %q", net.Name, net.Description)
	}
	wantNodes := []graphpde.Node{
		{ID: "hub", XY: &[2]float64{0, 0}, Law: vertex.Law{Kind: vertex.Balance, Capacity: 0.5},
			Split: map[string]float64{"arm1": 0.25, "arm2": 0.25, "arm3": 0.5}},
		{ID: "warm", XY: &[2]float64{1, 0}, Law: vertex.Law{Kind: vertex.Fixed, Value: 1}},
		{ID: "cold", XY: &[2]float64{-0.5, 0.866}, Law: vertex.Law{Kind: vertex.Fixed, Value: 0}},
		{ID: "air", XY: &[2]float64{-0.5, -0.866}, Law: vertex.Law{Kind: vertex.Balance, Leak: 0.25, Inject: 0.1}},
	}
	wantEdges := []graphpde.Edge{
		{ID: "arm1", From: 0, To: 1, Length: 1, A: 2, Rho: 1, Weight: [2]float64{2, 2}, Cells: 32},
		{ID: "arm2", From: 0, To: 2, Length: 1.5, A: 1, B: -0.3, C: 0.05, Rho: 1, Cells: 64},
		{ID: "arm3", From: 0, To: 3, Length: 0.75, A: 0.5, F: 0.2, Rho: 2.5, Weight: [2]float64{0.5, 0.25}, Cells: 32},
	}
	if d := diffNetworks(net, &graphpde.Network{Nodes: wantNodes, Edges: wantEdges}, 0); d != "" {
		t.Error(d)
	}
}

// TestReadDefaults checks that [defaults] fill every edge key an edge does
// not give, that an edge's own value wins, and that weight and weights
// override each other between [defaults] and the edge.
func TestReadDefaults(t *testing.T) {
	src := `[defaults]
length = 2
diffusivity = 3
drift = 0.5
decay = 0.25
source = 1
capacity = 4
weights = [5, 6]
cells = 7

[[node]]
id = "a"
[[node]]
id = "b"

[[edge]]
id = "inherits"
from = "a"
to = "b"

[[edge]]
id = "overrides"
from = "b"
to = "a"
length = 1
diffusivity = 1
drift = 0
decay = 0
source = 0
capacity = 1
weight = 9
cells = 1
`
	net, err := Read(strings.NewReader(src), "d.toml")
	if err != nil {
		t.Fatal(err)
	}
	want := []graphpde.Edge{
		{ID: "inherits", From: 0, To: 1, Length: 2, A: 3, B: 0.5, C: 0.25, F: 1, Rho: 4, Weight: [2]float64{5, 6}, Cells: 7},
		{ID: "overrides", From: 1, To: 0, Length: 1, A: 1, Rho: 1, Weight: [2]float64{9, 9}, Cells: 1},
	}
	for i, w := range want {
		if g := net.Edges[i]; g != w {
			t.Errorf("edge %d:\n got %+v\nwant %+v", i, g, w)
		}
	}
}

// TestReadForms checks TOML forms other than the sample's: dotted keys,
// inline arrays of tables, an empty file, nodes without edges.
func TestReadForms(t *testing.T) {
	for _, tc := range []struct {
		name         string
		src          string
		nodes, edges int
	}{
		// No nodes is an error (nothing to solve; it used to give
		// "0 nodes, 0 edges; converged"): nodes = −1 wants one.
		{"empty", "", -1, 0},
		{"comments only", "# nothing\n\n", -1, 0},
		{"network table only", "[network]\nname = \"x\"\n", -1, 0},
		{"nodes only", "[[node]]\nid = \"a\"\n[[node]]\nid = \"b\"\nfixed = 1\n", 2, 0},
		{"inline array of tables", "node = [{id = \"a\"}, {id = \"b\", leak = 1}]\nedge = [\n  {id = \"e\", from = \"a\", to = \"b\", length = 1, diffusivity = 1},\n]\n", 2, 1},
		{"dotted split", "[[node]]\nid = \"a\"\nsplit.e = 2\n[[node]]\nid = \"b\"\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n", 2, 1},
		{"ids with dots", "[[node]]\nid = \"a.1\"\nsplit = { \"e.1\" = 1 }\n[[node]]\nid = \"b-2_x\"\n[[edge]]\nid = \"e.1\"\nfrom = \"a.1\"\nto = \"b-2_x\"\nlength = 1\ndiffusivity = 1\n", 2, 1},
		{"self loop split", "[[node]]\nid = \"a\"\nsplit = { loop = 1 }\n[[edge]]\nid = \"loop\"\nfrom = \"a\"\nto = \"a\"\nlength = 1\ndiffusivity = 1\n", 1, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			net, err := Read(strings.NewReader(tc.src), "f.toml")
			if tc.nodes < 0 {
				if err == nil || !strings.HasPrefix(err.Error(), "f.toml: ") {
					t.Errorf("got %v, want an error naming the file", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if len(net.Nodes) != tc.nodes || len(net.Edges) != tc.edges {
				t.Errorf("got %d nodes, %d edges; want %d, %d", len(net.Nodes), len(net.Edges), tc.nodes, tc.edges)
			}
		})
	}
}

// TestErrorForm checks the one-line format of Error for each combination of
// known file, line and object.
func TestErrorForm(t *testing.T) {
	for _, tc := range []struct {
		e    Error
		want string
	}{
		{Error{File: "net.toml", Line: 23, Object: `edge "arm1"`, Msg: "length = -1 must be a finite number > 0"}, `net.toml:23: edge "arm1": length = -1 must be a finite number > 0`},
		{Error{File: "net.toml", Msg: "cannot open"}, "net.toml: cannot open"},
		{Error{Line: 4, Object: "[defaults]", Msg: "m"}, "line 4: [defaults]: m"},
		{Error{Object: `node "a"`, Err: errors.New("two\nlines")}, `node "a": two lines`},
	} {
		if got := tc.e.Error(); got != tc.want {
			t.Errorf("got %q, want %q", got, tc.want)
		}
	}
}

// TestReadFile checks dispatch on the extension and the errors for a missing
// file and an unknown extension.
func TestReadFile(t *testing.T) {
	toml, err := ReadFile(filepath.Join(testdata, "junction.toml"))
	if err != nil {
		t.Fatal(err)
	}
	csv, err := ReadFile(filepath.Join(testdata, "junction.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if len(toml.Edges) != len(csv.Edges) {
		t.Errorf("toml has %d edges, csv %d", len(toml.Edges), len(csv.Edges))
	}
	missing := filepath.Join(t.TempDir(), "none.toml")
	_, err = ReadFile(missing)
	var fe *Error
	if !errors.As(err, &fe) || fe.File != missing || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: %v", err)
	}
	if _, err := ReadFile("net.xlsx"); err == nil || !strings.Contains(err.Error(), `unknown file type ".xlsx"`) {
		t.Errorf("xlsx: %v", err)
	}
}

// diffNetworks describes the first difference between two networks, or
// returns "". Split probabilities may differ by tol (normalisation roundoff).
func diffNetworks(got, want *graphpde.Network, tol float64) string {
	if got.Name != want.Name || got.Description != want.Description {
		if want.Name != "" || want.Description != "" {
			return fmt.Sprintf("network %q/%q, want %q/%q", got.Name, got.Description, want.Name, want.Description)
		}
	}
	if got.Objective != want.Objective {
		return fmt.Sprintf("objective %v, want %v", got.Objective, want.Objective)
	}
	if len(got.Nodes) != len(want.Nodes) || len(got.Edges) != len(want.Edges) {
		return fmt.Sprintf("%d nodes %d edges, want %d, %d", len(got.Nodes), len(got.Edges), len(want.Nodes), len(want.Edges))
	}
	for i := range want.Nodes {
		g, w := got.Nodes[i], want.Nodes[i]
		if g.ID != w.ID || g.Law != w.Law || (g.XY == nil) != (w.XY == nil) || (g.XY != nil && *g.XY != *w.XY) {
			return fmt.Sprintf("node %d: got %+v (xy %v), want %+v (xy %v)", i, g, g.XY, w, w.XY)
		}
		if gs, ws := nodeLawSig(&g), nodeLawSig(&w); gs != ws {
			return fmt.Sprintf("node %q: laws %s, want %s", w.ID, gs, ws)
		}
		if fmt.Sprint(g.Controls) != fmt.Sprint(w.Controls) {
			return fmt.Sprintf("node %q: controls %v, want %v", w.ID, g.Controls, w.Controls)
		}
		if len(g.Split) != len(w.Split) || (g.Split == nil) != (w.Split == nil) {
			return fmt.Sprintf("node %q: split %v, want %v", w.ID, g.Split, w.Split)
		}
		for k, p := range w.Split {
			if q, ok := g.Split[k]; !ok || math.Abs(q-p) > tol {
				return fmt.Sprintf("node %q: split %v, want %v", w.ID, g.Split, w.Split)
			}
		}
	}
	for i := range want.Edges {
		g, w := got.Edges[i], want.Edges[i]
		gw, ww := [2]float64{g.EndWeight(0), g.EndWeight(1)}, [2]float64{w.EndWeight(0), w.EndWeight(1)}
		g.Weight, w.Weight = [2]float64{}, [2]float64{}
		if gs, ws := edgeLawSig(&g), edgeLawSig(&w); gs != ws {
			return fmt.Sprintf("edge %q: laws %s, want %s", w.ID, gs, ws)
		}
		g.Law, w.Law, g.Profile, w.Profile = nil, nil, nil, nil
		if !slices.Equal(g.ControlSet(), w.ControlSet()) {
			return fmt.Sprintf("edge %q: controls %v, want %v", w.ID, g.ControlSet(), w.ControlSet())
		}
		g.Controls, w.Controls = nil, nil
		if g != w || gw != ww {
			return fmt.Sprintf("edge %d: got %+v weights %v, want %+v weights %v", i, g, gw, w, ww)
		}
	}
	return ""
}

// edgeLawSig describes an edge's laws and profiles by their expressions, for
// comparing networks.
func edgeLawSig(e *graphpde.Edge) string {
	var b strings.Builder
	if l := e.Law; l != nil {
		for i, c := range []*graphpde.Coef{l.A, l.B, l.C, l.F, l.Rho, l.Initial} {
			if c != nil {
				fmt.Fprintf(&b, "law%d=%q(%v%v%v%v) ", i, c.Src, c.UsesX, c.UsesU, c.UsesT, c.UsesP)
			}
		}
		if l.Equation != nil {
			fmt.Fprintf(&b, "equation=%q ", l.Equation.Src)
		}
	}
	if p := e.Profile; p != nil {
		fmt.Fprintf(&b, "profile=%q,%q,%q,%q,%q", p.SrcA, p.SrcB, p.SrcC, p.SrcF, p.SrcRho)
	}
	return b.String()
}

// nodeLawSig describes a node's nonlinear and time laws and initial value.
func nodeLawSig(n *graphpde.Node) string {
	var b strings.Builder
	if nl := n.Nonlinear; nl != nil {
		fmt.Fprintf(&b, "nonlinear=%q loss=%v ", nl.Src, nl.Loss != nil)
	}
	if tm := n.Time; tm != nil {
		fmt.Fprintf(&b, "time=%q fixed=%v t=%v ", tm.Src, tm.Fixed != nil, tm.UsesT)
	}
	if n.Initial != nil {
		fmt.Fprintf(&b, "initial=%g", *n.Initial)
	}
	return b.String()
}
