package graphpde

import (
	"context"
	"errors"
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
	"github.com/ramify-dev/ramify/vertex"
)

// nlKind is the element of an edge in the nonlinear solver.
type nlKind uint8

const (
	nlExact    nlKind = iota // linear, constant coefficients: exact element
	nlLinGrid                // linear, grid element (affine end map)
	nlQuasi                  // Law coefficients on a grid: Newton unknowns
	nlEquation               // fully nonlinear equation on a grid: Newton unknowns
)

// endLin is the linearisation of one end of an edge: d is the derivative
// leaving the node along the edge (u'(0) at the From end, −u'(L) at the To
// end), dSelf its partial derivative in the node's own value, dAdj in the
// adjacent value (u_1 or u_{n−1}, the other end's node value when the edge
// has one cell; for affine edges the other node's value), w the end weight α
// and dw its derivative in the node's value.
type endLin struct {
	d, dSelf, dAdj, w, dw float64
}

// nlSystem is the state of a Newton solve: the unknowns, the residuals, the
// linearisation and the condensed node system.
type nlSystem struct {
	ctx  context.Context // NonlinearSettings.Context (nil: never stopped)
	net  *Network
	kind []nlKind
	n    []int // cells of grid edges
	off  []int // index of u_1 of grid edge e in w
	maps []edgeMap
	ecf  [][2]float64
	vst  []float64 // sweep triples of linear grid edges
	voff []int

	unk, nodes []int
	mat        *nodesys.Matrix[float64]
	dslot      []int
	eslot      [][2]int
	fac        *nodesys.Factor[float64]

	// State: node values (all nodes) and grid interiors; trial copies.
	U, w, tU, tw []float64
	// Newton step: dU at the nodes; dw inside law edges, formed only when
	// a line search needs a step shorter than 1 (see evalStep), and
	// allocated then.
	dU, dw []float64
	// pending: the node step dU is solved but the interior step is not
	// formed yet (newtonStep leaves it to evalStep). fused: the law edges
	// before this index have their full step in tw (by evalStep).
	pending bool
	fused   int
	// onePerEdge turns off the evaluation of pairs of edges together
	// (evalQuasiPair), for the tests that compare the two.
	onePerEdge bool
	// handOver lets solution() keep w as the Solution's grid values
	// instead of copying it (SolveNonlinear discards the system after).
	handOver bool
	// noSolution: newton leaves a converged state in (U, w) and returns
	// no Solution (the transient stages read the state themselves).
	noSolution bool
	// Interior rows of Law edges (indexed like w): the Jacobian row
	// (coefficients of u_{i−1}, u_i, u_{i+1}) and the residual, in
	// "flux sign" (minus the cell integral of the generator-sign equation).
	ja, ires       []float64 // kept only with keepRows
	piv, alpha, b0 []float64 // Thomas elimination (piv only with keepRows)
	bs             []float64 // the Newton right-hand side swept by condense
	end            [][2]endLin
	cond           []edgeCond
	// Node rows (indexed by node): residual, ∂R/∂u explicit, and per end
	// ∂R/∂d in gEnd (indexed by edge and side).
	nres, gu []float64
	gEnd     [][2]float64
	ddBuf    []float64
	conds    []vertex.Condition // per node (balance nodes only)
	alpha0   [][]float64        // per node: the end weights inside conds[v] (nil for a general law)
	xEnd     [][2]float64       // per equation edge end: last second derivative of the half cell
	dBuf     []float64
	rhs, x   []float64

	sumsq float64 // Σ residual² of the last eval
	ni    int     // interior values
	// Scaled residual of the last prepare, and its partial maxima.
	rho, rhoWorst, rhoUmax float64
	// keepRows keeps the interior rows (ja, piv, ires) for solves with
	// other right-hand sides (step, forward): continuation needs them.
	keepRows  bool
	negPivots int    // negative pivots of the last factorisation (interior + node system)
	nonMono   string // first place where a law was not monotone in u
	stats     Stats
	hasLawOf  []bool
}

// edgeCond is the condensed linearisation of an edge's end derivatives:
// δd_side = c[side][0]·δU_from + c[side][1]·δU_to + k[side].
type edgeCond struct {
	c              [2][2]float64
	k              [2]float64
	kN             [2]float64 // k for the Newton right-hand side, from condense
	p0, pl, q0, ql float64    // δu_1 = p0 δU0 + pl δUL + ps, δu_{n−1} = q0 δU0 + ql δUL + qs
	ps, qs         float64    // (for the Newton right-hand side)
}

