package starlaw

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/montecarlo/internal/exitlaw"
)

// testLaws are the visit laws the tests sweep: no leak, a leak, a capacity,
// both, and extreme values of each (μ = 1 + κ, η as in Visit).
var testLaws = []struct{ mu, eta float64 }{
	{1, 0}, {2, 0}, {1, 1}, {1.5, 0.3}, {40, 0}, {1, 50}, {1.01, 0.01}, {8, 20},
}

// TestDecomposition checks the identity the visit law rests on: with no leak
// and no capacity, S(L_tot) + T_f is the exit time τ₁ of standard Brownian
// motion from (−1, 1), whose transform is 1/cosh(sqrt(2s)) (docs/references.md
// B3): [1/(1 + Φ(s))]·sqrt(2s)/sinh(sqrt(2s)) = 1/cosh(sqrt(2s)).
func TestDecomposition(t *testing.T) {
	const roundoff = 1e-13
	v := Visit(1, 0)
	for _, s := range []complex128{1e-6, 0.004, 0.3, 2, 50, 4000, complex(-3, 4), complex(-100, 10), complex(0.2, -7)} {
		got := v.Psi(s) * FinalTransform(s)
		want := 1 / cmplx.Cosh(cmplx.Sqrt(2*s))
		if cmplx.Abs(got-want) > roundoff*math.Max(1, cmplx.Abs(want)) {
			t.Errorf("s = %v: ψ·ψ_f = %v, 1/cosh = %v", s, got, want)
		}
	}
	// And in the time domain: the CDF of τ₁ by inversion of the product
	// against the series of package exitlaw.
	tau := &Law{Psi: func(s complex128) complex128 { return v.Psi(s) * FinalTransform(s) }}
	const talbot = 1e-10 // window contour accuracy, internal/laplace
	for _, x := range []float64{0.05, 0.2, 0.7, 1, 2.5, 6} {
		if d := math.Abs(tau.CDF(x) - exitlaw.CDF(x)); d > talbot {
			t.Errorf("t = %g: CDF by inversion %.12g, series %.12g", x, tau.CDF(x), exitlaw.CDF(x))
		}
	}
}

// TestFinalSeries checks the inverted CDF of T_f against its residue series
// P(T_f > t) = 2 Σ (−1)^{n+1} e^{−n²π²t/2} (derived in FinalLaw's comment
// from the poles of sqrt(2s)/sinh(sqrt(2s))).
func TestFinalSeries(t *testing.T) {
	const talbot = 1e-10
	l := FinalLaw()
	for _, x := range []float64{0.02, 0.05, 0.1, 0.3, 1, 3} {
		var g float64
		for n := 400; n >= 1; n-- {
			term := 2 * math.Exp(-float64(n*n)*math.Pi*math.Pi*x/2)
			if n%2 == 0 {
				term = -term
			}
			g += term
		}
		if d := math.Abs(l.Survival(x) - g); d > talbot {
			t.Errorf("t = %g: survival by inversion %.12g, series %.12g", x, l.Survival(x), g)
		}
	}
}

// TestTailPole checks the dominant pole and its weight against the inverted
// survival function at a time where the second pole is negligible.
func TestTailPole(t *testing.T) {
	const talbot = 1e-9 // relative, on a survival of 1e−3…1e−6
	for _, c := range testLaws {
		l := Visit(c.mu, c.eta)
		x := math.Log(math.Abs(l.C2)/1e-14) / l.Lam2
		want := l.C1 * math.Exp(-l.Lam1*x)
		if got := l.Survival(x); math.Abs(got-want) > talbot*want+1e-14 {
			t.Errorf("μ = %g, η = %g: survival at %g = %.10g, one pole %.10g", c.mu, c.eta, x, got, want)
		}
	}
}

// tables returns the laws under test with their tables and exact moments:
// for the visit law ψ = μ/(μ + a1 s + a2 s² + …), a1 = 2/3 + η, a2 = −4/45
// (Φ(s) = 2s/3 − 4s²/45 + …), so E Y = a1/μ and E Y² = 2a1²/μ² − 2a2/μ; for
// T_f, sqrt(2s)/sinh(sqrt(2s)) = 1 − s/3 + 7s²/90 + …, E T = 1/3, E T² = 7/45.
func tables() []struct {
	name   string
	l      *Law
	tb     *Table
	m1, m2 float64
} {
	var out []struct {
		name   string
		l      *Law
		tb     *Table
		m1, m2 float64
	}
	out = append(out, struct {
		name   string
		l      *Law
		tb     *Table
		m1, m2 float64
	}{"final", FinalLaw(), Final(), 1.0 / 3, 7.0 / 45})
	for _, c := range testLaws {
		a1, a2 := 2.0/3+c.eta, -4.0/45
		out = append(out, struct {
			name   string
			l      *Law
			tb     *Table
			m1, m2 float64
		}{"visit", Visit(c.mu, c.eta), VisitTable(c.mu, c.eta), a1 / c.mu, 2*a1*a1/(c.mu*c.mu) - 2*a2/c.mu})
	}
	return out
}

