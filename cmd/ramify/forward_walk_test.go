package main

import (
	"context"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/internal/testenv"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// TestForwardAgainstWalkers compares forward transport with walkers
// released at the same point: the amount of tracer still in the network at
// time t (the forward solution's total Σ∫ρq + Σρ_v Q) is the probability that
// a walker has neither been absorbed nor killed by t, P(τ > t), which the
// walkers estimate by the fraction still out. The junction has skewed
// weights, drift and a node capacity, so a forward solver that imposed
// continuity of q instead of a·q/α would be off by up to 0.06 here
// (measured: 0.005, 0.001, 0.025, 0.062 at the four times, 3 to 40
// standard errors). It runs with RAMIFY_LONG=1 (about 15 s). 10⁵
// walkers (fixed seed) give standard errors of about 1.6e-3; each of the 4
// times is tested at 4.5 standard errors plus the forward solution's grid
// error (200 cells per edge, below 1e-3 by the duality test in graphpde),
// a family-wise false-alarm rate below 1e-4.
func TestForwardAgainstWalkers(t *testing.T) {
	testenv.SkipUnlessLong(t, "forward transport against 10⁵ walkers")
	var net graphpde.Network
	add := func(nd graphpde.Node) int {
		i, err := net.AddNode(nd)
		if err != nil {
			t.Fatal(err)
		}
		return i
	}
	c := add(graphpde.Node{ID: "c", Law: vertex.Law{Kind: vertex.Balance, Capacity: 0.3}})
	e1 := add(graphpde.Node{ID: "e1"})
	e2 := add(graphpde.Node{ID: "e2", Law: vertex.Law{Kind: vertex.Fixed}})
	e3 := add(graphpde.Node{ID: "e3", Law: vertex.Law{Kind: vertex.Fixed}})
	for _, ed := range []graphpde.Edge{
		{ID: "a1", From: c, To: e1, Length: 1, A: 1, B: 0.8, Weight: [2]float64{2, 1}},
		{ID: "a2", From: e2, To: c, Length: 1.5, A: 0.5, B: -0.4, C: 0.2, Weight: [2]float64{0.5, 0.25}},
		{ID: "a3", From: c, To: e3, Length: 0.8, A: 1, Weight: [2]float64{1.5, 1}},
	} {
		if _, err := net.AddEdge(ed); err != nil {
			t.Fatal(err)
		}
	}
	start := vertex.OnEdge(0, 0.3)
	times := []float64{0.25, 0.5, 1, 2}
	r, err := graphpde.Evolve(&net, &graphpde.EvolveSettings{Until: 2, Every: 0.25, Forward: true, Release: &start,
		Fields: true, Cells: 200, Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	amount := map[float64]float64{}
	for _, sn := range r.Snapshots {
		tot := 0.0
		for e, vals := range sn.Edges {
			ed := &net.Edges[e]
			n := len(vals) - 1
			h := ed.Length / float64(n)
			for i, q := range vals {
				w := h
				if i == 0 || i == n {
					w = h / 2
				}
				tot += w * ed.Rho * q
			}
		}
		for v, nd := range net.Nodes {
			tot += nd.Law.Capacity * sn.Nodes[v]
		}
		amount[sn.T] = tot
	}
	const walkers = 100000
	res, err := montecarlo.Run(context.Background(), &net, start, &montecarlo.Settings{Particles: walkers, Seed: 11, KeepSamples: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, tt := range times {
		out := 0
		for _, s := range res.Samples {
			if s.Time > tt {
				out++
			}
		}
		p := float64(out) / walkers
		se := math.Sqrt(p * (1 - p) / walkers)
		t.Logf("t = %g: forward %.5f, walkers %.5f ± %.5f", tt, amount[tt], p, se)
		if math.Abs(p-amount[tt]) > 4.5*se+1e-3 {
			t.Errorf("t = %g: forward amount %.5f, walkers %.5f ± %.5f", tt, amount[tt], p, se)
		}
	}
}
