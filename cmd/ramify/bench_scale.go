package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"runtime"
	"time"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// benchScale measures what issue-sized work costs around the solvers, each
// figure against a reference timed in the same run: a walk split into two
// parts and merged against the same walk in one piece (and that the numbers
// agree), the walkers' preparation (lazy visit-law tables) against their
// stepping on a random tree, and the exit statistics against a steady solve
// on random trees of three sizes with the growth exponent.
func benchScale(ctx context.Context, w io.Writer, size string) error {
	walkEdges, walkers := 1000, int64(20000)
	exitSizes := []int{2500, 5000, 10000}
	if size == "large" {
		walkEdges, walkers = 10000, 100000
		exitSizes = []int{25000, 50000, 100000}
	}

	// Shards: two parts and a merge against one run.
	star := gen.Star([]float64{1, 2, 3}, []float64{0.5, 0.3, 0.2})
	c, _ := star.NodeIndex("c")
	set := montecarlo.Settings{Particles: 400000, Seed: 3}
	// A short run first, so that neither measurement pays for the first
	// use of the shared tables.
	if _, err := montecarlo.Run(ctx, star, vertex.AtNode(c), &montecarlo.Settings{Particles: 4096}); err != nil {
		return err
	}
	t0 := time.Now()
	whole, err := montecarlo.Run(ctx, star, vertex.AtNode(c), &set)
	if err != nil {
		return err
	}
	one := time.Since(t0).Seconds()
	t0 = time.Now()
	var parts []*montecarlo.Part
	for i := 1; i <= 2; i++ {
		s := set
		s.Shard = montecarlo.Shard{Index: i, Count: 2}
		r, err := montecarlo.Run(ctx, star, vertex.AtNode(c), &s)
		if err != nil {
			return err
		}
		parts = append(parts, r.Part)
	}
	merged, err := montecarlo.Merge(parts)
	if err != nil {
		return err
	}
	split := time.Since(t0).Seconds()
	same := merged.Value == whole.Value && merged.ExitTime == whole.ExitTime && merged.ExitSD == whole.ExitSD
	for i := range whole.Quantiles {
		same = same && merged.Quantiles[i] == whole.Quantiles[i]
	}
	fmt.Fprintf(w, "\nshards: %d walkers on the three-arm star as 2 parts + merge, one after the other: %.2f × one run; merged numbers identical: %v\n",
		set.Particles, split/one, same)

	// Walkers on a random tree: lazy tables against stepping.
	tree := gen.RandomTree(walkEdges, 1, 0)
	r, err := montecarlo.Run(ctx, tree, vertex.AtNode(walkEdges/2), &montecarlo.Settings{Particles: walkers, Seed: 1, TimeCap: 1e4})
	if err != nil {
		return err
	}
	if r.Status == montecarlo.Cancelled {
		return fmt.Errorf("%w during the walker measurements", errInterruptedAny)
	}
	st := r.Stats
	workers := float64(runtime.GOMAXPROCS(0))
	prep := st.Prepare.Seconds() + st.TableTime.Seconds()/workers
	step := st.Elapsed.Seconds() - prep
	fmt.Fprintf(w, "walkers on a random tree of %d edges (decay differs per edge: every node needs its own visit-law table), %d walkers:\n", walkEdges, walkers)
	perTable := 0.0
	if st.Tables > 0 {
		perTable = 1e3 * st.TableTime.Seconds() / float64(st.Tables)
	}
	fmt.Fprintf(w, "  %d tables built on first visit (%.2g ms each), %.3g s of table work over %d workers; preparation / stepping = %.2f (target ≤ 1 on 10⁴ edges and 10⁵ walkers); %.3g steps/s\n",
		st.Tables, perTable, st.TableTime.Seconds(), int(workers), prep/step, float64(st.Steps)/step)

	// Exit statistics against a steady solve.
	fmt.Fprintln(w, "exit statistics (4 survival times, 5 quantiles, moments) on random trees whose one fixed node is a leaf (every edge in the exit problem), against one steady solve (each the best of 3):")
	var first, last float64
	for _, n := range exitSizes {
		if ctx.Err() != nil {
			return fmt.Errorf("%w during the exit measurements", errInterruptedAny)
		}
		// The generated tree fixes its root, which would cut it into the
		// root's subtrees, independent exit problems; the fixed node is
		// moved to the last node, a leaf.
		net := gen.RandomTree(n, 2, 0)
		net.Nodes[0].Law = net.Nodes[1].Law
		net.Nodes[n].Law = vertex.Law{Kind: vertex.Fixed}
		p := graphpde.Point{Node: n / 2, Edge: -1}
		solve := math.Inf(1)
		for range 3 {
			t0 := time.Now()
			if _, err := graphpde.Solve(net, nil); err != nil {
				return err
			}
			solve = math.Min(solve, time.Since(t0).Seconds())
		}
		exit := math.Inf(1)
		var x *graphpde.ExitStats
		for range 3 {
			t0 := time.Now()
			var err error
			x, err = graphpde.ExitStatistics(net, p, &graphpde.ExitSettings{Times: []float64{0.1, 0.5, 1, 2}, Context: ctx})
			if err != nil {
				return err
			}
			exit = math.Min(exit, time.Since(t0).Seconds())
		}
		if n == exitSizes[0] {
			first = exit
		}
		last = exit
		fmt.Fprintf(w, "  %6d edges: exit %.3g s = %.1f × the solve (target ≤ 30 on 10⁵ edges): %d transform values at %.3g × the solve each, over %d cores\n",
			n, exit, exit/solve, x.Transforms, exit/solve/float64(x.Transforms), runtime.GOMAXPROCS(0))
	}
	fmt.Fprintf(w, "  growth exponent of the exit time from %d to %d edges: %.2f (target ≤ 1.1)\n",
		exitSizes[0], exitSizes[len(exitSizes)-1], math.Log(last/first)/math.Log(float64(exitSizes[len(exitSizes)-1])/float64(exitSizes[0])))
	return benchFactor(ctx, w, size)
}

