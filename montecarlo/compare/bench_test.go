package compare

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// BenchmarkDistribution measures the KS check against its own floor, a sort
// of the same times (the check copies, sorts and makes one survival call per
// time, so the ratio shows the overhead beyond sorting).
func BenchmarkDistribution(b *testing.B) {
	for _, n := range []int{1000, 100000} {
		rng := rand.New(rand.NewPCG(71, 1))
		times := make([]float64, n)
		for i := range times {
			times[i] = rng.ExpFloat64()
		}
		b.Run(fmt.Sprintf("sort/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			buf := make([]float64, n)
			for b.Loop() {
				copy(buf, times)
				slices.Sort(buf)
			}
		})
		b.Run(fmt.Sprintf("ks/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				Distribution("d", times, 0, 0, expSurvival)
			}
		})
		b.Run(fmt.Sprintf("ks-censored/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				Distribution("d", times, 2, 0, expSurvival)
			}
		})
	}
}

// BenchmarkDecide measures the verdict over m checks, one of them a
// distribution check (whose critical distance costs a bisection).
func BenchmarkDecide(b *testing.B) {
	for _, m := range []int{6, 60} {
		checks := make([]Check, m)
		for i := range checks {
			checks[i] = Probability("hit:x", 0.5, 0.5001, 0.001)
		}
		checks[0] = Distribution("d", []float64{0.1, 0.5, 1, 2}, 1.5, 0, expSurvival)
		b.Run(fmt.Sprintf("m=%d", m), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				Decide(checks, nil)
			}
		})
	}
}