func lawEdge(ed *Edge) (quasi, equation bool) {
	l := ed.Law
	if l == nil {
		return false, false
	}
	if l.Equation != nil {
		return false, true
	}
	return l.A != nil || l.B != nil || l.C != nil || l.F != nil, false
}

func newNLSystem(net *Network, set *NonlinearSettings) (*nlSystem, error) {
	ne, nn := len(net.Edges), len(net.Nodes)
	s := &nlSystem{net: net, ctx: set.Context}
	cells := DefaultCells
	if set.Cells > 0 {
		cells = set.Cells
	} else if set.Cells < 0 {
		return nil, fmt.Errorf("cells = %d must be ≥ 0", set.Cells)
	}
	maxGrid := int64(DefaultMaxGridUnknowns)
	if set.MaxGridUnknowns > 0 {
		maxGrid = int64(set.MaxGridUnknowns)
	}
	s.kind = make([]nlKind, ne)
	s.n = make([]int, ne)
	s.off = make([]int, ne)
	s.maps = make([]edgeMap, ne)
	s.ecf = make([][2]float64, ne)
	s.voff = make([]int, ne)
	var interior, linInterior int64
	for e := range net.Edges {
		ed := &net.Edges[e]
		quasi, eq := lawEdge(ed)
		switch {
		case eq:
			s.kind[e] = nlEquation
			if ed.Weight[0] == 0 || ed.Weight[1] == 0 {
				return nil, &ModelError{Object: "edge", ID: ed.ID, Field: "weights", Reason: "must be given on an edge with an equation"}
			}
		case quasi:
			s.kind[e] = nlQuasi
		case set.Method == MethodGrid || !ed.Constant():
			s.kind[e] = nlLinGrid
		case set.Method == MethodExact || set.Method == MethodAuto:
			s.kind[e] = nlExact
		default:
			return nil, fmt.Errorf("unknown method %v", set.Method)
		}
		if set.Method == MethodExact && s.kind[e] != nlExact {
			return nil, &ModelError{Object: "edge", ID: ed.ID, Reason: "has a law or coefficients that vary along it: method exact needs constant ones (use auto or grid)"}
		}
		if s.kind[e] == nlExact {
			s.stats.ExactEdges++
			continue
		}
		s.stats.GridEdges++
		n := ed.Cells
		if n == 0 {
			n = cells
		}
		s.n[e] = n
		s.off[e] = int(interior)
		interior += int64(n - 1)
		if s.kind[e] == nlLinGrid {
			s.voff[e] = int(linInterior)
			linInterior += int64(n - 1)
		}
		if interior > maxGrid {
			return nil, &GridSizeError{Unknowns: interior, Max: maxGrid}
		}
	}
	s.unk, s.nodes = numberNodes(net)
	m := len(s.nodes)
	// The pattern of the node system is the linear solver's.
	ps := &system{net: net, unk: s.unk, nodes: s.nodes}
	rowPtr, col := ps.pattern()
	s.dslot, s.eslot = ps.dslot, ps.eslot
	s.mat = nodesys.NewMatrixPattern[float64](m, rowPtr, col)
	// s.ctx is read at every look: a sweep sets it after its first point.
	s.fac = nodesys.NewFactor[float64](&nodesys.Settings{Stop: func() bool { return s.ctx != nil && s.ctx.Err() != nil }})
	s.rhs = make([]float64, m)
	s.x = make([]float64, m)
	ni := int(interior)
	for _, p := range []*[]float64{&s.U, &s.tU, &s.dU, &s.nres, &s.gu} {
		*p = make([]float64, nn)
	}
	for _, p := range []*[]float64{&s.w, &s.tw, &s.alpha, &s.b0, &s.bs} {
		*p = make([]float64, ni)
	}
	s.ni = ni
	s.vst = make([]float64, 3*linInterior)
	s.end = make([][2]endLin, ne)
	s.cond = make([]edgeCond, ne)
	s.gEnd = make([][2]float64, ne)
	maxDeg := 0
	for v := range net.Nodes {
		maxDeg = max(maxDeg, len(net.Incident(v)))
	}
	s.ddBuf = make([]float64, maxDeg)
	s.dBuf = make([]float64, maxDeg)
	s.conds = make([]vertex.Condition, nn)
	s.alpha0 = make([][]float64, nn)
	for _, v := range s.nodes {
		c := net.Condition(v)
		s.conds[v] = c
		switch c := c.(type) {
		case vertex.Linear:
			s.alpha0[v] = c.Alpha
		case lossCondition:
			s.alpha0[v] = c.alpha
		}
	}
	s.xEnd = make([][2]float64, ne)
	s.stats.NodeUnknowns = m
	s.stats.Unknowns = m + ni

	// Linear elements once.
	for e := range net.Edges {
		ed := &net.Edges[e]
		switch s.kind[e] {
		case nlExact:
			d, g := exactElement(ed.A, ed.B, ed.C, ed.F, ed.Length)
			s.maps[e] = edgeMap{d: d, g: g, rs: exactRowSums(ed.A, ed.B, ed.C, ed.Length)}
			s.ecf[e] = [2]float64{ed.C, ed.F}
		case nlLinGrid:
			n := s.n[e]
			o := s.voff[e]
			d, g, ge := condenseVar(s.vst[3*o:3*(o+n-1)], n, ed.Length, func(x float64) (a, b, c, f float64) {
				a, b, c, f, _ = ed.Coeffs(x)
				return a, b, c, f
			})
			s.maps[e] = edgeMap{d: d, g: g, rs: ge.rs}
		}
	}
	return s, nil
}

