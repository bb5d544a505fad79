package montecarlo_test

import (
	"context"
	"errors"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// TestPositionsRefused: settings and networks on which walkers cannot be
// stopped at fixed times are refused with a typed error (a leaky or
// sticky node next to a time-stepped arm; other leaky and sticky nodes
// stop walkers exactly: TestPositionsSticky in package crosscheck).
func TestPositionsRefused(t *testing.T) {
	arms := []starArm{{L: 1, a: 1, rho: 1, alpha: 1}, {L: 2, a: 1, rho: 1, alpha: 2}}
	plain := star(kirchhoff, arms)
	start := vertex.OnEdge(0, 0.5)
	for _, tc := range []struct {
		name string
		net  *tNet
		set  montecarlo.Settings
		want any
	}{
		{"capacity next to a drifting arm", star(vertex.Law{Kind: vertex.Balance, Capacity: 0.5}, []starArm{{L: 1, a: 1, rho: 1, alpha: 1, b: 0.5}, {L: 1, a: 1, rho: 1, alpha: 1}}), montecarlo.Settings{PositionTimes: []float64{0.1}}, new(*montecarlo.PositionError)},
		{"negative time", plain, montecarlo.Settings{PositionTimes: []float64{-1}}, new(*montecarlo.SettingsError)},
		{"beyond the cap", plain, montecarlo.Settings{TimeCap: 1, PositionTimes: []float64{2}}, new(*montecarlo.SettingsError)},
		{"shard", plain, montecarlo.Settings{Shard: montecarlo.Shard{Index: 1, Count: 2}, PositionTimes: []float64{0.1}}, new(*montecarlo.SettingsError)},
	} {
		tc.set.Particles = 100
		_, err := montecarlo.Run(context.Background(), tc.net, start, &tc.set)
		if err == nil || !errors.As(err, tc.want) {
			t.Errorf("%s: error %v, want %T", tc.name, err, tc.want)
		}
	}
}

// TestPositionsKeepEstimates: stopping walkers at record times (shrunk
// stars with a common decay and an injection, shrunk intervals, Gaussian
// jumps) leaves every other estimate exact. On a star with injection
// γ = 0.7 at the centre, a common decay rate and a source, the value at the
// centre is the closed form starCentre (derived in net_test.go); with 8
// record times spread over the walkers' lives it must agree within 4.5
// standard errors (fixed seed). The records are consistent with the
// lifetimes: at each time, the walkers Ended are exactly those whose
// lifetime is below it, with the same fate.
func TestPositionsKeepEstimates(t *testing.T) {
	arms := []starArm{
		{L: 1, a: 1, c: 0.5, f: 0.2, rho: 1, alpha: 1, g: 1},
		{L: 1.5, a: 0.5, c: 0.25, f: 0.1, rho: 0.5, alpha: 3, g: 0},
		{L: 0.7, a: 2, c: 1, f: 0, rho: 2, alpha: 0.5, g: 2},
	}
	centre := vertex.Law{Kind: vertex.Balance, Inject: 0.7}
	net := star(centre, arms)
	want := starCentre(0, 0.7, arms)
	var times []float64
	for k := range 8 {
		times = append(times, 0.02*float64(k+1)*float64(k+1))
	}
	res, err := montecarlo.Run(context.Background(), net, vertex.AtNode(0), &montecarlo.Settings{Particles: 40000, Seed: 21, PositionTimes: times, KeepSamples: true})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("value %.5f ± %.5f, closed form %.5f; %d late records", res.Value.Mean, res.Value.StdErr, want, res.PositionLate)
	if math.Abs(res.Value.Mean-want) > 4.5*res.Value.StdErr {
		t.Errorf("value %.5f ± %.5f, closed form %.5f", res.Value.Mean, res.Value.StdErr, want)
	}
	for k, tt := range res.PositionTimes {
		for i, p := range res.Positions[k] {
			s := res.Samples[i]
			ended := s.Time <= tt
			if (p.State == montecarlo.Ended) != ended || (ended && int(p.Node) != s.Node) {
				t.Fatalf("t = %g, walker %d: record %+v, lifetime %g fate %d", tt, i, p, s.Time, s.Node)
			}
			if p.State == montecarlo.OnEdge && !(p.X > 0 && p.X < net.edges[p.Edge].L) {
				t.Fatalf("t = %g, walker %d: place %+v off its edge", tt, i, p)
			}
		}
	}
}

// TestPositionsWorkers: the records, like every estimate, do not depend on
// the number of workers.
func TestPositionsWorkers(t *testing.T) {
	net := star(kirchhoff, []starArm{{L: 1, a: 1, rho: 1, alpha: 1}, {L: 2, a: 0.5, rho: 1, alpha: 2}})
	run := func(workers int) *montecarlo.Result {
		res, err := montecarlo.Run(context.Background(), net, vertex.OnEdge(1, 0.4), &montecarlo.Settings{Particles: 10000, Seed: 3, Workers: workers, PositionTimes: []float64{0.3, 0.05}})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	a, b := run(1), run(2)
	if a.PositionTimes[0] != 0.05 {
		t.Errorf("times not sorted: %v", a.PositionTimes)
	}
	for k := range a.Positions {
		for i := range a.Positions[k] {
			if a.Positions[k][i] != b.Positions[k][i] {
				t.Fatalf("time %d walker %d: %+v with 1 worker, %+v with 2", k, i, a.Positions[k][i], b.Positions[k][i])
			}
		}
	}
}
