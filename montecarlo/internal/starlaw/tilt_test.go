package starlaw

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"reflect"
	"testing"

	"github.com/ramify-dev/ramify/internal/laplace"
)

// TestKillBaseLimit checks KillBase as the limit q → 0 of KillLaw: its
// transform g(s)/s against KillLaw(q)'s at q = 1e−9 (the two differ by
// O(q)), the total weight Σ C_n = 1 of its pole series at t = 0 (derived in
// KillBase's comment: Σ_{odd n} 8/(n²π²) = 1), and its mean −ψ'(0) by a
// five-point difference against the series' Σ C_n/λ_n.
func TestKillBaseLimit(t *testing.T) {
	const (
		closeQ   = 1e-8 // |ψ_q − ψ_0| = O(q) for q = 1e−9
		series   = 1e-5 // Σ_{n > N} 8/(n²π²) ≈ 4/(π²N), N = 2e5
		diffStep = 1e-4
		diffTol  = 1e-7 // five-point difference, error O(h⁴)
	)
	b, k := KillBase(), KillLaw(1e-9)
	for _, s := range []complex128{0.01, 1, 30, complex(-2, 5), complex(3, -40)} {
		if d := cmplx.Abs(b.Psi(s) - k.Psi(s)); d > closeQ {
			t.Errorf("s = %v: KillBase %v, KillLaw(1e−9) %v", s, b.Psi(s), k.Psi(s))
		}
	}
	var sum, mean float64
	for n := 1; n < 200001; n += 2 {
		lam := float64(n*n) * math.Pi * math.Pi / 2
		sum += 4 / lam
		mean += 4 / (lam * lam)
	}
	if math.Abs(sum-1) > series { // the series' tail is about 4/(π²·1e5)
		t.Errorf("Σ C_n = %.12g, want 1", sum)
	}
	h := complex(diffStep, 0)
	d := (-b.Psi(2*h) + 8*b.Psi(h) - 8*b.Psi(-h) + b.Psi(-2*h)) / (12 * h)
	if math.Abs(-real(d)-mean) > diffTol {
		t.Errorf("mean: −ψ'(0) = %.10g, Σ C_n/λ_n = %.10g", -real(d), mean)
	}
}

// TestTiltDraws checks the draws by rejection from the shared T_f and
// KillBase tables against the exact laws ExitLaw(q) and KillLaw(q): a KS
// test against the CDF by inversion (fixed seed; each case at p > 1e−3,
// Bonferroni for a family error near 1%) and the sample mean within 4.5
// standard errors of the mean by inversion (−ψ'(0) by a five-point
// difference); and that the tilt is refused where its acceptance is below
// minAccept.
func TestTiltDraws(t *testing.T) {
	n := 50000
	if testing.Short() {
		n = 10000
	}
	rng := rand.New(rand.NewPCG(11, 2))
	x := make([]float64, n)
	type tc struct {
		name string
		l    *Law
		tilt Tilt
	}
	var cases []tc
	for _, q := range []float64{0, 0.03, 0.5, 2} {
		tl, ok := ExitTilt(q)
		if !ok {
			t.Fatalf("ExitTilt(%g) refused", q)
		}
		l := ExitLaw(q)
		cases = append(cases, tc{"exit", l, tl})
	}
	for _, q := range []float64{1e-6, 0.03, 0.5, 3} {
		tl, ok := KillTilt(q)
		if !ok {
			t.Fatalf("KillTilt(%g) refused", q)
		}
		cases = append(cases, tc{"kill", KillLaw(q), tl})
	}
	if _, ok := ExitTilt(5); ok { // ψ_f(5) = 0.27
		t.Errorf("ExitTilt(5) accepted")
	}
	if _, ok := KillTilt(30); ok { // g(30)/30 = 0.26
		t.Errorf("KillTilt(30) accepted")
	}
	for _, c := range cases {
		var s, s2 float64
		for i := range x {
			x[i] = c.tilt.Draw(rng)
			s += x[i]
			s2 += x[i] * x[i]
		}
		mean := s / float64(n)
		se := math.Sqrt((s2/float64(n) - mean*mean) / float64(n))
		h := complex(1e-4, 0)
		d := (-c.l.Psi(2*h) + 8*c.l.Psi(h) - 8*c.l.Psi(-h) + c.l.Psi(-2*h)) / (12 * h)
		m1 := -real(d)
		dd, p := ksTest(x, c.l.CDF)
		t.Logf("%s q=%g: KS D = %.3g (p = %.3g), mean %.6g ± %.2g, exact %.6g", c.name, c.tilt.Q, dd, p, mean, se, m1)
		if p < 1e-3 || math.Abs(mean-m1) > 4.5*se {
			t.Errorf("%s q=%g: KS D = %.3g (p = %.3g), mean %.6g ± %.2g, exact %.6g", c.name, c.tilt.Q, dd, p, mean, se, m1)
		}
	}
}