// start sets the initial state: fixed values at fixed nodes, the guess (or
// the mean of the fixed values) at balance nodes and grid vertices (linear
// along edges without a guess).
func (s *nlSystem) start(guess func(Point) float64) {
	net := s.net
	// Balance nodes start at the mean of the fixed values (0 without any):
	// a law defined only near the data (log u) is then evaluated there.
	mean, nf := 0.0, 0
	for v := range net.Nodes {
		if s.unk[v] < 0 {
			mean += net.Nodes[v].Law.Value
			nf++
		}
	}
	if nf > 0 {
		mean /= float64(nf)
	}
	for v := range net.Nodes {
		switch {
		case s.unk[v] < 0:
			s.U[v] = net.Nodes[v].Law.Value
		case guess != nil:
			s.U[v] = guess(Point{Node: v, Edge: -1})
		default:
			s.U[v] = mean
		}
	}
	for e := range net.Edges {
		if s.kind[e] != nlQuasi && s.kind[e] != nlEquation {
			continue
		}
		ed := &net.Edges[e]
		n, o := s.n[e], s.off[e]
		h := ed.Length / float64(n)
		for i := 1; i < n; i++ {
			if guess != nil {
				s.w[o+i-1] = guess(Point{Node: -1, Edge: e, X: float64(i) * h})
			} else {
				t := float64(i) / float64(n)
				s.w[o+i-1] = (1-t)*s.U[ed.From] + t*s.U[ed.To]
			}
		}
	}
}

// eval evaluates every residual and the linearisation at the state (U, w):
// interior rows of Law edges, the end derivatives of every edge, and the
// node rows. It returns a *LawError where a law fails a check.
func (s *nlSystem) eval(U, w []float64) error {
	s.resetEval()
	for e := 0; e < len(s.net.Edges); e++ {
		if e%stopEvery == 0 || (e+1)%stopEvery == 0 {
			if err := canceled(s.ctx, "Newton iteration"); err != nil {
				return err
			}
		}
		if s.pairNext(e) {
			if err := s.evalQuasiPair(e, e+1, U, w); err != nil {
				return err
			}
			e++
			continue
		}
		if err := s.evalEdge(e, U, w); err != nil {
			return err
		}
	}
	return s.evalNodes(U)
}

// pairNext reports whether edges e and e+1 are evaluated together
// (evalQuasiPair).
func (s *nlSystem) pairNext(e int) bool {
	return !s.onePerEdge && e+1 < len(s.net.Edges) && s.pairable(e, e+1)
}

// resetEval clears what an evaluation accumulates.
func (s *nlSystem) resetEval() {
	s.sumsq = 0
	s.negPivots = 0
	s.rhoWorst, s.rhoUmax = 0, 0
}

