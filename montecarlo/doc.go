// Package montecarlo estimates the solution of the linear network problems
// of package graphpde, and the exit statistics of docs/exit-statistics.md, by following
// random walkers (docs/walkers.md). It does not import graphpde: Network lists
// the accessors it needs, and *graphpde.Network satisfies it. Node rules come
// from package vertex, so both engines read a node law the same way.
//
// # Model
//
// Time is measured in the units of the capacity ρ. On edge e the walker is
// the diffusion
//
//	dX = ((a' + b)/ρ) dt + sqrt(2a/ρ) dW,
//
// killed at rate c/ρ and collecting reward f/ρ per unit time; it is absorbed
// at a fixed node with payoff g, and at a balance node it splits, is killed
// by the leak β, collects the injection γ and is held by the capacity ρ_v as
// vertex.Law.Star says. The Feynman–Kac value is
//
//	u(x) = E_x[rewards collected before death + g(absorbing node) if absorbed],
//
// and the lifetime τ (until absorption or killing) is what the PDE's
// mean-exit-time problem computes with c and β kept (docs/exit-statistics.md §2).
//
// # Exact stepping
//
// On an edge with constant coefficients and no drift the walker walks on
// intervals (the one-dimensional walk on spheres of Muller, Ann. Math.
// Statist. 27 (1956) 569–589, from memory): from x it jumps to x ± r,
// r = min(x, L − x), with probability ½ each, after a time r²ρ/(2a)·τ₁, τ₁
// the exit time of standard Brownian motion from (−1, 1). Each step reaches
// a node with probability ½, so a crossing takes two steps on average. Decay
// is an independent exponential clock of rate c/ρ drawn afresh each step (the
// clock is memoryless and independent of the path, so this is exact in law);
// the reward f/ρ is collected for the time actually lived on the edge.
//
// At a balance node the walker walks on stars. In y = x·sqrt(ρ_e/a_e) every
// arm carries the generator d²/dy² and the node is a skew (Walsh) junction
// with weights w_e = α_e sqrt(ρ_e/a_e) (or the split override through
// vertex.ApplySplit); from the node the walker reaches y = r on arm e with
// probability w_e/Σw, independently of its exit time r²τ₁/2 (docs/walkers.md §3).
// The radius r is the largest that fits: the shortest arm's y-length, half a
// self-loop's. If every arm decays at one rate c_e/ρ_e, the clock is again
// independent; sources on the arms are collected in expectation, Σ p_e f_e/ρ_e
// per unit time, and the injection as its mean per visit,
// γ tanh(r sqrt(k))/(sqrt(k) Σw) for the common rate k (rγ/Σw for k = 0).
// These visits are exact in law.
//
// # Leak and capacity: the visit law
//
// With a leak β or a capacity ρ_v the fate of a visit and its duration are
// correlated, and the visit is drawn from their joint law (package
// internal/starlaw). Scaled to a standard Brownian motion reflected at 0 on
// [0, 1] (time factor r²/2), with L the local time at 0 and the excursion
// measure n(height ≥ h) = 1/h: the visit's local time without killing is
// Exp(1); the leak kills at local-time rate κ = rβ/Σw, so the visit's local
// time is L_v ~ Exp(μ), μ = 1 + κ, independent of its fate (killed with
// probability κ/μ, else out along arm e with probability w_e/Σw); the
// capacity holds the walker for ρ_v(r/Σw)·L_v (vertex.Law.Star's
// HoldScale·Exp(1)); the diffusive time is S(L_v) plus, on leaving, the
// climb T_f of the last excursion from 0 to the rim, S the subordinator of
// the excursions below the rim (Laplace exponent
// Φ(s) = sqrt(2s) coth sqrt(2s) − 1) and T_f a 3-dimensional Bessel hitting
// time (E e^{−sT_f} = sqrt(2s)/sinh sqrt(2s)), independent of each other and
// of the fate. (Excursion theory: Revuz and Yor, Continuous Martingales and
// Brownian Motion, 3rd ed., ch. XII, from memory; the decomposition is checked
// by [1/(1 + Φ)]·sqrt(2s)/sinh sqrt(2s) = 1/cosh sqrt(2s), the transform of
// τ₁, docs/references.md B3.) So a visit draws X = (r²/2)S(L_v) + ρ_v(r/Σw)L_v,
// with transform μ/(μ + Φ(r²s/2) + ρ_v r s/Σw), from a table built per node
// (Talbot inversion of its distribution function, the exact one-pole
// exponential tail, cubic Hermite interpolation of the quantile; table error
// max |F(Q(u)) − u| ≤ 2e−11), the fate from one uniform, and adds (r²/2)·T_f
// on leaving (a universal table, error 3e−11). The star has the full free
// radius. A decay rate common to the arms is an independent clock on top
// when the node has no capacity.
//
// Arms that decay at their own rates q_e (in the time of the reflected
// motion), or at a common rate at a node with a capacity (the arms' decay
// does not act while the walker is held), split the excursions into
// independent Poisson processes in local time: the visit ends on arm e by
// reaching the rim at rate p_e ψ_f(q_e) (ψ_f(s) = sqrt(2s)/sinh sqrt(2s),
// p_e = w_e/Σw), by being killed on it before the rim at rate
// p_e[Φ(q_e) + 1 − ψ_f(q_e)], and by the leak at rate κ; the visit's local
// time is Exp(μ), μ = κ + Σ p_e[Φ(q_e) + 1], independent of the fate; the
// surviving excursions below the rim form a subordinator with exponent
// Σ p_e[Φ(s + q_e) − Φ(q_e)]; and the final piece is the climb under the
// arm's killing (transform ψ_f(s + q_e)/ψ_f(q_e)) or the time from the
// start of the fatal excursion to the killing. Each of these laws is
// tabulated as above (package starlaw; its tests check the whole visit
// transform against the ODE solution on the arms to 1e−12, and the fate
// probabilities and mean duration against Law.StarArms' arm elements). The
// rule is exact at any radius; with different rates a move along e has
// probability ∝ w_e·z_e/sinh z_e, z_e = r·sqrt(c_e/ρ_e), so the star is kept
// at Settings.StarFraction of the free radius, where the departure counts
// stay close to the weights w_e/Σw that junction-weight fits assume.
//
// Measured on a star with a leaky centre (TestLeakyStartLaw, 10⁶ walkers),
// the Kolmogorov–Smirnov distance of the lifetimes to the exact law is
// 1.75e−3 (p = 0.004; other seeds p = 0.13…0.92), and 6.3e−4, 9.9e−4,
// 1.05e−3, 8.2e−4 with a sticky, leaky centre, arms decaying at a common
// rate, at different rates, and a sticky centre with decaying arms; the
// former rule, which drew the fate and the duration independently (exact
// in mean only) on a star of 1/8 of the free radius, gave
// 1.15e−2, 3.7e−3, 1.16e−2, 1.17e−2 and 3.8e−3 (p < 1e−11); at 1/32 of the
// radius the first three still gave 2.9e−3, 9.1e−4 and 3.0e−3.
//
// Value, occupation and the other estimates stay exact in mean: the reward
// per visit is its mean from the exact-in-mean rule (docs/walkers.md §7) from the arm
// elements at the same radius (vertex.Law.Star, or Law.StarArms with arm
// sources, decay or drift; vertex.NewArm is exact for drift or decay alone
// and adds a second-order term for both); the time of
// a visit without capacity at a node with no or common decay is all
// diffusive and is booked on the arm of the draw (mean share w_e/Σw), and
// otherwise each arm gets its mean time per visit (the arm element with
// source ρ, Σα_eF_e(ρ)/den, den = β + Σα_e A_e).
//
// Stats.Exact reports that every edge is walked on intervals (so every
// balance node is visited by one of these exact rules): it is false exactly
// when some edge is time stepped.
//
// # Nodes next to time-stepping arms
//
// A node with an arm that needs time stepping (drift or varying
// coefficients) is visited by the same decomposition, with each arm's
// coefficients frozen at the node and its drift b_e (a_e' + b_e for a
// varying a, pointing away from the node) kept exactly: in the scaled
// coordinates the arm is Brownian motion with drift γ_e = b_e ε_e/(2a_e),
// ε_e = r/s_e, and by Girsanov's theorem an excursion that returns to the
// node carries the weight e^{−γ_e²ζ/2}, one that reaches the rim
// e^{γ_e − γ_e²T_1/2}. So the drift acts on the returning excursions and on
// the climb like an extra kill rate γ_e²/2, the arm's rate of ending
// excursions is p_e[γ_e + 1 + Φ(q_e + γ_e²/2)], the rim is reached on it at
// rate p_e e^{γ_e}ψ_f(q_e + γ_e²/2) (which makes the split ∝ α_e/φ_e(ε_e),
// φ_e(ε) = a_e(1 − e^{−b_eε/a_e})/b_e, docs/walkers.md §2, when nothing decays),
// and a decaying arm kills after a time whose tail has the terms
// (1 − (−1)ⁿe^{γ_e})e^{−λ_n t} (only the odd ones without drift) (Girsanov's
// theorem: Revuz and Yor, ch. VIII, from memory; starlaw.MixtureDrift,
// RatesDrift, KillLawDrift; the
// tests check the whole visit transform against the arm ODE with drift to
// 1e−12, and the fate probabilities and mean duration against the arm
// elements). The visit is exact in law when the arm coefficients are
// constant on [0, ε_e]; the star has the full radius that fits in the
// hand-off zone of the time-stepping arms (below), or StarFraction of it
// next to an arm whose coefficients vary (the freezing error is of order ε_e
// times their relative change per unit length) or when the arms decay at
// different rates. The reward and the per-arm occupation of a visit are the
// means from the arm elements, as above.
//
// Measured on a star with one drift arm (b = 1.5, TestDriftStartLaw, 10⁶
// walkers), the Kolmogorov–Smirnov distance of the lifetimes to the exact
// law is 7.8e−4 (p = 0.58) at a leaky centre and 5.2e−4 (p = 0.95) at a
// sticky, leaky one with dt = 1e−3; the former rule, which drew the fate and
// the duration independently (the duration as m_d·τ₁ + (ρ_v/den)·Exp(1),
// exact only in mean) on a star of 1/8 of the hand-off zone, gave 4.2e−3
// (p = 1e−15) and 1.07e−3 (p = 0.20). The arm's own time-stepping bias is
// separate and stays below the KS resolution there: with the new rule
// D = 1.06e−3 and 6.0e−4 at dt = 1e−4, 6.6e−4 at dt = 2e−5 (the former
// rule: 1.88e−3, p = 0.0017, and 8.0e−4 at dt = 1e−4). The walkers take 67
// steps instead of 138 at dt = 1e−3, and 2.7 to 3.6 times less time
// (BenchmarkNodeSteps).
//
// # The exit-time table
//
// τ₁ is drawn by inversion. Below t = 2 the table interpolates 1/t as a
// function of −ln u on 4096 uniform knots by cubic Hermite polynomials with
// exact slopes; above t = 2 (u > 0.892) it uses the exact exponential tail
// t = (8/π²) ln(4/(π(1 − u))), whose neglected term is below 1e−9 of the
// first (a table clamped at its last knot would bias the mean and fail a KS
// test). The measured table error is max |F(Q(u)) − u| = 1.4e−8 and max |Δt|
// = 1.0e−7, four orders below the KS resolution 1.36/sqrt(10⁷) = 4.3e−4 of
// a 10⁷-walker run (TestTableError). The series are Feller's (An
// Introduction to Probability Theory and Its Applications vol. II, p. 342,
// page as cited in docs/references.md B2; eigen and image forms).
//
// Exact stepping has no discretisation bias: on the S1 star of docs/references.md
// the error of the mean exit time stayed within two standard errors from 10⁴
// to 10⁷ walkers (z = 0.40, 1.03, 0.65, 1.81; relative error 5.8e−4 at 10⁷,
// BenchmarkConvergence).
//
// # Time stepping
//
// An edge with drift or varying coefficients is time stepped: Euler–Maruyama
// with step dt away from its ends; within hz = 4 sqrt(2 max(a/ρ) dt) (at most
// L/8) of a node, steps on the interval (x − d, x + d) that reaches the node,
// with coefficients frozen at x: exit side 1/(1 + e^{−bd/a}) from the scale
// function, mean duration (d²ρ/2a)·tanh(μ)/μ, μ = bd/(2a), law of the
// driftless step; at the node, the star visit above, of y-radius at most
// hz·s_e. A step
// that crosses a node ends there. On an edge whose coefficients are
// piecewise constant with known jumps (JumpNetwork), each jump is a boundary
// of these steps like a node: the near step ends on it, and a walker on a
// jump steps on (s − δ, s + δ) by the two pieces' scale function, with the
// means of duration, reward and decay of the two-piece backward equation
// (exact in mean); a node's star is clipped at the first jump on each arm
// unless it lies within StarFraction of hz (then it is frozen, Result.Frozen). The default dt is per edge 1e−3 of its
// diffusive time L²ρ/(2a), and at most 1e−2 of its drift time Lρ/|b|;
// Settings.Step sets one dt for all edges. On the S1 star forced onto time
// stepping the relative bias of E τ is linear in dt, −1.45·dt
// (−4.6%, −2.4%, −1.05% at dt = 0.032, 0.016, 0.008; BenchmarkCostToAccuracy);
// reaching a relative error 1e−3 cost about 470 times more time per walker
// than exact stepping (about 1900 times more steps). Stats.Exact is false
// when any edge is time stepped.
//
// # Estimates
//
// Value, Hit, Killed, Occupation and Visits average over all finished
// walkers; a censored walker (still out at TimeCap) contributes what it had
// collected, so a run with censored walkers must be read with
// CensoredFraction in mind (a hitting probability P then lies between Hit
// and Hit + CensoredFraction). ExitTime and ExitSD are over the walkers that
// exited (absorbed or killed) only: the moments of τ given τ ≤ TimeCap.
// Quantiles are of τ itself, censored walkers counting as longer lives; one
// beyond the cap is NaN. Standard errors are
// sqrt(s²/N). The default TimeCap is DefaultTimeCap of the network's
// capacity, resistance and loss. Departures counts the moves out of each node
// along each end, for fitting junction weights.
//
// # Reproducibility, cancellation, memory
//
// Walkers are cut into blocks of BlockSize; block k draws from
// rand.NewPCG(Seed, k); workers take blocks in order and the block sums
// (count, mean, sum of squared deviations, merged pairwise as in Chan, Golub
// and LeVeque, 1979, from memory) are merged in block order, so one Seed
// gives bit-identical results for any number of workers. A cancelled run
// returns the completed prefix of blocks (blocks finished out of order are
// dropped) with Status Cancelled. Memory: O(nodes + edges) per worker and per
// block in flight, 8 bytes per walker (up to 2²² walkers) for the quantiles,
// and 16 bytes per walker with KeepSamples (refused above MaxSampleBytes
// before anything is allocated). The step loop allocates nothing.
//
// # Performance
//
// Exact stepping ran at 1.06e7 steps per second per worker on the S1 star
// (BenchmarkExactSteps, 3.4 steps per walker). Visits drawn from the
// visit-law tables cost about the same per step (BenchmarkNodeSteps: 0.9–1.03
// times the S1 rate measured in the same run on stars with a leaky or a
// sticky, leaky centre, against 1.1–1.25 for the former exact-in-mean
// visits), and a walker on those stars takes 4.2 steps instead of 32 (full
// star instead of 1/8): about 6 times less time per walker (33–41 ms against
// 203–228 ms for 2¹⁷ walkers). A visit table takes about 10 ms to build per
// distinct node law, a climb table for a decaying arm about 45 ms per
// distinct rate, the T_f table about 0.1 s once per process; tables are
// shared across nodes and runs and built only when a node needs them. Two
// workers against one gave a speed-up of only 1.01–1.05 when measured, on a
// 2-core machine shared with other jobs; blocks are independent, so the
// speed-up follows the free cores.
package montecarlo
