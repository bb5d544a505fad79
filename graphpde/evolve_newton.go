package graphpde

import (
	"errors"
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/vertex"
)

// The general transient stepper: fully nonlinear edge equations, general
// node laws, capacities that change in time, drift of u, and diffusivities
// of u beside drift or given end weights — everything the quasilinear
// stepper of evolve_nonlinear.go does not take. Each TR-BDF2 stage is a
// Newton solve of SolveNonlinear's own discretisation (nlSystem: the same
// monotone schemes, residuals, Jacobians, condensation, line search and
// statuses), with the time derivative folded in as a reaction
// (docs/time-and-spectrum.md §1, "General laws in time").
//
// The stage problem. Write v = ∂_t u at every grid vertex and node. A
// TR-BDF2 stage that ends at time τ with the value y has v = (y − z)/d,
// d = γh/2, with z known:
//
//	TR stage:    z = u_n + d·v_n,
//	BDF2 stage:  z = [u_γ − (1 − γ)² u_n]/(γ(2 − γ)).
//
// Putting this v into ρ ∂_t u = E on the edges and into G + ρ_v ∂_t u = 0
// at the balance nodes gives a steady problem at τ: E − ρ(x)(y − z)/d on the
// edges (at every grid vertex, and in the nodes' half cells, which give the
// end derivatives) and G + ρ_v(y − z)/d at the nodes. nlSystem solves it as
// it is, through wrapped laws: the copy of the network that it works on
// reads the stage's time, d and z. Capacities that depend on t need nothing
// more (v is the rate, not ρ times it). The rate after the BDF2 stage is the
// rate v_n of the next step; the first one comes from the initial field
// (initialRate).

// newtonStepper is the state of the general stepper. Flat vectors (the
// stepper's u) hold the balance nodes in the order of the node system
// (sys.nodes) and then the grid interiors (indexed like sys.w).
type newtonStepper struct {
	orig *Network
	net  *Network // orig with wrapped laws, every edge on a grid
	sys  *nlSystem
	// The stage: time τ, d = γh/2 (0: no time term, the steady problem at
	// τ), and z at the nodes (zU, by node) and grid interiors (zW).
	t, d   float64
	zU, zW []float64
	m, n   int       // balance nodes; flat size
	rhoV   []float64 // node capacities, by node
	// Rates: at t_n, at the TR stage, at t_{n+1} (flat).
	vN, vG, v1 []float64
	z, raw     []float64 // flat scratch
	r0N, r0I   []float64 // residual scratch for the error estimate
	bN, dU     []float64 // by node
	nset       NonlinearSettings
	// steadyNote is the first place where a law is not monotone in u, at
	// the initial field ("" if none there).
	steadyNote string
	// lastErr is the law error of the last stage that failed on one.
	lastErr error
	iters   int // Newton iterations of all stages
	ests    int // factorisations for error estimates
	// facD is the d of the stage whose Jacobian the node system's factor
	// holds (NaN: none yet).
	facD float64
}

// facts returns the number of factorisations of the node system.
func (ts *newtonStepper) facts() int { return ts.iters + ts.ests }

// generalTransient reports whether net's laws need the general stepper
// rather than the quasilinear one (see checkNonlinearTransient): an edge
// equation, a general node law, a capacity that depends on t, a drift of u,
// or a diffusivity of u beside drift or given end weights.
func generalTransient(net *Network) bool {
	return checkNonlinearTransient(net) != nil
}

// checkGeneralTransient rejects what no stepper takes: a capacity that
// depends on u.
func checkGeneralTransient(net *Network) error {
	for e := range net.Edges {
		ed := &net.Edges[e]
		if l := ed.Law; l != nil && l.Rho != nil && l.Rho.UsesU {
			return &ModelError{Object: "edge", ID: ed.ID, Field: "capacity", Reason: "depends on u, which a capacity may not"}
		}
	}
	return nil
}