// evalStep evaluates the state after the full Newton step that newtonStep
// left pending, into (tU, tw): each law edge's interior step is formed by
// back substitution straight into tw (tw = w + δw, without storing δw) and
// the edge is evaluated and eliminated at once, while its values are still
// in cache. A line search that needs a shorter step forms δw afterwards
// (materialize).
func (s *nlSystem) evalStep() error {
	net := s.net
	for i := range s.U {
		s.tU[i] = s.U[i] + s.dU[i]
	}
	s.resetEval()
	s.fused = 0
	for e := 0; e < len(net.Edges); e++ {
		if e%stopEvery == 0 || (e+1)%stopEvery == 0 {
			if err := canceled(s.ctx, "Newton iteration"); err != nil {
				return err
			}
		}
		if s.pairNext(e) {
			// Both interiors stepped (two chains side by side), then
			// both edges evaluated together.
			e0, e1 := &net.Edges[e], &net.Edges[e+1]
			s.backStepPair(e, e+1, s.dU[e0.From], s.dU[e0.To], s.dU[e1.From], s.dU[e1.To])
			s.fused = e + 2
			if err := s.evalQuasiPair(e, e+1, s.tU, s.tw); err != nil {
				return err
			}
			e++
			continue
		}
		if s.kind[e] == nlQuasi || s.kind[e] == nlEquation {
			ed := &net.Edges[e]
			s.backStep(e, s.dU[ed.From], s.dU[ed.To])
		}
		s.fused = e + 1
		if err := s.evalEdge(e, s.tU, s.tw); err != nil {
			return err
		}
	}
	return s.evalNodes(s.tU)
}

// backStep is back for the Newton right-hand side, adding the interior
// step of law edge e to w into tw.
func (s *nlSystem) backStep(e int, dU0, dUL float64) {
	n, o := s.n[e], s.off[e]
	if n < 2 {
		return
	}
	al, b0, bs := s.alpha[o:o+n-1], s.b0[o:o+n-1], s.bs[o:o+n-1]
	w, tw := s.w[o:o+n-1], s.tw[o:o+n-1]
	x := dUL
	for i := n - 2; i >= 0; i-- {
		x = al[i]*x + b0[i]*dU0 + bs[i]
		tw[i] = w[i] + x
	}
}

// backStepPair is backStep for edges e and f with the same number of cells,
// their two back substitutions side by side.
func (s *nlSystem) backStepPair(e, f int, dU0, dUL, dV0, dVL float64) {
	n, o, p := s.n[e], s.off[e], s.off[f]
	m := n - 1
	al, b0, bs := s.alpha[o:o+m], s.b0[o:o+m], s.bs[o:o+m]
	w, tw := s.w[o:o+m], s.tw[o:o+m]
	cl, c0, cs := s.alpha[p:p+m], s.b0[p:p+m], s.bs[p:p+m]
	v, tv := s.w[p:p+m], s.tw[p:p+m]
	x, y := dUL, dVL
	for i := m - 1; i >= 0; i-- {
		x = al[i]*x + b0[i]*dU0 + bs[i]
		y = cl[i]*y + c0[i]*dV0 + cs[i]
		tw[i] = w[i] + x
		tv[i] = v[i] + y
	}
}

// materialize forms the interior step dw of a pending Newton step: from
// tw − w on the law edges that evalStep already stepped (their elimination
// has been overwritten by the trial's), by back substitution on the others.
func (s *nlSystem) materialize() {
	if !s.pending {
		return
	}
	s.pending = false
	s.allocStep()
	for e := range s.net.Edges {
		if s.kind[e] != nlQuasi && s.kind[e] != nlEquation {
			continue
		}
		if e < s.fused {
			o, m := s.off[e], s.n[e]-1
			for i := o; i < o+m; i++ {
				s.dw[i] = s.tw[i] - s.w[i]
			}
			continue
		}
		ed := &s.net.Edges[e]
		s.back(e, s.dU[ed.From], s.dU[ed.To], s.bs, s.dw)
	}
}

// allocStep allocates the interior step dw on first use.
func (s *nlSystem) allocStep() {
	if s.dw == nil {
		s.dw = make([]float64, s.ni)
	}
}

