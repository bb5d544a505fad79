// Package vertex holds the node conditions of a network of thin conductors and
// the two readings of each: the algebra the PDE side assembles into its node
// system, and the per-visit rules (split, kill, reward, hold) the walker side
// applies when a particle stands at the node.
//
// Both engines import this package and neither is imported by it, so the PDE
// and the walkers agree on a node law by construction.
//
// A balance node obeys
//
//	Σ_e J_e(v) + β u(v) + ρ_v ∂_t u(v) = γ,    J_e(v) = −α_e ∂_e u(v),
//
// where ∂_e is the derivative leaving v along e, α_e > 0 the edge weight at that
// end, β ≥ 0 the leak, ρ_v ≥ 0 the node capacity and γ the injection. A fixed
// node obeys u(v) = g and absorbs walkers with payoff g.
//
// The walker reading follows from the balance law applied to a function that is
// linear on every arm of a small star around v. In coordinates where every arm
// carries the standard diffusion d²/dy² (y = x·sqrt(ρ_e/a_e)) the weights become
// w_e = α_e·sqrt(ρ_e/a_e), and a walker leaving v reaches y = r along arm e with
// probability w_e/(Σw + rβ), is killed at v with probability rβ/(Σw + rβ), and
// collects rγ/(Σw + rβ) per visit (docs/walkers.md §3, derived there).
package vertex
