package graphpde

import (
	"fmt"
	"math"
	"strings"

	"github.com/ramify-dev/ramify/vertex"
)

// Accuracy of a steady solve (docs/discretisation.md): the node system is
// judged by its scaled (componentwise) residual
//
//	ω = max_r |b_r − Σ_j A_rj x_j| / (Σ_j |A_rj x_j| + |b_r|),
//
// the backward error of the node solve: ω ≈ ε means x solves a system
// whose every entry differs from the assembled one by a few ε. Elimination
// without pivoting can leave ω well above ε when pivots cancel (nearly
// singular systems); refine then applies steps of iterative refinement in
// working precision, r = b − Ax, A δ = r, x += δ, which bring ω down to
// O(ε) unless the system is too ill-conditioned for the factor (N. J.
// Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., SIAM
// 2002, §12.2, from memory). A solve whose ω stays above nodeResidualTol
// gets the status Inaccurate.
//
// The balance of every node is then checked again from the elements (the
// Solution's Residual, whose end derivatives grid edges reconstruct from
// their interior), relative to the size of the terms it is made of; and an
// end flux whose rounding bound exceeds fluxRoundingRel of the largest flux
// of the network is not reported (NaN): with a conductance of 1e12 next to
// 1e−12 in series, the values across the large one agree to 24 digits and
// their difference, the flux, is pure rounding.

const (
	// refineSteps is the most refinement steps; refineTol the ω below
	// which none is tried (a few ε).
	refineSteps = 10
	refineTol   = 1e-14
	// nodePivotTol is the smallest pivot share (|pivot| over the size of
	// what cancelled in it) the steady node factor accepts, 64ε: its
	// relative error is then at most about 1/64, and refinement with the
	// row-sum residual contracts by that factor per step.
	nodePivotTol = 64 * 0x1p-52
	// nodeResidualTol is the ω above which the node solve is Inaccurate:
	// a hundred times what refinement reaches on a system it can handle.
	nodeResidualTol = 1e-12
	// refinedTol is the row-sum scaled residual below which the node
	// values are taken as accurate to a few hundred ε whatever the pivots
	// lost (see mMatrix).
	refinedTol = 1e-14
	// conditionNote and conditionTol bound the relative accuracy ε/ρ that
	// the elimination leaves when a pivot kept only the share ρ of the
	// terms that cancelled in it (nodesys Stats.MinPivotRatio): above the
	// first a note says so, above the second the status is Inaccurate
	// (fewer than six digits).
	conditionNote = 1e-10
	conditionTol  = 1e-6
	// fluxRoundingRel: an end flux is NaN when its rounding bound exceeds
	// this share of the largest flux of the network (and of itself): it
	// has less than about one correct digit.
	fluxRoundingRel = 0.05
)

// nodeResidual writes r = b − A x (node system) into s.res and returns the
// scaled residual ω = max_r |r_r| / (Σ_j |A_rj x_j| + |b_r|), the unknown
// where it is largest (−1 if the system is empty), and, in the row-sum form
// (s.rowForm, see mMatrix), ωrow: the same residual relative to the terms of
// that form, |b_r| + |s_r x_r| + Σ_{j≠r} |a_rj (x_j − x_r)|, over the rows
// whose terms exceed the rounding of the plain ones (4ε of their size; a row
// whose every difference is rounding carries no information). In the plain
// form ωrow = ω. Cost O(nnz(A)).
func (s *system) nodeResidual() (omega, omegaRow float64, at int) {
	const eps = 0x1p-52
	m := len(s.rhs)
	if len(s.res) != m {
		s.res = make([]float64, m)
		s.dx = make([]float64, m)
	}
	val := s.mat.Values()
	at = -1
	for r := 0; r < m; r++ {
		sum, scale := s.rhs[r], math.Abs(s.rhs[r])
		rowScale := scale
		if s.rowForm {
			// (Ax)_r = s_r x_r + Σ_{j≠r} a_rj (x_j − x_r): the row sum
			// s_r from the elements instead of the rounded diagonal.
			xr := s.x[r]
			t := s.ex[r] * xr
			sum -= t
			rowScale += math.Abs(t)
			for p := s.rp[r]; p < s.rp[r+1]; p++ {
				c := s.ci[p]
				scale += math.Abs(val[p] * s.x[c])
				if c != r {
					t := val[p] * (s.x[c] - xr)
					sum -= t
					rowScale += math.Abs(t)
				}
			}
		} else {
			for p := s.rp[r]; p < s.rp[r+1]; p++ {
				t := val[p] * s.x[s.ci[p]]
				sum -= t
				scale += math.Abs(t)
			}
			rowScale = scale
		}
		s.res[r] = sum
		if sum == 0 {
			continue
		}
		if w := math.Abs(sum) / scale; !(w <= omega) { // NaN included
			omega, at = w, r
		}
		if rowScale > 4*eps*scale {
			if w := math.Abs(sum) / rowScale; !(w <= omegaRow) {
				omegaRow = w
			}
		}
	}
	return omega, omegaRow, at
}