// evalEdge evaluates edge e at (U, w) (see eval).
func (s *nlSystem) evalEdge(e int, U, w []float64) error {
	net := s.net
	{
		ed := &net.Edges[e]
		U0, UL := U[ed.From], U[ed.To]
		switch s.kind[e] {
		case nlExact, nlLinGrid:
			m := &s.maps[e]
			if ed.From == ed.To {
				// A self-loop: U0 = UL, and the row sums carry it
				// without cancellation.
				s.end[e][0] = endLin{d: m.rs[0]*U0 + m.g[0], dSelf: m.rs[0], w: ed.EndWeight(0)}
				s.end[e][1] = endLin{d: -(m.rs[1]*UL + m.g[1]), dSelf: -m.rs[1], w: ed.EndWeight(1)}
				return nil
			}
			s.end[e][0] = endLin{d: m.d[0][0]*U0 + m.d[0][1]*UL + m.g[0], dSelf: m.d[0][0], dAdj: m.d[0][1], w: ed.EndWeight(0)}
			s.end[e][1] = endLin{d: -(m.d[1][0]*U0 + m.d[1][1]*UL + m.g[1]), dSelf: -m.d[1][1], dAdj: -m.d[1][0], w: ed.EndWeight(1)}
		case nlQuasi:
			if err := s.evalQuasi(e, U0, UL, w); err != nil {
				return err
			}
		case nlEquation:
			if err := s.evalEquation(e, U0, UL, w); err != nil {
				return err
			}
		}
	}
	return nil
}

// evalNodes evaluates the node rows through the nodes' conditions
// (Network.Condition): residual, ∂R/∂u and ∂R/∂d per end. End weights that
// follow a quasilinear diffusivity (the default weight) are set to their
// value at the node before the evaluation, and their derivative in u is
// added to ∂R/∂u.
func (s *nlSystem) evalNodes(U []float64) error {
	net := s.net
	for _, v := range s.nodes {
		nd := &net.Nodes[v]
		inc := net.Incident(v)
		u := U[v]
		d := s.dBuf[:len(inc)]
		dd := s.ddBuf[:len(inc)]
		alpha := s.alpha0[v]
		extra := 0.0
		for k, end := range inc {
			el := &s.end[end.Edge][end.Side]
			d[k] = el.d
			if alpha != nil {
				alpha[k] = el.w
				extra -= el.dw * el.d
			}
		}
		g, gu := s.conds[v].Residual(u, d, dd)
		if gu < 0 {
			s.noteNonMono(fmt.Sprintf("node %q at u = %s: ∂G/∂u = %s < 0", nd.ID, fmtG(u), fmtG(gu)))
		}
		gu += extra
		if !finite(g) || !finite(gu) {
			return &LawError{Object: "node", ID: nd.ID, U: u, Quantity: "the balance", Value: g, Want: "finite"}
		}
		sum := 0.0
		for k, end := range inc {
			if !(dd[k] <= 0) {
				return &LawError{Object: "node", ID: nd.ID, U: u,
					Quantity: "∂G/∂d[" + net.Edges[end.Edge].ID + "]", Value: dd[k], Want: "≤ 0",
					Why: "the node law must not draw less flux when the derivative leaving along that edge grows"}
			}
			sum += dd[k]
			s.gEnd[end.Edge][end.Side] = dd[k]
		}
		if sum == 0 && len(inc) > 0 {
			return &LawError{Object: "node", ID: nd.ID, U: u, Quantity: "Σ ∂G/∂d", Value: 0, Want: "< 0",
				Why: "the node law does not depend on the fluxes"}
		}
		s.nres[v], s.gu[v] = g, gu
		s.sumsq += g * g
	}
	return nil
}

func (s *nlSystem) noteNonMono(msg string) {
	if s.nonMono == "" {
		s.nonMono = msg
	}
}

// finite reports whether v is neither NaN nor ±Inf (v − v is NaN exactly
// then).
func finite(v float64) bool { return v-v == 0 }

// merit returns the Euclidean norm of all residuals (flux units) of the
// last eval.
func (s *nlSystem) merit() float64 { return math.Sqrt(s.sumsq) }

// condense sets the condensed end coefficients of edge e: linear edges
// copy their affine maps; a law edge finishes the elimination that its
// evaluation ran (see elim).
func (s *nlSystem) condense(e int) {
	el := &s.end[e]
	cd := &s.cond[e]
	switch s.kind[e] {
	case nlExact, nlLinGrid:
		// δd_0 = dSelf δU0 + dAdj δUL; δd_1 = dAdj δU0 + dSelf δUL.
		cd.c = [2][2]float64{{el[0].dSelf, el[0].dAdj}, {el[1].dAdj, el[1].dSelf}}
		return
	}
	cd.c[0] = [2]float64{el[0].dSelf + el[0].dAdj*cd.p0, el[0].dAdj * cd.pl}
	cd.c[1] = [2]float64{el[1].dAdj * cd.q0, el[1].dSelf + el[1].dAdj*cd.ql}
	cd.kN = [2]float64{el[0].dAdj * cd.ps, el[1].dAdj * cd.qs}
}