// TestTableError measures max |F(Q(u)) − u| over a fine grid in w (between
// and on the knots) and the table's moments E X = ∫Q(u)du, E X² by
// quadrature against the exact moments from the transform's derivatives.
func TestTableError(t *testing.T) {
	const (
		maxDCDF = 1e-10 // measured 3e−11 (T_f), 3e−12 (visit laws)
		quad    = 1e-8  // relative error of the moments, table and Simpson rule
	)
	for _, c := range tables() {
		n := len(c.tb.k) / 2
		var worst float64
		// 0 < w < w_tail, three points per knot interval.
		vmax := math.Sqrt(c.tb.wTail)
		for i := 1; i < 3*n; i++ {
			v := vmax * float64(i) / float64(3*n)
			w := v * v
			q := c.tb.Quantile(w)
			d := math.Abs(c.l.CDF(q) + math.Expm1(-w))
			worst = math.Max(worst, d)
		}
		// Tail.
		for _, w := range []float64{c.tb.wTail, c.tb.wTail + 1, c.tb.wTail + 10} {
			q := c.tb.Quantile(w)
			worst = math.Max(worst, math.Abs(c.l.Survival(q)-math.Exp(-w)))
		}
		// Moments: ∫ Q(w)^k e^{−w} dw, Simpson in v (dw = 2v dv) on the
		// table part, the tail in closed form: with X = (w + ln C)/λ,
		// ∫_{w0}^∞ X e^{−w} dw = e^{−w0}(X0 + 1/λ), and
		// ∫ X² e^{−w} dw = e^{−w0}(X0² + 2X0/λ + 2/λ²).
		const m = 200000
		var s1, s2 float64
		h := vmax / m
		for i := 0; i <= m; i++ {
			v := float64(i) * h
			q := c.tb.Quantile(v * v)
			wt := 2.0
			if i == 0 || i == m {
				wt = 1
			} else if i%2 == 1 {
				wt = 4
			}
			f := 2 * v * math.Exp(-v*v) * wt * h / 3
			s1 += q * f
			s2 += q * q * f
		}
		x0, lam, e0 := c.tb.Quantile(c.tb.wTail), c.tb.lam, math.Exp(-c.tb.wTail)
		s1 += e0 * (x0 + 1/lam)
		s2 += e0 * (x0*x0 + 2*x0/lam + 2/(lam*lam))
		t.Logf("%s λ1=%.4g C1=%.4g w_tail=%.3g: max|ΔCDF| = %.2g, E X %.10g (exact %.10g), E X² %.10g (exact %.10g)",
			c.name, c.l.Lam1, c.l.C1, c.tb.wTail, worst, s1, c.m1, s2, c.m2)
		if !(worst <= maxDCDF) {
			t.Errorf("%s: max |F(Q(u)) − u| = %.3g", c.name, worst)
		}
		if !(math.Abs(s1-c.m1) <= quad*c.m1 && math.Abs(s2-c.m2) <= quad*c.m2) {
			t.Errorf("%s: moments %.10g, %.10g; exact %.10g, %.10g", c.name, s1, s2, c.m1, c.m2)
		}
	}
}

// TestDraws checks draws from each table: a KS test against the CDF from
// inversion (fixed seed; each of the 9 laws at p > 1e−3, Bonferroni for a
// family error near 1%) and the sample mean within 4.5 standard errors
// of the exact mean.
func TestDraws(t *testing.T) {
	n := 200000
	if testing.Short() {
		n = 20000
	}
	rng := rand.New(rand.NewPCG(7, 1))
	x := make([]float64, n)
	for _, c := range tables() {
		var s float64
		for i := range x {
			x[i] = c.tb.Draw(rng)
			s += x[i]
		}
		mean := s / float64(n)
		se := math.Sqrt((c.m2 - c.m1*c.m1) / float64(n))
		d, p := ksTest(x, c.l.CDF)
		if p < 1e-3 || math.Abs(mean-c.m1) > 4.5*se {
			t.Errorf("%s: KS D = %.3g (p = %.3g), mean %.6g ± %.2g, exact %.6g", c.name, d, p, mean, se, c.m1)
		}
	}
}

// ksTest returns the Kolmogorov–Smirnov distance of the sample x from the
// distribution function cdf and its p-value (compare.Distribution with no
// censoring: Stephens' finite-n correction of Kolmogorov's limit law).
func ksTest(x []float64, cdf func(float64) float64) (d, p float64) {
	c := compare.Distribution("ks", x, 0, 0, func(t float64) float64 { return 1 - cdf(t) })
	return c.Stat, c.P
}
