package compare

import (
	"fmt"
	"math"
	"slices"
)

// thetaSwitch is where KolmogorovQ changes from the theta (small-x) form to
// the alternating (large-x) series. At x = 1.18 both need five terms for full
// double precision and agree to roundoff (TestKolmogorovQForms).
const thetaSwitch = 1.18

// KolmogorovQ returns the upper tail of the Kolmogorov distribution,
// Q(x) = P(sup_u |B(u)| > x) for a Brownian bridge B on [0, 1]:
//
//	Q(x) = 2 Σ_{k≥1} (−1)^{k−1} exp(−2k²x²)                      (x ≥ 1.18)
//	Q(x) = 1 − (√(2π)/x) Σ_{k≥1} exp(−(2k−1)²π²/(8x²))           (x < 1.18)
//
// the second being the Jacobi theta transform of the first, which converges
// fast where the alternating series does not (Kolmogorov 1933; both forms
// e.g. in Marsaglia, Tsang & Wang 2003, J. Stat. Softw. 8(18) — from memory).
// Q(x) = 1 for x ≤ 0. Cost: at most a few dozen exponentials.
func KolmogorovQ(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return math.NaN()
	case x <= 0:
		return 1
	case x < thetaSwitch:
		return 1 - kolmogorovTheta(x)
	}
	return kolmogorovAlt(x)
}

// kolmogorovAlt is 2Σ(−1)^{k−1}exp(−2k²x²), accurate for x ≳ 0.6.
func kolmogorovAlt(x float64) float64 {
	var s float64
	sign := 1.0
	for k := 1; k <= 200; k++ {
		t := math.Exp(-2 * float64(k*k) * x * x)
		s += sign * t
		if t <= 1e-18*math.Abs(s) || t == 0 {
			break
		}
		sign = -sign
	}
	return math.Max(0, math.Min(1, 2*s))
}

// kolmogorovTheta is the CDF K(x) = (√(2π)/x)Σexp(−(2k−1)²π²/(8x²)),
// accurate for x ≲ 1.5.
func kolmogorovTheta(x float64) float64 {
	var s float64
	c := math.Pi * math.Pi / (8 * x * x)
	for k := 1; k <= 200; k++ {
		j := float64(2*k - 1)
		t := math.Exp(-j * j * c)
		s += t
		if t <= 1e-18*s || t == 0 {
			break
		}
	}
	return math.Max(0, math.Min(1, math.Sqrt(2*math.Pi)/x*s))
}

// lnKolmogorovQ returns ln Q(x), usable where Q underflows (ln Q ≈ ln 2 − 2x²).
func lnKolmogorovQ(x float64) float64 {
	if q := KolmogorovQ(x); q > 1e-300 {
		return math.Log(q)
	}
	return math.Ln2 - 2*x*x
}

// stephens returns the effective scale √n + 0.12 + 0.11/√n by which the
// distance D of an n-sample is multiplied before the asymptotic law is used
// (Stephens 1970, J. R. Stat. Soc. B 32:115–122 — from memory; its accuracy
// for n ≥ 5 is measured against the exact finite-n law in TestKSPValueFiniteN).
func stephens(n int) float64 {
	r := math.Sqrt(float64(n))
	return r + 0.12 + 0.11/r
}

// KSPValue returns the p-value P(D_n ≥ d) of the one-sample Kolmogorov–
// Smirnov distance d of n observations from a continuous law, with Stephens'
// finite-n correction:
//
//	p ≈ Q((√n + 0.12 + 0.11/√n)·d).
//
// It returns 1 for n ≤ 0 (no evidence) or d ≤ 0. Cost O(1).
func KSPValue(d float64, n int) float64 {
	if n <= 0 || d <= 0 {
		return 1
	}
	return KolmogorovQ(stephens(n) * d)
}

