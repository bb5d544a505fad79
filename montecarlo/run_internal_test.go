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
// censored walkers (+Inf) against the selection-based quantiles of the same
// values, and that a quantile beyond the censored ones is NaN while one
// below them is the order statistic of the whole sample (censored walkers
// count as longer lives, not as missing ones).
func TestBlockQuantiles(t *testing.T) {
	rnd := rand.New(rand.NewPCG(3, 4))
	ps := []float64{0, 0.1, 0.5, 0.85, 0.95, 1}
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
		all := slices.Clone(ts)
		const block = 64
		for lo := 0; lo < n; lo += block {
			slices.Sort(ts[lo:min(lo+block, n)])
		}
		got := blockQuantiles(ts, block, ps)
		want := quantiles(all, ps)
		for i, p := range ps {
			if got[i] != want[i] && !(math.IsNaN(got[i].T) && math.IsNaN(want[i].T)) {
				t.Errorf("n=%d p=%g: %v, want %v", n, p, got[i], want[i])
			}
			h := float64(n-1) * p
			beyond := int(math.Ceil(h)) >= len(finite)
			if beyond != math.IsNaN(got[i].T) {
				t.Errorf("n=%d p=%g: %v with %d of %d exited", n, p, got[i].T, len(finite), n)
			}
		}
	}
}
