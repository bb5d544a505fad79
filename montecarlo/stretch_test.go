package montecarlo_test

import (
	"context"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// TestStretchKeepsVisitsExact: a hub whose arm's coefficients switch
// inside the arm (a policy switching along an edge, graphpde's
// Network.Apply). When the switch lies far from the hub, the coefficients
// are constant over the hub's star and its visits stay exact (not frozen);
// when it lies right next to the hub, the visits freeze varying
// coefficients and Result.Frozen says so.
func TestStretchKeepsVisitsExact(t *testing.T) {
	for _, tc := range []struct {
		at     float64 // switch point along the arm from the hub
		frozen bool
	}{{0.5, false}, {1e-6, true}} {
		net := &graphpde.Network{Objective: graphpde.Minimize}
		net.AddNode(graphpde.Node{ID: "hub", Law: vertex.Law{Kind: vertex.Balance}})
		net.AddNode(graphpde.Node{ID: "x", Law: vertex.Law{Kind: vertex.Fixed}})
		net.AddNode(graphpde.Node{ID: "y", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
		net.AddEdge(graphpde.Edge{ID: "arm", From: 0, To: 1, Length: 1, A: 1, F: 1,
			Controls: &graphpde.EdgeControls{Alt: []graphpde.EdgeControl{{A: 1, F: 1}, {A: 1, F: 1, C: 1}}}})
		net.AddEdge(graphpde.Edge{ID: "other", From: 0, To: 2, Length: 1, A: 1})
		pol := &graphpde.Policy{Edges: [][]graphpde.PolicyPiece{{{From: 0, To: tc.at, Control: 0}, {From: tc.at, To: 1, Control: 1}}, nil}, Nodes: []int{-1, -1, -1}}
		pn, _, err := net.Apply(pol)
		if err != nil {
			t.Fatal(err)
		}
		res, err := montecarlo.Run(context.Background(), pn, vertex.AtNode(0), &montecarlo.Settings{Particles: 200, Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		if res.Frozen[0] != tc.frozen {
			t.Errorf("switch at %g: Frozen[hub] = %v, want %v", tc.at, res.Frozen[0], tc.frozen)
		}
	}
}