// CensoredKolmogorovQ returns P(sup_{0≤u≤a} |B(u)| > x) for a Brownian bridge
// B on [0, 1]: the asymptotic upper tail of √n·D for a Kolmogorov–Smirnov
// distance taken only over the part [0, t_c) of the line that carries
// probability a = F(t_c) (observations censored at t_c). With σ² = a(1 − a)
// and I(m) = P(|N((1 − a)m, σ²)| < x),
//
//	Q_a(x) = erfc(x/(σ√2)) + 2 Σ_{j≥1} (−1)^{j−1} exp(−2j²x²) I(2jx).
//
// Derivation (the reflection principle, checked in TestCensoredKolmogorovQ):
// B on [0, a] is a Brownian motion W weighted by φ_{1−a}(W(a))/φ_1(0); the
// density of W(a) for paths that stayed in (−x, x) is the image sum
// Σ_k [φ_a(y − 4kx) − φ_a(y − 2x − 4kx)]; and
// φ_a(y − m)φ_{1−a}(y) = φ_1(m)·N(y; (1−a)m, σ²), which integrates over
// (−x, x) in closed form. This is the asymptotic law of the Kolmogorov–Smirnov
// statistic for type I censored samples studied by Koziol & Byar (1975,
// Technometrics 17:507–510 — from memory); the formula here is derived, not
// copied. At a = 1 it is KolmogorovQ(x); as a → 0 with x/√a fixed it tends
// to the exit law of Brownian motion from (−x, x) at time a.
//
// It returns KolmogorovQ(x) for a ≥ 1, 0 for a ≤ 0 and x > 0, 1 for x ≤ 0.
// Cost O(1/x) normal CDF evaluations (a few for x ≳ 0.5).
func CensoredKolmogorovQ(x, a float64) float64 {
	switch {
	case math.IsNaN(x) || math.IsNaN(a):
		return math.NaN()
	case x <= 0:
		return 1
	case a >= 1:
		return KolmogorovQ(x)
	case a <= 0:
		return 0
	}
	s := math.Sqrt(a * (1 - a))
	in := func(m float64) float64 { // P(|N((1−a)m, s²)| < x)
		mu := (1 - a) * m
		return 0.5 * (math.Erfc((-x-mu)/(s*math.Sqrt2)) - math.Erfc((x-mu)/(s*math.Sqrt2)))
	}
	q := math.Erfc(x / (s * math.Sqrt2))
	sign := 1.0
	for j := 1; ; j++ {
		e := math.Exp(-2 * float64(j*j) * x * x)
		if e == 0 {
			break
		}
		t := e * in(2*float64(j)*x)
		q += 2 * sign * t
		if e < 1e-18 {
			break
		}
		sign = -sign
	}
	return math.Max(0, math.Min(1, q))
}

// lnCensoredKolmogorovQ returns ln Q_a(x); where it underflows it uses the
// leading terms, ln(erfc(x/(σ√2)) + 2e^{−2x²}) ≈ max of the two logs.
func lnCensoredKolmogorovQ(x, a float64) float64 {
	if q := CensoredKolmogorovQ(x, a); q > 1e-300 {
		return math.Log(q)
	}
	if a >= 1 {
		return lnKolmogorovQ(x)
	}
	s := math.Sqrt(a * (1 - a))
	return math.Max(lnNormalTail2(x/s), math.Ln2-2*x*x)
}

// CensoredKSPValue is KSPValue for a distance d taken over the part of the
// line that carries probability a under the null law (a = 1: no censoring),
// with the same finite-n scale as KSPValue. Its size is checked by simulation
// in TestDistributionCensoredSize. Cost as CensoredKolmogorovQ.
func CensoredKSPValue(d float64, n int, a float64) float64 {
	if n <= 0 || d <= 0 {
		return 1
	}
	return CensoredKolmogorovQ(stephens(n)*d, a)
}

// CriticalD returns the smallest distance d with CensoredKSPValue(d, n, a) ≤
// level: the half-width of the simultaneous band that a sample of n can
// resolve at that level (a = 1 for uncensored samples). It returns +Inf for
// n ≤ 0. It panics unless 0 < level < 1. Cost about 60 evaluations of
// CensoredKolmogorovQ (bisection).
func CriticalD(level float64, n int, a float64) float64 {
	if !(level > 0 && level < 1) {
		panic(fmt.Sprintf("compare: CriticalD: level %g outside (0, 1)", level))
	}
	if n <= 0 {
		return math.Inf(1)
	}
	lo, hi := 0.0, 1.0
	for CensoredKolmogorovQ(hi, a) > level {
		hi *= 2
	}
	for range 60 {
		mid := 0.5 * (lo + hi)
		if CensoredKolmogorovQ(mid, a) > level {
			lo = mid
		} else {
			hi = mid
		}
	}
	return hi / stephens(n)
}