// newNewtonStepper sets up the general stepper on net with the grid of s.
func newNewtonStepper(net *Network, s *EvolveSettings) (*newtonStepper, error) {
	cells := s.Cells
	if cells <= 0 {
		cells = DefaultCells
	}
	ts := &newtonStepper{orig: net}
	cp := *net
	cp.Edges = make([]Edge, len(net.Edges))
	for e := range net.Edges {
		ed := &net.Edges[e]
		c := *ed
		c.Cells = edgeCells(ed, cells)
		c.Law = ts.edgeLaw(e, ed)
		cp.Edges[e] = c
	}
	ts.net = &cp
	sys, err := newNLSystem(&cp, &NonlinearSettings{Method: MethodGrid, Cells: cells, MaxGridUnknowns: s.MaxGridUnknowns, Context: s.Context})
	if err != nil {
		return nil, err
	}
	sys.keepInterior()
	sys.noSolution = true
	ts.sys = sys
	nn := len(net.Nodes)
	ts.m = len(sys.nodes)
	ts.n = ts.m + sys.ni
	ts.zU = make([]float64, nn)
	ts.zW = make([]float64, sys.ni)
	ts.rhoV = make([]float64, nn)
	for _, p := range []*[]float64{&ts.vN, &ts.vG, &ts.v1, &ts.z, &ts.raw} {
		*p = make([]float64, ts.n)
	}
	ts.r0N = make([]float64, ts.m)
	ts.r0I = make([]float64, sys.ni)
	ts.bN = make([]float64, nn)
	ts.dU = make([]float64, nn)
	for _, v := range sys.nodes {
		nd := &net.Nodes[v]
		ts.rhoV[v] = nd.Law.Capacity
		c := &stageCond{inner: sys.conds[v], ts: ts, v: v}
		if tm := nd.Time; tm != nil && tm.Inject != nil && nd.Nonlinear == nil {
			c.inj, c.inj0 = tm.Inject, nd.Law.Inject
		}
		sys.conds[v] = c
	}
	ts.nset = NonlinearSettings{MaxIter: 20, Tol: 1e-10, Context: s.Context}
	ts.facD = math.NaN()
	return ts, nil
}

// edgeLaw returns the law of edge e in the stepper's copy: the coefficients
// evaluated at the stage's time, and the time term −ρ(y − z)/d added to the
// equation or, on every other edge (linear ones included, which become
// quasilinear grid edges), to the source.
func (ts *newtonStepper) edgeLaw(e int, ed *Edge) *EdgeLaw {
	l := ed.Law
	nl := &EdgeLaw{}
	if l != nil {
		*nl = *l
	}
	atT := func(c *Coef) *Coef {
		if c == nil {
			return nil
		}
		w := *c
		w.Fn = func(x, u, _ float64) (float64, float64) { return c.Fn(x, u, ts.t) }
		if c.Why != nil {
			w.Why = func(x, u, _ float64) string { return c.Why(x, u, ts.t) }
		}
		return &w
	}
	nl.A, nl.B, nl.C = atT(nl.A), atT(nl.B), atT(nl.C)
	rho := func(x float64) float64 {
		if l != nil && l.Rho != nil {
			r, _ := l.Rho.Fn(x, 0, ts.t)
			return r
		}
		_, _, _, _, r := ed.Coeffs(x)
		return r
	}
	if l != nil && l.Equation != nil {
		eq := l.Equation
		w := *eq
		w.Fn = func(x, u, p, X float64) (E, Eu, Ep, EX float64) {
			E, Eu, Ep, EX = eq.Fn(x, u, p, X)
			if ts.d != 0 {
				r := rho(x) / ts.d
				E -= r * (u - ts.zAt(e, x))
				Eu -= r
			}
			return
		}
		nl.Equation = &w
		return nl
	}
	f0 := nl.F
	src := "0"
	if f0 != nil {
		src = f0.Src
	}
	nl.F = &Coef{UsesX: true, UsesU: true, UsesT: true, Src: src + " (and the time term of a stage)",
		Fn: func(x, u, _ float64) (float64, float64) {
			var f, df float64
			if f0 != nil {
				f, df = f0.Fn(x, u, ts.t)
			} else {
				_, _, _, f, _ = ed.Coeffs(x)
			}
			if ts.d != 0 {
				r := rho(x) / ts.d
				f -= r * (u - ts.zAt(e, x))
				df -= r
			}
			return f, df
		}}
	if f0 != nil && f0.Why != nil {
		nl.F.Why = func(x, u, _ float64) string { return f0.Why(x, u, ts.t) }
	}
	return nl
}

