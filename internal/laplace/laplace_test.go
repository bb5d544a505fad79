package laplace

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"
)

// Transform pairs with closed-form inverses. Sources: the elementary pairs
// 1/(s+1) ↔ e^{−t}, 1/√s ↔ 1/√(πt) and e^{−a√s} ↔ a e^{−a²/4t}/(2√(π t³)) are in
// every transform table (e.g. Abramowitz & Stegun, Handbook of Mathematical
// Functions, 1964, §29.3, entries recalled from memory: 29.3.8, 29.3.4, 29.3.82).
// 1/(s√(1+s)) ↔ erf(√t) is docs/references.md C4. The exit-time pair
// (1 − 1/cosh√(2s))/s ↔ P(τ > t) for Brownian motion from the centre of (−1, 1)
// is docs/references.md B2/B3, whose survival series is evaluated here.
type pair struct {
	name string
	F    func(s complex128) complex128
	f    func(t float64) float64
	ts   []float64
}

// exitSurvival is the eigen series of docs/references.md B2 with r = 1:
// (4/π) Σ (−1)^n/(2n+1) exp(−(2n+1)²π²t/8), summed until the terms vanish.
func exitSurvival(t float64) float64 {
	var s float64
	for n := 0; n < 10000; n++ {
		k := float64(2*n + 1)
		term := math.Exp(-k*k*math.Pi*math.Pi*t/8) / k
		if n%2 == 1 {
			term = -term
		}
		s += term
		if math.Abs(term) < 1e-18 {
			break
		}
	}
	return 4 / math.Pi * s
}

var pairs = []pair{
	{"exp", func(s complex128) complex128 { return 1 / (s + 1) },
		func(t float64) float64 { return math.Exp(-t) }, []float64{0.1, 0.5, 1, 3, 10}},
	{"inv-sqrt", func(s complex128) complex128 { return 1 / cmplx.Sqrt(s) },
		func(t float64) float64 { return 1 / math.Sqrt(math.Pi*t) }, []float64{0.1, 1, 10}},
	{"first-passage", func(s complex128) complex128 { return cmplx.Exp(-cmplx.Sqrt(s)) },
		func(t float64) float64 { return math.Exp(-1/(4*t)) / (2 * math.Sqrt(math.Pi*t*t*t)) }, []float64{0.05, 0.2, 1, 5}},
	{"cable-erf", func(s complex128) complex128 { return 1 / (s * cmplx.Sqrt(1+s)) },
		func(t float64) float64 { return math.Erf(math.Sqrt(t)) }, []float64{0.5, 1, 2}},
	{"exit-survival", func(s complex128) complex128 { return (1 - 1/cmplx.Cosh(cmplx.Sqrt(2*s))) / s },
		exitSurvival, []float64{0.05, 0.25, 0.5, 1, 2, 5}},
}

func TestTalbotPairs(t *testing.T) {
	// The fixed Talbot error is relative to the size of f over the time
	// scale of the contour, not to f(t) itself: rounding in the nodes is
	// amplified by e^{2M/5} ≈ 1.5e4 (M = 24) times the size of F there, so a
	// tail value such as e^{−10} carries an absolute, not relative, error of
	// some 1e−13. Measured worst error/scale over these pairs: about 1e−12;
	// 1e−9 leaves a margin of a thousand over that.
	const tol = 1e-9
	for _, p := range pairs {
		var scale float64
		for _, tt := range p.ts {
			scale = math.Max(scale, math.Abs(p.f(tt)))
		}
		for _, tt := range p.ts {
			got := Talbot(p.F, tt, 0)
			want := p.f(tt)
			if err := math.Abs(got-want) / math.Max(math.Abs(want), scale); err > tol {
				t.Errorf("%s t=%g: Talbot %.15g, want %.15g (rel err %.2g > %g)", p.name, tt, got, want, err, tol)
			}
		}
	}
}

