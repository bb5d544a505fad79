package montecarlo

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestQuantilesBySelection checks the selection-based quantiles against a
// full sort with the same interpolation (Hyndman and Fan's type 7), on
// samples with ties and of sizes around the selection cut-off.
func TestQuantilesBySelection(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 2))
	ps := []float64{0, 0.1, 0.25, 0.5, 0.5, 0.75, 0.9, 0.999, 1}
	for _, n := range []int{1, 2, 17, 18, 100, 1000, 100000} {
		ts := make([]float64, n)
		for i := range ts {
			ts[i] = float64(rnd.IntN(n/3 + 1)) // ties
		}
		sorted := slices.Clone(ts)
		slices.Sort(sorted)
		got := quantiles(ts, ps)
		for i, p := range ps {
			h := float64(n-1) * p
			lo := int(h)
			hi := min(lo+1, n-1)
			want := sorted[lo] + (h-float64(lo))*(sorted[hi]-sorted[lo])
			if got[i].T != want {
				t.Errorf("n=%d p=%g: %v, want %v", n, p, got[i].T, want)
			}
		}
	}
}

// TestBlockQuantiles checks the quantiles of block-sorted lifetimes with
// censored walkers (+Inf) against the quantiles of the finite values.
func TestBlockQuantiles(t *testing.T) {
	rnd := rand.New(rand.NewPCG(3, 4))
	ps := []float64{0, 0.1, 0.5, 0.9, 1}
	for _, n := range []int{1, 5, 100, 5000} {
		ts := make([]float64, n)
		var finite []float64
		for i := range ts {
			ts[i] = rnd.ExpFloat64()
			if rnd.IntN(10) == 0 {
				ts[i] = math.Inf(1)
			} else {
				finite = append(finite, ts[i])
			}
		}
		const block = 64
		for lo := 0; lo < n; lo += block {
			slices.Sort(ts[lo:min(lo+block, n)])
		}
		got := blockQuantiles(ts, block, ps)
		want := quantiles(finite, ps)
		if len(finite) == 0 {
			if got != nil {
				t.Errorf("n=%d: quantiles of nothing: %v", n, got)
			}
			continue
		}
		for i := range ps {
			if got[i] != want[i] {
				t.Errorf("n=%d p=%g: %v, want %v", n, ps[i], got[i], want[i])
			}
		}
	}
}
