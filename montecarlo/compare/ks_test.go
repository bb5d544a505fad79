package compare

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// exactKSCDF returns P(D_n < d) for the one-sample Kolmogorov–Smirnov
// distance of n observations from a continuous law, by the matrix-power
// method of Durbin (1973) as programmed by Marsaglia, Tsang & Wang (2003),
// "Evaluating Kolmogorov's distribution", J. Stat. Softw. 8(18) (from
// memory; checked here against the closed form for n = 1). Plain float64 is
// enough for n ≤ 200: the matrix power stays below e^n.
func exactKSCDF(n int, d float64) float64 {
	k := int(float64(n)*d) + 1
	m := 2*k - 1
	h := float64(k) - float64(n)*d
	H := make([]float64, m*m)
	for i := range m {
		for j := range m {
			if i-j+1 >= 0 {
				H[i*m+j] = 1
			}
		}
	}
	for i := range m {
		H[i*m] -= math.Pow(h, float64(i+1))
		H[(m-1)*m+i] -= math.Pow(h, float64(m-i))
	}
	if 2*h-1 > 0 {
		H[(m-1)*m] += math.Pow(2*h-1, float64(m))
	}
	for i := range m {
		for j := range m {
			for g := 1; g <= i-j+1; g++ {
				H[i*m+j] /= float64(g)
			}
		}
	}
	mul := func(a, b []float64) []float64 {
		c := make([]float64, m*m)
		for i := range m {
			for l := range m {
				for j := range m {
					c[i*m+j] += a[i*m+l] * b[l*m+j]
				}
			}
		}
		return c
	}
	q := make([]float64, m*m)
	for i := range m {
		q[i*m+i] = 1
	}
	p := H
	for e := n; e > 0; e >>= 1 {
		if e&1 == 1 {
			q = mul(q, p)
		}
		p = mul(p, p)
	}
	s := q[(k-1)*m+k-1]
	for i := 1; i <= n; i++ {
		s *= float64(i) / float64(n)
	}
	return s
}

func TestExactKSReference(t *testing.T) {
	// For n = 1, D_1 = max(U, 1 − U), so P(D_1 < d) = 2d − 1 on [1/2, 1]
	// (derived). This checks the reference implementation itself.
	const roundoff = 1e-14
	for _, d := range []float64{0.55, 0.7, 0.9} {
		if got, want := exactKSCDF(1, d), 2*d-1; math.Abs(got-want) > roundoff {
			t.Errorf("exact P(D_1 < %g) = %.15g, want %.15g", d, got, want)
		}
	}
}

func TestKolmogorovQ(t *testing.T) {
	// The 10%, 5% and 1% critical values 1.22, 1.36, 1.63 of the Kolmogorov
	// distribution, as tabulated in statistics handbooks (e.g. Smirnov 1948,
	// Ann. Math. Stat. 19:279–281 — from memory). The table gives 4 digits of
	// Q at 3-digit x; the tolerance is what rounding x to 3 digits allows
	// (|dQ/dx| ≤ 0.4 here times 0.005) — the exact digits are from our own
	// series, checked against the theta form below.
	const rounding = 0.4 * 0.005
	for _, c := range []struct {
		x, q float64
	}{
		{1.22, 0.1019}, {1.36, 0.0494}, {1.63, 0.0099},
	} {
		if got := KolmogorovQ(c.x); math.Abs(got-c.q) > rounding {
			t.Errorf("Q(%g) = %.6f, want %.4f", c.x, got, c.q)
		}
	}
	// gonum v0.17.0 has no Kolmogorov distribution (only the two-sample
	// distance stat.KolmogorovSmirnov), so the two series forms are checked
	// against each other where both converge.
	const roundoff = 1e-13
	for x := 0.6; x <= 2.0; x += 0.05 {
		a, b := kolmogorovAlt(x), 1-kolmogorovTheta(x)
		if math.Abs(a-b) > roundoff {
			t.Errorf("x = %.2f: alternating series %.16g, theta form %.16g", x, a, b)
		}
	}
	// Limits and monotonicity.
	if KolmogorovQ(0) != 1 || KolmogorovQ(-1) != 1 || KolmogorovQ(0.1) != 1 {
		t.Errorf("Q near 0 should be 1: %g %g %g", KolmogorovQ(0), KolmogorovQ(-1), KolmogorovQ(0.1))
	}
	prev := 1.0
	for x := 0.2; x < 4; x += 0.01 {
		q := KolmogorovQ(x)
		if q > prev {
			t.Fatalf("Q not decreasing at %g", x)
		}
		prev = q
	}
	// Large-x tail: Q ≈ 2e^{−2x²} (first term; the second is e^{−6x²} smaller).
	if got, want := lnKolmogorovQ(30), math.Ln2-2*900; math.Abs(got-want) > 1e-12 {
		t.Errorf("ln Q(30) = %g, want %g", got, want)
	}
}