// mMatrix reports whether the assembled node matrix is an M-matrix in sign
// with non-negative row sums s.ex: then nodeResidual uses the row-sum form
// (x_j − x_r differences), in which a small scaled residual means a small
// relative perturbation of every conductance and row sum, and so a small
// relative error of x (C. A. O'Cinneide, Entrywise perturbation theory and
// error analysis for Markov chains, Numer. Math. 65 (1993) 109–120, from
// memory) — whatever the factor lost to cancellation, refinement with this
// residual recovers it while the factor's error times the condition stays
// below 1. Cost O(nnz).
func (s *system) mMatrix() bool {
	val := s.mat.Values()
	for r := range s.rhs {
		if !(s.ex[r] >= 0) || math.IsInf(s.ex[r], 0) {
			return false
		}
		for p := s.rp[r]; p < s.rp[r+1]; p++ {
			if s.ci[p] != r && !(val[p] <= 0) {
				return false
			}
		}
	}
	return true
}

// refine improves the node solve by iterative refinement while its scaled
// residual is above refineTol, keeping a step only if it lowers ω, then
// leaves the node values in s.x (solve calls it before filling s.u and
// recovering the grid interiors). It records the final ω and where it is
// in s.omega, s.omegaAt.
func (s *system) refine() {
	s.rowForm = s.mMatrix()
	s.stats.Refinements = 0
	omega, orow, at := s.nodeResidual()
	for it := 0; it < refineSteps && math.Max(omega, orow) > refineTol; it++ {
		s.fac.SolveTo(s.dx, s.res)
		for i := range s.x {
			s.x[i] += s.dx[i]
		}
		o2, r2, a2 := s.nodeResidual()
		if !(math.Max(o2, r2) < math.Max(omega, orow)) {
			for i := range s.x {
				s.x[i] -= s.dx[i]
			}
			s.nodeResidual()
			break
		}
		omega, orow, at = o2, r2, a2
		s.stats.Refinements++
	}
	s.omega, s.omegaRow, s.omegaAt = omega, orow, at
	s.stats.ScaledResidual = omega
}

// fluxRounding returns a bound of the rounding error of edge e's end
// fluxes −a·u' (from the end map: 2ε times the terms that are summed,
// which covers the node values' own rounding; grid edges difference their
// first and last interior values against the end values, so the bound
// uses the half-cell terms).
func (s *system) fluxRounding(e int) [2]float64 {
	const eps = 0x1p-52
	ed := &s.net.Edges[e]
	U0, UL := math.Abs(s.u[ed.From]), math.Abs(s.u[ed.To])
	a0, _, _, _, _ := ed.Coeffs(0)
	aL, _, _, _, _ := ed.Coeffs(ed.Length)
	var ge *gridEnds
	switch el := s.els[e].(type) {
	case *constGridEl:
		ge = &el.k.ends
	case *varGridEl:
		ge = &el.ends
	}
	if ge != nil {
		in := s.interior(e)
		first, last := UL, U0
		if len(in) > 0 {
			first, last = math.Abs(in[0]), math.Abs(in[len(in)-1])
		}
		return [2]float64{
			2 * eps * (ge.r0*(first+U0) + math.Abs(ge.mf0) + math.Abs(ge.mc0)*U0),
			2 * eps * (ge.lL*(UL+last) + math.Abs(ge.mfL) + math.Abs(ge.mcL)*UL),
		}
	}
	m := &s.maps[e]
	if ed.From == ed.To {
		return [2]float64{
			2 * eps * a0 * (math.Abs(m.rs[0])*U0 + math.Abs(m.g[0]) + (math.Abs(m.d[0][0])+math.Abs(m.d[0][1]))*U0*eps),
			2 * eps * aL * (math.Abs(m.rs[1])*UL + math.Abs(m.g[1]) + (math.Abs(m.d[1][0])+math.Abs(m.d[1][1]))*UL*eps),
		}
	}
	return [2]float64{
		2 * eps * a0 * (math.Abs(m.d[0][0])*U0 + math.Abs(m.d[0][1])*UL + math.Abs(m.g[0])),
		2 * eps * aL * (math.Abs(m.d[1][0])*U0 + math.Abs(m.d[1][1])*UL + math.Abs(m.g[1])),
	}
}

