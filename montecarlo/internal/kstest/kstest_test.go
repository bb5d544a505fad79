package kstest

import (
	"math"
	"testing"
)

// TestPValueCritical checks the Kolmogorov limit law at its classical
// critical values: P(sqrt(n) D > 1.3581) = 0.05 and P(sqrt(n) D > 1.6276) =
// 0.01 (tables of the Kolmogorov distribution, e.g. Smirnov 1948, Ann. Math.
// Statist. 19:279–281 — from memory). Large n makes Stephens' correction
// negligible.
func TestPValueCritical(t *testing.T) {
	const n = 100000000
	const printed = 1e-4 // the critical values carry 4 decimals
	for _, c := range []struct{ lam, p float64 }{{1.3581, 0.05}, {1.6276, 0.01}} {
		if got := PValue(c.lam/math.Sqrt(n), n); math.Abs(got-c.p) > printed {
			t.Errorf("Q(%g) = %.5f, want %g", c.lam, got, c.p)
		}
	}
}

// TestStatistic checks D on a sample small enough to do by hand: for the
// uniform law and x = (0.1, 0.4, 0.7), the largest gap is at 0.7, where
// F_n jumps from 2/3 to 1: D = 1 − 0.7 = 0.3.
func TestStatistic(t *testing.T) {
	const roundoff = 1e-15
	d := Statistic([]float64{0.7, 0.1, 0.4}, func(x float64) float64 { return x })
	if math.Abs(d-0.3) > roundoff {
		t.Errorf("D = %g, want 0.3", d)
	}
}
