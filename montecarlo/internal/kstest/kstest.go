// Package kstest holds the one-sample Kolmogorov–Smirnov statistic and the
// asymptotic Kolmogorov p-value, used by the walker tests to compare sampled
// times with a known distribution function.
//
// The statistic is D = sup_t |F_n(t) − F(t)|; its p-value uses Kolmogorov's
// limit law P(sqrt(n) D > λ) → Q(λ) = 2 Σ_{k≥1} (−1)^{k−1} exp(−2k²λ²), with
// the finite-n correction λ = (sqrt(n) + 0.12 + 0.11/sqrt(n)) D of Stephens
// (1970, J. R. Statist. Soc. B 32:115–122; from memory).
package kstest

import (
	"math"
	"slices"
)

// Statistic returns D for the sample x against the continuous distribution
// function cdf. It sorts x in place. Cost O(n log n) plus n cdf calls.
func Statistic(x []float64, cdf func(float64) float64) float64 {
	slices.Sort(x)
	n := float64(len(x))
	var d float64
	for i, v := range x {
		f := cdf(v)
		d = math.Max(d, math.Max(float64(i+1)/n-f, f-float64(i)/n))
	}
	return d
}

// PValue returns the asymptotic probability that a sample of size n from the
// hypothesised law gives a statistic at least d.
func PValue(d float64, n int) float64 {
	sn := math.Sqrt(float64(n))
	lam := (sn + 0.12 + 0.11/sn) * d
	if lam < 0.2 {
		return 1
	}
	var q float64
	for k := 1; k <= 100; k++ {
		term := math.Exp(-2 * float64(k*k) * lam * lam)
		if k%2 == 0 {
			q -= term
		} else {
			q += term
		}
		if term < 1e-16 {
			break
		}
	}
	return math.Min(1, math.Max(0, 2*q))
}
