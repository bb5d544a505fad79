package gen

import (
	"time"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// FactorFigures are the measurements of MeasureFactor.
type FactorFigures struct {
	Side, Unknowns int
	// Best re-factorisation times of the node system: with the defaults
	// (dense kernels on amalgamated supernodes, Workers goroutines), the
	// same on one goroutine, and the reference (the supernodal kernel on
	// the fundamental supernodes with plain Go loops, one goroutine).
	Default, OneGoroutine, Reference time.Duration
	Workers                          int
	// Analysis: the ordering and symbolic factorisation that a solve with
	// graphpde.Settings.Analysis, or a Newton or time step, does not
	// repeat.
	Analysis                time.Duration
	Supernodes, Fundamental int
	NNZL                    int
	MultiplyAdds            float64 // of the numeric factorisation
}

// MeasureFactor times the factorisation of the node system of
// SquareMesh(side, side) with exact elements — unit conductances, the
// left and right columns fixed, (side−2)·side unknowns — assembled here
// directly, best of rounds alternating runs of the three kernels. It
// prints nothing.
func MeasureFactor(side, rounds int) (FactorFigures, error) {
	ff := FactorFigures{Side: side}
	nx := side - 2 // balance columns 1 … side−2
	n := nx * side
	ff.Unknowns = n
	m := nodesys.NewMatrix[float64](n)
	id := func(i, j int) int { return j*nx + i - 1 } // column i of row j
	for j := range side {
		for i := 1; i <= nx; i++ {
			v := id(i, j)
			// Left and right neighbours: balance or fixed.
			for _, di := range []int{-1, 1} {
				m.Add(v, v, 1)
				if k := i + di; k >= 1 && k <= nx {
					m.Add(v, id(k, j), -1)
				}
			}
			for _, dj := range []int{-1, 1} {
				if k := j + dj; k >= 0 && k < side {
					m.Add(v, v, 1)
					m.Add(v, id(i, k), -1)
				}
			}
		}
	}
	kt, err := nodesys.MeasureKernels(m, rounds)
	if err != nil {
		return ff, err
	}
	ff.Default, ff.OneGoroutine, ff.Reference = kt.Default, kt.OneGoroutine, kt.Reference
	ff.Workers, ff.Analysis = kt.Workers, kt.Analysis
	ff.Supernodes, ff.Fundamental = kt.Supernodes, kt.Fundamental
	ff.NNZL, ff.MultiplyAdds = kt.NNZL, kt.MultiplyAdds
	return ff, nil
}
