package montecarlo_test

import (
	"context"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex/vertextest"
)

// TestSharedCases runs walkers on the analytic networks that the PDE side
// reproduces to round-off (package vertextest; each case names its source).
// Every estimate must lie within 4.5 standard errors of the closed form: the
// cases give about 25 estimates, and a Bonferroni bound at 4.5σ keeps the
// chance of a false failure below 2e-4 for a correct engine.
func TestSharedCases(t *testing.T) {
	const k = 4.5
	for ci, c := range vertextest.Cases() {
		t.Run(c.Name, func(t *testing.T) {
			net := caseNetwork(t, &c)
			res, err := montecarlo.Run(context.Background(), net, c.Start, &montecarlo.Settings{Particles: 200000, Seed: uint64(40 + ci)})
			if err != nil {
				t.Fatal(err)
			}
			within := func(what string, e montecarlo.Estimate, want float64) {
				if math.Abs(e.Mean-want) > k*e.StdErr || (e.StdErr == 0 && e.Mean != want) {
					t.Errorf("%s: %.5g ± %.2g, want %.6g (%s)", what, e.Mean, e.StdErr, want, c.Source)
				}
			}
			within("value", res.Value, c.Value)
			for id, h := range c.Hit {
				for v := range c.Nodes {
					if c.Nodes[v].ID == id {
						within("hit "+id, res.Hit[v], h)
					}
				}
			}
			within("killed", res.Killed, c.Killed)
			within("mean exit time", res.ExitTime, c.MeanExit)
		})
	}
}

// caseNetwork builds the network of a shared analytic case, as the PDE
// side's test does.
func caseNetwork(t *testing.T, c *vertextest.Case) *graphpde.Network {
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
	return net
}