// zAt returns z at the grid vertex of edge e at x (a vertex: x = i·h).
func (ts *newtonStepper) zAt(e int, x float64) float64 {
	s := ts.sys
	n := s.n[e]
	ed := &ts.net.Edges[e]
	i := int(math.Round(x / ed.Length * float64(n)))
	switch {
	case i <= 0:
		return ts.zU[ed.From]
	case i >= n:
		return ts.zU[ed.To]
	}
	return ts.zW[s.off[e]+i-1]
}

// rhoAt returns the capacity of edge e of the copy at x and the stage's
// time.
func (ts *newtonStepper) rhoAt(e int, x float64) float64 {
	ed := &ts.orig.Edges[e]
	if l := ed.Law; l != nil && l.Rho != nil {
		r, _ := l.Rho.Fn(x, 0, ts.t)
		return r
	}
	_, _, _, _, r := ed.Coeffs(x)
	return r
}

// stageCond is a balance node's law in a stage: the node's own law, its
// injection at the stage's time, and the time term ρ_v(u − z)/d.
type stageCond struct {
	inner vertex.Condition
	ts    *newtonStepper
	v     int
	inj   func(t float64) float64 // injection of time (nil: none)
	inj0  float64                 // the injection inside inner
}

func (c *stageCond) Residual(u float64, d, dd []float64) (g, du float64) {
	g, du = c.inner.Residual(u, d, dd)
	ts := c.ts
	if c.inj != nil {
		g -= c.inj(ts.t) - c.inj0
	}
	if r := ts.rhoV[c.v]; ts.d != 0 && r != 0 {
		g += r * (u - ts.zU[c.v]) / ts.d
		du += r / ts.d
	}
	return g, du
}

func (c *stageCond) Monotone(u float64, d []float64) error { return c.inner.Monotone(u, d) }

// put sets the system's state to the flat field u, with the fixed nodes at
// their values at time t.
func (ts *newtonStepper) put(u []float64, t float64) {
	s := ts.sys
	for v := range ts.orig.Nodes {
		if s.unk[v] < 0 {
			s.U[v] = nodeValueAt(&ts.orig.Nodes[v], t)
		}
	}
	for r, v := range s.nodes {
		s.U[v] = u[r]
	}
	copy(s.w, u[ts.m:])
}

// get copies the system's state into the flat u.
func (ts *newtonStepper) get(u []float64) {
	s := ts.sys
	for r, v := range s.nodes {
		u[r] = s.U[v]
	}
	copy(u[ts.m:], s.w)
}

// setZ sets z of a stage from the flat z (fixed nodes: their value at the
// stage's time, so that their time term vanishes).
func (ts *newtonStepper) setZ(z []float64) {
	s := ts.sys
	for v := range ts.orig.Nodes {
		if s.unk[v] < 0 {
			ts.zU[v] = nodeValueAt(&ts.orig.Nodes[v], ts.t)
		}
	}
	for r, v := range s.nodes {
		ts.zU[v] = z[r]
	}
	copy(ts.zW, z[ts.m:])
}