// elim eliminates the interior rows of a law edge as its evaluation
// produces them (Thomas forward sweep, fused with the evaluation so that
// the rows are never stored): row k of the linearisation in flux sign,
//
//	a δu_{i−1} + b δu_i + c δu_{i+1} = −r,
//
// gives the pivot p = b + a α_{i−1}, α_i = −c/p, β⁰_i = −a β⁰_{i−1}/p and
// the Newton right-hand side's βˢ_i = (−r − a βˢ_{i−1})/p, stored for the
// back substitution; it accumulates the sums that give u_1 in terms of the
// end values, the negative pivots and the interior part of the scaled
// residual. With s.keepRows the rows (a, p, r) are kept too, for solves with
// other right-hand sides (continuation).
type elim struct {
	s                         *nlSystem
	alpha, beta0, betas       float64
	prod, p0, ps, worst, umax float64
	al, b0, bs, ja, piv, ires []float64
}

func (s *nlSystem) newElim(e int) elim {
	n, o := s.n[e], s.off[e]
	x := elim{s: s, beta0: 1, prod: 1, worst: s.rhoWorst, umax: s.rhoUmax,
		al: s.alpha[o : o+n-1], b0: s.b0[o : o+n-1], bs: s.bs[o : o+n-1]}
	if s.keepRows {
		x.ja, x.piv, x.ires = s.ja[o:o+n-1], s.piv[o:o+n-1], s.ires[o:o+n-1]
	}
	return x
}

// add eliminates interior row i (0-based) with value u there; it reports
// false at a zero or non-finite pivot.
func (x *elim) add(i int, a, b, c, r, u float64) bool {
	p := b + a*x.alpha
	if p == 0 || !finite(p) {
		return false
	}
	if p < 0 {
		x.s.negPivots++
	}
	ip := 1 / p // one division instead of three
	x.alpha = -c * ip
	x.beta0 = -a * x.beta0 * ip
	x.betas = (-r - a*x.betas) * ip
	x.al[i], x.b0[i], x.bs[i] = x.alpha, x.beta0, x.betas
	if x.ja != nil {
		x.ja[i], x.piv[i], x.ires[i] = a, p, r
	}
	x.p0 += x.prod * x.beta0
	x.ps += x.prod * x.betas
	x.prod *= x.alpha
	// worst = max |r/b|, umax = max |u|, without divisions in the common
	// case.
	if ar, ab := math.Abs(r), math.Abs(b); ar > x.worst*ab {
		x.worst = ratio(ar, ab)
	}
	if au := math.Abs(u); au > x.umax {
		x.umax = au
	}
	return true
}

// finish stores the edge's elimination results.
func (x *elim) finish(e int) {
	s := x.s
	cd := &s.cond[e]
	if s.n[e] > 1 {
		cd.p0, cd.pl, cd.q0, cd.ql = x.p0, x.prod, x.beta0, x.alpha
		cd.ps, cd.qs = x.ps, x.betas
	} else {
		// One cell: u_1 = UL, u_{n−1} = U0.
		cd.p0, cd.pl, cd.q0, cd.ql, cd.ps, cd.qs = 0, 1, 1, 0, 0, 0
	}
	s.rhoWorst, s.rhoUmax = x.worst, x.umax
}

// keepInterior makes later evaluations keep the interior rows, for solves
// with other right-hand sides (forward, step). It allocates them once.
func (s *nlSystem) keepInterior() {
	if s.keepRows {
		return
	}
	s.keepRows = true
	s.ja = make([]float64, s.ni)
	s.piv = make([]float64, s.ni)
	s.ires = make([]float64, s.ni)
}

