package vertex

import "math"

// Arm is the edge element on [0, ε] of one arm leaving a node, for
// a u” + b u' − c u + f = 0 with constant coefficients and b pointing away
// from the node: the derivative leaving the node is
//
//	u'(0) = −(AmB + B)·u(0) + B·u(ε) + F.
//
// AmB = A − B ≥ 0 is kept apart from B because it is the (small) part that
// kills walkers, and computing it as a difference would lose digits.
type Arm struct {
	AmB, B, F float64
}

// NewArm returns the arm element of docs/walkers.md §7 for diffusivity a > 0,
// drift b (away from the node), decay c ≥ 0, source f and radius eps > 0.
// It is exact for b = 0 (A = κ coth κε, B = κ/sinh κε,
// F = (f/c) κ tanh(κε/2), κ = sqrt(c/a)) and for c = 0 (A = B = 1/φ,
// φ = a(1 − e^{−bε/a})/b, F = (f/b)(ε/φ − 1)); with both drift and decay it
// adds the second-order decay term A − B = εc/(2a) to the drift element.
// Cost O(1).
func NewArm(a, b, c, f, eps float64) Arm {
	switch {
	case b == 0 && c == 0:
		return Arm{AmB: 0, B: 1 / eps, F: f * eps / (2 * a)}
	case b == 0:
		k := math.Sqrt(c / a)
		x := k * eps
		th := math.Tanh(x / 2)
		return Arm{AmB: k * th, B: k / math.Sinh(x), F: f / c * k * th}
	}
	m := b * eps / a
	var phi, g float64 // φ and ε/φ − 1
	if math.Abs(m) < armSeriesBelow {
		phi = eps * (1 - m/2 + m*m/6)
		g = m/2 + m*m/12
	} else {
		phi = eps * -math.Expm1(-m) / m
		g = eps/phi - 1
	}
	var Fv float64
	if math.Abs(m) < armSeriesBelow {
		Fv = f * eps / (2 * a) * (1 + m/6)
	} else {
		Fv = f / b * g
	}
	return Arm{AmB: eps * c / (2 * a), B: 1 / phi, F: Fv}
}

// StarArms fills dst with the per-visit rule of the balance law l for a star
// whose arm k has weight alpha[k] and element arms[k] on [0, ε_k]
// (docs/walkers.md §7, the exact star rule): with
//
//	den = β + Σ α_k (AmB_k + B_k),
//
// the walker reaches the end of arm k with probability α_k B_k/den, is
// killed with probability (β + Σ α_k AmB_k)/den, collects
// (γ + Σ α_k F_k)/den and is held for ρ_v/den times a standard exponential
// draw. For arms without drift, decay or source and ε_k = r·sqrt(a_k/ρ_k) it
// is Star with w_k = α_k sqrt(ρ_k/a_k). dst.Move is resized to len(alpha).
// It panics if l is not a balance law or the lengths differ. Cost
// O(len(alpha)).
func (l Law) StarArms(dst *Visit, alpha []float64, arms []Arm) {
	if l.Kind != Balance {
		panic("vertex: StarArms of a " + l.Kind.String() + " node")
	}
	if len(alpha) != len(arms) {
		panic("vertex: StarArms length mismatch")
	}
	den, kill, rew := l.Leak, l.Leak, l.Inject
	for k, ar := range arms {
		den += alpha[k] * (ar.AmB + ar.B)
		kill += alpha[k] * ar.AmB
		rew += alpha[k] * ar.F
	}
	if cap(dst.Move) < len(alpha) {
		dst.Move = make([]float64, len(alpha))
	}
	dst.Move = dst.Move[:len(alpha)]
	for k, ar := range arms {
		dst.Move[k] = alpha[k] * ar.B / den
	}
	dst.Kill = kill / den
	dst.Reward = rew / den
	dst.HoldScale = l.Capacity / den
}

// armSeriesBelow is the |bε/a| below which NewArm uses the series of φ and
// F: the truncated terms are O(m³/24) ≈ 4e−14 relative there, while the closed
// forms lose about eps/m ≈ 2e−12 to cancellation (derived).
const armSeriesBelow = 1e-4
