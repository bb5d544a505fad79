package graphpde

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/vertex"
)

// fastNet draws a random network for the fast path: a random tree of n
// nodes (one fixed), some extra edges closing cycles, a self-loop, leaks
// and capacities at some nodes, and an equilateral star of arms sealed
// at their tips hung on a random node, whose modes that vanish at the
// star's centre give multiple eigenvalues (derived: on each arm
// cos(k(L − x)), any combination of arms with zero sum at the centre).
func fastNet(r *rand.Rand, n, arms int) *Network {
	net := &Network{}
	u := func(lo, hi float64) float64 { return lo + (hi-lo)*r.Float64() }
	for i := range n {
		law := vertex.Law{Kind: vertex.Balance}
		switch {
		case i == 0:
			law = vertex.Law{Kind: vertex.Fixed}
		case r.Float64() < 0.2:
			law.Leak = u(0.01, 0.5)
		case r.Float64() < 0.2:
			law.Capacity = u(0.1, 2)
		}
		net.AddNode(Node{ID: fmt.Sprintf("n%d", i), Law: law})
	}
	edge := func(from, to int, L, a float64) {
		net.AddEdge(Edge{ID: fmt.Sprintf("e%d", len(net.Edges)), From: from, To: to, Length: L, A: a, C: u(0, 0.3)})
	}
	for i := 1; i < n; i++ {
		edge(r.IntN(i), i, u(0.5, 2), u(0.5, 2))
	}
	for range 1 + n/5 {
		i, j := 1+r.IntN(n-1), 1+r.IntN(n-1)
		edge(i, j, u(0.5, 2), u(0.5, 2)) // a cycle, or a self-loop when i = j
	}
	if arms > 0 {
		centre := 1 + r.IntN(n-1)
		L, a, c := u(0.5, 1.5), u(0.5, 2), u(0, 0.3)
		for k := range arms {
			tip, _ := net.AddNode(Node{ID: fmt.Sprintf("tip%d", k), Law: vertex.Law{Kind: vertex.Balance}})
			net.AddEdge(Edge{ID: fmt.Sprintf("arm%d", k), From: centre, To: tip, Length: L, A: a, C: c})
		}
	}
	return net
}

// TestSpectrumFastAgainstCount: the fast path (Lanczos trial values,
// Newton steps, node system alone below fastLimit) against the plain count
// with bisection and secant on the split system (byCount on wwSystem
// without seeds), on random trees with cycles, loops and multiple
// eigenvalues. Both bracket every eigenvalue between two counts, so the
// values must agree within the sum of their brackets (about 1e-13 of the
// scale each, plus a few units of round-off), and the multiplicities, the
// jumps of the count, exactly.
func TestSpectrumFastAgainstCount(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 5))
	multiple, fast := 0, 0
	for trial := range 12 {
		n, arms, count := 5+r.IntN(40), 2+r.IntN(4), 12
		if trial == 11 {
			n, arms, count = 1000, 3, 20 // the size of a bench network
		}
		net := fastNet(r, n, arms)
		t.Run(fmt.Sprint(trial), func(t *testing.T) {
			got, err := Spectrum(net, &SpectrumSettings{Count: count, Method: MethodExact})
			if err != nil {
				t.Fatal(err)
			}
			w := newWW(net)
			w.scale = eigenScale(net)
			ref := &SpectrumResult{Status: Converged}
			if err := byCount(w, w.scale, &SpectrumSettings{Count: count, Context: context.Background()}, ref, nil); err != nil {
				t.Fatal(err)
			}
			if got.Status != Converged || ref.Status != Converged {
				t.Fatalf("status %v, reference %v", got.Status, ref.Status)
			}
			if len(got.Eigenvalues) != len(ref.Eigenvalues) {
				t.Fatalf("%d distinct eigenvalues %v, reference %d %v", len(got.Eigenvalues), got.Eigenvalues, len(ref.Eigenvalues), ref.Eigenvalues)
			}
			lim := fastLimit(net)
			for i, e := range got.Eigenvalues {
				f := ref.Eigenvalues[i]
				if e.Multiplicity != f.Multiplicity {
					t.Errorf("λ_%d = %.15g: multiplicity %d, reference %d", i+1, e.Value, e.Multiplicity, f.Multiplicity)
				}
				if d := math.Abs(e.Value - f.Value); d > e.Err+f.Err+1e-14*math.Abs(f.Value) {
					t.Errorf("λ_%d = %.16g ± %.1e, reference %.16g ± %.1e", i+1, e.Value, e.Err, f.Value, f.Err)
				}
				if e.Multiplicity > 1 && e.Value < lim {
					multiple++
				}
				if e.Value < lim {
					fast++
				}
			}
			t.Logf("n=%d: %d factorisations (count alone %d); %d distinct eigenvalues, below the fast limit %.3g: %d", n, got.Stats.Factorizations, ref.Stats.Factorizations, len(got.Eigenvalues), lim, fast)
			if n >= 1000 && 2*got.Stats.Factorizations > ref.Stats.Factorizations {
				// (a count of work, not a time: measured 82 against 309;
				// half is the least the trial values and Halley steps
				// must save on a large tree)
				t.Errorf("%d factorisations, more than half the plain count's %d", got.Stats.Factorizations, ref.Stats.Factorizations)
			}
		})
	}
	// The trials must have exercised what they claim to check.
	if multiple == 0 || fast == 0 {
		t.Errorf("multiple eigenvalues in the fast window: %d, eigenvalues there: %d", multiple, fast)
	}
}

