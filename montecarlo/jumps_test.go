package montecarlo_test

import (
	"context"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// TestWalkersAcrossSwitchWithCosts: a junction whose arm switches, at
// x = 0.3, between controls that differ in drift, running reward and decay
// (−3, 2, 0.5 before; +3, 0.2, 0 beyond). The walkers, which step onto
// the switch and across it by the two pieces' means (duration, reward and
// decay: jumps.go), reproduce the PDE value of the policy network within 4
// standard errors at two steps (fixed seeds). (A jump step that took the
// right piece's reward and decay on both sides moved the value by only
// about 0.003 here, below these walkers' resolution: TestJumpLaw checks the
// step's law itself.) The PDE's grid is fitted across the switch; with
// decay its cells are second order, so 4000 cells make its error
// negligible (the change from 1000 cells is asked to stay below 1e−6;
// measured 4.6e−9).
func TestWalkersAcrossSwitchWithCosts(t *testing.T) {
	net := &graphpde.Network{Objective: graphpde.Maximize}
	for _, n := range []struct {
		id  string
		law vertex.Law
	}{
		{"hub", vertex.Law{Kind: vertex.Balance}},
		{"good", vertex.Law{Kind: vertex.Fixed, Value: 1}},
		{"bad", vertex.Law{Kind: vertex.Fixed}},
	} {
		if _, err := net.AddNode(graphpde.Node{ID: n.id, Law: n.law}); err != nil {
			t.Fatal(err)
		}
	}
	for _, e := range []graphpde.Edge{
		{ID: "g", From: 0, To: 1, Length: 1, A: 1, Controls: &graphpde.EdgeControls{Alt: []graphpde.EdgeControl{{A: 1, B: -3, F: 2, C: 0.5}, {A: 1, B: 3, F: 0.2}}}},
		{ID: "b", From: 0, To: 2, Length: 1, A: 1},
	} {
		if _, err := net.AddEdge(e); err != nil {
			t.Fatal(err)
		}
	}
	pol := &graphpde.Policy{Edges: [][]graphpde.PolicyPiece{{{From: 0, To: 0.3, Control: 0}, {From: 0.3, To: 1, Control: 1}}, nil}, Nodes: []int{-1, -1, -1}}
	pn, _, err := net.Apply(pol)
	if err != nil {
		t.Fatal(err)
	}
	start := vertex.Point{Node: -1, Edge: 0, X: 0.2}
	pde := func(cells int) float64 {
		sol, err := graphpde.Solve(pn, &graphpde.Settings{Cells: cells})
		if err != nil {
			t.Fatal(err)
		}
		u, err := sol.At(start)
		if err != nil {
			t.Fatal(err)
		}
		return u
	}
	exact := pde(4000)
	d1 := math.Abs(exact - pde(1000))
	t.Logf("PDE at 4000 cells %.8f, change from 1000 cells %.2g", exact, d1)
	if d := d1; d > 1e-6 {
		t.Fatalf("PDE at 1000 and 4000 cells differ by %g", d)
	}
	for i, step := range []float64{2e-3, 1e-3} {
		res, err := montecarlo.Run(context.Background(), pn, start, &montecarlo.Settings{Particles: 20000, Seed: uint64(11 + i), Step: step})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("step %g: PDE %.5f, walkers %.5f ± %.4f", step, exact, res.Value.Mean, res.Value.StdErr)
		if d := math.Abs(res.Value.Mean - exact); d > 4*res.Value.StdErr {
			t.Errorf("step %g: walkers %.5f ± %.4f, PDE %.5f", step, res.Value.Mean, res.Value.StdErr, exact)
		}
		if res.Frozen[0] {
			t.Errorf("step %g: the hub's visits froze coefficients (switch at 0.3)", step)
		}
	}
}
