// Package starlaw holds the exact law of one walker visit to the centre of a
// star with plain arms, and inversion tables to draw it.
//
// Scaled to a standard Brownian motion B (generator ½d²) reflected at 0 on
// [0, 1], a visit is described by the local time L at 0 (|B| = β + L, the
// excursion measure gives n(height ≥ h) = 1/h):
//
//   - without killing the visit ends with the first excursion of height 1, so
//     its local time is Exp(1);
//   - a leak kills at local-time rate κ, so the visit's local time is
//     L_v ~ Exp(μ), μ = 1 + κ, independent of whether it ends by killing
//     (probability κ/μ) or by reaching the rim;
//   - the excursions of height below 1 up to local time L form a subordinator
//     S(L) with Laplace exponent Φ(s) = sqrt(2s)·coth(sqrt(2s)) − 1,
//     independent of the fate given L_v;
//   - a node capacity adds η·L_v, proportional to the local time;
//   - on reaching the rim the last excursion climbs from 0 to 1 in a time T_f
//     with E e^{−sT_f} = sqrt(2s)/sinh(sqrt(2s)) (a 3-dimensional Bessel
//     hitting time, mean 1/3), independent of the rest.
//
// So Y = S(L_v) + η·L_v has E e^{−sY} = μ/(μ + Φ(s) + ηs), a law with two
// parameters (Visit), and T_f one universal law (Final). For κ = η = 0,
// [1/(1 + Φ(s))]·sqrt(2s)/sinh(sqrt(2s)) = 1/cosh(sqrt(2s)), the transform of
// the exit time of B from (−1, 1) (docs/references.md B3), which the tests check.
// The decomposition is derived in the montecarlo package documentation from
// Itô's excursion theory (the excursion measure of the height and the
// Bessel-3 description of an excursion up to its maximum: D. Revuz and M.
// Yor, Continuous Martingales and Brownian Motion, 3rd ed., ch. XII, from
// memory).
//
// A Table draws such a law by inversion: its distribution function is
// computed by Talbot inversion of ψ(s)/s (internal/laplace, window contours
// of one octave), the upper tail from the dominant pole of ψ exactly, and the
// quantile is interpolated by cubic Hermite polynomials on a uniform grid in
// v = sqrt(w), w = −ln(1 − u), which makes it smooth at both ends (t ~ v⁴ or
// v² at 0, linear in w in the tail); the knots and their slopes come from
// Chebyshev interpolants of the quantile on a few panels (NewTable).
//
// The climb and killing laws of decaying arms are exponential tilts of two
// shared laws, drawn by rejection (Tilt).
package starlaw

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"sync"

	"github.com/ramify-dev/ramify/internal/laplace"
)

// Phi returns Φ(s) = sqrt(2s)·coth(sqrt(2s)) − 1 for s off the negative real
// axis (principal square root). Cost: one complex exponential.
func Phi(s complex128) complex128 {
	z := csqrt(2 * s)
	if real(z)*real(z)+imag(z)*imag(z) < 0.01 {
		z2 := z * z
		// z coth z − 1 = z²/3 − z⁴/45 + 2z⁶/945 − z⁸/4725 + 2z¹⁰/93555 − …
		return z2 * (1.0/3 + z2*(-1.0/45+z2*(2.0/945+z2*(-1.0/4725+z2*2/93555))))
	}
	if real(z) > 19 {
		// coth z = 1 + 2e^{−2z}/(1 − e^{−2z}), |e^{−2z}| < e^{−38} = 3e−17.
		return z - 1
	}
	e := cmplx.Exp(-2 * z)
	return z*(1+e)/(1-e) - 1
}

// csqrt returns the principal square root of w like cmplx.Sqrt, for the
// moderate |w| of the transforms here (no scaling against overflow):
// sqrt((|w| + a)/2) and b/(2·that) for a = Re w ≥ 0, the mirror for a < 0
// (no cancellation either way).
func csqrt(w complex128) complex128 {
	a, b := real(w), imag(w)
	if b == 0 || math.Abs(a) > 1e150 || math.Abs(b) > 1e150 {
		return cmplx.Sqrt(w) // signed zeros, and no overflow of a² + b²
	}
	r := math.Sqrt(a*a + b*b)
	if a >= 0 {
		re := math.Sqrt(0.5 * (r + a))
		return complex(re, b/(2*re))
	}
	im := math.Sqrt(0.5 * (r - a))
	if b < 0 {
		im = -im
	}
	return complex(b/(2*im), im)
}

