package crosscheck_test

import (
	"context"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/internal/testenv"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/montecarlo/crosscheck"
	"github.com/ramify-dev/ramify/vertex"
)

// stickyStar is a junction "hub" with a capacity and a leak (a sticky,
// leaky node) and three arms of different lengths, diffusivities and
// weights: to an absorbing end, to a second absorbing end, and to a sealed
// end (a balance node without anything).
func stickyStar(t *testing.T, capacity, leak, decay float64) *graphpde.Network {
	return stickyStarArms(t, capacity, leak, [3]float64{decay, decay, decay})
}

// stickyStarArms is stickyStar with a decay rate of its own on each arm.
func stickyStarArms(t *testing.T, capacity, leak float64, decay [3]float64) *graphpde.Network {
	var net graphpde.Network
	add := func(nd graphpde.Node) int {
		i, err := net.AddNode(nd)
		if err != nil {
			t.Fatal(err)
		}
		return i
	}
	hub := add(graphpde.Node{ID: "hub", Law: vertex.Law{Kind: vertex.Balance, Capacity: capacity, Leak: leak}})
	e1 := add(graphpde.Node{ID: "e1", Law: vertex.Law{Kind: vertex.Fixed}})
	e2 := add(graphpde.Node{ID: "e2", Law: vertex.Law{Kind: vertex.Fixed}})
	e3 := add(graphpde.Node{ID: "e3"})
	for _, ed := range []graphpde.Edge{
		{ID: "a1", From: hub, To: e1, Length: 1, A: 1, C: decay[0], Weight: [2]float64{1.5, 1}},
		{ID: "a2", From: e2, To: hub, Length: 1.5, A: 0.5, C: decay[1], Weight: [2]float64{0.5, 0.25}},
		{ID: "a3", From: hub, To: e3, Length: 0.8, A: 1, C: decay[2]},
	} {
		if _, err := net.AddEdge(ed); err != nil {
			t.Fatal(err)
		}
	}
	return &net
}

// constInitial is a constant initial value along an edge.
func constInitial(v float64) *graphpde.EdgeLaw {
	return &graphpde.EdgeLaw{Initial: &graphpde.Coef{Fn: func(x, u, t float64) (float64, float64) { return v, 0 }, Src: "const"}}
}

// exactShares returns, for walkers released at p, the probability of
// being held at node v and of being still in the network (on an edge or
// held) at each time, from the exact transient of the backward problem
// (Laplace inversion, about 1e-10) by duality: ⟨q(T), u(0)⟩ = ⟨q(0), u(T)⟩
// in the pairing Σ∫ρqu + Σρ_v Q u (docs/walkers.md §9). With u(0) = 1 at v
// only (0 on the edges and at the other nodes) the left side is the point
// mass ρ_v Q_v(T); with u(0) = 1 on every edge and balance node it is the
// amount left; the right side is u(p, T) for a unit release at p. Fixed
// nodes hold 0: walkers absorbed there count for neither.
func exactShares(t *testing.T, net func() *graphpde.Network, p graphpde.Point, v int, times []float64) (held, left []float64) {
	for pass := range 2 {
		n := net()
		for i := range n.Nodes {
			nd := &n.Nodes[i]
			if nd.Law.Kind == vertex.Fixed {
				continue
			}
			x := 0.0
			if pass == 1 || i == v {
				x = 1
			}
			nd.Initial = &x
		}
		for e := range n.Edges {
			n.Edges[e].Law = constInitial(float64(pass))
		}
		for _, tt := range times {
			r, err := graphpde.Evolve(n, &graphpde.EvolveSettings{Until: tt, Every: tt, Probes: []graphpde.Point{p}, Method: graphpde.MethodExact})
			if err != nil {
				t.Fatal(err)
			}
			u := r.Probes[0][len(r.Times)-1]
			if pass == 0 {
				held = append(held, u)
			} else {
				left = append(left, u)
			}
		}
	}
	return held, left
}

