package graphpde

import (
	"errors"
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
	"github.com/ramify-dev/ramify/vertex"
)

// Transient problems with laws that depend on u: quasilinear edges
// (diffusivity a(x, u), decay c(x, u), source f(x, u, t)) and nonlinear node
// losses, stepped by the same TR-BDF2 with a Newton iteration in each stage
// (docs/time-and-spectrum.md §1). The grid is that of fvSystem; the flux
// through a cell is a(x_{j+½}, ū)(u_{j+1} − u_j)/h with ū the mean of the
// cell's end values (the two-point flux of the steady Newton solver), so
// that the scheme is the linear one when nothing depends on u.

// nlFV is an fvSystem with laws of u.
type nlFV struct {
	*fvSystem
	uLaw bool // some law depends on u
}

// needsNewton reports whether some law of net depends on u, or a
// diffusivity, drift or decay on t.
func needsNewton(net *Network) bool {
	for v := range net.Nodes {
		if net.Nodes[v].Nonlinear != nil {
			return true
		}
	}
	for e := range net.Edges {
		if l := net.Edges[e].Law; l != nil {
			for _, c := range []*Coef{l.A, l.B, l.C, l.F, l.Rho} {
				if c != nil && c.UsesU {
					return true
				}
			}
			// coefficients of t (other than the source, which the
			// linear steps take in their load) are evaluated at each
			// stage by the same path
			for _, c := range []*Coef{l.A, l.B, l.C, l.Rho} {
				if c != nil && c.UsesT {
					return true
				}
			}
			if l.Equation != nil {
				return true
			}
		}
	}
	return false
}

// checkNonlinearTransient names the first law that this (quasilinear)
// stepper does not handle: fully nonlinear equations, general node laws,
// drift that depends on u, capacity that depends on u or t, and a
// diffusivity of u together with drift or given end weights. Networks with
// such laws are stepped by the general stepper (evolve_newton.go), which
// refuses only a capacity of u (checkGeneralTransient).
func checkNonlinearTransient(net *Network) error {
	for v := range net.Nodes {
		if nl := net.Nodes[v].Nonlinear; nl != nil && nl.Loss == nil {
			return &ModelError{Object: "node", ID: net.Nodes[v].ID, Reason: "has a general nonlinear node law, which evolve does not step yet (a loss law it does)"}
		}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		l := ed.Law
		if l == nil {
			continue
		}
		bad := func(field, why string) error {
			return &ModelError{Object: "edge", ID: ed.ID, Field: field, Reason: why + ", which evolve does not step yet"}
		}
		switch {
		case l.Equation != nil:
			return bad("equation", "is a fully nonlinear equation")
		case l.B != nil && l.B.UsesU:
			return bad("drift", "depends on u")
		case l.Rho != nil && (l.Rho.UsesU || l.Rho.UsesT):
			return bad("capacity", "depends on u or t")
		case l.A != nil && l.A.UsesU && (ed.B != 0 || varies(l.B) || (ed.Profile != nil && ed.Profile.B != nil)):
			return bad("diffusivity", "depends on u on an edge with drift")
		case l.A != nil && l.A.UsesU && (ed.Weight[0] != 0 || ed.Weight[1] != 0):
			return bad("weights", "are given on an edge whose diffusivity depends on u")
		}
	}
	return nil
}

// coefAtU returns a, ∂a/∂u, c, ∂c/∂u, f, ∂f/∂u of edge ed at (x, u, t).
func coefAtU(ed *Edge, x, u, t float64) (a, da, c, dc, f, df float64) {
	a, _, c, f, _ = ed.Coeffs(x)
	if l := ed.Law; l != nil {
		if l.A != nil {
			a, da = l.A.Fn(x, u, t)
		}
		if l.C != nil {
			c, dc = l.C.Fn(x, u, t)
		}
		if l.F != nil {
			f, df = l.F.Fn(x, u, t)
		}
	}
	return
}

// slot returns the position of (i, j) in the compressed rows.
func (s *odeRows) slot(i, j int) int {
	for p := s.rp[i]; p < s.rp[i+1]; p++ {
		if s.ci[p] == j {
			return p
		}
	}
	panic(fmt.Sprintf("graphpde: no slot (%d, %d)", i, j))
}