// FinalTransform returns E e^{−sT_f} = sqrt(2s)/sinh(sqrt(2s)).
func FinalTransform(s complex128) complex128 {
	z := cmplx.Sqrt(2 * s)
	if cmplx.Abs(z) < 0.1 {
		z2 := z * z
		// z/sinh z = 1 − z²/6 + 7z⁴/360 − 31z⁶/15120 + 127z⁸/604800 − …
		return 1 + z2*(-1.0/6+z2*(7.0/360+z2*(-31.0/15120+z2*(127.0/604800-z2*73/3421440))))
	}
	return 2 * z * cmplx.Exp(-z) / (1 - cmplx.Exp(-2*z))
}

// Law is a law on (0, ∞) given by its Laplace transform Psi and the two
// poles of Psi nearest to 0, −Lam1 and −Lam2 (0 < Lam1 < Lam2), with the tail
// P(X > t) = C1·e^{−Lam1·t} + C2·e^{−Lam2·t} + … . A Law caches transform
// values per octave of time and is not safe for concurrent use.
type Law struct {
	Psi      func(complex128) complex128
	Lam1, C1 float64
	Lam2, C2 float64
	cache    map[int]*octave
}

type octave struct {
	c                 laplace.Contour
	fcdf, fsurv, fden []complex128
}

// window returns the transform values on the Talbot window contour of the
// octave [2^k, 2^{k+1}) that holds t > 0.
func (l *Law) window(t float64) *octave {
	_, e := math.Frexp(t)
	k := e - 1
	if o, ok := l.cache[k]; ok {
		return o
	}
	if l.cache == nil {
		l.cache = map[int]*octave{}
	}
	c := octaveWindow(k)
	n := len(c.S)
	o := &octave{c: c, fcdf: make([]complex128, n), fsurv: make([]complex128, n), fden: make([]complex128, n)}
	for i, s := range c.S {
		p := l.Psi(s)
		o.fcdf[i] = p / s
		o.fsurv[i] = (1 - p) / s
		o.fden[i] = p
	}
	l.cache[k] = o
	return o
}

// unitWindow is the window contour of the octave [1, 2).
var unitWindow = laplace.TalbotWindow(1, 2, laplace.DefaultWindowM)

// octaveWindow returns laplace.TalbotWindow(2^k, 2^{k+1}, DefaultWindowM)
// without its trigonometry: the contour's nodes and weights are those of
// the unit octave times 2^{−k} (they are proportional to 1/Tmax, and a
// power of two scales every rounded product exactly, so the two agree bit
// for bit while no number is subnormal; TestOctaveWindow).
func octaveWindow(k int) laplace.Contour {
	n := len(unitWindow.S)
	c := laplace.Contour{Tmin: math.Ldexp(1, k), Tmax: math.Ldexp(1, k+1), S: make([]complex128, n), D: make([]complex128, n)}
	for i := range n {
		s, d := unitWindow.S[i], unitWindow.D[i]
		c.S[i] = complex(math.Ldexp(real(s), -k), math.Ldexp(imag(s), -k))
		c.D[i] = complex(math.Ldexp(real(d), -k), math.Ldexp(imag(d), -k))
	}
	return c
}

// eval returns F(t), 1 − F(t) and the density at t > 0 from one set of
// complex exponentials on the octave's contour (the sums of
// laplace.Contour.Apply for the three transforms).
func (l *Law) eval(t float64) (f, g, d float64) {
	o := l.window(t)
	if t < o.c.Tmin*(1-1e-12) || t > o.c.Tmax*(1+1e-12) {
		panic("starlaw: time outside its octave")
	}
	for k, s := range o.c.S {
		e := o.c.D[k] * cmplx.Exp(complex(real(s)*t, imag(s)*t))
		f += real(e * o.fcdf[k])
		g += real(e * o.fsurv[k])
		d += real(e * o.fden[k])
	}
	return f, g, d
}

