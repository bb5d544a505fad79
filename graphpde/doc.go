// Package graphpde models networks of thin conductors (metric graphs) and
// solves diffusion problems on them: on every edge
//
//	ρ ∂_t u = ∂_x(a ∂_x u) + b ∂_x u − c u + f,
//
// continuity of u at every node, and at every node one condition from package
// vertex (a fixed value, or a weighted flux balance of Kirchhoff type).
//
// # Elements
//
// Edges are discretised by exact elements where the coefficients are constant
// (closed-form Dirichlet-to-Neumann maps in hyperbolic and exponential
// functions, evaluated in exponentially scaled form so that long, strongly
// decaying edges neither overflow nor lose digits) and by finite-volume grid
// elements elsewhere: node-centred cells, two-point diffusion fluxes,
// Scharfetter–Gummel exponentially fitted drift fluxes (monotone at any cell
// Péclet number and exact for constant-coefficient advection–diffusion), and
// half cells owned by the nodes, whose source weights ω(P) = 2(B(−P) − 1)/P
// (B(z) = z/(eᶻ − 1)) keep the scheme exact for constant a, b, f with c = 0
// and second order on smooth solutions. Exact elements are generic over
// float64 and complex128, so the same element evaluates Laplace transforms at
// complex shifts.
//
// # Node system
//
// Grid interiors are condensed by the Thomas algorithm into a 2×2 end map per
// edge, the shape of an exact element. What remains is a sparse system with
// one unknown per balance node and the graph's own pattern; it is ordered by
// minimum degree (a tree is eliminated leaves first, with no fill, so a solve
// is linear in the unknowns) and factored once (LDLᵀ when symmetric, LU
// otherwise); later solves with the same pattern (other shifts, other
// sources) re-factor without re-ordering. Edge interiors are recovered by back
// substitution. A component that no fixed node, leak or decay anchors is
// reported before anything is factored (UnanchoredError).
//
// # Exit statistics
//
// ExitStatistics gives hitting probabilities, the probability of being killed,
// exit-time moments, occupation times and the exit-time law of the walker
// that the equation describes (docs/exit-statistics.md): steady problems for the first
// two, the Laplace transform E[e^{−sτ}] through exact elements with decay
// c + sρ and leak β + sρ_v for the law, inverted by the fixed-Talbot method
// on windows of time, moments by a Cauchy integral of the transform around
// s = 0. On networks that need grid elements, moments come from the moment
// hierarchy and the law from Gaver–Stehfest inversion at real shifts.
//
// # Nonlinear problems
//
// SolveNonlinear solves networks whose coefficients depend on u, whose
// edges carry fully nonlinear equations E(x, u, ux, uxx) = 0 and whose nodes
// carry nonlinear balances, by damped Newton on monotone grid schemes through
// the same condensed node system (docs/nonlinear.md); every law is checked
// where it is evaluated (LawError). Sweep follows a solution in a parameter
// by pseudo-arclength continuation and reports folds, confirmed by the sign
// of the Jacobian's determinant. SecantNetwork gives the linear problem a
// computed field solves exactly, whose walkers check it.
//
// # References
//
// D. L. Scharfetter and H. K. Gummel, IEEE Trans. Electron Devices ED-16
// (1969) 64–77 (exponentially fitted flux; from memory). L. H. Thomas (1949)
// and any numerical-analysis text for the tridiagonal algorithm. P. Amestoy,
// T. Davis and I. Duff, SIAM J. Matrix Anal. Appl. 17 (1996) 886–905
// (approximate minimum degree; from memory). A. Talbot, J. Inst. Math. Appl.
// 23 (1979) 97–120, and J. Abate and P. Valkó, Int. J. Numer. Meth. Engng 60
// (2004) 979–993 (fixed-Talbot inversion; both from memory). H. Stehfest,
// Comm. ACM 13 (1970) 47–49 (Gaver–Stehfest inversion; from memory).
// G. Barles and P. E. Souganidis, Asymptotic Anal. 4 (1991) 271–283
// (monotone schemes converge to viscosity solutions; from memory).
// H. B. Keller, in Applications of Bifurcation Theory, Academic Press 1977
// (pseudo-arclength continuation; from memory).
package graphpde