func TestKSPValueFiniteN(t *testing.T) {
	// Stephens' scale against the exact finite-n law (exactKSCDF). At the
	// d where the exact p-value is p, KSPValue must give p within 5%
	// relative for n ≥ 10 and 0.01 ≤ p ≤ 0.2 (measured: at most 3.8%, at
	// n = 10, p = 0.01). The plain asymptotic √n scale is off by up to 68%
	// in the same range; that it is worse shows the correction does work.
	const stephensTol = 0.05
	for _, n := range []int{10, 20, 50, 100} {
		for _, p := range []float64{0.2, 0.1, 0.05, 0.01} {
			lo, hi := 0.0, 1.0
			for range 40 {
				mid := (lo + hi) / 2
				if 1-exactKSCDF(n, mid) > p {
					lo = mid
				} else {
					hi = mid
				}
			}
			got := KSPValue(hi, n)
			if math.Abs(got-p)/p > stephensTol {
				t.Errorf("n = %d, d = %.5f: KSPValue = %.5f, exact %.5f", n, hi, got, p)
			}
			plain := KolmogorovQ(math.Sqrt(float64(n)) * hi)
			if math.Abs(plain-p) < math.Abs(got-p) {
				t.Errorf("n = %d, p = %g: plain asymptotic %.5f is closer than Stephens %.5f", n, p, plain, got)
			}
		}
	}
	if KSPValue(0.3, 0) != 1 || KSPValue(0, 10) != 1 {
		t.Error("KSPValue without data or distance should be 1")
	}
}

func TestCensoredKolmogorovQ(t *testing.T) {
	// a = 1: no censoring, the Kolmogorov law itself.
	const roundoff = 1e-14
	for _, x := range []float64{0.5, 1, 1.36, 2} {
		if got, want := CensoredKolmogorovQ(x, 1), KolmogorovQ(x); math.Abs(got-want) > roundoff {
			t.Errorf("a = 1, x = %g: %g, want %g", x, got, want)
		}
		// a close to 1: the supremum over [0, a] is almost the full one.
		if got, want := CensoredKolmogorovQ(x, 1-1e-9), KolmogorovQ(x); math.Abs(got-want) > 1e-6 {
			t.Errorf("a = 1 − 1e-9, x = %g: %g, want %g", x, got, want)
		}
	}
	// Small a with x = 2√a: the bridge on [0, a] is Brownian motion up to
	// O(a), so P(sup|B| < x) → P(BM stays in (−1, 1) up to time 1/4) =
	// 0.9089995 (docs/references.md B2, survival from the centre of (−r, r),
	// r = 1, t = 0.25, derived by two series). Tolerance: the 7 digits
	// of the reference plus the O(a) = 1e-6 bridge correction.
	const b2 = 0.9089995
	if got := 1 - CensoredKolmogorovQ(2e-3, 1e-6); math.Abs(got-b2) > 1e-6 {
		t.Errorf("small-a limit: %.8f, want %.7f", got, b2)
	}
	// The closed form integrates the image density against φ_{1−a} in closed
	// form; integrate it numerically instead (composite Simpson on (−x, x),
	// 2000 panels, error far below 1e-9 for these smooth integrands).
	const simpson = 1e-9
	for _, c := range []struct{ x, a float64 }{{0.8, 0.3}, {1.2, 0.6}, {0.5, 0.9}, {1.5, 0.05}} {
		phi := func(v, z float64) float64 { return math.Exp(-z*z/(2*v)) / math.Sqrt(2*math.Pi*v) }
		q := func(y float64) float64 { // killed density of BM at time a in (−x, x)
			var s float64
			for k := -30; k <= 30; k++ {
				s += phi(c.a, y-4*float64(k)*c.x) - phi(c.a, y-2*c.x-4*float64(k)*c.x)
			}
			return s
		}
		const panels = 2000
		h := 2 * c.x / panels
		var integral float64
		for i := 0; i <= panels; i++ {
			y := -c.x + float64(i)*h
			w := 2.0
			if i == 0 || i == panels {
				w = 1
			} else if i%2 == 1 {
				w = 4
			}
			integral += w * q(y) * phi(1-c.a, y)
		}
		integral *= h / 3 / phi(1, 0)
		if got := 1 - CensoredKolmogorovQ(c.x, c.a); math.Abs(got-integral) > simpson {
			t.Errorf("x = %g, a = %g: closed form %.12f, quadrature %.12f", c.x, c.a, got, integral)
		}
	}
	// Monotone in a: a longer stretch of the bridge can only exceed more.
	prev := 0.0
	for a := 0.05; a <= 1; a += 0.05 {
		q := CensoredKolmogorovQ(1.0, a)
		if q < prev-roundoff {
			t.Fatalf("Q_a(1) decreases at a = %g", a)
		}
		prev = q
	}
}

