package graphpde

import (
	"context"
	"fmt"
	"math"
	"slices"
	"time"
)

// Policy iteration on a controlled network (docs/controls.md §2).
//
// Discretisation. A controlled edge gets n cells of width h; at every
// vertex x_i the control k_i is chosen, and the row of an interior vertex
// is the exponentially fitted (Scharfetter–Gummel) row of docs/
// discretisation.md with the coefficients of k_i on both of its cells:
//
//	G_i^k = R^k (u_{i+1} − u_i) − L^k (u_i − u_{i−1}) + h (f_k − c_k u_i),
//	R^k = (a_k/h) B(−P_k),  L^k = (a_k/h) B(P_k),  P_k = b_k h / a_k,
//
// an approximation of h·(a_k u'' + b_k u' − c_k u + f_k) whose neighbour
// coefficients are positive at every cell Péclet number (a monotone scheme;
// the upwind scheme in the limit a → 0) and exact for constant a, b, f
// without decay. The value solves opt_k G_i^k(u) = 0 at every interior
// vertex. The end of an edge at a balance node has its own control k_0
// (k_n), which sets the node-owned half cell of the end derivative:
//
//	∂_e u = [R^k (u_1 − U0) + m_0^k (f_k − c_k U0)] / a_k,  m_0^k = (h/2) ω(P_k),
//
// (likewise at the To end with L^k and ω(−P_k)), the derivative leaving the
// node along the edge; the node's row opt_j [Σ_e α_{j,e} ∂_e u] − β u + γ = 0
// chooses its own control j and, independently (α > 0), the best end
// control of every controlled edge at it: with equal diffusivities that
// picks the half-cell correction of opt_k [a u'' + b_k u' − c_k u + f_k] = 0.
//
// Iteration (Howard): evaluate the current policy (one linear solve of the
// node system; the element of a controlled edge is condensed by one Thomas
// sweep of its rows, like any grid element), then improve at every vertex,
// end and controlled node, switching only where another control is better
// than the current one by more than a relative 1e−12 of the row's terms.
// Every policy's matrix is an M-matrix in the rows of the balance nodes and
// grid vertices, so the values move monotonically (non-decreasing for max)
// and, the policies being finitely many, the iteration stops with the
// policy unchanged: the discrete Bellman equation then holds exactly
// (Howard 1960; Bokanowski, Maroso and Zidani, SIAM J. Numer. Anal. 47
// (2009) 3001–3026, from memory). ControlResult.Backstep measures any move
// against that direction.
//
// Exact elements. Where the final policy is constant along an edge, the
// edge is solved once more with the exact element of that control (closed
// form), and the result is kept if no other control is better anywhere on
// the grid points of the edge by the exact solution's own derivatives (the
// continuous Bellman inequality, to a relative 1e−6); otherwise the grid
// answer stands and a note says why.

// DefaultControlCells is the number of cells of a controlled edge when
// neither the edge nor the settings give one.
const DefaultControlCells = 256

// ControlSettings controls SolveControl. A nil *ControlSettings means the
// defaults.
type ControlSettings struct {
	// Cells of every controlled edge whose Cells is 0 (0 here:
	// DefaultControlCells). At least 2.
	Cells int
	// Linear are the settings of the uncontrolled edges and the node
	// system (Method, Cells of uncontrolled grid edges); nil: defaults.
	// A Context here stops a policy evaluation part-way with a
	// *CanceledError (Context below stops between evaluations and keeps
	// the last one).
	Linear *Settings
	// MaxIterations bounds the policy evaluations (0: 100).
	MaxIterations int
	// ViscosityScale multiplies every diffusivity (ScaleViscosity); 0
	// means 1.
	ViscosityScale float64
	// GridOnly keeps the grid elements where the policy is constant along
	// an edge (no exact re-solve).
	GridOnly bool
	// From, when non-nil, is an earlier result on the same network (with
	// the same cells) whose policy starts the iteration: a sweep of the
	// viscosity scale continues from the previous scale.
	From *ControlResult
	// Context, when non-nil, stops the iteration between two evaluations
	// when done (the result is the last evaluated policy, status
	// IterationLimit with a note).
	Context context.Context
}