// TestDynCountAgainstSplit: below fastLimit the node system alone and the
// split system (whose inner points are then decoupled) count the same
// number of eigenvalues (Sylvester's law of inertia, any elimination
// order), at random λ on random networks.
func TestDynCountAgainstSplit(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 9))
	for range 20 {
		net := fastNet(r, 5+r.IntN(60), r.IntN(4))
		d, w := newDyn(net), newWW(net)
		lim := fastLimit(net)
		for range 10 {
			lam := lim * (r.Float64()*1.1 - 0.1)
			n1, _, err1 := d.countAt(lam)
			n2, _, err2 := w.countAt(lam)
			if err1 != nil || err2 != nil {
				continue // λ an eigenvalue to working precision
			}
			if n1 != n2 {
				t.Errorf("N(%.6g) = %d with the node system, %d split", lam, n1, n2)
			}
		}
	}
}

// benchTree is the random tree of gen.RandomTree(edges, seed, 0) (the same
// draws; gen imports this package, so its tests cannot use it).
func benchTree(edges int, seed uint64) *Network {
	rnd := rand.New(rand.NewPCG(seed, 0))
	net := &Network{}
	net.AddNode(Node{ID: "r0", Law: vertex.Law{Kind: vertex.Fixed}})
	for k := 1; k <= edges; k++ {
		net.AddNode(Node{ID: fmt.Sprintf("r%d", k)})
		net.AddEdge(Edge{ID: fmt.Sprintf("t%d", k), From: rnd.IntN(k), To: k,
			Length: 0.5 + 1.5*rnd.Float64(), A: 0.5 + 1.5*rnd.Float64(), C: 0.2 * rnd.Float64(), F: 1})
	}
	return net
}

// BenchmarkSpectrumPaths times, in one run, the 20 smallest eigenvalues of
// the bench's random tree by the fast path (Spectrum) and by the plain
// count (byCount on the split system, no seeds: the path before it),
// against a steady exact solve of the tree: the minima of 3 alternating
// repetitions of each, in wall-clock time and on Linux also in the
// thread's CPU time (cpu-…), which leaves out the time spent waiting for a
// core on a loaded machine (all three run on one thread). Run with
// -benchtime 1x.
func BenchmarkSpectrumPaths(b *testing.B) {
	type best struct{ wall, cpu time.Duration }
	minOf := func(d *best, f func()) {
		c0, _ := threadClock()
		t0 := time.Now()
		f()
		e := time.Since(t0)
		c1, _ := threadClock()
		if d.wall == 0 || e < d.wall {
			d.wall = e
		}
		if c := c1 - c0; d.cpu == 0 || c < d.cpu {
			d.cpu = c
		}
	}
	for _, edges := range []int{1000, 10000} {
		b.Run(fmt.Sprintf("edges=%d", edges), func(b *testing.B) {
			runtime.LockOSThread() // (a sub-benchmark runs on a goroutine of its own)
			defer runtime.UnlockOSThread()
			net := benchTree(edges, 1)
			var steady, fast, plain best
			var nf, np int
			for b.Loop() {
				for range 3 {
					minOf(&steady, func() {
						if _, err := Solve(net, &Settings{Method: MethodExact}); err != nil {
							b.Fatal(err)
						}
					})
					minOf(&fast, func() {
						r, err := Spectrum(net, &SpectrumSettings{Count: 20, Method: MethodExact})
						if err != nil {
							b.Fatal(err)
						}
						nf = r.Stats.Factorizations
					})
					minOf(&plain, func() {
						w := newWW(net)
						w.scale = eigenScale(net)
						ref := &SpectrumResult{}
						if err := byCount(w, w.scale, &SpectrumSettings{Count: 20, Context: context.Background()}, ref, nil); err != nil {
							b.Fatal(err)
						}
						np = ref.Stats.Factorizations
					})
				}
			}
			b.ReportMetric(steady.wall.Seconds(), "steady-s")
			b.ReportMetric(fast.wall.Seconds()/steady.wall.Seconds(), "fast/steady")
			b.ReportMetric(plain.wall.Seconds()/steady.wall.Seconds(), "plain/steady")
			if steady.cpu > 0 {
				b.ReportMetric(fast.cpu.Seconds()/steady.cpu.Seconds(), "cpu-fast/steady")
				b.ReportMetric(plain.cpu.Seconds()/steady.cpu.Seconds(), "cpu-plain/steady")
			}
			b.ReportMetric(float64(nf), "fast-factorisations")
			b.ReportMetric(float64(np), "plain-factorisations")
		})
	}
}