// initial sets u(0) as fvSystem.initial does, in the stepper's layout.
func (ts *newtonStepper) initial(u []float64) (nodeVals []float64) {
	net, s := ts.orig, ts.sys
	nodeVals = make([]float64, len(net.Nodes))
	for v := range net.Nodes {
		if nd := &net.Nodes[v]; nd.Initial != nil {
			nodeVals[v] = *nd.Initial
		}
	}
	for r, v := range s.nodes {
		u[r] = nodeVals[v]
	}
	setInitialInterior(ts.net, s.n, s.off, nil, nodeVals, u[ts.m:])
	for v := range net.Nodes {
		if s.unk[v] < 0 {
			nodeVals[v] = nodeValueAt(&net.Nodes[v], 0)
		}
	}
	return nodeVals
}

// vertexValue returns the value of the flat field u at grid vertex i of
// edge e at time t.
func (ts *newtonStepper) vertexValue(u []float64, e, i int, t float64) float64 {
	s := ts.sys
	ed := &ts.net.Edges[e]
	n := s.n[e]
	node := -1
	switch i {
	case 0:
		node = ed.From
	case n:
		node = ed.To
	}
	if node < 0 {
		return u[ts.m+s.off[e]+i-1]
	}
	return ts.nodeValue(u, node, t)
}

func (ts *newtonStepper) nodeValue(u []float64, v int, t float64) float64 {
	if r := ts.sys.unk[v]; r >= 0 {
		return u[r]
	}
	return nodeValueAt(&ts.orig.Nodes[v], t)
}

// at returns the value of the flat field u at p (linear between grid
// vertices).
func (ts *newtonStepper) at(u []float64, p Point, t float64) float64 {
	if p.Edge < 0 {
		return ts.nodeValue(u, p.Node, t)
	}
	ed := &ts.net.Edges[p.Edge]
	n := ts.sys.n[p.Edge]
	h := ed.Length / float64(n)
	j := min(max(int(math.Floor(p.X/h)), 0), n-1)
	w := p.X/h - float64(j)
	return (1-w)*ts.vertexValue(u, p.Edge, j, t) + w*ts.vertexValue(u, p.Edge, j+1, t)
}

// edgeField returns the values of u along edge e at its grid vertices.
func (ts *newtonStepper) edgeField(u []float64, e int, t float64) []float64 {
	n := ts.sys.n[e]
	out := make([]float64, n+1)
	for i := range out {
		out[i] = ts.vertexValue(u, e, i, t)
	}
	return out
}

// stageFailure reports whether err is a failure of a stage that a shorter
// step may cure (a law error or a singular matrix at an iterate) rather
// than one to pass on (cancellation, and anything else).
func stageFailure(err error) bool {
	var le *LawError
	var se *SingularNodeError
	return errors.As(err, &le) || errors.As(err, &se)
}

// stage solves the stage problem ending at τ with the given d and flat z,
// starting from y and leaving the solution there. It reports false when
// Newton's method did not converge (y is then unspecified).
func (ts *newtonStepper) stage(y []float64, tau, d float64, z []float64) (bool, error) {
	ts.t, ts.d = tau, d
	ts.setZ(z)
	ts.put(y, tau)
	res, err := ts.sys.newton(&ts.nset)
	if res != nil {
		ts.iters += res.Iterations
		if res.Iterations > 0 {
			ts.facD = d
		}
	}
	if err != nil {
		if stageFailure(err) {
			ts.lastErr = err
			return false, nil
		}
		return false, err
	}
	if res.Status != Converged {
		return false, nil
	}
	ts.get(y)
	return true, nil
}