// ControlResult is the result of SolveControl.
type ControlResult struct {
	// Solution is the value under Policy; its Net is the linear network of
	// that policy (Network.Apply, viscosity scale included), whose node and
	// edge indices are those of the controlled network.
	Solution *Solution
	// Policy is the optimal feedback found (pieces of edges, node
	// controls).
	Policy *Policy
	// Iterations is the number of policy evaluations (linear solves of the
	// node system), not counting the exact re-solve.
	Iterations int
	// Switches[i] is the number of grid vertices, edge ends and nodes whose
	// control changed after evaluation i+1 (0 in the last entry when the
	// iteration converged).
	Switches []int
	// Backstep is the largest move of any grid or node value against the
	// objective's direction between two evaluations, relative to the
	// largest |u| (round-off for a monotone scheme).
	Backstep float64
	// Exact[e] reports that edge e was solved with its exact element (its
	// policy is constant along it and passed the continuous check).
	Exact []bool
	// Status: Converged (policy unchanged by an improvement step),
	// IterationLimit, or the Solution's status if that is worse.
	Status Status
	Notes  []string
	// SolveTime is the time spent in the evaluations (assembly, factor,
	// solve); Elapsed the whole call.
	SolveTime, Elapsed time.Duration
	// ViscosityScale is the scale solved at (1 without one); Continued
	// lists the larger scales solved first, whose policies started the
	// iteration (their evaluations are counted in Iterations).
	ViscosityScale float64
	Continued      []float64

	iter *ctlIter
}

// ctlState is the policy of a controlled solve on the grid.
type ctlState struct {
	obj   Objective
	edges []*ctlEdge // per edge; nil for edges without a control grid element
}

// ctlEdge is one controlled edge's controls (viscosity scale applied), its
// cells and its control at each of the n+1 grid vertices (ends included).
type ctlEdge struct {
	cs  []EdgeControl // the controls, then their average (index k)
	k   int           // the number of controls
	n   int
	pol []int
	// fr, fl, fp cache R^k, L^k and P_k of every control on this edge's
	// cells (h is fixed): the improvement step evaluates every control at
	// every vertex.
	fr, fl, fp []float64
}

// cacheFaces fills fr, fl, fp for cells of width h.
func (c *ctlEdge) cacheFaces(h float64) {
	c.fr, c.fl, c.fp = make([]float64, len(c.cs)), make([]float64, len(c.cs)), make([]float64, len(c.cs))
	for k, cc := range c.cs {
		p := cc.B * h / cc.A
		c.fr[k], c.fl[k], c.fp[k] = cc.A/h*sgB(-p), cc.A/h*sgB(p), p
	}
}

// faces returns R^k, L^k and P_k of control k on cells of width h.
func (c *ctlEdge) faces(k int, _ float64) (r, l, p float64) {
	return c.fr[k], c.fl[k], c.fp[k]
}

// row returns G_i^k at an interior vertex with neighbours um, up, and the
// sum of the magnitudes of its terms.
func (c *ctlEdge) row(k int, h, um, ui, up float64) (g, scale float64) {
	r, l, _ := c.faces(k, h)
	cc := c.cs[k]
	g = r*(up-ui) - l*(ui-um) + h*(cc.F-cc.C*ui)
	return g, r*math.Abs(up-ui) + l*math.Abs(ui-um) + h*(math.Abs(cc.F)+cc.C*math.Abs(ui))
}

// leave returns the derivative leaving the node at the given end (0 =
// From, 1 = To) under end control k: U the node value, adj the first grid
// value inside the edge.
func (c *ctlEdge) leave(side, k int, h, U, adj float64) (d, scale float64) {
	r, l, p := c.faces(k, h)
	cc := c.cs[k]
	q, m := r, 0.5*h*sgOmega(p)
	if side == 1 {
		q, m = l, 0.5*h*sgOmega(-p)
	}
	d = (q*(adj-U) + m*(cc.F-cc.C*U)) / cc.A
	return d, (q*math.Abs(adj-U) + m*(math.Abs(cc.F)+cc.C*math.Abs(U))) / cc.A
}

// ctlGridEl is the element of a controlled edge under the policy of its
// ctlEdge: per-vertex rows, condensed by the cancellation-free sweep of
// condenseVar, recovered by recoverGrid.
type ctlGridEl struct {
	s    *system
	e, n int
	c    *ctlEdge
	st   []float64 // interior values
	vst  []float64 // sweep triples, 3(n−1)
	ends gridEnds
}

