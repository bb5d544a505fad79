package graphpde

// The moments of the lifetime: Taylor coefficients of its Laplace transform
// at s = 0 by a Cauchy integral (docs/exit-statistics.md).

import (
	"fmt"
	"math"
)

// cauchyNodes is the number of points on the Cauchy circle (half of them
// solved, by conjugate symmetry). The aliasing error of the n-th Taylor
// coefficient is about (R/λ₁)^N ≤ 2^{−N} relative, λ₁ the smallest decay
// rate: 2^{−32} ≈ 2e−10.
const cauchyNodes = 32

// momentAgreement is the relative agreement required between the first
// moment from the Cauchy integral and the steady mean: the aliasing bound
// 2e−10 with a margin for rounding.
const momentAgreement = 1e-8

// moments fills Moments and SD from Taylor coefficients of L at s = 0.
func (x *ExitStats) moments(sup float64) error {
	n := len(x.Moments)
	N := cauchyNodes
	if n > 8 {
		N = 64
	}
	R := 0.5 / sup
	var coef []float64
	for try := 0; try < 6; try++ {
		var err error
		coef, err = x.law.taylor(R, N, n)
		if err != nil {
			return err
		}
		if math.Abs(-coef[1]-x.Mean) <= momentAgreement*x.Mean {
			break
		}
		if try == 5 {
			x.Notes = append(x.Notes, fmt.Sprintf("moments: the Cauchy integral did not reproduce the mean (%.10g vs %.10g); the higher moments and the standard deviation are not reported (NaN)", -coef[1], x.Mean))
			for k := 1; k < n; k++ {
				x.Moments[k] = math.NaN()
			}
			x.Moments[0] = x.Mean
			x.SD = math.NaN()
			return nil
		}
		R /= 4
	}
	fact := 1.0
	for k := 1; k <= n; k++ {
		fact *= float64(k)
		m := fact * coef[k]
		if k%2 == 1 {
			m = -m
		}
		x.Moments[k-1] = m
	}
	x.Moments[0] = x.Mean
	x.setSD(momentAgreement)
	return nil
}

// setSD sets SD from the first two moments, or NaN with a note when
// E τ² < (E τ)² beyond the relative accuracy rel of the moments (rounding
// can make a tiny variance slightly negative, which is reported as 0).
func (x *ExitStats) setSD(rel float64) {
	m1, m2 := x.Moments[0], x.Moments[1]
	v := m2 - m1*m1
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		x.SD = math.NaN()
		for k := 1; k < len(x.Moments); k++ {
			if math.IsInf(x.Moments[k], 0) {
				x.Moments[k] = math.NaN()
			}
		}
		x.Notes = append(x.Notes, fmt.Sprintf("moments: E τ² = %g is not a finite float64 (mean %g), so the standard deviation is not reported (NaN)", m2, m1))
	case v >= 0:
		x.SD = math.Sqrt(v)
	case -v <= 4*rel*m2:
		x.SD = 0
	default:
		x.SD = math.NaN()
		for k := 1; k < len(x.Moments); k++ {
			x.Moments[k] = math.NaN()
		}
		x.Notes = append(x.Notes, fmt.Sprintf("moments: E τ² = %.6g is below (E τ)² = %.6g, so the higher moments and the standard deviation are not reported (NaN)", m2, m1*m1))
	}
}
