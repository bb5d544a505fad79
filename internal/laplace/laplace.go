package laplace

import (
	"fmt"
	"math"
	"math/cmplx"
)

// DefaultM is the number of fixed-Talbot nodes that gives about 1e−11
// relative accuracy in float64 on smooth transforms (see the package tests,
// which measure the error against M).
const DefaultM = 24

// Contour is a quadrature rule for the inverse transform at times
// Tmin ≤ t ≤ Tmax:
//
//	f(t) ≈ Σ_k Re(D[k]·e^{t·S[k]}·F(S[k])).
//
// The nodes lie in the closed upper half plane; the lower half is accounted
// for by the real part (F(conj s) = conj F(s) for the transform of a real f).
// A caller may evaluate several transforms at the same nodes, e.g. a survival
// function and its density, and reuse them for every t of the window, for the
// price of one set of evaluations.
type Contour struct {
	Tmin, Tmax float64
	S, D       []complex128
}

// talbot returns the Talbot contour s(θ) = rθ(cot θ + iν) with m
// trapezoidal nodes θ_k = kπ/m and D_k = (r/m)(ν + iσ_k),
// σ = θ + (θ cot θ − 1) cot θ (so that ds/dθ = i r (ν + iσ)), halved at
// θ = 0. ν = 1 is the fixed Talbot contour; ν > 1 makes it taller (it
// reaches Im s = rνπ), which encloses complex singularities further from
// the real axis.
func talbot(r, nu float64, m int) (S, D []complex128) {
	S, D = make([]complex128, m), make([]complex128, m)
	scale := r / float64(m)
	S[0] = complex(r, 0)
	D[0] = complex(0.5*scale*nu, 0)
	for k := 1; k < m; k++ {
		th := float64(k) * math.Pi / float64(m)
		cot := math.Cos(th) / math.Sin(th)
		S[k] = complex(r*th*cot, r*th*nu)
		D[k] = complex(scale*nu, scale*(th+(th*cot-1)*cot))
	}
	return S, D
}

func checkTM(t float64, m int) {
	if !(t > 0) || math.IsInf(t, 0) {
		panic(fmt.Sprintf("laplace: Talbot at t = %g, need 0 < t < ∞", t))
	}
	if m < 2 {
		panic(fmt.Sprintf("laplace: Talbot with m = %d nodes, need m ≥ 2", m))
	}
}

// TalbotContour returns the fixed Talbot rule of Abate and Valkó with m nodes
// for the single time t > 0: r = 2m/(5t). It panics if t ≤ 0 or is not
// finite, or m < 2. Cost O(m), allocates two slices of length m.
func TalbotContour(t float64, m int) Contour {
	checkTM(t, m)
	S, D := talbot(2*float64(m)/(5*t), 1, m)
	return Contour{Tmin: t, Tmax: t, S: S, D: D}
}

// WindowRatio is the largest Tmax/Tmin of a TalbotWindow.
const WindowRatio = 2

// DefaultWindowM is the number of nodes of a TalbotWindow that gives about
// 1e−11 of max|f| over the window (measured in the tests).
const DefaultWindowM = 32

// Window contour shapes, chosen by measurement over the test pairs with
// m = 32 and a window of ratio 2 (see TestTalbotWindow): r = scale·2m/(5·Tmax)
// and height ν. The window contour (scale 0.6, ν = 2) has a worst error of
// 1e−12…1e−11, flat for scales 0.5–0.7; for ν = 1 (the fixed Talbot shape)
// the best is 1e−10, for ν = 3 it is 3e−7. The check contour (scale 0.8,
// ν = 2.5, worst error 3e−9) is taller and differently placed: agreement of
// the two shows that no singularity lies between them.
const (
	windowScale, windowHeight = 0.6, 2.0
	checkScale, checkHeight   = 0.8, 2.5
)

// TalbotWindow returns a Talbot contour with m nodes that serves every time
// t in [t0, t1], t1 ≤ WindowRatio·t0: the Talbot contour family with its
// scale r fitted to the window instead of one t and twice the height of the
// fixed Talbot contour. It panics if 0 < t0 ≤ t1 ≤ 2t0 fails or m < 2.
// Cost O(m).
func TalbotWindow(t0, t1 float64, m int) Contour {
	return talbotWindow(t0, t1, m, windowScale, windowHeight)
}

// WindowLevels is the number of levels of TalbotWindowLevel.
const WindowLevels = 3

// windowLevels are (nodes, scale, height) of the window and of the check
// contour at each level: the contours grow taller (height scale·ν·m: 38, 58,
// 77) at a constant leftward reach (scale·m), for transforms with complex
// singularities far from the real axis. Measured worst errors over the test
// pairs (TestTalbotWindowLevels): window 1e−12, 1e−11, 1e−11; check 3e−9,
// 5e−8, 1e−8.
var windowLevels = [WindowLevels][2]struct {
	m         int
	scale, nu float64
}{
	{{DefaultWindowM, windowScale, windowHeight}, {DefaultWindowM, checkScale, checkHeight}},
	{{48, 0.4, 3}, {48, 0.4, 4}},
	{{64, 0.3, 4}, {64, 0.4, 5}},
}