// TestTalbotB2 checks the published 7-digit values of docs/references.md B2.
func TestTalbotB2(t *testing.T) {
	F := func(s complex128) complex128 { return (1 - 1/cmplx.Cosh(cmplx.Sqrt(2*s))) / s }
	const published = 5e-8 // half a unit in the 7th digit
	for _, c := range []struct{ t, want float64 }{
		{0.25, 0.9089995}, {0.5, 0.6854458}, {1, 0.3707774}, {2, 0.1079770},
	} {
		if got := Talbot(F, c.t, 0); math.Abs(got-c.want) > published {
			t.Errorf("t=%g: %.9f, want %.7f", c.t, got, c.want)
		}
	}
}

// TestTalbotConvergence checks that the error falls with M as the method
// promises (roughly 10^{−0.6M} until rounding takes over near 1e−12) and
// that DefaultM is on the plateau.
func TestTalbotConvergence(t *testing.T) {
	p := pairs[4]
	errAt := func(m int) float64 {
		var worst float64
		for _, tt := range p.ts {
			worst = math.Max(worst, math.Abs(Talbot(p.F, tt, m)-p.f(tt)))
		}
		return worst
	}
	e8, e16, eDef := errAt(8), errAt(16), errAt(DefaultM)
	t.Logf("max abs error: M=8 %.2g, M=16 %.2g, M=%d %.2g", e8, e16, DefaultM, eDef)
	if !(e16 < e8/100) {
		t.Errorf("error did not fall from M=8 (%.2g) to M=16 (%.2g)", e8, e16)
	}
	const plateau = 1e-10
	if eDef > plateau {
		t.Errorf("M=%d error %.2g above %g", DefaultM, eDef, plateau)
	}
}

func TestStehfestPairs(t *testing.T) {
	// Gaver–Stehfest in float64 with N = 16 reaches about 1.3e−5 absolute
	// on these smooth f of size ≤ 1 (measured; the accuracy is limited by the
	// cancellation among weights of size up to 1e8). 5e−5 is that with a
	// margin of four. The near-singular pairs are left out.
	const tol = 5e-5
	real := func(F func(complex128) complex128) func(float64) float64 {
		return func(s float64) float64 { return real(F(complex(s, 0))) }
	}
	for _, i := range []int{0, 3, 4} {
		p := pairs[i]
		for _, tt := range p.ts {
			if tt < 0.2 {
				continue
			}
			got := Stehfest(real(p.F), tt, 0)
			want := p.f(tt)
			if err := math.Abs(got - want); err > tol {
				t.Errorf("%s t=%g: Stehfest %.10g, want %.10g (err %.2g)", p.name, tt, got, want, err)
			}
		}
	}
}

// TestStehfestWeightsSum: Σ V_k = 0 for every even n (the formula must invert
// F = 1/s to the constant 1, and F = 1 to zero away from t = 0; the first
// follows from Σ V_k/k = 1/ln2·ln2 = 1, tested as Σ V_k /k = 1).
func TestStehfestWeightsSum(t *testing.T) {
	for _, n := range []int{2, 8, 14, 20} {
		v := StehfestWeights(n)
		var s0, s1, scale float64
		for k, w := range v {
			s0 += w
			s1 += w / float64(k+1)
			scale = math.Max(scale, math.Abs(w))
		}
		roundoff := 1e-13 * scale
		if math.Abs(s0) > roundoff || math.Abs(s1-1) > roundoff {
			t.Errorf("n=%d: ΣV = %.3g, ΣV/k = %.15g (scale %.3g)", n, s0, s1, scale)
		}
	}
}

func TestContourApply(t *testing.T) {
	// Apply with the transform values at the nodes equals Talbot exactly.
	F := pairs[0].F
	c := TalbotContour(0.7, 20)
	fs := make([]complex128, len(c.S))
	for k, s := range c.S {
		fs[k] = F(s)
	}
	if a, b := c.Apply(0.7, fs), Talbot(F, 0.7, 20); a != b {
		t.Errorf("Apply %.17g != Talbot %.17g", a, b)
	}
}

// TestTalbotWindow: one window contour serves a whole octave of times. The
// error is measured over 41 times in each window at four window positions,
// relative to max|f| over the window. Measured worst over all pairs: 1e−11
// for the window contour, 3e−9 for the check contour; the bounds are ten
// times that.
func TestTalbotWindow(t *testing.T) {
	for _, c := range []struct {
		name    string
		contour func(t0, t1 float64, m int) Contour
		tol     float64
	}{{"window", TalbotWindow, 1e-10}, {"check", func(t0, t1 float64, m int) Contour { return talbotWindow(t0, t1, m, checkScale, checkHeight) }, 3e-8}} {
		testWindow(t, c.name, c.contour, c.tol)
	}
}

