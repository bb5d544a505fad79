// Package laplace inverts Laplace transforms numerically.
//
// Given F(s) = ∫_0^∞ e^{−st} f(t) dt, it approximates f(t) at t > 0 from values of
// F at a few points of the complex plane (Talbot) or of the positive real axis
// (Gaver–Stehfest).
//
// The fixed Talbot method deforms the Bromwich line into the contour
//
//	s(θ) = r θ (cot θ + i),   −π < θ < π,   r = 2M/(5t),
//
// which wraps around the negative real axis, and applies the trapezoidal rule
// with M nodes θ_k = kπ/M (the conjugate half is folded in by taking real
// parts). F must be analytic to the right of the contour: singularities on or
// near the negative real axis (diffusion, decay and exit-time transforms) are
// what the method is made for. J. Abate and P. P. Valkó, "Multi-precision
// Laplace transform inversion", Int. J. Numer. Meth. Engng 60 (2004) 979–993
// (formula recalled from memory; the tests of this package check it against
// closed-form pairs). In float64 the truncation error falls like 10^{−0.6M}
// while the rounding error grows like ε·e^{2M/5}; M around 20–30 gives about
// 1e−11 relative to max|f| on smooth problems (measured in the tests).
//
// The same contour family, s(θ) = rθ(cot θ + iν), with its scale r fitted
// to a window of times [t0, 2t0] instead of one t and twice the height
// (TalbotWindow: 32 nodes, r = 0.6·2M/(5·2t0), ν = 2, chosen by
// measurement) serves a whole octave of times with one set of transform
// values, at an error of about 1e−11 of max|f|: survival functions,
// densities and quantile searches then cost a few transform evaluations per
// octave instead of M per time. The height ν > 1 goes back to Talbot's
// original parametrised contour (A. Talbot, "The accurate numerical
// inversion of Laplace transforms", J. Inst. Math. Appl. 23 (1979) 97–120,
// from memory); it encloses singularities off the real axis, which
// non-reversible diffusions (drift around a cycle) have. A second, taller
// contour (the check contour of TalbotWindowLevel) detects singularities that the first misses.
//
// The Gaver–Stehfest formula uses N real points s_k = k ln2/t with
// alternating weights V_k; in float64 N = 16–18 is about the best, with some
// 1e−5 absolute accuracy for smooth f of size 1. H. Stehfest, "Algorithm 368:
// Numerical inversion of Laplace transforms", Comm. ACM 13 (1970) 47–49 (from
// memory). It needs F only on the real axis and serves as an independent
// check and a fallback.
package laplace
