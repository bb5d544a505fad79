package main

import (
	"context"
	"fmt"
	"github.com/ramify-dev/ramify/internal/testenv"
	"math/rand/v2"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/vertex"
)

// randomNet draws a small network of the kind users bring: 3 to 8 nodes, two
// of them fixed (values −0.5, 0.5 or 1.5), the others balance nodes with a
// leak, a capacity and an injection each with probability 1/3; a spanning tree
// plus up to three more edges (self-loops and parallel edges included), each
// with random length, diffusivity and capacity, and with probability 1/3 decay,
// a source or skewed end weights, with probability 1/4 drift.
func randomNet(r *rand.Rand) *graphpde.Network {
	net := &graphpde.Network{}
	nn := 3 + r.IntN(6)
	for v := 0; v < nn; v++ {
		law := vertex.Law{Kind: vertex.Balance}
		switch {
		case v < 2:
			law = vertex.Law{Kind: vertex.Fixed, Value: float64(r.IntN(3)) - 0.5}
		default:
			if r.IntN(3) == 0 {
				law.Leak = r.Float64()
			}
			if r.IntN(3) == 0 {
				law.Capacity = r.Float64() * 2
			}
			if r.IntN(3) == 0 {
				law.Inject = r.Float64()
			}
		}
		net.AddNode(graphpde.Node{ID: fmt.Sprintf("n%d", v), Law: law})
	}
	ne := nn + r.IntN(4)
	for e := 0; e < ne; e++ {
		var a, b int
		if e < nn-1 {
			a, b = e+1, r.IntN(e+1)
		} else {
			a, b = r.IntN(nn), r.IntN(nn)
		}
		ed := graphpde.Edge{ID: fmt.Sprintf("e%d", e), From: a, To: b, Length: 0.3 + 2*r.Float64(),
			A: 0.2 + 2*r.Float64(), Rho: 0.5 + r.Float64()}
		if r.IntN(3) == 0 {
			ed.C = r.Float64()
		}
		if r.IntN(3) == 0 {
			ed.F = r.Float64()
		}
		if r.IntN(4) == 0 {
			ed.B = 2 * (r.Float64() - 0.5)
		}
		if r.IntN(3) == 0 {
			ed.Weight = [2]float64{0.2 + r.Float64(), 0.2 + r.Float64()}
		}
		net.AddEdge(ed)
	}
	return net
}

// TestRandomNetworks cross-checks the two engines end to end on 24 random
// networks that no test was written for (randomNet), started from a balance
// node or from a point inside an edge, with 10⁵ walkers each. Every network
// is consistent, so each verdict is "agree" up to the cross-check's own
// false-alarm rate (family-wise level 1% per network) or "inconclusive" when
// 10⁵ walkers cannot resolve 2%. With fixed seeds the outcome is
// deterministic; the bound allows two false alarms (for 24 networks at 1%,
// three or more has probability 0.2%), so a systematic error in either engine
// — a junction rule, a visit law, a Laplace inversion — fails it, as it did
// before the exact visit laws at leaky and drift-side nodes were written.
func TestRandomNetworks(t *testing.T) {
	testenv.SkipUnlessLong(t, "24 cross-checks of 10⁵ walkers")
	r := rand.New(rand.NewPCG(21, 22))
	counts := map[compare.Verdict]int{}
	for i := 0; i < 24; i++ {
		net := randomNet(r)
		start := graphpde.Point{Node: 2 + r.IntN(len(net.Nodes)-2), Edge: -1}
		if i%2 == 1 {
			e := r.IntN(len(net.Edges))
			start = graphpde.Point{Node: -1, Edge: e, X: net.Edges[e].Length * (0.1 + 0.8*r.Float64())}
		}
		set := &montecarlo.Settings{Particles: 100000, Seed: uint64(i), KeepSamples: true}
		cc, err := crossCheck(context.Background(), net, start, "start", graphpde.MethodAuto, set, &compare.Settings{}, crossOptions{}, nil, false)
		if err != nil {
			t.Fatalf("network %d: %v", i, err)
		}
		counts[cc.Report.Verdict]++
		if cc.Report.Verdict != compare.Agree {
			t.Logf("network %d: %s: %s", i, cc.Report.Verdict, cc.Report.Explain)
		}
	}
	t.Logf("verdicts: %v", counts)
	if counts[compare.Disagree] > 2 {
		t.Errorf("%d of 24 consistent networks disagree, want at most 2", counts[compare.Disagree])
	}
}
