package montecarlo

import "math"

// armElement returns the edge element on [0, ε] of an arm leaving a node,
// for a u” + b u' − c u + f = 0 with b pointing away from the node: the
// derivative leaving the node is
//
//	u'(0) = −A u(0) + B u(ε) + F,
//
// returned as amb = A − B (≥ 0), B and F. With the balance law
// Σ_e α_e(−u_e'(0)) + β u(v) = γ this gives DESIGN.md §4's star rule
//
//	u(v) = [Σ α_e B_e u_e(ε_e) + Σ α_e F_e + γ] / [β + Σ α_e A_e].
//
// Exact for b = 0 (A = κ coth κε, B = κ/sinh κε, F = (f/c) κ tanh(κε/2),
// κ = sqrt(c/a)) and for c = 0 (A = B = 1/φ, φ = a(1 − e^{−bε/a})/b,
// F = (f/b)(ε/φ − 1)); with both drift and decay it adds the second-order
// decay term A − B = εc/(2a) to the drift element. Cost O(1).
//
// TODO(lead): this is the arm rule DESIGN.md §4 states; it belongs in vertex
// (see the package documentation).
func armElement(a, b, c, f, eps float64) (amb, B, F float64) {
	switch {
	case b == 0 && c == 0:
		return 0, 1 / eps, f * eps / (2 * a)
	case b == 0:
		k := math.Sqrt(c / a)
		x := k * eps
		th := math.Tanh(x / 2)
		return k * th, k / math.Sinh(x), f / c * k * th
	}
	m := b * eps / a
	var phi, g float64 // φ and ε/φ − 1
	if math.Abs(m) < 1e-4 {
		phi = eps * (1 - m/2 + m*m/6)
		g = m/2 + m*m/12
	} else {
		phi = eps * -math.Expm1(-m) / m
		g = eps/phi - 1
	}
	var Fv float64
	if math.Abs(m) < 1e-4 {
		Fv = f * eps / (2 * a) * (1 + m/6)
	} else {
		Fv = f / b * g
	}
	return eps * c / (2 * a), 1 / phi, Fv
}