// TestKnots checks every knot of the tables built from Chebyshev panels
// against the law it draws: |F(t_i) − u_i| at the knots themselves, where
// only the panels' interpolation (error in u below panelTol per panel,
// about 1e−13) and the solves (1e−14 in ln t) enter, not the cubic between
// knots; and the knots' slopes against the exact dt/dv = 2v·e^{−w}/f(t).
// The last knot, the start of the one-pole tail, is TestTableError's.
func TestKnots(t *testing.T) {
	const (
		// The CDF by inversion is good to about 1e−12 here (measured
		// 1e−12 at every law: its floor, not the table's).
		knotErr = 3e-12
		// Relative: the derivative of an interpolant loses about N² of
		// its accuracy, most at a panel's ends (measured 2e−8).
		slopeErr = 1e-7
	)
	mix, _ := MixtureDrift(0.3, 0.1, []float64{0.5, 0.3, 0.2}, []float64{0.01, 0.04, 0.002}, nil)
	for _, c := range []struct {
		name string
		l    *Law
	}{
		{"visit", Visit(1, 0)}, {"visit leak+capacity", Visit(1.5, 0.3)}, {"mixture", mix},
		{"kill base", KillBase()}, {"kill q=30", KillLaw(30)},
	} {
		tb := NewTable(c.l, DefaultKnots, false)
		n := len(tb.k) / 2
		dv := 1 / tb.inv
		var worst, worstSlope float64
		for i := 1; i < n-1; i++ {
			v := float64(i) * dv
			w := v * v
			st := tb.k[2*i]
			tt := st * st
			worst = math.Max(worst, math.Abs(c.l.CDF(tt)+math.Expm1(-w)))
			exact := dv * 2 * v * math.Exp(-w) / c.l.Density(tt) / (2 * st)
			worstSlope = math.Max(worstSlope, math.Abs(tb.k[2*i+1]-exact)/exact)
		}
		t.Logf("%s: max |F(t_i) − u_i| = %.2g, max relative slope error %.2g", c.name, worst, worstSlope)
		if !(worst <= knotErr) || !(worstSlope <= slopeErr) {
			t.Errorf("%s: max |F(t_i) − u_i| = %.3g, slope error %.3g", c.name, worst, worstSlope)
		}
	}
}

// TestQuantisedSharing: parameters that agree to about 5e−13 share one key
// and one table, built from the quantised parameters, so it is the same
// table whichever asks first (a fresh build from them is identical, bit
// for bit); parameters that differ by 1e−9 do not share.
func TestQuantisedSharing(t *testing.T) {
	p, q := []float64{0.5, 0.3, 0.2}, []float64{0.01, 0.04, 0.002}
	near := []float64{0.5 * (1 + 1e-15), 0.3, 0.2}
	far := []float64{0.5 * (1 + 1e-9), 0.3, 0.2}
	if MixtureKey(0.3, 0.1, p, q, nil) != MixtureKey(0.3, 0.1, near, q, nil) {
		t.Errorf("parameters 1e−15 apart have different keys")
	}
	if MixtureKey(0.3, 0.1, p, q, nil) == MixtureKey(0.3, 0.1, far, q, nil) {
		t.Errorf("parameters 1e−9 apart share a key")
	}
	a := MixtureDriftTable(0.3, 0.1, near, q, nil)
	b := MixtureDriftTable(0.3, 0.1, p, q, nil)
	if a != b {
		t.Errorf("parameters 1e−15 apart got different tables")
	}
	l, _ := MixtureDrift(Quantise(0.3), Quantise(0.1), quantised(p), quantised(q), nil)
	if fresh := NewTable(l, DefaultKnots, false); !reflect.DeepEqual(fresh, a) {
		t.Errorf("a fresh table from the quantised parameters differs from the shared one")
	}
	for _, x := range []float64{1, 0.3, 1e-300, -2.5, 7e12} {
		if d := math.Abs(Quantise(x)-x) / math.Abs(x); d > 0x1p-41 {
			t.Errorf("Quantise(%g) moves it by %g relative", x, d)
		}
	}
}