func (x *ctlGridEl) unknowns() int { return x.n - 1 }
func (x *ctlGridEl) cells() int    { return x.n }

func (x *ctlGridEl) linearize(_, _ float64) (edgeMap, float64) {
	ed := &x.s.net.Edges[x.e]
	n, c := x.n, x.c
	h := ed.Length / float64(n)
	mh := 0.5 * h
	shift := x.s.shift * ed.Rho
	k0 := c.pol[0]
	r0, _, p0 := c.faces(k0, h)
	m0 := mh * sgOmega(p0)
	cc := c.cs[k0]
	ge := gridEnds{n: n, r0: r0, mf0: m0 * cc.F, mc0: m0 * (cc.C + shift), a0: cc.A}
	st := x.vst[:3*(n-1)]
	abar, b0, bs, dl := 1.0, 1.0, 0.0, 0.0
	pi, pc, ps := 1.0, 0.0, 0.0
	for i := 1; i < n; i++ {
		k := c.pol[i]
		up, lo, _ := c.faces(k, h)
		cc := c.cs[k]
		mc := h * (cc.C + shift)
		inv := 1 / (lo*abar + up + mc)
		alpha := up * inv
		abar = (lo*abar + mc) * inv
		b0 = lo * b0 * inv
		bs = (h*cc.F + lo*bs) * inv
		dl = (lo*dl + mc) * inv
		j := 3 * (i - 1)
		st[j], st[j+1], st[j+2] = alpha, b0, bs
		pc += pi * dl
		ps += pi * bs
		pi *= alpha
	}
	kL := c.pol[n]
	_, lL, pL := c.faces(kL, h)
	mL := mh * sgOmega(-pL)
	cc = c.cs[kL]
	ge.lL, ge.mfL, ge.mcL, ge.aL = lL, mL*cc.F, mL*(cc.C+shift), cc.A
	d, g := gridMap(&ge, pi, ps, pc, abar, b0, bs, dl)
	x.ends = ge
	return edgeMap{d, g, ge.rs}, 0
}

func (x *ctlGridEl) recover(U0, UL float64) bool { return recoverGrid(x.st, x.vst, U0, UL) }

func (x *ctlGridEl) eval(at, U0, UL float64, in []float64) (u, du float64) {
	return gridEval(&x.ends, x.s.net.Edges[x.e].Length, at, U0, UL, in)
}

// SolveControl computes the optimal value and an optimal feedback policy of
// a controlled network by policy iteration (see the comment at the top of
// this file). net is not modified.
//
// Errors: a network without controls or without an objective, node
// controls naming edges not at the node, and every error of Solve (an
// unanchored component, a singular node system, non-finite values).
// Cost per iteration: one assembly, factorisation and solve of the node
// system (O(grid unknowns + edges) on trees) and one pass over the grid
// for the improvement (O(controls × grid unknowns)).
func SolveControl(net *Network, set *ControlSettings) (*ControlResult, error) {
	var cs ControlSettings
	if set != nil {
		cs = *set
	}
	var start *ctlIter
	if cs.From != nil {
		start = cs.From.iter
	}
	return solveControl(net, cs, start)
}

// ctlContinueBelow: a viscosity scale below it is reached by continuation
// from ten times its value (the policy of the larger scale starts the
// smaller one). Howard's iteration from a poor policy needs many steps
// when ε is small, because that policy's values are of size e^{L|b|/ε}
// and each improvement corrects little; the optimal policies of
// neighbouring scales differ only near their switches. Observed on the
// network of TestVanishingViscosityShortestPath: 6, 14 and 55 evaluations
// at ε = 0.1, 0.01, 0.001 from the averaged start, 6, 11 and 13 with
// continuation (counting every scale's evaluations).
const ctlContinueBelow = 0.1