// Distribution returns the one-sample Kolmogorov–Smirnov check of walker exit
// times against the PDE survival function S(t) = P(τ > t), which must be
// continuous and non-increasing with S(0) = 1.
//
// Censoring. Walkers still out at the time cap t_c = censoredAt are not
// dropped (that would bias the sample towards short times) and not given the
// time t_c (that would put a false atom in the law). The test is run on
// Y = min(τ, t_c) for all n = len(times) + censored walkers: the empirical
// CDF of Y is the sub-distribution F_n(t) = #{τ_i ≤ t}/n for t < t_c, with
// mass censored/n at t_c, and its law under the PDE is F(t) = 1 − S(t) for
// t < t_c with mass S(t_c) at t_c. The distance
//
//	D = sup_{0 ≤ t < t_c} |F_n(t) − F(t)|
//
// measures both the shape of the law below the cap and the censored fraction
// (at t → t_c the gap is |censored/n − S(t_c)|). Its null law is that of the
// bridge supremum over [0, a], a = F(t_c) (CensoredKolmogorovQ), so the test
// is neither conservative nor anti-conservative because of the cap. Times
// greater than t_c are counted as censored (they are, since only min(τ, t_c)
// enters); censoredAt ≤ 0 or +Inf means no cap.
//
// The check has KindLaw, Stat = D, P = CensoredKSPValue(D, n, a), Z = NaN,
// and At, PDE, Walker, StdErr give the time of the largest gap, F and F_n
// there and sqrt(F(1−F)/n). With n = 0 it has p = 1 and an infinite standard
// error (inconclusive). If S returns NaN or a value outside [0, 1] (beyond
// roundoff), P is NaN and Note names the time.
//
// times is not modified (a sorted copy is made). It panics if censored < 0,
// or if censored > 0 without a finite positive cap. Cost O(n log n) plus n
// calls of survival.
func Distribution(quantity string, times []float64, censoredAt float64, censored int, survival func(t float64) float64) Check {
	capped := censoredAt > 0 && !math.IsInf(censoredAt, 1)
	if censored < 0 || (censored > 0 && !capped) {
		panic(fmt.Sprintf("compare: Distribution(%q): censored = %d with cap %g", quantity, censored, censoredAt))
	}
	c := Check{Quantity: quantity, Kind: KindLaw, Z: math.NaN(), At: math.NaN(), CensorAt: 1}
	ys := make([]float64, 0, len(times))
	for _, t := range times {
		switch {
		case math.IsNaN(t):
			c.P = math.NaN()
			c.Note = "walker exit time is NaN"
			return c
		case capped && t > censoredAt:
			censored++
		default:
			ys = append(ys, t)
		}
	}
	slices.Sort(ys)
	n := len(ys) + censored
	c.N = int64(n)
	if n == 0 {
		c.StdErr, c.P, c.Pass = math.Inf(1), 1, true
		c.PDE, c.Walker = math.NaN(), math.NaN()
		c.Note = "no exit times"
		return c
	}
	const roundoff = 1e-9 // a survival function computed by a series or a solver may overshoot [0, 1] by this
	cdf := func(t float64) (float64, bool) {
		s := survival(t)
		if math.IsNaN(s) || s < -roundoff || s > 1+roundoff {
			c.P = math.NaN()
			c.Note = fmt.Sprintf("PDE survival function gives %g at t = %g", s, t)
			return 0, false
		}
		return 1 - math.Max(0, math.Min(1, s)), true
	}
	a := 1.0
	if capped {
		fc, ok := cdf(censoredAt)
		if !ok {
			return c
		}
		a = fc
		c.Censored = float64(censored) / float64(n)
	}
	c.CensorAt = a
	nf := float64(n)
	var d, at, fAt, fnAt float64
	for i, y := range ys {
		f, ok := cdf(y)
		if !ok {
			return c
		}
		if g := float64(i+1)/nf - f; g > d { // just after the jump at y
			d, at, fAt, fnAt = g, y, f, float64(i+1)/nf
		}
		if g := f - float64(i)/nf; g > d { // just before it
			d, at, fAt, fnAt = g, y, f, float64(i)/nf
		}
	}
	if capped { // F_n stays at len(ys)/n on [y_last, t_c), F rises to a there
		if g := math.Abs(a - float64(len(ys))/nf); g > d {
			d, at, fAt, fnAt = g, censoredAt, a, float64(len(ys))/nf
		}
	}
	c.Stat = d
	c.At, c.PDE, c.Walker = at, fAt, fnAt
	c.StdErr = math.Sqrt(fAt * (1 - fAt) / nf)
	if len(ys) == 0 && !capped {
		c.At = math.NaN()
	}
	c.P = CensoredKSPValue(d, n, a)
	c.lnP = lnCensoredKolmogorovQ(stephens(n)*d, a)
	c.Pass = c.P >= singleLevel
	if censored > 0 {
		c.Note = fmt.Sprintf("%d of %d walkers still out at t = %.4g (censored)", censored, n, censoredAt)
	}
	return c
}