// forward runs the forward sweep of Law edge e for the right-hand side
// scale·b (b indexed like w), leaving the partial results in dW and the
// condensed constant terms in s.cond[e].k.
func (s *nlSystem) forward(e int, b, dW []float64, scale float64) {
	if !s.keepRows {
		panic("graphpde: forward without kept interior rows")
	}
	cd := &s.cond[e]
	cd.k = [2]float64{}
	n, o := s.n[e], s.off[e]
	if n == 1 || (s.kind[e] != nlQuasi && s.kind[e] != nlEquation) {
		return
	}
	ja, piv := s.ja[o:o+n-1], s.piv[o:o+n-1]
	al, bs := s.alpha[o:o+n-1], dW[o:o+n-1]
	b = b[o : o+n-1]
	beta, prod, ps := 0.0, 1.0, 0.0
	for i := range ja {
		beta = (scale*b[i] - ja[i]*beta) / piv[i]
		bs[i] = beta
		ps += prod * beta
		prod *= al[i]
	}
	el := &s.end[e]
	cd.k = [2]float64{el[0].dAdj * ps, el[1].dAdj * beta}
}

// back completes the interior increments of Law edge e into dW from the
// end increments and the swept right-hand side src (dW after forward, or
// s.bs after condense; src may be dW).
func (s *nlSystem) back(e int, dU0, dUL float64, src, dW []float64) {
	n, o := s.n[e], s.off[e]
	al, b0, bs, dst := s.alpha[o:o+n-1], s.b0[o:o+n-1], src[o:o+n-1], dW[o:o+n-1]
	x := dUL
	for i := n - 2; i >= 0; i-- {
		x = al[i]*x + b0[i]*dU0 + bs[i]
		dst[i] = x
	}
}

// prepare condenses every edge at the state (U, w) last evaluated (law
// edges were eliminated by the evaluation), assembles the condensed node
// system into s.mat and computes the scaled residual (s.rho).
func (s *nlSystem) prepare(U, w []float64) error {
	net := s.net
	for e := range net.Edges {
		if e%stopEvery == 0 {
			if err := canceled(s.ctx, "Newton iteration"); err != nil {
				return err
			}
		}
		s.condense(e)
	}
	s.mat.ZeroValues()
	val := s.mat.Values()
	for r, v := range s.nodes {
		val[s.dslot[r]] += s.gu[v]
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		nodes := [2]int{ed.From, ed.To}
		for side := 0; side < 2; side++ {
			r := s.unk[nodes[side]]
			if r < 0 {
				continue
			}
			g := s.gEnd[e][side]
			for j := 0; j < 2; j++ {
				if s.unk[nodes[j]] < 0 {
					continue
				}
				slot := s.dslot[r]
				if j != side {
					slot = s.eslot[e][side]
				}
				val[slot] += g * s.cond[e].c[side][j]
			}
		}
	}
	worst, umax := s.rhoWorst, s.rhoUmax
	for _, v := range U {
		umax = math.Max(umax, math.Abs(v))
	}
	for r, v := range s.nodes {
		worst = math.Max(worst, ratio(s.nres[v], val[s.dslot[r]]))
	}
	s.rho = worst / (1 + umax)
	return nil
}

// scaledResidual is NonlinearResult.Residual for the state prepared last.
func (s *nlSystem) scaledResidual() float64 { return s.rho }

func ratio(r, d float64) float64 {
	if r == 0 {
		return 0
	}
	if d == 0 {
		return math.Inf(1)
	}
	return math.Abs(r / d)
}

// factor factors the node system assembled by prepare.
func (s *nlSystem) factor() error {
	if len(s.nodes) == 0 {
		return nil
	}
	if err := s.fac.Factorize(s.mat); err != nil {
		var se *nodesys.SingularError
		if errors.As(err, &se) {
			return &SingularNodeError{Node: s.net.Nodes[s.nodes[se.Index]].ID, Pivot: se.Pivot, Scale: se.Scale}
		}
		if errors.Is(err, nodesys.ErrStopped) {
			if c := canceled(s.ctx, "Newton iteration"); c != nil {
				return c
			}
		}
		return err
	}
	neg, _ := s.fac.NegativePivots()
	s.negPivots += neg
	fs := s.fac.Stats()
	s.stats.FillNNZ = fs.NNZL
	s.stats.FactorTime += fs.NumericTime
	return nil
}

// newtonStep solves J·δ = −r for the state prepared last (its right-hand
// side was swept by the elimination) into s.dU at the nodes; the interior
// step is left pending for evalStep, which forms it edge by edge while
// evaluating the new state, or for materialize (into s.dw).
func (s *nlSystem) newtonStep() {
	for r, v := range s.nodes {
		s.rhs[r] = -s.nres[v]
	}
	s.solveNodes(s.dU, true)
	// The interior step is formed by evalStep (or materialize).
	s.pending = true
}

