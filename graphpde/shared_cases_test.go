package graphpde_test

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex/vertextest"
)

// buildCase builds the graphpde network of a shared analytic case.
func buildCase(t *testing.T, c *vertextest.Case) (*graphpde.Network, graphpde.Point) {
	t.Helper()
	net := &graphpde.Network{Name: c.Name}
	for _, n := range c.Nodes {
		if _, err := net.AddNode(graphpde.Node{ID: n.ID, Law: n.Law}); err != nil {
			t.Fatal(err)
		}
	}
	for _, e := range c.Edges {
		if _, err := net.AddEdge(graphpde.Edge{ID: e.ID, From: e.From, To: e.To, Length: e.Length,
			A: e.A, C: e.C, F: e.F, Rho: e.Rho, Weight: [2]float64{e.WFrom, e.WTo}}); err != nil {
			t.Fatal(err)
		}
	}
	return net, c.Start
}

// TestSharedCases checks the steady solve and the exit statistics on the
// analytic networks that the walkers must reproduce too (package
// vertextest; each case names its source). Exact elements are exact, so the
// tolerance is round-off amplified by the few operations of a small solve and
// the Cauchy-integral moments: 1e-9 relative.
func TestSharedCases(t *testing.T) {
	const tol = 1e-9
	for _, c := range vertextest.Cases() {
		t.Run(c.Name, func(t *testing.T) {
			net, p := buildCase(t, &c)
			near := func(what string, got, want float64) {
				if math.Abs(got-want) > tol*math.Max(1, math.Abs(want)) {
					t.Errorf("%s: %.12g, want %.12g (%s)", what, got, want, c.Source)
				}
			}
			sol, err := graphpde.Solve(net, nil)
			if err != nil {
				t.Fatal(err)
			}
			u, err := sol.At(p)
			if err != nil {
				t.Fatal(err)
			}
			near("value", u, c.Value)
			x, err := graphpde.ExitStatistics(net, p, nil)
			if err != nil {
				t.Fatal(err)
			}
			for id, h := range c.Hit {
				v, _ := net.NodeIndex(id)
				near("hit "+id, x.Hit[v], h)
			}
			near("killed", x.Killed, c.Killed)
			near("mean exit time", x.Mean, c.MeanExit)
		})
	}
}