// TestPositionsStickyExact stops walkers at three times on a star whose
// centre holds them (a capacity) and kills them (a leak), and compares the
// share held at the centre and the share still in the network with their
// exact values (exactShares), as proportions within 4 binomial standard
// errors (fixed seeds). Cases: capacity and leak, capacity only, leak with
// a common decay on the arms, capacity and leak with a common decay, and
// with arms decaying at their own rates, with and without a capacity;
// released at the centre and on an arm. 20000 walkers: standard errors
// about 3e-3.
func TestPositionsStickyExact(t *testing.T) {
	times := []float64{0.05, 0.3, 1}
	for ci, tc := range []struct {
		capacity, leak float64
		decay          [3]float64
		start          vertex.Point
	}{
		{0.6, 0.8, [3]float64{}, vertex.AtNode(0)},
		{0.6, 0.8, [3]float64{}, vertex.OnEdge(0, 0.3)},
		{1.5, 0, [3]float64{}, vertex.AtNode(0)},
		{0, 1.5, [3]float64{0.7, 0.7, 0.7}, vertex.AtNode(0)},
		{0.6, 0.8, [3]float64{0.7, 0.7, 0.7}, vertex.AtNode(0)},
		{0.6, 0.8, [3]float64{2, 0, 0.5}, vertex.OnEdge(2, 0.2)},
		{0, 0.8, [3]float64{2, 0, 0.5}, vertex.AtNode(0)},
	} {
		build := func() *graphpde.Network { return stickyStarArms(t, tc.capacity, tc.leak, tc.decay) }
		net := build()
		p := graphpde.Point{Node: -1, Edge: tc.start.Edge, X: tc.start.X}
		if tc.start.Edge < 0 {
			p = graphpde.Point{Node: tc.start.Node, Edge: -1}
		}
		held, left := exactShares(t, build, p, 0, times)
		res, err := montecarlo.Run(context.Background(), net, tc.start, &montecarlo.Settings{Particles: 20000, Seed: uint64(31 + ci), PositionTimes: times})
		if err != nil {
			t.Fatal(err)
		}
		n := float64(res.Finished)
		for k, tt := range times {
			var atHub, alive float64
			for _, q := range res.Positions[k] {
				switch q.State {
				case montecarlo.AtNode:
					alive++
					if q.Node == 0 {
						atHub++
					}
				case montecarlo.OnEdge:
					alive++
				}
			}
			check := func(what string, got, want float64) {
				se := math.Sqrt(math.Max(want*(1-want), 1/n) / n)
				z := (got/n - want) / se
				t.Logf("case %d, t = %g: %s %.4f, exact %.4f (z = %+.2f)", ci, tt, what, got/n, want, z)
				if math.Abs(z) > 4 {
					t.Errorf("case %d, t = %g: %s %.4f, exact %.4f, z = %.2f", ci, tt, what, got/n, want, z)
				}
			}
			check("held at the hub", atHub, held[k])
			check("still in the network", alive, left[k])
		}
		t.Logf("case %d: %.1f steps per walker, %d late records, %d tables", ci, float64(res.Stats.Steps)/n, res.PositionLate, res.Stats.Tables)
	}
}

// TestPositionsStickyForward: walkers stopped at three times on the
// sticky, leaky star (without decay, and with arms decaying at rates 2, 0
// and 0.5) against the forward solution with its point mass at
// the hub (graphpde.ForwardAmounts, 400 cells per edge). The forward point
// mass and the amount left must match the exact ones (exactShares) to
// 5e-4, the grid's error (measured 5e-5); the position checks (on-network share, share held at
// the hub, KS of the places on the edges; 20000 walkers, fixed seed) must
// agree at resolution 0.05, and the forward solution of the same network
// without the capacity (no point mass, a different transport) must be
// rejected.
func TestPositionsStickyForward(t *testing.T) {
	for ci, decay := range [][3]float64{{}, {2, 0, 0.5}} {
		stickyForward(t, ci, decay)
	}
}