// solveNodes completes the node right-hand side in s.rhs with the swept
// interior terms gEnd (end weights kN of the Newton right-hand side when
// newton is set, k otherwise), solves the factored node system and puts the
// node part of the step into dU (0 at fixed nodes).
func (s *nlSystem) solveNodes(dU []float64, newton bool) {
	net := s.net
	for e := range net.Edges {
		ed := &net.Edges[e]
		k := s.cond[e].k
		if newton {
			k = s.cond[e].kN
		}
		nodes := [2]int{ed.From, ed.To}
		for side := 0; side < 2; side++ {
			if r := s.unk[nodes[side]]; r >= 0 {
				s.rhs[r] -= s.gEnd[e][side] * k[side]
			}
		}
	}
	if len(s.nodes) > 0 {
		s.fac.SolveTo(s.x, s.rhs)
	}
	for v := range net.Nodes {
		if r := s.unk[v]; r >= 0 {
			dU[v] = s.x[r]
		} else {
			dU[v] = 0
		}
	}
}

// step solves J·δ = scale·b with the factored linearisation: bN holds the
// node right-hand sides (indexed by node), bI the interior ones (indexed like
// w); δ goes to dU (balance nodes; 0 at fixed nodes) and dW.
func (s *nlSystem) step(dU, dW, bN, bI []float64, scale float64) {
	net := s.net
	for e := range net.Edges {
		s.forward(e, bI, dW, scale)
	}
	for r, v := range s.nodes {
		s.rhs[r] = scale * bN[v]
	}
	s.solveNodes(dU, false)
	for e := range net.Edges {
		if s.kind[e] == nlQuasi || s.kind[e] == nlEquation {
			ed := &net.Edges[e]
			s.back(e, dU[ed.From], dU[ed.To], dW, dW)
		}
	}
}

// solution packages the converged state as a Solution (copies of the
// state), recovering the interiors of linear grid edges.
func (s *nlSystem) solution() (*Solution, error) {
	net := s.net
	ne := len(net.Edges)
	gval := s.w
	if s.handOver {
		s.w = nil // the Solution owns it now
	} else {
		gval = append([]float64(nil), s.w...)
	}
	sol := &Solution{
		Net:      net,
		U:        append([]float64(nil), s.U...),
		Flux:     make([][2]float64, ne),
		Residual: make([]float64, len(net.Nodes)),
		Status:   Converged,
		els:      make([]element, ne),
		off:      append([]int(nil), s.off...),
		gval:     gval,
	}
	for i, u := range sol.U {
		if !finite(u) {
			return nil, &NonFiniteError{Object: "node", ID: net.Nodes[i].ID}
		}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		d0, dL := s.end[e][0].d, -s.end[e][1].d // u'(0), u'(L)
		var a0, aL float64
		switch s.kind[e] {
		case nlExact:
			sol.els[e] = &exactEl{s: &system{net: net}, e: e, a: ed.A, b: ed.B, c: ed.C, f: ed.F, L: ed.Length, m: s.maps[e]}
		case nlLinGrid:
			n, o := s.n[e], s.off[e]
			vo := s.voff[e]
			if !recoverGrid(gval[o:o+n-1], s.vst[3*vo:3*(vo+n-1)], s.U[ed.From], s.U[ed.To]) {
				return nil, &NonFiniteError{Object: "edge", ID: ed.ID}
			}
			sol.els[e] = &nlGridEl{e: e, n: n, L: ed.Length, d0: d0, dL: dL}
		default:
			sol.els[e] = &nlGridEl{e: e, n: s.n[e], L: ed.Length, d0: d0, dL: dL}
		}
		switch s.kind[e] {
		case nlEquation:
			a0, aL = s.end[e][0].w, s.end[e][1].w
		case nlQuasi:
			a0, _ = s.coefA(ed, 0, s.U[ed.From])
			aL, _ = s.coefA(ed, ed.Length, s.U[ed.To])
		default:
			a0, _, _, _, _ = ed.Coeffs(0)
			aL, _, _, _, _ = ed.Coeffs(ed.Length)
		}
		sol.Flux[e] = [2]float64{-a0 * d0, -aL * dL}
		if !finite(sol.Flux[e][0] + sol.Flux[e][1]) {
			return nil, &NonFiniteError{Object: "edge", ID: ed.ID}
		}
	}
	for _, v := range s.nodes {
		sol.Residual[v] = s.nres[v]
	}
	return sol, nil
}