func TestCriticalD(t *testing.T) {
	// CriticalD inverts CensoredKSPValue: the p-value at the critical
	// distance is the level (bisection to 2^-60).
	const bisect = 1e-12
	for _, c := range []struct {
		level float64
		n     int
		a     float64
	}{{0.05, 100, 1}, {0.01, 1000, 1}, {0.001, 50, 0.7}} {
		d := CriticalD(c.level, c.n, c.a)
		if got := CensoredKSPValue(d, c.n, c.a); math.Abs(got-c.level) > bisect {
			t.Errorf("%+v: p at critical D %.6f is %.12f", c, d, got)
		}
	}
	// Asymptotic 5% point: x = 1.358 (handbook table value 1.36, from memory).
	if x := CriticalD(0.05, 1, 1) * stephens(1); math.Abs(x-1.358) > 5e-4 {
		t.Errorf("5%% point of the Kolmogorov law = %.4f, want 1.358", x)
	}
	if !math.IsInf(CriticalD(0.05, 0, 1), 1) {
		t.Error("CriticalD with no data should be +Inf")
	}
}

// expSurvival is the survival function of the unit exponential law.
func expSurvival(t float64) float64 { return math.Exp(-t) }

// rejectionRate runs reps Distribution checks of n draws from the unit
// exponential (scaled by stretch, then shifted by shift, censored at tc if
// tc > 0) against the unit exponential law and returns the fraction with
// p < level.
func rejectionRate(reps, n int, stretch, shift, tc, level float64, seed uint64) float64 {
	src := rand.New(rand.NewPCG(seed, 1))
	law := distuv.Exponential{Rate: 1, Src: src}
	times := make([]float64, 0, n)
	rejected := 0
	for range reps {
		times = times[:0]
		cens := 0
		for range n {
			x := stretch*law.Rand() + shift
			if tc > 0 && x > tc {
				cens++
				continue
			}
			times = append(times, x)
		}
		c := Distribution("exit-time:distribution", times, tc, cens, expSurvival)
		if c.P < level {
			rejected++
		}
	}
	return float64(rejected) / float64(reps)
}

func TestDistributionSize(t *testing.T) {
	// Under the null the p-values are (close to) uniform: over 2000
	// replications the rejection rate at 5% has binomial sd 0.49%, so it must
	// fall in 5% ± 1.5% (3 sd). Censored samples are judged against the
	// censored null law (CensoredKolmogorovQ), so they must be neither
	// anti-conservative nor much too conservative either.
	if testing.Short() {
		t.Skip("2000 replications per case")
	}
	const reps, level, lo, hi = 2000, 0.05, 0.035, 0.065
	for _, c := range []struct {
		name string
		n    int
		tc   float64
	}{
		{"uncensored n=100", 100, 0},
		{"uncensored n=20", 20, 0},
		{"censored 30% n=100", 100, -math.Log(0.3)},
		{"censored 70% n=200", 200, -math.Log(0.7)},
	} {
		t.Run(c.name, func(t *testing.T) {
			r := rejectionRate(reps, c.n, 1, 0, c.tc, level, 11)
			if r < lo || r > hi {
				t.Errorf("rejection rate at 5%% = %.4f, want in [%g, %g]", r, lo, hi)
			}
		})
	}
}