func stickyForward(t *testing.T, ci int, decay [3]float64) {
	times := []float64{0.05, 0.3, 1}
	build := func() *graphpde.Network { return stickyStarArms(t, 0.6, 0.8, decay) }
	net := build()
	start := vertex.OnEdge(0, 0.3)
	p := graphpde.Point{Node: -1, Edge: 0, X: 0.3}
	held, left := exactShares(t, build, p, 0, times)
	fa, err := graphpde.ForwardAmounts(net, p, times, 400, 0)
	if err != nil {
		t.Fatal(err)
	}
	for k := range times {
		var total float64
		for e, d := range fa[k].Edges {
			h := net.Edges[e].Length / float64(len(d)-1)
			for i := 1; i < len(d); i++ {
				total += h * (d[i-1] + d[i]) / 2
			}
		}
		total += fa[k].Nodes[0]
		t.Logf("case %d, t = %g: forward point mass %.5f, exact %.5f; forward amount left %.5f, exact %.5f", ci, times[k], fa[k].Nodes[0], held[k], total, left[k])
		if math.Abs(fa[k].Nodes[0]-held[k]) > 5e-4 || math.Abs(total-left[k]) > 5e-4 {
			t.Errorf("case %d, t = %g: forward point mass %.5f (exact %.5f), amount left %.5f (exact %.5f)", ci, times[k], fa[k].Nodes[0], held[k], total, left[k])
		}
	}
	res, err := montecarlo.Run(context.Background(), net, start, &montecarlo.Settings{Particles: 20000, Seed: uint64(41 + ci), PositionTimes: times})
	if err != nil {
		t.Fatal(err)
	}
	if res.PositionApprox {
		t.Errorf("case %d: PositionApprox set on a star whose arms are walked on intervals", ci)
	}
	dens := func(fa []graphpde.ForwardAmount) []crosscheck.Density {
		out := make([]crosscheck.Density, len(fa))
		for k := range fa {
			out[k] = crosscheck.Density{T: fa[k].T, Edges: fa[k].Edges, Nodes: fa[k].Nodes}
		}
		return out
	}
	checks, _, err := crosscheck.PositionChecks(net, res, dens(fa))
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range checks {
		t.Logf("case %d, right: %s: pde %.4f walker %.4f D/z %.4f/%.2f p %.3g", ci, c.Quantity, c.PDE, c.Walker, c.Stat, c.Z, c.P)
	}
	if rep := compare.Decide(checks, &compare.Settings{Resolution: 0.05}); rep.Verdict != compare.Agree {
		t.Errorf("case %d, sticky star: verdict %s (%s)", ci, rep.Verdict, rep.Explain)
	}
	wrongFa, err := graphpde.ForwardAmounts(stickyStarArms(t, 0, 0.8, decay), p, times, 400, 0)
	if err != nil {
		t.Fatal(err)
	}
	wrong, _, err := crosscheck.PositionChecks(net, res, dens(wrongFa))
	if err != nil {
		t.Fatal(err)
	}
	if rep := compare.Decide(wrong, &compare.Settings{Resolution: 0.05}); rep.Verdict != compare.Disagree {
		t.Errorf("case %d, forward solution without the capacity: verdict %s, want disagree (%s)", ci, rep.Verdict, rep.Explain)
	}
}

