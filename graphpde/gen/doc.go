// Package gen builds networks for benchmarks, tests and demonstrations:
// random recursive trees, square meshes, stars, the unit cube and chains, all
// deterministic for a given seed (math/rand/v2 PCG streams), and Measure, which
// runs the solver benchmarks of graphpde outside go test and returns the
// figures as ratios against references measured in the same run.
//
// The random recursive tree attaches node k to a uniformly chosen earlier node
// (its depth grows like log n). The mesh benchmark compares the fill of the
// factored node system with the leading term 31/8·n·log₂ n of nested
// dissection on a square grid (A. George, SIAM J. Numer. Anal. 10 (1973)
// 345–363, from memory), and the grid benchmark compares the cost per unknown
// with one plain tridiagonal (Thomas) solve of the same size.
package gen