// CDF returns P(X ≤ t) by Talbot inversion of Psi(s)/s, or of (1 − Psi(s))/s
// where the result is above ½ (so that both tails keep their relative
// accuracy; about 1e−11 of the larger of F and 1 − F over the octave).
func (l *Law) CDF(t float64) float64 {
	if t <= 0 {
		return 0
	}
	o := l.window(t)
	if f := o.c.Apply(t, o.fcdf); f < 0.5 {
		return f
	}
	return 1 - o.c.Apply(t, o.fsurv)
}

// Survival returns P(X > t) (see CDF).
func (l *Law) Survival(t float64) float64 {
	if t <= 0 {
		return 1
	}
	o := l.window(t)
	if g := o.c.Apply(t, o.fsurv); g < 0.5 {
		return g
	}
	return 1 - o.c.Apply(t, o.fcdf)
}

// Density returns the probability density at t > 0 by Talbot inversion of Psi.
func (l *Law) Density(t float64) float64 {
	o := l.window(t)
	return o.c.Apply(t, o.fden)
}

// Visit returns the law of Y = S(L_v) + η·L_v, L_v ~ Exp(μ), with transform
// μ/(μ + Φ(s) + ηs), for μ ≥ 1 and η ≥ 0. Its poles are s = −q²/2 with
// q cot q = 1 − μ + ηq²/2, one root in (0, π) and one in (π, 2π); the residue
// gives C = μ/(λ·D'), D' = 1/sin²q − cot(q)/q + η. It panics on parameters
// out of range. Cost O(1) (two bisections).
func Visit(mu, eta float64) *Law {
	if !(mu >= 1) || !(eta >= 0) || math.IsInf(mu, 0) || math.IsInf(eta, 0) {
		panic("starlaw: Visit needs μ ≥ 1 and η ≥ 0, finite")
	}
	g := func(q float64) float64 { return q/math.Tan(q) - (1 - mu) - eta*q*q/2 }
	root := func(lo, hi float64) float64 {
		// g decreases from +∞ (or μ) to −∞ on (lo, hi).
		for range 200 {
			mid := 0.5 * (lo + hi)
			if mid <= lo || mid >= hi {
				break // adjacent numbers: further halvings change nothing
			}
			if g(mid) > 0 {
				lo = mid
			} else {
				hi = mid
			}
		}
		return 0.5 * (lo + hi)
	}
	pole := func(q float64) (lam, c float64) {
		sn := math.Sin(q)
		dp := 1/(sn*sn) - 1/(math.Tan(q)*q) + eta
		lam = q * q / 2
		return lam, mu / (lam * dp)
	}
	l := &Law{Psi: func(s complex128) complex128 {
		return complex(mu, 0) / (complex(mu, 0) + Phi(s) + complex(eta, 0)*s)
	}}
	l.Lam1, l.C1 = pole(root(0, math.Pi))
	l.Lam2, l.C2 = pole(root(math.Pi, 2*math.Pi))
	return l
}

// FinalLaw returns the law of T_f, the time a Brownian excursion conditioned
// to reach height 1 takes to climb there: E e^{−sT} = sqrt(2s)/sinh(sqrt(2s)),
// P(T > t) = 2 Σ_{n≥1} (−1)^{n+1} e^{−n²π²t/2} (residues at s = −n²π²/2).
func FinalLaw() *Law {
	return &Law{Psi: FinalTransform, Lam1: math.Pi * math.Pi / 2, C1: 2, Lam2: 2 * math.Pi * math.Pi, C2: -2}
}

// tailErr is the neglected second pole's weight |C2|e^{−Lam2·t} at which a
// table switches to the exact one-pole tail.
const tailErr = 1e-12

