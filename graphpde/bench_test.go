package graphpde_test

import (
	"fmt"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
)

// BenchmarkTreeGrid solves a random recursive tree with grid elements of 100
// cells on every edge (10⁴ edges: 10⁶ unknowns; 10⁵ edges: 10⁷ unknowns,
// about 300 MB) and compares with plain Thomas solves of the same number of
// unknowns timed in the same run (gen.MeasureTree: three alternating
// repetitions, minimum kept). Reported per unknown:
//
//	ns/unknown             the solve (heap memory reused where the runtime kept it)
//	cold-ns/unknown        the first solve, on fresh memory (page faults included)
//	B/unknown              bytes allocated by one solve
//	ratio-to-thomas        solve / Thomas with its memory touched beforehand (target ≤ 1.5)
//	cold-ratio-to-thomas   first solve / Thomas allocating its solution and scratch
//
// Run with -benchtime=1x.
func BenchmarkTreeGrid(b *testing.B) {
	for _, edges := range []int{10_000, 100_000} {
		b.Run(fmt.Sprintf("edges=%d", edges), func(b *testing.B) {
			b.ReportAllocs()
			var f gen.TreeFigures
			for b.Loop() {
				var err error
				if f, err = gen.MeasureTree(edges, 100, 3); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(f.NsPerUnknown, "ns/unknown")
			b.ReportMetric(float64(f.SolveCold.Nanoseconds())/float64(f.Unknowns), "cold-ns/unknown")
			b.ReportMetric(f.BytesPerUnknown, "B/unknown")
			b.ReportMetric(f.Ratio, "ratio-to-thomas")
			b.ReportMetric(f.RatioCold, "cold-ratio-to-thomas")
		})
	}
}

// BenchmarkMeshExact solves square meshes of unit conductors with exact
// elements and reports the factorisation time, the fill of the node system's
// factor (entries of L) and its ratio to the nested-dissection leading term
// 31/8·n·log₂ n (George 1973, from memory).
func BenchmarkMeshExact(b *testing.B) {
	for _, side := range []int{100, 300} {
		b.Run(fmt.Sprintf("side=%d", side), func(b *testing.B) {
			net := gen.SquareMesh(side, side)
			set := &graphpde.Settings{Method: graphpde.MethodExact}
			b.ReportAllocs()
			var st graphpde.Stats
			for b.Loop() {
				sol, err := graphpde.Solve(net, set)
				if err != nil {
					b.Fatal(err)
				}
				st = sol.Stats
			}
			n := float64(st.NodeUnknowns)
			nd := 31.0 / 8 * n * math.Log2(n)
			b.ReportMetric(float64(st.FactorTime.Nanoseconds())/1e6, "factor-ms")
			b.ReportMetric(float64(st.FillNNZ), "nnzL")
			b.ReportMetric(float64(st.FillNNZ)/nd, "nnzL/ND")
		})
	}
}