// eval sets g = −K(u) u + r(u, t), the right-hand side of M u̇ = g, and,
// when jac is not nil, jac = ∂g/∂u in the slots of the compressed rows.
func (s *nlFV) eval(u []float64, t float64, g, jac []float64) {
	net := s.net
	clear(g)
	if jac != nil {
		clear(jac)
	}
	val := func(row, node int) float64 {
		if row >= 0 {
			return u[row]
		}
		return nodeValueAt(&net.Nodes[node], t)
	}
	// addJ adds v to the Jacobian's entry (i, j), at its slot in the
	// grid's pattern (see gridPattern).
	addJ := func(i, j, slot int, v float64) {
		if jac != nil && i >= 0 && j >= 0 {
			jac[slot] += v
		}
	}
	dslot := func(i int) int {
		if i < 0 {
			return -1
		}
		return s.pat.dslot[i]
	}
	for v := range net.Nodes {
		i := s.unk[v]
		if i < 0 {
			continue
		}
		nd := &net.Nodes[v]
		l := nd.Law
		inj := l.Inject
		if tm := nd.Time; tm != nil && tm.Inject != nil {
			inj = tm.Inject(t)
		}
		g[i] += inj - l.Leak*u[i]
		addJ(i, i, dslot(i), -l.Leak)
		if nl := nd.Nonlinear; nl != nil && nl.Loss != nil {
			lv, ld := nl.Loss(u[i])
			g[i] -= lv
			addJ(i, i, dslot(i), -ld)
		}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		n := s.cells[e]
		h := ed.Length / float64(n)
		a0, _, _, _, _, _ := coefAtU(ed, 0, val(s.vertexUnknown(e, 0)), t)
		aL, _, _, _, _, _ := coefAtU(ed, ed.Length, val(s.vertexUnknown(e, n)), t)
		s0, sL := 1.0, 1.0
		if ed.Weight[0] != 0 {
			s0 = ed.Weight[0] / a0
		}
		if ed.Weight[1] != 0 {
			sL = ed.Weight[1] / aL
		}
		scale := func(i int) float64 {
			if i == n {
				return sL
			}
			return s0
		}
		// cells
		for j := 0; j < n; j++ {
			rl, nl := s.vertexUnknown(e, j)
			rr, nr := s.vertexUnknown(e, j+1)
			ul, ur := val(rl, nl), val(rr, nr)
			xm := (float64(j) + 0.5) * h
			a, da, _, _, _, _ := coefAtU(ed, xm, 0.5*(ul+ur), t)
			_, b, _, _, _ := ed.Coeffs(xm)
			if l := ed.Law; l != nil && l.B != nil {
				b, _ = l.B.Fn(xm, 0, t)
			}
			p := b * h / a
			R, L := a/h*sgB(-p), a/h*sgB(p)
			du := ur - ul
			// row l: + s·R·du; row r: − s·L·du  (da only where b = 0: R = L = a/h)
			dR := 0.5 * da / h
			sl := s.pat.eslot[s.base[e]+j]
			if rl >= 0 {
				sc := scale(j)
				g[rl] += sc * R * du
				addJ(rl, rl, dslot(rl), sc*(-R+dR*du))
				addJ(rl, rr, sl[0], sc*(R+dR*du))
			}
			if rr >= 0 {
				sc := scale(j + 1)
				g[rr] -= sc * L * du
				addJ(rr, rl, sl[1], -sc*(-L+dR*du))
				addJ(rr, rr, dslot(rr), -sc*(L+dR*du))
			}
		}
		// vertex shares: m_i (f − c u)
		var pPrev float64
		for i := 0; i <= n; i++ {
			row, _ := s.vertexUnknown(e, i)
			var p float64
			if i < n {
				xm := (float64(i) + 0.5) * h
				a, _, _, _, _, _ := coefAtU(ed, xm, 0, t)
				_, b, _, _, _ := ed.Coeffs(xm)
				if l := ed.Law; l != nil && l.B != nil {
					b, _ = l.B.Fn(xm, 0, t)
				}
				if b != 0 {
					p = b * h / a
				}
			}
			if row >= 0 {
				m := vertexShare(i, n, h, pPrev, p)
				x := float64(i) * h
				_, _, c, dc, f, df := coefAtU(ed, x, u[row], t)
				sc := scale(i)
				g[row] += sc * m * (f - c*u[row])
				addJ(row, row, dslot(row), sc*m*(df-c-dc*u[row]))
			}
			pPrev = p
		}
	}
}

// stageNewton solves M y − d·g(y, t) = rhs for y (y holds the start on
// entry) by Newton's method with the matrix M − d·J, factored afresh at
// every iteration. It stops when the weighted norm of the update is below
// conv; it reports false when that takes more than 12 iterations.
func (ig *trbdf2) stageNewton(y, rhs []float64, t, d float64, wt func(i int) float64, conv float64) (bool, error) {
	nl := ig.nl
	rs := ig.rs
	n := rs.n
	for it := 0; it < 12; it++ {
		nl.eval(y, t, ig.tm, ig.jac)
		val := ig.nlMat.Values()
		for i := 0; i < n; i++ {
			for p := rs.rp[i]; p < rs.rp[i+1]; p++ {
				val[p] = -d * ig.jac[p]
				if rs.ci[p] == i {
					val[p] += rs.M[i]
				}
			}
			ig.rn[i] = rhs[i] - (rs.M[i]*y[i] - d*ig.tm[i])
		}
		ig.facts++
		if err := ig.nlFactor(); err != nil {
			return false, err
		}
		copy(ig.g1, ig.rn) // (g1 is free until the stage is done)
		ig.nlSolve(ig.rn, ig.g1)
		norm := 0.0
		for i := range y {
			y[i] += ig.rn[i]
			q := ig.rn[i] / wt(i)
			norm += q * q
		}
		norm = math.Sqrt(norm / float64(max(n, 1)))
		if math.IsNaN(norm) {
			return false, nil
		}
		if norm <= conv {
			return true, nil
		}
	}
	return false, nil
}