// Table draws a law by inversion. With w = −ln(1 − u) (an Exp(1) draw) and
// v = sqrt(w), the root sqrt(t) of the quantile t is a cubic Hermite
// interpolant in v (slopes dt/dv = 2v·e^{−w}/f(t), to about 1e−8) on uniform
// knots up to w_tail, where the second pole's weight is below 1e−12; above,
// t = (w + ln C1)/Lam1 exactly. sqrt(t) is smooth in v at both ends when the
// density behaves like a power of t at 0 (sqrt(t) ~ v² for F ~ sqrt(t),
// ~ v for F ~ t). A law whose CDF vanishes faster than any power at 0 (T_f,
// F ~ e^{−1/(2t)}) gets a low part below u = 1e−3 that interpolates 1/t
// against ℓ = −ln u, nearly linear there. A Table is read-only after it is
// built and safe for concurrent use.
type Table struct {
	inv      float64 // 1/dv
	wTail    float64
	lam, lnC float64
	k        []float64 // sqrt(t_i), dv·d sqrt(t)/dv at knot i, interleaved
	// Low part (wLow > 0): knots uniform in ℓ from ell0 by dl.
	wLow, ell0, dl float64
	low            []float64 // 1/t_i, dl·d(1/t)/dℓ at knot i, interleaved
}

// DefaultKnots is the number of knots of the tables the walkers use: the
// measured table error max |F(Q(u)) − u| is 3e−12 or less for the visit
// laws (TestTableError), and a visit table takes about 0.3–0.5 ms to build
// (BenchmarkTableBuild).
const DefaultKnots = 1024

// lowU and ellMax bound the low part of a table: it covers
// e^{−ellMax} ≤ u < lowU (rand's exponential draws never give w below
// about 1e−16, ℓ = 37).
const (
	lowU   = 1e-3
	ellMax = 40.0
)

// NewTable builds a table of l with n ≥ 2 knots (and n more in a low part
// if lowPart). The knots are not solved one by one: the quantile is solved
// (Newton on Talbot inversions) at the Chebyshev points of a few panels
// (chebPanels), its interpolant on each panel is accepted when its last
// Chebyshev coefficients are below panelTol (else the panel is halved), and
// the knots and their slopes are read off the interpolants. Cost about 3
// Talbot sums of 32 terms per Chebyshev point (16 per panel, 8 panels or
// more), plus 32 transform evaluations per octave spanned. It panics if
// n < 2.
func NewTable(l *Law, n int, lowPart bool) *Table {
	if n < 2 {
		panic("starlaw: NewTable needs at least 2 knots")
	}
	tTail, wTail := tailStart(l)
	tb := &Table{wTail: wTail, lam: l.Lam1, lnC: math.Log(l.C1), k: make([]float64, 2*n)}
	dv := math.Sqrt(wTail) / float64(n-1)
	tb.inv = 1 / dv
	// Knot 0 (v = 0, t = 0) is not solved: the panels start at knot 1,
	// which keeps their Chebyshev points off the smallest times (each
	// octave of time costs a window of transform values), and knot 0's
	// slope is the first panel's, continued.
	i0 := 0
	if lowPart {
		tb.wLow = -math.Log1p(-lowU)
		// Knots below the low part's start are never read.
		i0 = min(int(math.Sqrt(tb.wLow)/dv), n-2)
	}
	// s(v) = sqrt(t(v)); the bracket of each solve is (t at the previous
	// point, tTail).
	chebKnots(float64(i0)*dv, dv, n-i0, math.Max(float64(i0), 1)*dv, func(v, prev, guess float64) float64 {
		return math.Sqrt(l.quantile(v*v, prev*prev, tTail, guess*guess))
	}, func(v, dsdv float64) float64 {
		return 2 * v * math.Exp(-v*v) / math.Abs(dsdv)
	}, tb.k[2*i0:])
	// The last knot is the tail's start: its value and slope from the
	// one-pole tail t = (w + ln C1)/Lam1, so that the quantile is smooth
	// there (dt/dv = 2v/Lam1).
	tb.k[2*(n-1)] = math.Sqrt(tTail)
	tb.k[2*(n-1)+1] = dv * math.Sqrt(wTail) / (l.Lam1 * math.Sqrt(tTail))
	if i0 == 0 {
		tb.k[0], tb.k[1] = 0, math.Max(0, tb.k[1])
	}
	if lowPart {
		tb.ell0 = -math.Log(lowU)
		tb.dl = (ellMax - tb.ell0) / float64(n-1)
		tb.low = make([]float64, 2*n)
		hi := l.quantile(tb.wLow, 0, tTail, 0)
		// r(ℓ) = 1/t(u = e^{−ℓ}) increases with ℓ; the bracket of each
		// solve is (0, t at the previous point).
		chebKnots(tb.ell0, tb.dl, n, tb.ell0, func(ell, prev, guess float64) float64 {
			top := hi
			if prev > 0 {
				top = 1 / prev
			}
			g := 0.0
			if guess > 0 {
				g = 1 / guess
			}
			return 1 / l.quantile(-math.Log1p(-math.Exp(-ell)), 0, top, g)
		}, func(ell, drdl float64) float64 {
			return math.Exp(-ell) / math.Abs(drdl)
		}, tb.low)
		tb.low[0] = 1 / hi
	}
	return tb
}