// solveControl is SolveControl from the vertex and node controls of start
// (nil: control 0 everywhere).
func solveControl(net *Network, cs ControlSettings, start *ctlIter) (*ControlResult, error) {
	t0 := time.Now()
	if eps := cs.ViscosityScale; start == nil && eps > 0 && eps < ctlContinueBelow {
		up := cs
		up.ViscosityScale = math.Min(10*eps, 1)
		up.GridOnly = true
		r, err := solveControl(net, up, nil)
		if err != nil {
			return nil, err
		}
		res, err := solveControl(net, cs, r.iter)
		if err != nil {
			return nil, err
		}
		res.Iterations += r.Iterations
		res.Continued = append(r.Continued, r.ViscosityScale)
		res.SolveTime += r.SolveTime
		res.Elapsed = time.Since(t0)
		return res, nil
	}
	if cs.MaxIterations <= 0 {
		cs.MaxIterations = 100
	}
	cs.MaxIterations = max(cs.MaxIterations, 2) // the first evaluation is of the averaged problem
	if cs.Cells < 0 {
		return nil, fmt.Errorf("cells = %d must be ≥ 0", cs.Cells)
	}
	if err := checkControls(net); err != nil {
		return nil, err
	}
	eps := cs.ViscosityScale
	if eps == 0 {
		eps = 1
	}
	cp, err := ScaleViscosity(net, eps)
	if err != nil {
		return nil, err
	}
	baseWeights(cp)
	base := make([][2]float64, len(cp.Edges))
	for e := range cp.Edges {
		base[e] = cp.Edges[e].Weight
	}
	obj := net.Objective
	st := &ctlState{obj: obj, edges: make([]*ctlEdge, len(cp.Edges))}
	for e := range cp.Edges {
		ed := &cp.Edges[e]
		if len(ed.ControlSet()) == 0 {
			continue
		}
		n := ed.Cells
		if n == 0 {
			n = cs.Cells
		}
		if n == 0 {
			n = DefaultControlCells
		}
		n = max(n, 2) // a control needs an interior vertex to act at
		cs := ed.ControlSet()
		avg := EdgeControl{}
		for _, c := range cs {
			avg.A += c.A / float64(len(cs))
			avg.B += c.B / float64(len(cs))
			avg.C += c.C / float64(len(cs))
			avg.F += c.F / float64(len(cs))
		}
		ce := &ctlEdge{cs: append(slices.Clip(cs), avg), k: len(cs), n: n, pol: make([]int, n+1)}
		for i := range ce.pol {
			ce.pol[i] = ce.k // the averaged problem starts the iteration
		}
		ce.cacheFaces(ed.Length / float64(n))
		st.edges[e] = ce
	}
	nodePol := make([]int, len(cp.Nodes))
	nodeCtl := make([][]NodeControl, len(cp.Nodes)) // the controls, then their average
	for v := range cp.Nodes {
		nodePol[v] = -1
		cs := cp.Nodes[v].Controls
		if len(cs) == 0 {
			continue
		}
		avg := NodeControl{Weights: map[string]float64{}}
		for _, end := range cp.Incident(v) {
			id := cp.Edges[end.Edge].ID
			w := 0.0
			for _, c := range cs {
				x, ok := c.Weights[id]
				if !ok {
					x = base[end.Edge][end.Side]
				}
				w += x / float64(len(cs))
			}
			avg.Weights[id] = w
		}
		nodeCtl[v] = append(slices.Clip(cs), avg)
		nodePol[v] = len(cs)
	}
	if start != nil {
		copy(nodePol, start.nodePol)
		for e, c := range st.edges {
			if c != nil && start.st.edges[e] != nil && start.st.edges[e].n == c.n {
				copy(c.pol, start.st.edges[e].pol)
			}
		}
	}
	// The system sees a network without node controls (weights are written
	// per iteration) and with controlled edges as control elements.
	sysNet := copyNetwork(cp)
	for v := range sysNet.Nodes {
		sysNet.Nodes[v].Controls = nil
	}
	sys, err := newSystemCtl(sysNet, nil, cs.Linear, st)
	if err != nil {
		return nil, err
	}
	res := &ControlResult{Status: Converged, Exact: make([]bool, len(net.Edges)), ViscosityScale: eps}
	it := &ctlIter{sys: sys, net: cp, sysNet: sysNet, st: st, nodePol: nodePol, base: base}
	res.iter = it
	var prev []float64
	uscale := 0.0
	for {
		if ctx := cs.Context; ctx != nil && ctx.Err() != nil && res.Iterations > 0 {
			res.Status = IterationLimit
			res.Notes = append(res.Notes, fmt.Sprintf("interrupted after %d policy evaluations: the value is that of the last policy evaluated, not known to be optimal", res.Iterations))
			break
		}
		ts := time.Now()
		for v, k := range nodePol {
			if k >= 0 {
				setNodeWeights(sysNet, nodeCtl[v], base, v, k)
			}
		}
		if err := sys.assembleSolve(0); err != nil {
			return nil, err
		}
		res.SolveTime += time.Since(ts)
		res.Iterations++
		if sys.bad >= 0 {
			return nil, &NonFiniteError{Object: "edge", ID: net.Edges[sys.bad].ID}
		}
		cur := append(append([]float64(nil), sys.u...), sys.st...)
		for _, v := range cur {
			uscale = max(uscale, math.Abs(v))
		}
		if prev != nil && (start != nil || res.Iterations > 2) {
			// (Without a start, the first evaluation is of the averaged
			// problem, outside the policies: monotone from the second.)
			for i, v := range cur {
				back := prev[i] - v // max: values must not decrease
				if obj == Minimize {
					back = -back
				}
				res.Backstep = max(res.Backstep, back)
			}
		}
		prev = cur
		snap := it.snapshot()
		sw := it.improve()
		res.Switches = append(res.Switches, sw)
		if sw == 0 {
			break
		}
		if res.Iterations >= cs.MaxIterations {
			it.restore(snap)
			res.Status = IterationLimit
			res.Notes = append(res.Notes, fmt.Sprintf("the policy still changed after %d evaluations (%d switches in the last): the value is that of the last policy evaluated, not known to be optimal", res.Iterations, sw))
			break
		}
	}
	if uscale > 0 {
		res.Backstep /= uscale
	}
	sys.refine()
	sol, err := sys.solution()
	if err != nil {
		return nil, err
	}
	sys.judge(sol)
	exact := make([]bool, len(cp.Edges))
	if !cs.GridOnly {
		if xs, xsol, notes := it.exactSolve(cs.Linear); xsol != nil {
			sol, exact = xsol, xs
			res.Notes = append(res.Notes, notes...)
		} else {
			res.Notes = append(res.Notes, notes...)
		}
	}
	res.Exact = exact
	res.Solution = sol
	res.Policy = it.policy(exact)
	// The solution belongs to the linear network of the policy found (its
	// coefficients are those in force; ids and indices are net's).
	pn, note, err := cp.Apply(res.Policy)
	if err != nil {
		return nil, err
	}
	if note != "" {
		res.Notes = append(res.Notes, note)
	}
	sol.Net = pn
	if sol.Status != Converged && res.Status == Converged {
		res.Status = sol.Status
	}
	res.Notes = append(res.Notes, sol.Notes...)
	res.Elapsed = time.Since(t0)
	sol.Stats.Elapsed = res.Elapsed
	return res, nil
}