func TestDistributionPower(t *testing.T) {
	// A law stretched by 20% (mean 1.2 instead of 1): the population gap is
	// sup|e^{−t} − e^{−t/1.2}| = 0.067 (at t = 6 ln 1.2), against a 1%
	// critical distance of 0.030 for n = 3000; the sampling sd of D is about
	// 0.5/√n = 0.009, so the gap is 4 sd above the critical value and the
	// test must reject in ≥ 99% of 200 replications (at 4 sd the power is
	// above 0.9999; measured 200/200).
	const reps, n, level = 200, 3000, 0.01
	if r := rejectionRate(reps, n, 1.2, 0, 0, level, 12); r < 0.99 {
		t.Errorf("stretched law rejected in %.3f of samples, want ≥ 0.99", r)
	}
	// The same with censoring at t = 1 (37% censored): the gap now shows in
	// the shape below the cap and in the censored fraction.
	if r := rejectionRate(reps, n, 1.2, 0, 1, level, 13); r < 0.99 {
		t.Errorf("stretched censored law rejected in %.3f of samples, want ≥ 0.99", r)
	}
	// A law shifted by 0.05 (every walker 0.05 late): the gap is
	// 1 − e^{−0.05} = 0.049 at t = 0.05, where the empirical CDF has sd
	// sqrt(F(1−F)/n) = 0.004, so it exceeds the critical distance 0.030 by
	// about 5 sd (measured 200/200).
	if r := rejectionRate(reps, n, 1, 0.05, 0, level, 14); r < 0.99 {
		t.Errorf("shifted law rejected in %.3f of samples, want ≥ 0.99", r)
	}
}

func TestDistributionStatistic(t *testing.T) {
	// D against a brute-force sup over a fine grid plus the sample points
	// (the sup of a step function minus a continuous one is approached at
	// the jumps, from either side).
	times := []float64{0.9, 0.1, 0.5, 2.5, 0.5, 1.7}
	for _, c := range []struct {
		name string
		tc   float64
		cens int
	}{{"uncensored", 0, 0}, {"censored at 2", 2, 1}} {
		t.Run(c.name, func(t *testing.T) {
			got := Distribution("d", times, c.tc, c.cens, expSurvival)
			n := float64(len(times) + c.cens)
			fn := func(x float64) float64 { // empirical CDF of min(τ, tc), x < tc
				k := 0
				for _, y := range times {
					if y <= x && (c.tc == 0 || y <= c.tc) {
						k++
					}
				}
				return float64(k) / n
			}
			top := 10.0
			if c.tc > 0 {
				top = c.tc
			}
			var d float64
			const eps = 1e-12
			for _, y := range append([]float64{top - eps}, times...) {
				for _, x := range []float64{y - eps, y} {
					if x < 0 || x >= top {
						continue
					}
					d = math.Max(d, math.Abs(fn(x)-(1-math.Exp(-x))))
				}
			}
			const roundoff = 1e-9 // the eps offsets move F by at most 1e-12
			if math.Abs(got.Stat-d) > roundoff {
				t.Errorf("D = %.12f, brute force %.12f", got.Stat, d)
			}
			if got.N != int64(n) {
				t.Errorf("n = %d, want %g (times above the cap count as censored)", got.N, n)
			}
			if math.Abs(math.Abs(got.Walker-got.PDE)-got.Stat) > roundoff {
				t.Errorf("walker %g and PDE %g at t = %g do not differ by D = %g", got.Walker, got.PDE, got.At, got.Stat)
			}
		})
	}
}

func TestDistributionBadInput(t *testing.T) {
	bad := func(t float64) float64 { return math.NaN() }
	c := Distribution("x", []float64{1, 2}, 0, 0, bad)
	if !math.IsNaN(c.P) || c.Note == "" {
		t.Errorf("NaN survival: P = %g, note %q", c.P, c.Note)
	}
	c = Distribution("x", nil, 0, 0, expSurvival)
	if c.P != 1 || !math.IsInf(c.StdErr, 1) {
		t.Errorf("no data: P = %g, stderr %g", c.P, c.StdErr)
	}
	c = Distribution("x", []float64{math.NaN()}, 0, 0, expSurvival)
	if !math.IsNaN(c.P) {
		t.Errorf("NaN time: P = %g", c.P)
	}
	func() {
		defer func() {
			if recover() == nil {
				t.Error("censored walkers without a cap did not panic")
			}
		}()
		Distribution("x", []float64{1}, 0, 3, expSurvival)
	}()
}
