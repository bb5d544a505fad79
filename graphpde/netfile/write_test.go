package netfile

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// roundTrip writes net and reads it back.
func roundTrip(t *testing.T, net *graphpde.Network) *graphpde.Network {
	t.Helper()
	var buf bytes.Buffer
	if err := Write(&buf, net); err != nil {
		t.Fatalf("Write: %v", err)
	}
	back, err := Read(&buf, "written.toml")
	if err != nil {
		t.Fatalf("Read of written file: %v\n%s", err, buf.String())
	}
	return back
}

// mustAdd builds a network, failing the test on a model error.
func mustAdd(t *testing.T, nodes []graphpde.Node, edges []graphpde.Edge) *graphpde.Network {
	t.Helper()
	net := &graphpde.Network{}
	for _, nd := range nodes {
		if _, err := net.AddNode(nd); err != nil {
			t.Fatal(err)
		}
	}
	for _, e := range edges {
		if _, err := net.AddEdge(e); err != nil {
			t.Fatal(err)
		}
	}
	return net
}

// TestRoundTrip checks that Write then Read gives back the same network for
// values that stress the number and string formats: extreme magnitudes,
// negative zero, decimal fractions with no exact binary form, ids with dots,
// names with quotes, newlines, tabs and non-ASCII text. Values must come back
// bit for bit (shortest round-trip formatting); split values within
// roundoff, since Read normalises them again.
func TestRoundTrip(t *testing.T) {
	nodes := []graphpde.Node{
		{ID: "in.1", XY: &[2]float64{-1e-300, 1e300}, Law: vertex.Law{Kind: vertex.Fixed, Value: 0.1 + 0.2}},
		{ID: "hub", Law: vertex.Law{Kind: vertex.Balance, Leak: 5e-324, Inject: -3, Capacity: 2}, Split: map[string]float64{"a": 1.0 / 3, "b.x": 2.0 / 3}},
		{ID: "out-2_Z", Law: vertex.Law{Kind: vertex.Fixed, Value: math.Copysign(0, -1)}},
		{ID: "spare", XY: &[2]float64{0, 0}},
	}
	edges := []graphpde.Edge{
		{ID: "a", From: 0, To: 1, Length: 1, A: 1, B: math.Copysign(0, -1), Cells: 12},
		// The extremes an edge may have: lengths and a/L within 1e±280
		// (graphpde.Network.AddEdge); 5e−324 and MaxFloat64 stay in XY
		// and the leak.
		{ID: "b.x", From: 1, To: 2, Length: 9.999999999999999e269, A: 1.0000000000000002e5, C: 1e-7, F: -2.5, Rho: 3, Weight: [2]float64{2, 0}},
		{ID: "c", From: 2, To: 1, Length: 0.7, A: 4, Weight: [2]float64{1.5, 1.5}},
		{ID: "loop", From: 3, To: 3, Length: 2, A: 1, Weight: [2]float64{0.25, 8}},
	}
	net := mustAdd(t, nodes, edges)
	net.Name = `the "quoted" network`
	net.Description = "line one\nline two\twith tab, ünïcode, \\ and \x01"
	back := roundTrip(t, net)
	if d := diffNetworks(back, net, roundoff); d != "" {
		t.Error(d)
	}
	if back.Name != net.Name || back.Description != net.Description {
		t.Errorf("name %q description %q", back.Name, back.Description)
	}
	if !math.Signbit(back.Nodes[2].Law.Value) || !math.Signbit(back.Edges[0].B) {
		t.Error("negative zero lost")
	}
}