// benchFactor measures the factorisation of a square mesh's node system
// against the supernodal kernel it replaced (fundamental supernodes, plain
// Go loops, one goroutine), all in the same run.
func benchFactor(ctx context.Context, w io.Writer, size string) error {
	side := 100
	if size == "large" {
		side = 300
	}
	if ctx.Err() != nil {
		return fmt.Errorf("%w before the factorisation measurements", errInterruptedAny)
	}
	ff, err := gen.MeasureFactor(side, 5)
	if err != nil {
		return err
	}
	ref := ff.Reference.Seconds()
	fmt.Fprintf(w, "factorisation of the %d×%d mesh's node system (%d unknowns, %d entries in L, %.3g multiply-adds), best of 5 alternating runs:\n",
		side, side, ff.Unknowns, ff.NNZL, ff.MultiplyAdds)
	fmt.Fprintf(w, "  %d supernodes (%d before amalgamation); %.3g s on %d goroutines, %.3g s on one; the kernel before amalgamation and dense kernels %.3g s\n",
		ff.Supernodes, ff.Fundamental, ff.Default.Seconds(), ff.Workers, ff.OneGoroutine.Seconds(), ref)
	// The goal is stated for the 300×300 mesh, and judged on one
	// goroutine like the kernel it replaced: on a machine whose cores
	// are busy the second goroutine mostly waits.
	target := ""
	if size == "large" {
		target = fmt.Sprintf(" (target ≤ 0.5 on one%s)", unmet(ff.OneGoroutine.Seconds()/ref > 0.5))
	}
	fmt.Fprintf(w, "  factorisation / that kernel = %.2f on %d goroutines, %.2f on one%s; %.2g multiply-adds/s on one\n",
		ff.Default.Seconds()/ref, ff.Workers, ff.OneGoroutine.Seconds()/ref, target, ff.MultiplyAdds/ff.OneGoroutine.Seconds())
	fmt.Fprintf(w, "  ordering and symbolic analysis %.3g s = %.1f factorisations, done once for repeated solves of one pattern (Newton, time steps, graphpde.Settings.Analysis)\n",
		ff.Analysis.Seconds(), ff.Analysis.Seconds()/ff.Default.Seconds())
	return nil
}