// initialRate sets vN to ∂_t u at t = 0 for the flat field u: at grid
// vertices from the residual of the steady problem (ρ v = E), at balance
// nodes by a secant iteration on the node's balance with its half cells'
// time terms (each node's balance involves its own rate only). It also
// records whether the laws are monotone in u at u.
func (ts *newtonStepper) initialRate(u []float64) error {
	s := ts.sys
	net := ts.net
	ts.t, ts.d = 0, 0
	ts.put(u, 0)
	if err := s.eval(s.U, s.w); err != nil {
		return fmt.Errorf("the initial field: %w", err)
	}
	ts.steadyNote = s.nonMono
	for e := range net.Edges {
		n, o := s.n[e], s.off[e]
		h := net.Edges[e].Length / float64(n)
		for i := 1; i < n; i++ {
			// ires is the row in flux sign: −h·(ρ v) at v = 0.
			ts.vN[ts.m+o+i-1] = -s.ires[o+i-1] / (h * ts.rhoAt(e, float64(i)*h))
		}
	}
	if ts.m == 0 {
		return nil
	}
	// Node rates. With d = 1 and z = y − v at a node its balance is
	// R(v) = G(y, d(v)) + ρ_v v, affine in v for loss laws and quasilinear
	// edges (one secant step), smooth in general.
	r0 := make([]float64, ts.m)
	mass := make([]float64, ts.m)
	vPrev := make([]float64, ts.m)
	rPrev := make([]float64, ts.m)
	vCur := make([]float64, ts.m)
	done := make([]bool, ts.m)
	for r, v := range s.nodes {
		r0[r] = s.nres[v]
		mass[r] = ts.rhoV[v]
		for _, end := range net.Incident(v) {
			ed := &net.Edges[end.Edge]
			x := 0.0
			if end.Side == 1 {
				x = ed.Length
			}
			mass[r] += ts.rhoAt(end.Edge, x) * ed.Length / float64(2*s.n[end.Edge])
		}
		rPrev[r] = r0[r]
		switch {
		case r0[r] == 0 || !(mass[r] > 0):
			done[r] = true // at rest, or no storage (an algebraic node)
		default:
			vCur[r] = -r0[r] / mass[r]
		}
	}
	copy(ts.zW, s.w)
	ts.d = 1
	for it := 0; it < 60; it++ {
		busy := false
		for r, v := range s.nodes {
			ts.zU[v] = s.U[v] - vCur[r]
			busy = busy || !done[r]
		}
		for v := range net.Nodes {
			if s.unk[v] < 0 {
				ts.zU[v] = s.U[v]
			}
		}
		if !busy {
			break
		}
		if err := s.eval(s.U, s.w); err != nil {
			return fmt.Errorf("the initial rate of change at the nodes: %w", err)
		}
		for r, v := range s.nodes {
			if done[r] {
				continue
			}
			rc := s.nres[v]
			slope := (rc - rPrev[r]) / (vCur[r] - vPrev[r])
			if rc == 0 {
				done[r] = true
				continue
			}
			if slope == 0 || !finite(slope) {
				// The balance does not involve the node's rate (no
				// storage that reaches it): an algebraic node, whose
				// rate is not used.
				vCur[r], done[r] = 0, true
				continue
			}
			next := vCur[r] - rc/slope
			vPrev[r], rPrev[r] = vCur[r], rc
			vCur[r] = next
			if math.Abs(next-vPrev[r]) <= 1e-13*math.Abs(next) {
				done[r] = true
			}
		}
	}
	copy(ts.vN, vCur)
	ts.d = 0
	return nil
}

