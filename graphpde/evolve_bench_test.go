package graphpde_test

import (
	"fmt"
	"math"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
)

// BenchmarkEvolveSteps times fixed TR-BDF2 steps on a random tree with grid
// edges against one steady grid solve of the same network, measured in the
// same run, and reports the ratio "1000 steps / steady solve" (the cost of
// one step, from `steps` steps, times 1000). Run with -benchtime 1x; the
// 10⁶-unknown case takes about a minute on one core.
func BenchmarkEvolveSteps(b *testing.B) {
	for _, sz := range []struct{ edges, cells, steps int }{{1000, 100, 50}, {10000, 100, 20}} {
		b.Run(fmt.Sprintf("unknowns=%d", sz.edges*sz.cells), func(b *testing.B) {
			net := gen.RandomTree(sz.edges, 1, sz.cells)
			b.ReportAllocs()
			for b.Loop() {
				t0 := time.Now()
				if _, err := graphpde.Solve(net, &graphpde.Settings{Method: graphpde.MethodGrid}); err != nil {
					b.Fatal(err)
				}
				steady := time.Since(t0)
				// one step to set up (analysis, first factorisation), then the steps
				h := 1e-3
				r, err := graphpde.Evolve(net, &graphpde.EvolveSettings{Until: h, Step: h})
				if err != nil {
					b.Fatal(err)
				}
				setup := r.Stats.Time
				r, err = graphpde.Evolve(net, &graphpde.EvolveSettings{Until: float64(sz.steps+1) * h, Step: h})
				if err != nil {
					b.Fatal(err)
				}
				per := (r.Stats.Time - setup).Seconds() / float64(sz.steps)
				b.ReportMetric(steady.Seconds(), "steady-s")
				b.ReportMetric(per, "step-s")
				b.ReportMetric(1000*per/steady.Seconds(), "1000steps/steady")
				b.ReportMetric((setup.Seconds()+1000*per)/steady.Seconds(), "run1000/steady")
			}
		})
	}
}

// BenchmarkSpectrum20 times the 20 smallest eigenvalues (exact elements,
// Wittrick–Williams count) of a random tree against one steady exact solve
// of it, measured in the same run.
func BenchmarkSpectrum20(b *testing.B) {
	for _, edges := range []int{1000, 10000} {
		b.Run(fmt.Sprintf("edges=%d", edges), func(b *testing.B) {
			net := gen.RandomTree(edges, 1, 0)
			for b.Loop() {
				// best of 3 steady solves (the first pays for fresh memory)
				steady := time.Duration(math.MaxInt64)
				for range 3 {
					t0 := time.Now()
					if _, err := graphpde.Solve(net, &graphpde.Settings{Method: graphpde.MethodExact}); err != nil {
						b.Fatal(err)
					}
					steady = min(steady, time.Since(t0))
				}
				r, err := graphpde.Spectrum(net, &graphpde.SpectrumSettings{Count: 20, Method: graphpde.MethodExact})
				if err != nil {
					b.Fatal(err)
				}
				b.ReportMetric(steady.Seconds(), "steady-s")
				b.ReportMetric(r.Stats.Time.Seconds(), "spectrum-s")
				b.ReportMetric(r.Stats.Time.Seconds()/steady.Seconds(), "spectrum/steady")
				b.ReportMetric(float64(r.Stats.Factorizations), "factorisations")
			}
		})
	}
}