// judge sets sol.Status and sol.Notes from the node solve's scaled residual
// (after refine), and replaces end fluxes that are rounding by NaN.
func (s *system) judge(sol *Solution) {
	net := s.net
	if s.omega > nodeResidualTol || math.IsNaN(s.omega) {
		sol.Status = Inaccurate
		sol.Notes = append(sol.Notes, fmt.Sprintf("the node system's scaled residual is %.2g at node %s after %d refinement steps (wanted ≤ %g): the node system is too ill-conditioned for this solve, and the values may be wrong in every digit",
			s.omega, net.Nodes[s.nodes[s.omegaAt]].ID, s.stats.Refinements, nodeResidualTol))
	}
	// With the row-sum residual small, refinement has undone what the
	// elimination lost (mMatrix); otherwise ε over the pivot share bounds
	// the loss.
	recovered := s.rowForm && s.omegaRow <= refinedTol
	if lost := 0x1p-52 / s.pivotRatio; s.pivotAt >= 0 && lost > conditionNote && !recovered {
		node := net.Nodes[s.nodes[s.pivotAt]].ID
		sol.Notes = append(sol.Notes, fmt.Sprintf("the node system is nearly singular: the elimination cancelled all but %.2g of a pivot at node %s, so node values are good to about %.1g relative (a component anchored only by a weak leak, decay or coupling)", s.pivotRatio, node, lost))
		if lost > conditionTol {
			sol.Status = Inaccurate
		}
	}
	var maxJ float64
	for _, f := range sol.Flux {
		maxJ = math.Max(maxJ, math.Max(math.Abs(f[0]), math.Abs(f[1])))
	}
	// When no end flux exceeds its rounding bound, the network carries no
	// flux that float64 can resolve (u constant on a component, say): the
	// fluxes are 0 to their accuracy and are reported as 0.
	noise := true
	rbs := make([][2]float64, len(net.Edges))
	for e := range net.Edges {
		rbs[e] = s.fluxRounding(e)
		for k := range 2 {
			if math.Abs(sol.Flux[e][k]) > rbs[e][k] {
				noise = false
			}
		}
	}
	if noise {
		// Zero is the right reading only when zero fluxes balance the
		// data: every node's leak against its injection, every edge's
		// source against its decay. A network whose injections or losses
		// need fluxes that drown in node values far larger than them (an
		// injection anchored only by a decay of 1e−300, u ≈ 1e300) has
		// fluxes float64 cannot resolve: not reported, and Inaccurate.
		defect, scale := s.zeroFluxDefect()
		if defect <= fluxRoundingRel*scale {
			for e := range sol.Flux {
				sol.Flux[e] = [2]float64{}
			}
			return
		}
		worst := 0.0
		for _, rb := range rbs {
			worst = math.Max(worst, math.Max(rb[0], rb[1]))
		}
		for e := range sol.Flux {
			sol.Flux[e] = [2]float64{math.NaN(), math.NaN()}
		}
		for v, nd := range net.Nodes {
			if nd.Law.Kind == vertex.Balance && v < len(sol.Residual) {
				sol.Residual[v] = math.NaN()
			}
		}
		sol.Status = Inaccurate
		sol.Notes = append(sol.Notes, fmt.Sprintf("no end flux is reported (NaN) and the node balances cannot be checked: the data need fluxes of size %.3g, but the node values are so large that their rounding (up to %.2g in a flux) hides them (a component anchored only by a very weak leak or decay)",
			defect, worst))
		return
	}
	var bad []string
	worst := 0.0
	for e := range net.Edges {
		rb := rbs[e]
		for k := range 2 {
			if maxJ > 0 && rb[k] > fluxRoundingRel*maxJ && rb[k] > fluxRoundingRel*math.Abs(sol.Flux[e][k]) {
				if !math.IsNaN(sol.Flux[e][k]) {
					worst = math.Max(worst, rb[k])
				}
				sol.Flux[e][k] = math.NaN()
				if len(bad) == 0 || bad[len(bad)-1] != net.Edges[e].ID {
					bad = append(bad, net.Edges[e].ID)
				}
			}
		}
	}
	if len(bad) > 0 {
		shown := bad
		more := ""
		if len(shown) > 5 {
			shown, more = shown[:5], fmt.Sprintf(" and %d more", len(bad)-5)
		}
		sol.Notes = append(sol.Notes, fmt.Sprintf("end fluxes of edge %s%s are not reported (NaN): their rounding error (up to %.2g) exceeds %g of the largest flux (%.3g); the end values agree to more digits than float64 holds (a very large conductance)",
			strings.Join(shown, ", "), more, worst, fluxRoundingRel, maxJ))
	}
}

// zeroFluxDefect returns how far zero fluxes are from balancing the data
// of the solved field — the largest |β u − γ| at a balance node and
// |f − c u|·L on an edge (coefficients and u at its middle, u taken as the
// mean of its end values) — and the size of those terms, for judging
// fluxes that are all below their rounding. Cost O(nodes + edges).
func (s *system) zeroFluxDefect() (defect, scale float64) {
	for v, nd := range s.net.Nodes {
		if nd.Law.Kind == vertex.Balance {
			lu := nd.Law.Leak * s.u[v]
			defect = math.Max(defect, math.Abs(lu-nd.Law.Inject))
			scale = math.Max(scale, math.Max(math.Abs(lu), math.Abs(nd.Law.Inject)))
		}
	}
	for e := range s.net.Edges {
		ed := &s.net.Edges[e]
		_, _, c, f, _ := ed.Coeffs(ed.Length / 2)
		cu := c * (s.u[ed.From] + s.u[ed.To]) / 2
		defect = math.Max(defect, ed.Length*math.Abs(f-cu))
		scale = math.Max(scale, ed.Length*math.Max(math.Abs(f), math.Abs(cu)))
	}
	return defect, scale
}