// TestRoundTripRandom writes and reads back 200 random networks (fixed seed)
// with values drawn over many decades.
func TestRoundTripRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	val := func() float64 { return math.Exp(rng.NormFloat64() * 20) }
	for trial := range 200 {
		n := 1 + rng.IntN(6)
		nodes := make([]graphpde.Node, n)
		for i := range nodes {
			nodes[i].ID = fmt.Sprintf("v%d", i)
			if rng.IntN(3) == 0 {
				nodes[i].Law = vertex.Law{Kind: vertex.Fixed, Value: rng.NormFloat64()}
			} else {
				nodes[i].Law = vertex.Law{Leak: val() * float64(rng.IntN(2)), Inject: rng.NormFloat64(), Capacity: val() * float64(rng.IntN(2))}
			}
			if rng.IntN(2) == 0 {
				nodes[i].XY = &[2]float64{rng.NormFloat64(), val()}
			}
		}
		edges := make([]graphpde.Edge, rng.IntN(8))
		for i := range edges {
			edges[i] = graphpde.Edge{ID: fmt.Sprintf("e%d", i), From: rng.IntN(n), To: rng.IntN(n),
				Length: val(), A: val(), B: rng.NormFloat64(), C: val() * float64(rng.IntN(2)), F: rng.NormFloat64(), Rho: val()}
			if rng.IntN(2) == 0 {
				edges[i].Weight = [2]float64{val(), val()}
			}
			if rng.IntN(2) == 0 {
				edges[i].Cells = 1 + rng.IntN(1000)
			}
		}
		net := mustAdd(t, nodes, edges)
		// A split on a balance node over its incident edges.
		for v := range net.Nodes {
			if net.Nodes[v].Law.Kind == vertex.Balance && len(net.Incident(v)) > 0 && rng.IntN(2) == 0 {
				sp := map[string]float64{}
				for _, end := range net.Incident(v) {
					sp[net.Edges[end.Edge].ID] = rng.Float64() + 0.01 // a self-loop draws twice
				}
				var sum float64
				for _, p := range sp {
					sum += p
				}
				for k := range sp {
					sp[k] /= sum
				}
				net.Nodes[v].Split = sp
			}
		}
		if d := diffNetworks(roundTrip(t, net), net, roundoff); d != "" {
			t.Fatalf("trial %d: %s", trial, d)
		}
	}
}

// TestRoundTripFile checks Read(Write(Read(file))) = Read(file) on the sample.
func TestRoundTripFile(t *testing.T) {
	net, err := ReadFile(filepath.Join(testdata, "junction.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if d := diffNetworks(roundTrip(t, net), net, roundoff); d != "" {
		t.Error(d)
	}
}

// TestWriteRefuses checks that Write reports what a file cannot hold instead
// of writing a file that would not read back.
func TestWriteRefuses(t *testing.T) {
	base := func() *graphpde.Network {
		return mustAdd(t, []graphpde.Node{{ID: "a", Law: vertex.Law{Kind: vertex.Fixed}}, {ID: "b"}},
			[]graphpde.Edge{{ID: "e", From: 0, To: 1, Length: 1, A: 1}})
	}
	for _, tc := range []struct {
		name   string
		modify func(*graphpde.Network)
		msg    string
	}{
		{"profile", func(n *graphpde.Network) {
			n.Edges[0].Profile = &graphpde.Profile{A: func(x float64) float64 { return 1 + x }}
		}, `edge "e": cannot write coefficient profiles`},
		{"split on fixed", func(n *graphpde.Network) { n.Nodes[0].Split = map[string]float64{"e": 1} }, `node "a": cannot write a split on a fixed node`},
		{"split on far edge", func(n *graphpde.Network) { n.Nodes[1].Split = map[string]float64{"zz": 1} }, `node "b": cannot write split "zz"`},
		{"zero split", func(n *graphpde.Network) { n.Nodes[1].Split = map[string]float64{"e": 0} }, "sum to 0"},
		{"nan", func(n *graphpde.Network) { n.Edges[0].B = math.NaN() }, "non-finite"},
		{"bad law", func(n *graphpde.Network) { n.Nodes[1].Law.Leak = -1 }, `node "b": cannot write: leak = -1`},
		{"bad kind", func(n *graphpde.Network) { n.Nodes[1].Law.Kind = 7 }, "cannot write node kind"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			net := base()
			tc.modify(net)
			var buf bytes.Buffer
			err := Write(&buf, net)
			var fe *Error
			if !errors.As(err, &fe) || !strings.Contains(err.Error(), tc.msg) {
				t.Errorf("got %v, want an *Error containing %q", err, tc.msg)
			}
			if buf.Len() != 0 {
				t.Errorf("wrote %d bytes before failing", buf.Len())
			}
		})
	}
}