// stepNL is step for laws of u: the same stages, each solved by Newton, and
// the same filtered error estimate (with the last stage's matrix). It
// reports false when a stage's Newton iteration did not converge.
func (ig *trbdf2) stepNL(u, ug, u1, est []float64, t, h float64, wt func(i int) float64) (bool, error) {
	rs := ig.rs
	g := trGamma
	d := g * h / 2
	M := rs.M
	// TR stage: M u_γ − d g(u_γ) = M u_n + d g_n
	for i := range ig.rhs {
		ig.rhs[i] = M[i]*u[i] + d*ig.g0[i]
		ug[i] = u[i]
	}
	if ok, err := ig.stageNewton(ug, ig.rhs, t+g*h, d, wt, 0.01); !ok || err != nil {
		return false, err
	}
	ig.nl.eval(ug, t+g*h, ig.gg, nil)
	// BDF2 stage: M u_{n+1} − d g(u_{n+1}) = [M u_γ − (1−γ)² M u_n]/(γ(2−γ))
	c := 1 / (g * (2 - g))
	q := (1 - g) * (1 - g)
	for i := range ig.rhs {
		ig.rhs[i] = c * M[i] * (ug[i] - q*u[i])
		u1[i] = ug[i] + (ug[i]-u[i])*(1-g)/g // linear extrapolation
	}
	if ok, err := ig.stageNewton(u1, ig.rhs, t+h, d, wt, 0.01); !ok || err != nil {
		return false, err
	}
	ig.nl.eval(u1, t+h, ig.g1, nil)
	k := (-3*g*g + 4*g - 2) / (12 * (2 - g))
	for i := range ig.rhs {
		ig.rhs[i] = 2 * k * h * (ig.g0[i]/g - ig.gg[i]/(g*(1-g)) + ig.g1[i]/(1-g))
	}
	ig.nlSolve(est, ig.rhs)
	return true, nil
}

// setupNL prepares the Newton matrices of ig for the system nl.
func (ig *trbdf2) setupNL(nl *nlFV) {
	ig.nl = nl
	ig.jac = make([]float64, len(nl.ci))
	ig.nlMat = nodesys.NewMatrixPattern[float64](nl.n, nl.rp, nl.ci)
	ig.nlFac = nodesys.NewFactor[float64](nil)
	net, unk, off, cells := nl.layout()
	ig.nlCond = newCondensed(&nl.odeRows, net, unk, off, cells)
}

// nlFactor factors the Newton matrix in ig.nlMat's values (condensed onto
// the nodes like the linear steps).
func (ig *trbdf2) nlFactor() error {
	if ig.nlCond != nil {
		return ig.nlCond.factor(ig.nlMat.Values())
	}
	return ig.nlFac.Factorize(ig.nlMat)
}

// nlSolve solves with the Newton matrix; dst must not alias b.
func (ig *trbdf2) nlSolve(dst, b []float64) {
	if ig.nlCond != nil {
		ig.nlCond.solve(ig.nlMat.Values(), dst, b)
		return
	}
	ig.nlFac.SolveTo(dst, b)
}

// steadyNL solves g(u, t) = 0 by Newton from u (overwritten), for the
// crossing levels of a network with laws of u.
func (ig *trbdf2) steadyNL(u []float64, t float64) error {
	rs := ig.rs
	n := rs.n
	for it := 0; it < 50; it++ {
		ig.nl.eval(u, t, ig.tm, ig.jac)
		val := ig.nlMat.Values()
		for i := 0; i < n; i++ {
			for p := rs.rp[i]; p < rs.rp[i+1]; p++ {
				val[p] = -ig.jac[p]
			}
		}
		if err := ig.nlFactor(); err != nil {
			return err
		}
		ig.nlSolve(ig.rn, ig.tm)
		big, size := 0.0, 1.0
		for i := range u {
			u[i] += ig.rn[i]
			big = math.Max(big, math.Abs(ig.rn[i]))
			size = math.Max(size, math.Abs(u[i]))
		}
		if math.IsNaN(big) {
			break
		}
		if big <= 1e-12*size {
			return nil
		}
	}
	return errors.New("Newton's method found no steady state for the crossing levels")
}

var _ = vertex.Fixed
