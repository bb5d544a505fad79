package montecarlo

import (
	"math"
	"testing"
)

// fdJump solves a Q” + b Q' = −g on (−δ, δ) with Q(±δ) = 0 and a u'
// continuous at 0 (the interface of jumpLaw) by central finite differences
// in flux form on n cells, the node at 0 taking the mean of the two
// drifts: an independent check of jumpLaw, first order at the interface
// (common practice, no source). With g = 0 and Q(−δ) = 0, Q(δ) = 1 it
// returns the probability of leaving on the right instead.
func fdJump(L, R jumpSide, delta float64, g func(s jumpSide) float64, exit bool, n int) float64 {
	h := 2 * delta / float64(n)
	// Unknowns Q_1 … Q_{n−1}; x_i = −δ + i h; node n/2 is the jump.
	m := n - 1
	lo, di, up, rhs := make([]float64, m), make([]float64, m), make([]float64, m), make([]float64, m)
	side := func(x float64) jumpSide {
		if x < 0 {
			return L
		}
		return R
	}
	for k := 0; k < m; k++ {
		i := k + 1
		x := -delta + float64(i)*h
		aw, ae := side(x-h/2).a, side(x+h/2).a
		var b, gg float64
		if i == n/2 {
			b = (L.b + R.b) / 2
		} else {
			b = side(x).b
		}
		if !exit {
			if i == n/2 {
				gg = (g(L) + g(R)) / 2
			} else {
				gg = g(side(x))
			}
		}
		lo[k] = aw/(h*h) - b/(2*h)
		up[k] = ae/(h*h) + b/(2*h)
		di[k] = -(aw + ae) / (h * h)
		rhs[k] = -gg
		if exit {
			rhs[k] = 0
			if k == m-1 {
				rhs[k] -= up[k] * 1
			}
		}
	}
	// Thomas.
	for k := 1; k < m; k++ {
		f := lo[k] / di[k-1]
		di[k] -= f * up[k-1]
		rhs[k] -= f * rhs[k-1]
	}
	q := make([]float64, m)
	q[m-1] = rhs[m-1] / di[m-1]
	for k := m - 2; k >= 0; k-- {
		q[k] = (rhs[k] - up[k]*q[k+1]) / di[k]
	}
	return q[n/2-1]
}

// TestJumpLaw: the exit probability and the means of duration, reward and
// decay of a step from a jump (jumpLaw, derived) against (1) the one-piece
// formulas of tsStep when both sides are equal — exit 1/(1 + e^{−bδ/a}),
// mean (δ²ρ/2a)·tanh(μ)/μ, μ = bδ/(2a) — to 1e−12, and (2) a finite
// difference solve of the two-piece problem on 20 000 cells (first order at
// the jump: tolerance 1e−3 relative).
func TestJumpLaw(t *testing.T) {
	const delta = 0.07
	for _, b := range []float64{0, 0.3, -4, 25} {
		s := jumpSide{a: 1.3, b: b, rho: 0.8, f: 2, c: 0.5}
		pR, T, rw, dc := jumpLaw(s, s, delta)
		mu := b * delta / (2 * s.a)
		g := 1.0
		if mu != 0 {
			g = math.Tanh(mu) / mu
		}
		wantT := delta * delta * s.rho / (2 * s.a) * g
		if d := math.Abs(pR - 1/(1+math.Exp(-b*delta/s.a))); d > 1e-12 {
			t.Errorf("b = %g: exit right %g, one-piece %g", b, pR, 1/(1+math.Exp(-b*delta/s.a)))
		}
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"duration", T, wantT}, {"reward", rw, wantT * s.f / s.rho}, {"decay", dc, wantT * s.c / s.rho}} {
			if math.Abs(c.got-c.want) > 1e-12*c.want {
				t.Errorf("b = %g: %s %.15g, one-piece %.15g", b, c.name, c.got, c.want)
			}
		}
	}
	for _, tc := range [][2]jumpSide{
		{{a: 1, b: -3, rho: 1}, {a: 1, b: 3, rho: 1}},
		{{a: 1, b: 3, rho: 1, f: 1}, {a: 1, b: -3, rho: 1, f: 0.2}},
		{{a: 0.5, b: 1, rho: 2, f: -1, c: 0.3}, {a: 3, b: -8, rho: 0.7, f: 4, c: 1}},
	} {
		L, R := tc[0], tc[1]
		pR, T, rw, dc := jumpLaw(L, R, delta)
		const n = 20000
		for _, c := range []struct {
			name string
			got  float64
			g    func(s jumpSide) float64
			exit bool
		}{
			{"exit right", pR, nil, true},
			{"duration", T, func(s jumpSide) float64 { return s.rho }, false},
			{"reward", rw, func(s jumpSide) float64 { return s.f }, false},
			{"decay", dc, func(s jumpSide) float64 { return s.c }, false},
		} {
			want := fdJump(L, R, delta, c.g, c.exit, n)
			if math.Abs(c.got-want) > 1e-3*math.Abs(want)+1e-15 {
				t.Errorf("%+v | %+v: %s %.8g, finite differences %.8g", L, R, c.name, c.got, want)
			}
		}
	}
}