// tailStart returns where a table of l switches to the one-pole tail: the
// time tTail at which the second pole's weight is below tailErr and its w.
func tailStart(l *Law) (tTail, wTail float64) {
	tTail = math.Log(math.Max(math.Abs(l.C2), 1e-300)/tailErr) / l.Lam2
	wTail = l.Lam1*tTail - math.Log(l.C1)
	if wTail < 0.5 {
		wTail = 0.5
		tTail = (wTail + math.Log(l.C1)) / l.Lam1
	}
	return tTail, wTail
}

// Chebyshev panels of the table builder.
const (
	// chebN is the number of Chebyshev points of a panel.
	chebN = 24
	// chebPanels is the number of panels a table's knot range starts with.
	chebPanels = 4
	// panelTol bounds the error in probability u of an accepted panel:
	// the larger of its last two Chebyshev coefficients (the neglected
	// terms of a geometrically converging series are of that order: L. N.
	// Trefethen, Approximation Theory and Approximation Practice, 2013,
	// ch. 8, from memory) times the largest |du/dy| on the panel.
	panelTol = 1e-13
	// minPanel is the smallest panel as a fraction of a starting one (a
	// law whose inversion is noisy, the far low part of T_f, would
	// otherwise be halved down to the knot spacing): there a panel is
	// accepted with the error the tests measure.
	minPanel = 1.0 / 16
)

// guessPoints is the number of points through which a solve's starting
// guess is extrapolated.
const guessPoints = 6

// chebNodes are the Chebyshev points cos(π(j + ½)/N) in increasing order,
// chebCos[k][j] = cos(πk(j + ½)/N) for them (the discrete cosine transform
// that gives the coefficients).
var chebNodes, chebCos = func() (x [chebN]float64, c [chebN][chebN]float64) {
	for j := range chebN {
		th := math.Pi * (float64(chebN-1-j) + 0.5) / chebN
		x[j] = math.Cos(th)
		for k := range chebN {
			c[k][j] = math.Cos(float64(k) * th)
		}
	}
	return x, c
}()