// ctlIter holds the state of one policy iteration.
type ctlIter struct {
	sys     *system
	net     *Network // the controlled network (viscosity applied, base weights fixed)
	sysNet  *Network // the system's network (node weights of the current policy)
	st      *ctlState
	nodePol []int
	base    [][2]float64
}

func (it *ctlIter) snapshot() [][]int {
	out := make([][]int, 0, len(it.st.edges)+1)
	for _, c := range it.st.edges {
		if c != nil {
			out = append(out, append([]int(nil), c.pol...))
		}
	}
	return append(out, append([]int(nil), it.nodePol...))
}

func (it *ctlIter) restore(s [][]int) {
	i := 0
	for _, c := range it.st.edges {
		if c != nil {
			copy(c.pol, s[i])
			i++
		}
	}
	copy(it.nodePol, s[i])
}

// improvement tolerance: a control replaces the current one only if better
// by this share of the magnitudes of the terms compared (round-off of the
// solve is far below; common practice, no source).
const ctlSwitchTol = 1e-12

// better reports whether g beats ref by more than tol under the objective.
func (st *ctlState) better(g, ref, tol float64) bool {
	if st.obj == Maximize {
		return g > ref+tol
	}
	return g < ref-tol
}

// improve replaces every control by a better one for the current values
// and returns the number of changes.
func (it *ctlIter) improve() int {
	s, st := it.sys, it.st
	sw := 0
	vals := func(e int) (n int, h float64, at func(i int) float64) {
		c := st.edges[e]
		ed := &it.net.Edges[e]
		in := s.interior(e)
		U0, UL := s.u[ed.From], s.u[ed.To]
		return c.n, ed.Length / float64(c.n), gridVertex(c.n, U0, UL, in)
	}
	// Interior vertices.
	for e, c := range st.edges {
		if c == nil {
			continue
		}
		n, h, u := vals(e)
		for i := 1; i < n; i++ {
			um, ui, up := u(i-1), u(i), u(i+1)
			k := c.pol[i]
			if k >= c.k {
				k = 0 // from the averaged start: any control replaces it
			}
			best, sc := c.row(k, h, um, ui, up)
			for j := range c.k {
				if j == k {
					continue
				}
				g, sj := c.row(j, h, um, ui, up)
				if st.better(g, best, ctlSwitchTol*(sc+sj)) {
					best, sc, k = g, sj, j
				}
			}
			if k != c.pol[i] {
				c.pol[i] = k
				sw++
			}
		}
	}
	// Ends and nodes: the best end control of each controlled edge at a
	// balance node (independent of the node's weights, which are > 0),
	// then the node's own control.
	type endVal struct{ d, sc float64 }
	ends := make(map[[2]int]endVal)
	for e, c := range st.edges {
		if c == nil {
			continue
		}
		ed := &it.net.Edges[e]
		n, h, u := vals(e)
		for side := 0; side < 2; side++ {
			v, vi, ai := ed.From, 0, 1
			if side == 1 {
				v, vi, ai = ed.To, n, n-1
			}
			if s.unk[v] < 0 {
				// A fixed end: no row; follow the neighbouring vertex.
				c.pol[vi] = c.pol[ai]
				continue
			}
			k := c.pol[vi]
			if k >= c.k {
				k = 0
			}
			best, sc := c.leave(side, k, h, u(vi), u(ai))
			for j := range c.k {
				if j == k {
					continue
				}
				d, sj := c.leave(side, j, h, u(vi), u(ai))
				if st.better(d, best, ctlSwitchTol*(sc+sj)) {
					best, sc, k = d, sj, j
				}
			}
			if k != c.pol[vi] {
				c.pol[vi] = k
				sw++
			}
			ends[[2]int{e, side}] = endVal{best, sc}
		}
	}
	for v, k := range it.nodePol {
		if k < 0 {
			continue
		}
		nd := &it.net.Nodes[v]
		eval := func(j int) (g, sc float64) {
			for _, end := range it.net.Incident(v) {
				w := it.base[end.Edge][end.Side]
				if x, ok := nd.Controls[j].Weights[it.net.Edges[end.Edge].ID]; ok {
					w = x
				}
				var d, ds float64
				if ev, ok := ends[[2]int{end.Edge, end.Side}]; ok {
					d, ds = ev.d, ev.sc
				} else {
					d0, dL := s.endDerivs(end.Edge)
					d = d0
					if end.Side == 1 {
						d = -dL
					}
					ds = math.Abs(d)
				}
				g += w * d
				sc += w * ds
			}
			return g, sc
		}
		if k >= len(nd.Controls) {
			k = 0
		}
		best, sc := eval(k)
		for j := range nd.Controls {
			if j == k {
				continue
			}
			g, sj := eval(j)
			if st.better(g, best, ctlSwitchTol*(sc+sj)) {
				best, sc, k = g, sj, j
			}
		}
		if k != it.nodePol[v] {
			it.nodePol[v] = k
			sw++
		}
	}
	return sw
}