// TalbotWindowLevel returns the window and check contours of the given level
// (0 ≤ level < WindowLevels) for [t0, t1], t1 ≤ WindowRatio·t0. Level 0 is
// TalbotWindow and its taller check contour with DefaultWindowM nodes; levels 1 and
// 2 have 48 and 64 nodes and reach 1.5 and 2 times as far from the real
// axis. It panics on a bad window or level. Cost O(nodes).
func TalbotWindowLevel(t0, t1 float64, level int) (c, check Contour) {
	if level < 0 || level >= WindowLevels {
		panic(fmt.Sprintf("laplace: window level %d out of [0, %d)", level, WindowLevels))
	}
	w, k := windowLevels[level][0], windowLevels[level][1]
	return talbotWindow(t0, t1, w.m, w.scale, w.nu), talbotWindow(t0, t1, k.m, k.scale, k.nu)
}

// WideWindowRatio is the largest Tmax/Tmin of a TalbotWideWindow.
const WideWindowRatio = 4

// WideWindowM is the number of nodes of a TalbotWideWindow.
const WideWindowM = 40

// The wide window's shape, chosen by measurement like the window's (see
// TestTalbotWideWindow): with m = 40 nodes and a ratio of 4 the worst
// error over the test pairs is 5e−12 of max|f| at scale 0.5, ν = 2.5,
// and below 1e−11 for scales 0.475–0.55 and heights 2.25–2.5; m = 32
// gives at best 2e−11, m = 48 2e−12. A window of ratio 8 needs 56 nodes
// for 3e−11 (common practice, no source: a scan over the test pairs).
const wideScale, wideHeight = 0.5, 2.5

// TalbotWideWindow returns a Talbot contour of WideWindowM nodes that
// serves every time t in [t0, t1], t1 ≤ WideWindowRatio·t0, at about the
// accuracy of TalbotWindow (5e−12 of max|f| over the window on the test
// pairs): two octaves for 40 transform values instead of 64. Like
// TalbotWindow it encloses only singularities near the negative real axis
// (it has no check contour). It panics if 0 < t0 ≤ t1 ≤ 4t0 fails. Cost
// O(nodes).
func TalbotWideWindow(t0, t1 float64) Contour {
	return talbotWindowRatio(t0, t1, WideWindowM, wideScale, wideHeight, WideWindowRatio)
}

func talbotWindow(t0, t1 float64, m int, scale, nu float64) Contour {
	return talbotWindowRatio(t0, t1, m, scale, nu, WindowRatio)
}

func talbotWindowRatio(t0, t1 float64, m int, scale, nu float64, ratio float64) Contour {
	checkTM(t0, m)
	if !(t1 >= t0) || t1 > ratio*t0*(1+1e-12) {
		panic(fmt.Sprintf("laplace: Talbot window [%g, %g] wider than a ratio of %g", t0, t1, ratio))
	}
	S, D := talbot(scale*2*float64(m)/(5*t1), nu, m)
	return Contour{Tmin: t0, Tmax: t1, S: S, D: D}
}

// Apply returns Σ_k Re(D[k]·e^{t·S[k]}·Fs[k]) for transform values
// Fs[k] = F(S[k]). It panics if len(Fs) differs from the number of nodes or
// t lies outside [Tmin, Tmax] (beyond a relative 1e−12). Cost O(m), one
// complex exponential per node.
func (c Contour) Apply(t float64, Fs []complex128) float64 {
	if len(Fs) != len(c.S) {
		panic("laplace: Apply length mismatch")
	}
	if t < c.Tmin*(1-1e-12) || t > c.Tmax*(1+1e-12) {
		panic(fmt.Sprintf("laplace: Apply at t = %g outside the contour's window [%g, %g]", t, c.Tmin, c.Tmax))
	}
	var sum float64
	for k, s := range c.S {
		sum += real(c.D[k] * cmplx.Exp(s*complex(t, 0)) * Fs[k])
	}
	return sum
}

// StehfestWeights returns the Gaver–Stehfest weights V_1…V_n for an even n,
// so that f(t) ≈ (ln2/t) Σ_k V_k F(k ln2/t). It panics if n is odd, n < 2 or
// n > 30 (beyond which the weights lose all digits in float64).
func StehfestWeights(n int) []float64 {
	if n < 2 || n%2 != 0 || n > 30 {
		panic(fmt.Sprintf("laplace: Stehfest with n = %d, need an even n in [2, 30]", n))
	}
	h := n / 2
	fact := make([]float64, n+1)
	fact[0] = 1
	for i := 1; i <= n; i++ {
		fact[i] = fact[i-1] * float64(i)
	}
	v := make([]float64, n)
	for k := 1; k <= n; k++ {
		var sum float64
		for j := (k + 1) / 2; j <= min(k, h); j++ {
			sum += math.Pow(float64(j), float64(h)) * fact[2*j] /
				(fact[h-j] * fact[j] * fact[j-1] * fact[k-j] * fact[2*j-k])
		}
		if (k+h)%2 != 0 {
			sum = -sum
		}
		v[k-1] = sum
	}
	return v
}

// DefaultStehfestN is the number of Gaver–Stehfest terms used when a caller
// passes n ≤ 0. In float64 the error falls until n ≈ 16–18 and then grows
// again as the alternating weights (up to 1e8) cancel; measured on the test
// pairs: 5e−5 at n = 14, 1e−5 at n = 16, 2e−5 at n = 20, 1e−2 at n = 24.
const DefaultStehfestN = 16
