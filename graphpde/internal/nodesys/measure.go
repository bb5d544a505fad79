package nodesys

import (
	"math"
	"time"
)

// KernelTimes are the figures of MeasureKernels.
type KernelTimes struct {
	// Best re-factorisation times: with the defaults (dense kernels on
	// amalgamated supernodes, up to GOMAXPROCS goroutines), the same on
	// one goroutine, and the reference: the supernodal kernel on the
	// fundamental supernodes with the Go loops on one goroutine.
	Default, OneGoroutine, Reference time.Duration
	// Analysis is the best time of the ordering and symbolic
	// factorisation, which a re-factorisation of the same pattern skips.
	Analysis time.Duration
	Workers  int // goroutines of the default factorisation
	// Supernodes of the default factorisation and of the reference.
	Supernodes, Fundamental int
	// MultiplyAdds is Σ_j c_j(c_j+1)/2 over the columns of L (c_j entries
	// below the diagonal): the multiply-adds of the numeric factorisation
	// without the explicit zeros of amalgamation.
	MultiplyAdds float64
	NNZL         int
}

// MeasureKernels times re-factorisations of m (a real matrix with a mesh-like
// pattern) for the benchmarks of ramify bench: in each of rounds rounds the
// default factorisation, the one-goroutine one and the reference one after
// another, so that load from other processes falls on all three alike;
// the best of the rounds is kept. It must not run concurrently with
// another factorisation of m. Cost about rounds·(analysis + 3
// factorisations).
func MeasureKernels(m *Matrix[float64], rounds int) (KernelTimes, error) {
	var kt KernelTimes
	one := 1
	def := NewFactor[float64](nil)
	single := NewFactor[float64](&Settings{Workers: one})
	ref := NewFactor[float64](&Settings{Workers: one})
	ref.kernel = kernelRef
	for _, f := range []*Factor[float64]{def, single, ref} {
		if err := f.Factorize(m); err != nil {
			return kt, err
		}
	}
	kt.Default, kt.OneGoroutine, kt.Reference, kt.Analysis = math.MaxInt64, math.MaxInt64, math.MaxInt64, math.MaxInt64
	for range max(rounds, 1) {
		for i, f := range []*Factor[float64]{def, single, ref} {
			t0 := time.Now()
			if err := f.Factorize(m); err != nil {
				return kt, err
			}
			d := time.Since(t0)
			p := [...]*time.Duration{&kt.Default, &kt.OneGoroutine, &kt.Reference}[i]
			*p = min(*p, d)
		}
		a := NewFactor[float64](nil)
		t0 := time.Now()
		if err := a.Analyze(m); err != nil {
			return kt, err
		}
		kt.Analysis = min(kt.Analysis, time.Since(t0))
	}
	kt.Workers = def.Stats().Workers
	kt.Supernodes, kt.Fundamental = def.Stats().Supernodes, ref.Stats().Supernodes
	kt.NNZL = ref.Stats().NNZL
	for j := 0; j < ref.n; j++ {
		c := float64(ref.lp[j+1] - ref.lp[j])
		kt.MultiplyAdds += c * (c + 1) / 2
	}
	return kt, nil
}