// step advances the flat u by h from t: the TR stage into ug, the BDF2
// stage into u1, the filtered error estimate into est. tolN is the
// stages' Newton tolerance. It reports false when a stage's Newton
// iteration did not converge.
func (ts *newtonStepper) step(u, ug, u1, est []float64, t, h, tolN float64) (bool, error) {
	g := trGamma
	d := g * h / 2
	ts.nset.Tol = tolN
	z := ts.z
	for i := range z {
		z[i] = u[i] + d*ts.vN[i]
	}
	copy(ug, u)
	if ok, err := ts.stage(ug, t+g*h, d, z); !ok || err != nil {
		return false, err
	}
	for i := range z {
		ts.vG[i] = (ug[i] - z[i]) / d
	}
	c := 1 / (g * (2 - g))
	q := (1 - g) * (1 - g)
	for i := range z {
		z[i] = c * (ug[i] - q*u[i])
		u1[i] = ug[i] + (ug[i]-u[i])*(1-g)/g
	}
	if ok, err := ts.stage(u1, t+h, d, z); !ok || err != nil {
		return false, err
	}
	for i := range z {
		ts.v1[i] = (u1[i] - z[i]) / d
	}
	k := (-3*g*g + 4*g - 2) / (12 * (2 - g))
	for i := range ts.raw {
		ts.raw[i] = 2 * k * h * (ts.vN[i]/g - ts.vG[i]/(g*(1-g)) + ts.v1[i]/(1-g))
	}
	if err := ts.estimate(est); err != nil {
		if stageFailure(err) {
			ts.lastErr = err
			return false, nil
		}
		return false, err
	}
	return true, nil
}

// accept makes the rate at the end of the last step the rate at its start.
func (ts *newtonStepper) accept() { ts.vN, ts.v1 = ts.v1, ts.vN }

// estimate filters the raw error estimate ts.raw (in rate units) through
// the stage's Jacobian, as the linear stepper filters through M + (γh/2)K:
// est = (∂R/∂y)⁻¹ [R(y, z − raw) − R(y, z)] with R the stage residual at the
// converged BDF2 stage (a first-order change in z, exact where the time
// term enters linearly). The Jacobian is that of the stage's last Newton
// iteration — its node system's factor, and the grid interiors' elimination
// at (y, z − raw), where the second residual is evaluated — as ode codes
// reuse Jacobians for their estimates: the differences are of the size of
// the last Newton step (which met the tolerance) and, through the half
// cells of equation edges, of raw, immaterial for an estimate. Only when
// that iteration took no step (its factor is of an earlier step size) is
// the node system factored afresh.
func (ts *newtonStepper) estimate(est []float64) error {
	s := ts.sys
	for r, v := range s.nodes {
		ts.r0N[r] = s.nres[v]
	}
	copy(ts.r0I, s.ires)
	for r, v := range s.nodes {
		ts.zU[v] -= ts.raw[r]
	}
	for i := range ts.zW {
		ts.zW[i] -= ts.raw[ts.m+i]
	}
	defer func() {
		for r, v := range s.nodes {
			ts.zU[v] += ts.raw[r]
		}
		for i := range ts.zW {
			ts.zW[i] += ts.raw[ts.m+i]
		}
	}()
	if err := s.eval(s.U, s.w); err != nil {
		return err
	}
	for r, v := range s.nodes {
		ts.bN[v] = s.nres[v] - ts.r0N[r]
	}
	bI := ts.r0I // reused: R(y, z − raw) − R(y, z) inside
	for i := range bI {
		bI[i] = s.ires[i] - bI[i]
	}
	if ts.facD != ts.d {
		// The node system's factor is of another step size (the stage's
		// Newton iteration converged at its start): a new one.
		if err := s.prepare(s.U, s.w); err != nil {
			return err
		}
		ts.ests++
		if err := s.factor(); err != nil {
			return err
		}
		ts.facD = ts.d
	}
	dW := est[ts.m:]
	s.step(ts.dU, dW, ts.bN, bI, 1)
	for r, v := range s.nodes {
		est[r] = ts.dU[v]
	}
	return nil
}

// steady solves the steady problem with the data at time t by Newton's
// method from the flat u, into u.
func (ts *newtonStepper) steady(u []float64, t float64) error {
	ts.t, ts.d = t, 0
	ts.put(u, t)
	res, err := ts.sys.newton(&NonlinearSettings{MaxIter: 50, Tol: 1e-10, Context: ts.nset.Context})
	if err != nil {
		return err
	}
	if res.Status != Converged {
		return fmt.Errorf("Newton's method found no steady state (%s, scaled residual %.3g)", res.Status, res.Residual)
	}
	ts.get(u)
	return nil
}
