// Package graphpde models networks of thin conductors (metric graphs) and
// solves diffusion problems on them: on every edge
//
//	ρ ∂_t u = ∂_x(a ∂_x u) + b ∂_x u − c u + f,
//
// continuity of u at every node, and at every node one condition from package
// vertex (a fixed value, or a weighted flux balance of Kirchhoff type).
//
// Edges are discretised by exact elements where the coefficients are constant
// (closed-form Dirichlet-to-Neumann maps in hyperbolic and exponential
// functions, evaluated in exponentially scaled form) and by finite-volume grid
// elements elsewhere (two-point diffusion fluxes, Scharfetter–Gummel
// exponentially fitted drift fluxes, half cells owned by the nodes). Grid
// interiors are condensed by the Thomas algorithm, leaving a sparse node system
// with the graph's own pattern, which is ordered by minimum degree and factored.
//
// References: D. L. Scharfetter and H. K. Gummel, IEEE Trans. Electron Devices
// ED-16 (1969) 64–77 (exponentially fitted flux); L. H. Thomas (1949) and any
// numerical-analysis text for the tridiagonal algorithm; P. Amestoy, T. Davis
// and I. Duff, SIAM J. Matrix Anal. Appl. 17 (1996) 886–905 (approximate
// minimum degree ordering).
package graphpde