// ctlExactTol is the relative margin by which another control may beat the
// chosen one in the continuous Bellman inequality on an exact edge before
// the exact re-solve is rejected (grid points next to a switch of the
// optimal control sit within O(h) of a tie; common practice, no source).
const ctlExactTol = 1e-6

// ctlExactChecks bounds the grid points per edge at which the exact
// re-solve is checked (evenly spaced; each costs a closed-form evaluation).
const ctlExactChecks = 256

// exactSolve re-solves with exact elements on the edges whose policy is
// constant, checks the continuous Bellman inequality there, and returns
// the edges made exact and the solution (nil when no edge qualifies or the
// check fails, with notes saying why).
func (it *ctlIter) exactSolve(lin *Settings) ([]bool, *Solution, []string) {
	exact := make([]bool, len(it.net.Edges))
	any := false
	cp := copyNetwork(it.sysNet)
	st2 := &ctlState{obj: it.st.obj, edges: make([]*ctlEdge, len(cp.Edges))}
	for e, c := range it.st.edges {
		if c == nil {
			continue
		}
		k := c.pol[0]
		constant := true
		for _, x := range c.pol {
			constant = constant && x == k
		}
		if !constant {
			st2.edges[e] = c
			continue
		}
		ed := &cp.Edges[e]
		cc := c.cs[k]
		ed.A, ed.B, ed.C, ed.F = cc.A, cc.B, cc.C, cc.F
		ed.Controls = nil
		ed.Cells = c.n
		exact[e], any = true, true
	}
	if !any {
		return exact, nil, nil
	}
	set := Settings{}
	if lin != nil {
		set = *lin
	}
	if set.Method == MethodGrid {
		return make([]bool, len(exact)), nil, nil
	}
	sys, err := newSystemCtl(cp, nil, &set, st2)
	if err != nil {
		return make([]bool, len(exact)), nil, []string{"exact re-solve of the edges with a constant policy failed (" + err.Error() + "); the grid values stand"}
	}
	if err := sys.assembleSolve(0); err != nil {
		return make([]bool, len(exact)), nil, []string{"exact re-solve of the edges with a constant policy failed (" + err.Error() + "); the grid values stand"}
	}
	sys.refine()
	sol, err := sys.solution()
	if err != nil {
		return make([]bool, len(exact)), nil, []string{"exact re-solve of the edges with a constant policy failed (" + err.Error() + "); the grid values stand"}
	}
	sys.judge(sol)
	for e, ok := range exact {
		if !ok {
			continue
		}
		c := it.st.edges[e]
		k := c.pol[0]
		ck := c.cs[k]
		ed := &cp.Edges[e]
		h := ed.Length / float64(c.n)
		stride := max(1, c.n/ctlExactChecks)
		for i := 1; i < c.n; i += stride {
			u, du := sol.eval(e, float64(i)*h)
			uxx := -(ck.B*du - ck.C*u + ck.F) / ck.A
			for j, cj := range c.cs[:c.k] {
				if j == k {
					continue
				}
				g := cj.A*uxx + cj.B*du - cj.C*u + cj.F
				sc := math.Abs(cj.A*uxx) + math.Abs(cj.B*du) + cj.C*math.Abs(u) + math.Abs(cj.F) + math.Abs(ck.B*du) + ck.C*math.Abs(u) + math.Abs(ck.F)
				if it.st.better(g, 0, ctlExactTol*sc) {
					return make([]bool, len(exact)), nil, []string{fmt.Sprintf("edge %q: the exact solution under its constant control %d is beaten by control %d at x = %s (a switch the grid does not resolve); the grid values stand", ed.ID, k, j, fmtG(float64(i)*h))}
				}
			}
		}
	}
	return exact, sol, nil
}

// policy returns the current policy as pieces (one piece on exact edges).
func (it *ctlIter) policy(exact []bool) *Policy {
	p := &Policy{Edges: make([][]PolicyPiece, len(it.net.Edges)), Nodes: append([]int(nil), it.nodePol...)}
	for e, c := range it.st.edges {
		if c == nil {
			continue
		}
		L := it.net.Edges[e].Length
		if exact[e] {
			p.Edges[e] = []PolicyPiece{{0, L, c.pol[0]}}
			continue
		}
		h := L / float64(c.n)
		var ps []PolicyPiece
		for i, k := range c.pol {
			lo, hi := math.Max(0, (float64(i)-0.5)*h), math.Min(L, (float64(i)+0.5)*h)
			if i == c.n {
				hi = L
			}
			if m := len(ps); m > 0 && ps[m-1].Control == k {
				ps[m-1].To = hi
				continue
			}
			ps = append(ps, PolicyPiece{lo, hi, k})
		}
		p.Edges[e] = ps
	}
	return p
}
