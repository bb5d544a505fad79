package vertex

import (
	"math"
	"testing"
)

// TestArmElementODE checks the elements against a fine finite-difference
// solution of a u” + b u' − c u + f = 0 on [0, ε]: u'(0) = −A u(0) +
// B u(ε) + F. Exact cases (b = 0, or c = 0) must agree to the difference
// scheme's O(h²) error; drift with decay (second order in ε) to O(ε²).
func TestArmElementODE(t *testing.T) {
	for _, c := range []struct {
		name        string
		a, b, cc, f float64
		eps, tol    float64
	}{
		{"decay and source", 0.7, 0, 2, 1.3, 0.9, 1e-6},
		{"strong decay", 0.5, 0, 50, 0.4, 1, 1e-5}, // disc = (κh)² = 6e−6
		{"drift away", 0.5, 2, 0, 1.1, 0.6, 1e-6},
		{"drift towards", 0.5, -3, 0, 0.8, 0.6, 1e-6},
		{"tiny drift", 1, 1e-7, 0, 1, 0.5, 1e-6},
		{"drift and decay", 1, 0.5, 0.4, 0.3, 0.05, 0.05 * 0.05},
	} {
		t.Run(c.name, func(t *testing.T) {
			amb, B, F := unpack(NewArm(c.a, c.b, c.cc, c.f, c.eps))
			A := amb + B
			for _, bc := range [][2]float64{{1, 0}, {0, 1}, {0.3, -0.8}} {
				got := -A*bc[0] + B*bc[1] + F
				want := fdSlope(c.a, c.b, c.cc, c.f, c.eps, bc[0], bc[1])
				if d := math.Abs(got - want); d > c.tol*(1+math.Abs(want)) {
					t.Errorf("u(0)=%g u(ε)=%g: element slope %.8g, ODE %.8g", bc[0], bc[1], got, want)
				}
			}
		})
	}
}

// fdSlope solves the two-point problem by central differences on 4000
// cells (Thomas algorithm) and returns a second-order one-sided u'(0).
func fdSlope(a, b, c, f, eps, u0, u1 float64) float64 {
	const n = 4000
	h := eps / n
	lo := make([]float64, n+1)
	di := make([]float64, n+1)
	up := make([]float64, n+1)
	rh := make([]float64, n+1)
	di[0], rh[0] = 1, u0
	di[n], rh[n] = 1, u1
	for i := 1; i < n; i++ {
		lo[i] = a/(h*h) - b/(2*h)
		up[i] = a/(h*h) + b/(2*h)
		di[i] = -2*a/(h*h) - c
		rh[i] = -f
	}
	for i := 1; i <= n; i++ {
		m := lo[i] / di[i-1]
		di[i] -= m * up[i-1]
		rh[i] -= m * rh[i-1]
	}
	u := make([]float64, n+1)
	u[n] = rh[n] / di[n]
	for i := n - 1; i >= 0; i-- {
		u[i] = (rh[i] - up[i]*u[i+1]) / di[i]
	}
	return (-3*u[0] + 4*u[1] - u[2]) / (2 * h)
}

// unpack returns the fields of an Arm.
func unpack(ar Arm) (amb, b, f float64) { return ar.AmB, ar.B, ar.F }

// TestStarArms checks that StarArms on plain arms is Star (both are the rule
// of docs/walkers.md §7), and that its probabilities sum to one with decay.
func TestStarArms(t *testing.T) {
	law := Law{Kind: Balance, Leak: 0.7, Inject: 0.3, Capacity: 0.4}
	a := []float64{1, 4, 0.25}
	rho := []float64{1, 0.5, 2}
	alpha := []float64{1, 3, 0.5}
	const r = 0.3
	w := make([]float64, 3)
	arms := make([]Arm, 3)
	for k := range a {
		s := math.Sqrt(rho[k] / a[k])
		w[k] = alpha[k] * s
		arms[k] = NewArm(a[k], 0, 0, 0, r/s)
	}
	var v1, v2 Visit
	law.Star(&v1, w, r)
	law.StarArms(&v2, alpha, arms)
	for k := range w {
		if math.Abs(v1.Move[k]-v2.Move[k]) > roundoff {
			t.Errorf("move %d: Star %v, StarArms %v", k, v1.Move[k], v2.Move[k])
		}
	}
	if math.Abs(v1.Kill-v2.Kill) > roundoff || math.Abs(v1.Reward-v2.Reward) > roundoff || math.Abs(v1.HoldScale-v2.HoldScale) > roundoff {
		t.Errorf("Star %+v, StarArms %+v", v1, v2)
	}
	arms[1] = NewArm(a[1], 0, 2, 1, 0.2)
	law.StarArms(&v2, alpha, arms)
	sum := v2.Kill
	for _, p := range v2.Move {
		sum += p
	}
	if math.Abs(sum-1) > roundoff {
		t.Errorf("probabilities with decay sum to %v", sum)
	}
}