// TestTalbotWideWindow: one wide window serves two octaves. Measured like
// TestTalbotWindow (81 times per window): worst 5e−12 of max|f|; the bound
// is ten times that.
func TestTalbotWideWindow(t *testing.T) {
	testWindowRatio(t, "wide", func(t0, t1 float64, _ int) Contour { return TalbotWideWindow(t0, t1) }, 5e-11, WideWindowRatio, 80)
	defer func() {
		if recover() == nil {
			t.Error("a wide window of ratio 5 did not panic")
		}
	}()
	TalbotWideWindow(1, 5)
}

func testWindow(t *testing.T, name string, contour func(t0, t1 float64, m int) Contour, tol float64) {
	testWindowRatio(t, name, contour, tol, WindowRatio, 40)
}

func testWindowRatio(t *testing.T, name string, contour func(t0, t1 float64, m int) Contour, tol, ratio float64, nt int) {
	var worst float64
	for _, p := range pairs {
		for _, t0 := range []float64{0.01, 0.1, 0.3, 3} {
			t1 := ratio * t0
			c := contour(t0, t1, DefaultWindowM)
			fs := make([]complex128, len(c.S))
			for k, s := range c.S {
				fs[k] = p.F(s)
			}
			var scale float64
			ts := make([]float64, nt+1)
			for i := range ts {
				ts[i] = t0 * math.Pow(t1/t0, float64(i)/float64(nt))
				scale = math.Max(scale, math.Abs(p.f(ts[i])))
			}
			for _, tt := range ts {
				err := math.Abs(c.Apply(tt, fs)-p.f(tt)) / scale
				worst = math.Max(worst, err)
				if err > tol {
					t.Errorf("%s: %s window [%g, %g] t=%g: error %.2g of max|f|", name, p.name, t0, t1, tt, err)
				}
			}
		}
	}
	t.Logf("%s: worst error %.2g of max|f|", name, worst)
}

// TestTalbotWindowLevels measures the taller contours of levels 1 and 2
// like TestTalbotWindow (bounds ten times the measured worst errors).
func TestTalbotWindowLevels(t *testing.T) {
	tol := [WindowLevels][2]float64{{1e-10, 3e-8}, {1e-10, 5e-7}, {1e-10, 1e-7}}
	for level := range WindowLevels {
		for which, name := range []string{"window", "check"} {
			contour := func(t0, t1 float64, _ int) Contour {
				c, k := TalbotWindowLevel(t0, t1, level)
				if which == 0 {
					return c
				}
				return k
			}
			testWindow(t, fmt.Sprintf("level %d %s", level, name), contour, tol[level][which])
		}
	}
}

// Talbot (test helper) returns f(t) for the transform F by the fixed Talbot rule with m
// nodes (m ≤ 0 means DefaultM). F is called m times, at points in the upper
// half plane and at one positive real point. It panics if t ≤ 0.
func Talbot(F func(s complex128) complex128, t float64, m int) float64 {
	if m <= 0 {
		m = DefaultM
	}
	c := TalbotContour(t, m)
	fs := make([]complex128, m)
	for k, s := range c.S {
		fs[k] = F(s)
	}
	return c.Apply(t, fs)
}

// Stehfest (test helper) returns f(t) for the transform F by the Gaver–Stehfest formula
// with n terms (n ≤ 0 means DefaultStehfestN). F is called n times at real
// s > 0. It panics if t ≤ 0 or n is odd or above 30.
func Stehfest(F func(s float64) float64, t float64, n int) float64 {
	if !(t > 0) || math.IsInf(t, 0) {
		panic(fmt.Sprintf("laplace: Stehfest at t = %g, need 0 < t < ∞", t))
	}
	if n <= 0 {
		n = DefaultStehfestN
	}
	v := StehfestWeights(n)
	a := math.Ln2 / t
	var sum float64
	for k, w := range v {
		sum += w * F(float64(k+1)*a)
	}
	return a * sum
}