// TestPositionsStickyKeepEstimates: stopping walkers at record times on
// the sticky, leaky star (with an injection γ = 0.7 at the hub and a
// source on one arm: jumps add their expected rewards, killed walkers get
// their time of death) leaves the other estimates exact: the value, the
// killed probability and the mean exit time agree with the PDE within 4.5
// standard errors (20000 walkers, 6 record times, fixed seed), and at
// each time the walkers recorded as ended are exactly those whose
// lifetime is below it, with the same fate.
func TestPositionsStickyKeepEstimates(t *testing.T) {
	net := stickyStar(t, 0.6, 0.8, 0)
	net.Nodes[0].Law.Inject = 0.7
	net.Edges[2].F = 0.4
	p := graphpde.Point{Node: -1, Edge: 1, X: 1.2}
	start := vertex.OnEdge(1, 1.2)
	sol, err := graphpde.Solve(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	want, err := sol.At(p)
	if err != nil {
		t.Fatal(err)
	}
	x, err := graphpde.ExitStatistics(net, p, nil)
	if err != nil {
		t.Fatal(err)
	}
	times := []float64{0.01, 0.05, 0.1, 0.3, 0.6, 1.2}
	res, err := montecarlo.Run(context.Background(), net, start, &montecarlo.Settings{Particles: 20000, Seed: 8, PositionTimes: times, KeepSamples: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		what      string
		got, want montecarlo.Estimate
	}{
		{"value", res.Value, montecarlo.Estimate{Mean: want}},
		{"killed", res.Killed, montecarlo.Estimate{Mean: x.Killed}},
		{"mean exit time", res.ExitTime, montecarlo.Estimate{Mean: x.Mean}},
	} {
		z := (c.got.Mean - c.want.Mean) / c.got.StdErr
		t.Logf("%s %.5f ± %.5f, PDE %.5f (z = %+.2f)", c.what, c.got.Mean, c.got.StdErr, c.want.Mean, z)
		if math.Abs(z) > 4.5 {
			t.Errorf("%s %.5f ± %.5f, PDE %.5f", c.what, c.got.Mean, c.got.StdErr, c.want.Mean)
		}
	}
	for k, tt := range res.PositionTimes {
		for i, q := range res.Positions[k] {
			sm := res.Samples[i]
			ended := sm.Time <= tt
			if (q.State == montecarlo.Ended) != ended || (ended && int(q.Node) != sm.Node) {
				t.Fatalf("t = %g, walker %d: record %+v, lifetime %g fate %d", tt, i, q, sm.Time, sm.Node)
			}
		}
	}
}

// TestPositionsStickyCoverage checks the error bars of the held and
// on-network proportions at the sticky, leaky star against their exact
// values (exactShares) over 400 runs of 2000 walkers (seeds 1…400, released
// at the hub, t = 0.3): the number of runs whose check has p < 0.05 must
// be binomial(400, 0.05), within 4 standard deviations (4.4) of 20.
// RAMIFY_LONG=1 only (about 35 s under load).
func TestPositionsStickyCoverage(t *testing.T) {
	testenv.SkipUnlessLong(t, "coverage of the sticky-node proportions over 400 runs")
	const T, runs = 0.3, 400
	build := func() *graphpde.Network { return stickyStar(t, 0.6, 0.8, 0) }
	net := build()
	held, left := exactShares(t, build, graphpde.Point{Node: 0, Edge: -1}, 0, []float64{T})
	lowHeld, lowLeft := 0, 0
	for seed := uint64(1); seed <= runs; seed++ {
		res, err := montecarlo.Run(context.Background(), net, vertex.AtNode(0), &montecarlo.Settings{Particles: 2000, Seed: seed, PositionTimes: []float64{T}})
		if err != nil {
			t.Fatal(err)
		}
		var h, a int64
		for _, q := range res.Positions[0] {
			if q.State == montecarlo.AtNode {
				h++
			}
			if q.State == montecarlo.AtNode || q.State == montecarlo.OnEdge {
				a++
			}
		}
		if compare.Proportion("held", held[0], h, res.Finished).P < 0.05 {
			lowHeld++
		}
		if compare.Proportion("left", left[0], a, res.Finished).P < 0.05 {
			lowLeft++
		}
	}
	sd := math.Sqrt(runs * 0.05 * 0.95)
	t.Logf("runs with p < 0.05: held %d, on the network %d, of %d (expected %.0f ± %.1f)", lowHeld, lowLeft, runs, runs*0.05, sd)
	for _, low := range []int{lowHeld, lowLeft} {
		if math.Abs(float64(low)-runs*0.05) > 4*sd {
			t.Errorf("%d of %d runs with p < 0.05, expected %.0f ± %.1f", low, runs, runs*0.05, sd)
		}
	}
}
