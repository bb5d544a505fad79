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

const benchExamples = `  ramify bench                 # small sizes, about half a minute
  ramify bench --size large    # the issue's sizes: 10^7 grid unknowns, 300x300 mesh
`

func runBench(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("bench", "bench [flags]", benchExamples, stderr)
	size := fs.String("size", "small", "small or large")
	walkers := newCount(fs, "particles", 2000000, "walkers in the walker measurements")
	if _, code, ok := parseFlags(fs, args, stderr, false); !ok {
		return code
	}
	if *walkers <= 0 {
		return badFlag(stderr, "bench", fmt.Errorf("--particles %d: must be > 0", *walkers))
	}
	w := stdout
	fmt.Fprintf(w, "ramify bench (%s), %d cores; every figure is a ratio to a reference measured in this run\n\n", *size, runtime.NumCPU())
	fig, err := interruptible(ctx, func() (gen.Figures, error) { return gen.Measure(*size) })
	if err != nil {
		return fail(stderr, "bench", err)
	}
	t := fig.Tree
	fmt.Fprintf(w, "random tree, %d edges × %d grid cells (%d unknowns), method grid:\n", t.Edges, t.Cells, t.Unknowns)
	fmt.Fprintf(w, "  solve %.3g s, %.1f ns/unknown; one plain Thomas solve of as many unknowns %.3g s\n", t.Solve.Seconds(), t.NsPerUnknown, t.Thomas.Seconds())
	fmt.Fprintf(w, "  solve / Thomas = %.2f (target ≤ 1.5); first solve on fresh memory / allocating Thomas = %.2f\n", t.Ratio, t.RatioCold)
	fmt.Fprintf(w, "  memory allocated %.0f bytes/unknown (target < 200)\n\n", t.BytesPerUnknown)
	m := fig.Mesh
	fmt.Fprintf(w, "square mesh %d×%d of unit conductors, exact elements (%d node unknowns):\n", m.Side, m.Side, m.Unknowns)
	fmt.Fprintf(w, "  solve %.3g s, of which ordering and factorisation %.3g s\n", m.Solve.Seconds(), m.Factor.Seconds())
	fmt.Fprintf(w, "  nonzeros of the factor %d = %.2f × (31/8)·n·log2(n), the nested-dissection leading term\n\n", m.NNZL, m.FillRatio)

	// Walkers on the biased star of docs/references.md S1 (exact stepping).
	star := gen.Star([]float64{1, 2, 3}, []float64{0.5, 0.3, 0.2})
	c, _ := star.NodeIndex("c")
	rate := func(workers int) (float64, error) {
		r, err := montecarlo.Run(ctx, star, vertex.AtNode(c), &montecarlo.Settings{Particles: *walkers, Seed: 1, Workers: workers})
		if err != nil {
			return 0, err
		}
		if r.Status == montecarlo.Cancelled {
			// A rate from an interrupted run would be printed as a figure.
			return 0, fmt.Errorf("%w during the walker measurements (the figures above are complete)", errInterruptedAny)
		}
		return float64(r.Stats.Steps) / r.Stats.Elapsed.Seconds(), nil
	}
	// Best of three alternating runs per worker count, so that a burst of
	// load from another process does not decide the speed-up.
	var r1, r2 float64
	for range 3 {
		a, err := rate(1)
		if err != nil {
			return fail(stderr, "bench", err)
		}
		b, err := rate(2)
		if err != nil {
			return fail(stderr, "bench", err)
		}
		r1, r2 = max(r1, a), max(r2, b)
	}
	fmt.Fprintf(w, "walkers, exact stepping on a three-arm star (%d walkers, best of 3 runs):\n", *walkers)
	fmt.Fprintf(w, "  %.3g steps/s with one worker (target ≥ 1e7); two workers / one = %.2f\n", r1, r2/r1)
	sol, err := graphpde.Solve(star, nil)
	if err == nil {
		fmt.Fprintf(w, "  (PDE check of the same star: P(end1) = %.6f, closed form 30/43 = %.6f)\n", sol.U[c], 30.0/43)
	}
	if err := benchTime(w, *size); err != nil {
		return fail(stderr, "bench", err)
	}
	fmt.Fprintln(w)
	if err := benchControls(w, *size); err != nil {
		return fail(stderr, "bench", err)
	}
	if err := benchScale(ctx, w, *size); err != nil {
		return fail(stderr, "bench", err)
	}
	if err := benchIO(ctx, w, *size); err != nil {
		return fail(stderr, "bench", err)
	}
	return 0
}

// benchTime measures time steps and the spectrum against a steady solve of
// the same network in the same run.
func benchTime(w io.Writer, size string) error {
	// The spectrum's target is for 10⁴ exact edges, which now take a
	// fraction of a second: both sizes measure that tree.
	edges, cells, steps, spEdges := 1000, 100, 20, 10000
	if size == "large" {
		edges = 10000
	}
	net := gen.RandomTree(edges, 1, cells)
	// best of 3 alternating runs, so that a burst of load from another
	// process does not decide the ratio
	steady, per := math.Inf(1), math.Inf(1)
	unknowns := 0
	h := 1e-3
	for range 3 {
		t0 := time.Now()
		if _, err := graphpde.Solve(net, &graphpde.Settings{Method: graphpde.MethodGrid}); err != nil {
			return err
		}
		steady = math.Min(steady, time.Since(t0).Seconds())
		one, err := graphpde.Evolve(net, &graphpde.EvolveSettings{Until: h, Step: h})
		if err != nil {
			return err
		}
		run, err := graphpde.Evolve(net, &graphpde.EvolveSettings{Until: float64(steps+1) * h, Step: h})
		if err != nil {
			return err
		}
		per = math.Min(per, (run.Stats.Time-one.Stats.Time).Seconds()/float64(steps))
		unknowns = run.Stats.Unknowns
	}
	fmt.Fprintf(w, "\nevolve, random tree %d edges × %d cells (%d unknowns), fixed TR-BDF2 steps (best of 3):\n", edges, cells, unknowns)
	fmt.Fprintf(w, "  one step %.3g s = %.2f steady grid solves (%.3g s); 1000 steps = %.0f steady solves (target ≤ 20%s)\n",
		per, per/steady, steady, 1000*per/steady, unmet(1000*per/steady > 20))
	sp := gen.RandomTree(spEdges, 1, 0)
	// best of 3 steady solves as the reference (the first one pays for
	// fresh memory)
	exactSteady := math.Inf(1)
	for range 3 {
		t0 := time.Now()
		if _, err := graphpde.Solve(sp, &graphpde.Settings{Method: graphpde.MethodExact}); err != nil {
			return err
		}
		exactSteady = math.Min(exactSteady, time.Since(t0).Seconds())
	}
	r, err := graphpde.Spectrum(sp, &graphpde.SpectrumSettings{Count: 20, Method: graphpde.MethodExact})
	if err != nil {
		return err
	}
	ratio := r.Stats.Time.Seconds() / exactSteady
	fmt.Fprintf(w, "spectrum, 20 smallest eigenvalues of a random tree of %d exact edges:\n", spEdges)
	fmt.Fprintf(w, "  %d factorisations, %.3g s = %.0f steady exact solves (best of 3, %.3g s) (target ≤ 50%s)\n",
		r.Stats.Factorizations, r.Stats.Time.Seconds(), ratio, exactSteady, unmet(ratio > 50))
	return nil
}

// unmet is the remark after a target that the measured figure missed (the
// reasons are in DEVELOPERS.md); nothing when it was met.
func unmet(missed bool) string {
	if missed {
		return ", not met: see DEVELOPERS.md"
	}
	return ""
}