// chebKnots fills out (interleaved) with f(x_i) and h·f'(x_i) at the n
// knots x_i = x0 + i·h from Chebyshev interpolants of f on panels of
// [a0, x0 + (n−1)h], a0 ≥ x0 (knots below a0 from the first panel's,
// continued). solve(x, prev, guess) returns f(x), given the value
// prev at the last point solved before x (0 at the start) and a guess
// (0: none); it is called at increasing x within a panel. dudy(x, y'(x))
// returns |du/dy|, the probability that an error in y moves.
func chebKnots(x0, h float64, n int, a0 float64, solve func(x, prev, guess float64) float64, dudy func(x, dydx float64) float64, out []float64) {
	x1 := x0 + float64(n-1)*h
	type panel struct{ a, b float64 }
	var todo []panel // a stack: the leftmost panel last
	for p := chebPanels - 1; p >= 0; p-- {
		todo = append(todo, panel{a0 + (x1-a0)*float64(p)/chebPanels, a0 + (x1-a0)*float64(p+1)/chebPanels})
	}
	if x1-a0 < 2*chebPanels*h {
		todo = []panel{{a0, x1}}
	}
	var y, c [chebN]float64
	// The last points solved in accepted panels, most recent first (x
	// NaN: none).
	nan := math.NaN()
	var acc [guessPoints][2]float64
	for i := range acc {
		acc[i][0] = nan
	}
	next := 0 // first knot not yet filled
	for len(todo) > 0 {
		pn := todo[len(todo)-1]
		todo = todo[:len(todo)-1]
		mid, half := 0.5*(pn.a+pn.b), 0.5*(pn.b-pn.a)
		last := acc
		for j := range chebN {
			x := mid + half*chebNodes[j]
			y[j] = solve(x, last[0][1], math.Max(extrapolate(&last, x), 0))
			copy(last[1:], last[:guessPoints-1])
			last[0] = [2]float64{x, y[j]}
		}
		for k := range chebN {
			var s float64
			for j := range chebN {
				s += y[j] * chebCos[k][j]
			}
			c[k] = 2 * s / chebN
		}
		c[0] /= 2
		// The interpolant's error in y, about the last coefficients,
		// times the largest |du/dy| on the panel (slopes from neighbours).
		var sens float64
		for j := 1; j < chebN-1; j++ {
			xl, xr := mid+half*chebNodes[j-1], mid+half*chebNodes[j+1]
			sens = math.Max(sens, dudy(mid+half*chebNodes[j], (y[j+1]-y[j-1])/(xr-xl)))
		}
		tail := math.Max(math.Abs(c[chebN-1]), math.Abs(c[chebN-2]))
		if tail*sens > panelTol && 2*half > minPanel*(x1-a0)/chebPanels && half > 2*h {
			todo = append(todo, panel{mid, pn.b}, panel{pn.a, mid})
			continue
		}
		// Fill the knots in [a, b] (the last panel takes x1 itself).
		for ; next < n; next++ {
			x := x0 + float64(next)*h
			if x > pn.b && !(pn.b == x1) {
				break
			}
			v, d := chebEval(&c, (x-mid)/half)
			out[2*next] = v
			out[2*next+1] = h * d / half
		}
		acc = last
	}
}

// extrapolate returns the guess at x from the last points (most recent
// first, x NaN: none): the polynomial through all of them (Neville's
// scheme), 0 with fewer than two.
func extrapolate(p *[guessPoints][2]float64, x float64) float64 {
	var q [guessPoints]float64
	n := 0
	for n < guessPoints && !math.IsNaN(p[n][0]) {
		q[n] = p[n][1]
		n++
	}
	if n < 2 {
		return 0
	}
	for m := 1; m < n; m++ {
		for i := 0; i < n-m; i++ {
			q[i] = ((x-p[i+m][0])*q[i] - (x-p[i][0])*q[i+1]) / (p[i][0] - p[i+m][0])
		}
	}
	return q[0]
}

// chebEval returns Σ c_k T_k(z) and its derivative in z (Clenshaw's
// recurrence for both).
func chebEval(c *[chebN]float64, z float64) (v, d float64) {
	var b1, b2, d1, d2 float64
	for k := chebN - 1; k >= 1; k-- {
		b1, b2 = 2*z*b1-b2+c[k], b1
		d1, d2 = 2*z*d1-d2+2*b2, d1
	}
	// b1, b2 are now b_1, b_2 and d1, d2 their derivatives in z:
	// d_k = 2z d_{k+1} − d_{k+2} + 2 b_{k+1}, f' = b_1 + z d_1 − d_2.
	return z*b1 - b2 + c[0], b1 + z*d1 - d2
}

// newtonDone is the Newton step in ln t after which quantile stops.
const newtonDone = 1e-8

