package exitlaw

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/ramify-dev/ramify/montecarlo/compare"
)

// TestSurvivalReference checks both series against docs/references.md B2 (two
// independent series there; the density series is in Feller, An
// Introduction to Probability Theory and Its Applications, vol. II — page
// and edition from memory): P(τ > t) from the centre of (−1, 1).
func TestSurvivalReference(t *testing.T) {
	const printed = 5e-8 // the reference values carry 7 decimals
	for _, c := range []struct{ t, want float64 }{
		{0.25, 0.9089995}, {0.5, 0.6854458}, {1, 0.3707774}, {2, 0.1079770},
	} {
		if got := Survival(c.t); math.Abs(got-c.want) > printed {
			t.Errorf("Survival(%g) = %.9f, want %.7f", c.t, got, c.want)
		}
		// The other series at the same point.
		other := 1 - CDF(c.t)
		if c.t <= imageMax {
			other = survivalEigen(c.t)
		}
		if math.Abs(other-c.want) > printed {
			t.Errorf("other series at %g = %.9f, want %.7f", c.t, other, c.want)
		}
	}
}

// TestSeriesAgree checks that the image and eigen series agree on a grid
// around the switch point (both are exact; only round-off separates them).
func TestSeriesAgree(t *testing.T) {
	const roundoff = 1e-14
	for x := 0.2; x <= 3; x += 0.1 {
		img := 1 - 2*imageSum(x)
		if d := math.Abs(img - survivalEigen(x)); d > roundoff {
			t.Errorf("t=%g: image %.16g eigen %.16g", x, img, survivalEigen(x))
		}
	}
}

func imageSum(x float64) float64 {
	var s float64
	for k := 40; k >= 0; k-- {
		term := math.Erfc(float64(2*k+1) / math.Sqrt(2*x))
		if k%2 == 1 {
			term = -term
		}
		s += term
	}
	return s
}

// TestDensityIsDerivative checks Density against a central difference of CDF.
func TestDensityIsDerivative(t *testing.T) {
	const h = 1e-5
	const disc = 1e-8 // h² times the third derivative, plus round-off/h
	for _, x := range []float64{0.05, 0.2, 0.7, 1.0, 1.3, 3} {
		fd := (CDF(x+h) - CDF(x-h)) / (2 * h)
		if d := math.Abs(fd - Density(x)); d > disc {
			t.Errorf("t=%g: density %g, difference quotient %g", x, Density(x), fd)
		}
	}
}

// TestTableError measures the interpolation error of the default table over
// a fine u grid: |ΔCDF| = |F(Q(u)) − u| and |Δt| = |Q(u) − F⁻¹(u)|. The
// bounds are what the doc comment of the montecarlo package promises; both
// are four orders below the Kolmogorov–Smirnov resolution 1.36/sqrt(10⁷) =
// 4.3e−4 of a 10⁷-sample run, and the mean bias they imply is below 1e−7.
func TestTableError(t *testing.T) {
	const (
		maxDCDF = 2e-8 // measured 1.4e−8 with 4096 knots
		maxDT   = 2e-7 // measured 1.0e−7
	)
	tb := Default()
	var dc, dt float64
	const n = 200000
	prev := 0.0
	for i := 1; i < n; i++ {
		u := float64(i) / n
		q := tb.Quantile(u)
		if q < prev {
			t.Fatalf("table not monotone at u=%g: %g < %g", u, q, prev)
		}
		prev = q
		dc = math.Max(dc, math.Abs(CDF(q)-u))
		if i%100 == 0 && u < tb.uTail {
			dt = math.Max(dt, math.Abs(q-invertCDF(u)))
		}
	}
	// Small u (the left tail), where ℓ = −ln u is large.
	for e := 5.0; e <= 36; e += 0.25 {
		u := math.Exp(-e)
		q := tb.Quantile(u)
		dt = math.Max(dt, math.Abs(q-invertCDF(u)))
	}
	t.Logf("max |ΔCDF| = %.2g, max |Δt| = %.2g", dc, dt)
	if dc > maxDCDF || dt > maxDT {
		t.Errorf("table error |ΔCDF| = %g (bound %g), |Δt| = %g (bound %g)", dc, maxDCDF, dt, maxDT)
	}
	// The tail is exact up to the second eigen term.
	const tailExact = 1e-9
	for _, u := range []float64{0.9, 0.99, 0.999999} {
		q := tb.Quantile(u)
		if d := math.Abs(Survival(q) - (1 - u)); d > tailExact*(1-u) {
			t.Errorf("tail at u=%g: survival %g, want %g", u, Survival(q), 1-u)
		}
	}
}

// TestDrawsKS draws 2·10⁵ times and applies the one-sample KS test against
// CDF (docs/references.md B2 law); the moments are checked against E τ₁ = 1 and
// Var τ₁ = 2/3 (B2: E τ = r², Var τ = 2r⁴/3).
func TestDrawsKS(t *testing.T) {
	const n = 200000
	rng := rand.New(rand.NewPCG(7, 11))
	tb := Default()
	x := make([]float64, n)
	var s, s2 float64
	for i := range x {
		x[i] = tb.Draw(rng)
		s += x[i]
		s2 += x[i] * x[i]
	}
	mean := s / n
	vr := s2/n - mean*mean
	// sd of τ₁² is sqrt(E τ⁴ − (E τ²)²); E τ⁴ = 6.1 (from the Laplace
	// transform sech sqrt(2s)); 5 stderr for two checks at once.
	if d := math.Abs(mean - 1); d > 5*math.Sqrt(2.0/3/n) {
		t.Errorf("mean %g, want 1", mean)
	}
	if d := math.Abs(vr - 2.0/3); d > 5*math.Sqrt(6.1/n) {
		t.Errorf("variance %g, want 2/3", vr)
	}
	d, p := ksTest(x, CDF)
	if p < 1e-3 {
		t.Errorf("KS D = %g, p = %g", d, p)
	}
}

// TestKSDetectsClamp checks that the KS test has power against the error the
// exact tail avoids: draws from a table clamped at t = 2 fail it.
func TestKSDetectsClamp(t *testing.T) {
	const n = 200000
	rng := rand.New(rand.NewPCG(7, 12))
	tb := Default()
	x := make([]float64, n)
	for i := range x {
		x[i] = math.Min(tb.Draw(rng), TailStart)
	}
	d, p := ksTest(x, CDF)
	if p > 1e-6 {
		t.Errorf("clamped draws pass KS: D = %g, p = %g", d, p)
	}
}

// ksTest returns the Kolmogorov–Smirnov distance of the sample x from the
// distribution function cdf and its p-value (compare.Distribution with no
// censoring: Stephens' finite-n correction of Kolmogorov's limit law).
func ksTest(x []float64, cdf func(float64) float64) (d, p float64) {
	c := compare.Distribution("ks", x, 0, 0, func(t float64) float64 { return 1 - cdf(t) })
	return c.Stat, c.P
}
