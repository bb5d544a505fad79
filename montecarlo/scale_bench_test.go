package montecarlo_test

import (
	"context"
	"math/rand/v2"
	"testing"

	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// randomTree returns a random tree of n edges (each new node hangs off a
// uniformly chosen earlier one) with random lengths, diffusivities and
// decay rates (every node's arms decay at different rates, so every balance
// node needs its own visit-law tables), a leak on every fifth node, and
// the leaves fixed at 0 or 1. Walkers start at node 0.
func randomTree(n int, seed uint64) *tNet {
	rng := rand.New(rand.NewPCG(seed, 1))
	net := &tNet{}
	deg := make([]int, n+1)
	par := make([]int, n+1)
	for v := 1; v <= n; v++ {
		par[v] = rng.IntN(v)
		deg[par[v]]++
		deg[v]++
	}
	for v := 0; v <= n; v++ {
		switch {
		case deg[v] == 1 && v != 0:
			net.node(fixed(float64(v % 2)))
		case v%5 == 0:
			net.node(vertex.Law{Kind: vertex.Balance, Leak: 0.1 + rng.Float64()})
		default:
			net.node(kirchhoff)
		}
	}
	for v := 1; v <= n; v++ {
		net.edge(tEdge{from: par[v], to: v, L: 0.5 + rng.Float64(), a: 0.5 + rng.Float64(), c: 0.05 + 0.5*rng.Float64()})
	}
	return net
}

// BenchmarkNetworkScale measures, on random trees of 10³ and 10⁴ edges whose
// balance nodes all need visit-law tables, the preparation of a run of 10⁵
// walkers on one worker (Stats.Prepare plus the time spent on the visit-law
// tables the walkers needed, Stats.TableTime) against its stepping (the
// rest of the run), and the steps per second of the stepping. Goal:
// preparation ≤ the stepping of 10⁵ walkers on the 10⁴-edge tree. Run once:
// -bench NetworkScale -benchtime=1x.
func BenchmarkNetworkScale(b *testing.B) {
	for _, n := range []int{1000, 10000} {
		b.Run(map[int]string{1000: "1e3", 10000: "1e4"}[n], func(b *testing.B) {
			net := randomTree(n, 3)
			for range b.N {
				r, err := montecarlo.Run(context.Background(), net, vertex.AtNode(0), &montecarlo.Settings{Particles: 100000, Seed: 1, TimeCap: 1e4, Workers: 1})
				if err != nil {
					b.Fatal(err)
				}
				st := r.Stats
				prep := st.Prepare + st.TableTime
				step := st.Elapsed - prep
				b.ReportMetric(prep.Seconds(), "prep-s")
				b.ReportMetric(step.Seconds(), "step1e5-s")
				b.ReportMetric(prep.Seconds()/step.Seconds(), "prep/step")
				b.ReportMetric(float64(st.Tables), "tables")
				b.ReportMetric(float64(n), "edges")
				b.ReportMetric(float64(st.Steps)/step.Seconds(), "steps/s")
			}
		})
	}
}