// quantile solves P(X > t) = e^{−w} for t in (lo, hi) by Newton's method on
// ln t safeguarded by bisection (lo = 0: search downwards from hi), started
// from guess when it lies in the bracket (0: from the bracket's middle).
func (l *Law) quantile(w, lo, hi, guess float64) float64 {
	small := w < math.Ln2
	u, g := -math.Expm1(-w), math.Exp(-w)
	// h increases in t and vanishes at the root; the smaller of F and
	// 1 − F keeps its relative accuracy.
	h := func(t float64) (float64, float64) {
		f, sv, d := l.eval(t)
		if small {
			if f >= 0.5 {
				f = 1 - sv
			}
			return f - u, d
		}
		if sv >= 0.5 {
			sv = 1 - f
		}
		return g - sv, d
	}
	xh := math.Log(hi)
	var xl float64
	if lo > 0 {
		xl = math.Log(lo)
	} else {
		xl = xh - 1
		if g := math.Log(guess); guess > 0 && g-0.01 < xh {
			// Just below the guess: one evaluation when it is good.
			xl = g - 0.01
		}
		for {
			if hv, _ := h(math.Exp(xl)); hv <= 0 {
				break
			}
			xl -= 1
		}
	}
	x := 0.5 * (xl + xh)
	if g := math.Log(guess); guess > 0 && g > xl && g < xh {
		x = g
	}
	for range 200 {
		t := math.Exp(x)
		hv, d := h(t)
		if hv > 0 {
			xh = x
		} else {
			xl = x
		}
		nx := x - hv/(d*t)
		newton := nx > xl && nx < xh
		if !newton {
			nx = 0.5 * (xl + xh)
		}
		// A Newton step of δ leaves an error of about C·δ² (C = |h”/2h'|,
		// at most a few tens here): below newtonDone that is under 1e−14.
		if (newton && math.Abs(nx-x) < newtonDone) || math.Abs(nx-x) < 1e-13 || xh-xl < 1e-13 {
			return math.Exp(nx)
		}
		x = nx
	}
	return math.Exp(x)
}

// Quantile returns the time at w = −ln(1 − u) ≥ 0. Cost: one square root
// and a cubic (a logarithm more below u = 1e−3 in a table with a low part);
// no allocation.
func (tb *Table) Quantile(w float64) float64 {
	if w >= tb.wTail {
		return (w + tb.lnC) / tb.lam
	}
	if w < tb.wLow {
		return tb.lowQuantile(w)
	}
	s := math.Sqrt(w) * tb.inv
	i := int(s)
	if n := len(tb.k)/2 - 1; i >= n {
		i = n - 1
	}
	h := s - float64(i)
	k := tb.k[2*i : 2*i+4]
	h2 := h * h
	h3 := h2 * h
	r := (2*h3-3*h2+1)*k[0] + (h3-2*h2+h)*k[1] + (-2*h3+3*h2)*k[2] + (h3-h2)*k[3]
	return r * r
}

func (tb *Table) lowQuantile(w float64) float64 {
	ell := -math.Log(-math.Expm1(-w))
	s := (ell - tb.ell0) / tb.dl
	if !(s < float64(len(tb.low)/2-1)) {
		// u below e^{−40}: the small-time asymptote ℓ ≈ 1/(2t).
		return 1 / (2 * ell)
	}
	i := int(s)
	h := s - float64(i)
	k := tb.low[2*i : 2*i+4]
	h2 := h * h
	h3 := h2 * h
	q := (2*h3-3*h2+1)*k[0] + (h3-2*h2+h)*k[1] + (-2*h3+3*h2)*k[2] + (h3-h2)*k[3]
	return 1 / q
}

// Draw returns one draw, using one exponential draw from rng.
func (tb *Table) Draw(rng *rand.Rand) float64 { return tb.Quantile(rng.ExpFloat64()) }

var (
	finalOnce  sync.Once
	finalTable *Table
)

// maxCached bounds the number of visit tables kept for reuse across runs.
const maxCached = 1024

// Final returns the shared table of T_f (2·DefaultKnots knots in each part),
// built on first use.
func Final() *Table {
	finalOnce.Do(func() { finalTable = NewTable(FinalLaw(), 2*DefaultKnots, true) })
	return finalTable
}

// VisitTable returns a table of Visit(mu, eta) with DefaultKnots knots,
// its parameters quantised (Quantise), shared with earlier calls with the
// same quantised parameters (up to 1024 are kept). Safe for concurrent use.
// Cost: under a millisecond when new.
func VisitTable(mu, eta float64) *Table {
	mu, eta = Quantise(mu), Quantise(eta)
	return cached(VisitKey(mu, eta), func() *Table { return NewTable(Visit(mu, eta), DefaultKnots, false) })
}

// VisitKey returns the key under which VisitTable shares its tables.
func VisitKey(mu, eta float64) string { return string(key([]byte{'v'}, mu, eta)) }