// TestCsqrt checks csqrt against cmplx.Sqrt (the principal root) in every
// quadrant, on the axes and across magnitudes: equal to a few units in the
// last place.
func TestCsqrt(t *testing.T) {
	const ulps = 4e-16
	for _, a := range []float64{-1e6, -3, -1e-9, 0, 1e-9, 2, 7e5} {
		for _, b := range []float64{-2e6, -0.5, -1e-12, 0, 1e-12, 0.25, 3e7} {
			w := complex(a, b)
			got, want := csqrt(w), cmplx.Sqrt(w)
			if cmplx.Abs(got-want) > ulps*cmplx.Abs(want) {
				t.Errorf("csqrt(%v) = %v, cmplx.Sqrt %v", w, got, want)
			}
		}
	}
}

// TestChebKnots checks the panel builder on functions known in closed form,
// with the solves replaced by the exact values: the knots and their slopes
// of y = sin(3x) + x² on [0, 2] (entire: panels accepted as they start) and
// of y = 1/(x + 0.01) on [0, 1] (a pole near the left end: panels halved
// there), with |du/dy| = 1 so that panelTol bounds the error in y itself.
func TestChebKnots(t *testing.T) {
	const (
		// panelTol (1e−13) estimates the error from the last coefficients;
		// the interpolant's error is a few times that (measured 2.5e−13).
		valueErr = 1e-12
		// Relative to h·max|y'|: a derivative loses about N² of the
		// accuracy (measured 1.4e−12).
		slopeErr = 1e-10
	)
	for _, c := range []struct {
		name   string
		f, df  func(float64) float64
		x0, x1 float64
	}{
		{"sin(3x) + x²", func(x float64) float64 { return math.Sin(3*x) + x*x }, func(x float64) float64 { return 3*math.Cos(3*x) + 2*x }, 0, 2},
		{"1/(x + 0.01)", func(x float64) float64 { return 1 / (x + 0.01) }, func(x float64) float64 { return -1 / ((x + 0.01) * (x + 0.01)) }, 0, 1},
	} {
		const n = 1024
		h := (c.x1 - c.x0) / (n - 1)
		out := make([]float64, 2*n)
		solves := 0
		chebKnots(c.x0, h, n, c.x0, func(x, prev, guess float64) float64 {
			solves++
			return c.f(x)
		}, func(x, dydx float64) float64 { return 1 }, out)
		var worst, worstSlope, slopeScale float64
		for i := range n {
			slopeScale = math.Max(slopeScale, h*math.Abs(c.df(c.x0+float64(i)*h)))
		}
		for i := range n {
			x := c.x0 + float64(i)*h
			worst = math.Max(worst, math.Abs(out[2*i]-c.f(x)))
			worstSlope = math.Max(worstSlope, math.Abs(out[2*i+1]-h*c.df(x))/slopeScale)
		}
		t.Logf("%s: %d solves, max value error %.2g, max slope error %.2g (relative to h·max|y'|)", c.name, solves, worst, worstSlope)
		if !(worst <= valueErr) || !(worstSlope <= slopeErr) {
			t.Errorf("%s: value error %.3g, slope error %.3g", c.name, worst, worstSlope)
		}
	}
}

// TestOctaveWindow: the scaled unit window is laplace.TalbotWindow of the
// octave, bit for bit, over the octaves the tables use (and beyond).
func TestOctaveWindow(t *testing.T) {
	for _, k := range []int{-60, -37, -20, -5, -1, 0, 1, 3, 10, 30} {
		t0 := math.Ldexp(1, k)
		want := laplace.TalbotWindow(t0, 2*t0, laplace.DefaultWindowM)
		if got := octaveWindow(k); !reflect.DeepEqual(got, want) {
			t.Errorf("octave 2^%d: the scaled window differs from TalbotWindow", k)
		}
	}
}
