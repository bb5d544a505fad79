package graphpde

import (
	"fmt"
	"math"
)

// Grid elements of edges with laws (docs/nonlinear.md, docs/discretisation.md).
//
// Quasilinear edge, ∂_x(a(x,u) ∂_x u) + b(x,u) ∂_x u − c(x,u) u + f(x,u) = 0:
// vertices x_i = i·h, faces at (j+½)h with ū = (u_j + u_{j+1})/2 and the
// exponentially fitted (Scharfetter–Gummel) coefficients
//
//	R_j = (a/h) B(−P),  L_j = (a/h) B(P),  P = b h / a,  B(P) = P/(eᴾ − 1),
//
// (R = L = a/h without drift), and the balance of vertex i
//
//	G_i = R_i (u_{i+1} − u_i) − L_{i−1} (u_i − u_{i−1}) + h (f_i − c_i u_i) = 0.
//
// It is monotone (non-negative neighbour coefficients) at any cell Péclet
// number, conservative, and second order for smooth coefficients. The nodes
// own the end half cells:
//
//	a(0) u'(0) = R_0 (u_1 − U0) + (h/2)(f_0 − c_0 U0),
//	a(L) u'(L) = L_{n−1} (UL − u_{n−1}) − (h/2)(f_n − c_n UL).
//
// Fully nonlinear edge, E(x, u, ux, uxx) = 0 (generator sign, ∂E/∂uxx > 0):
// at vertex i, uxx by the central second difference and ux by the central
// difference where |∂E/∂ux|·h ≤ 2 ∂E/∂uxx (then the scheme is monotone and
// second order), by the one-sided difference towards the side that ∂E/∂ux
// points to elsewhere (monotone, first order); G_i = h·E. The end
// derivative comes from the equation on the node's half cell: with
// s = (u_1 − U0)/h, u'(0) = s − (h/2) X₀ where X₀ solves
// E(0, U0, s − (h/2)X₀, X₀) = 0 (Newton in X₀; u'(L) likewise), which is
// second order; where the half cell is not monotone (h·∂E/∂ux ≥ ∂E/∂uxx)
// u'(0) = s.
//
// Rows are stored in flux sign: residual −G_i and the Jacobian of −G_i, whose
// diagonal is positive and off-diagonals are ≤ 0 for a monotone law.

// bernoulliD is B'(P) for B(P) = P/(eᴾ − 1): B'(P) = (B(P)/P)(1 − B(−P)),
// with a series near 0.
func bernoulliD(p float64) float64 {
	if math.Abs(p) < 0.1 {
		p2 := p * p
		return -0.5 + p/6 - p*p2/180 + p*p2*p2/5040
	}
	return sgB(p) / p * (1 - sgB(-p))
}

// lawCoef evaluates coefficient c at (x, u), or returns the constant k.
func lawCoef(c *Coef, x, u, k float64) (v, dv float64) {
	if c == nil {
		return k, 0
	}
	return c.Fn(x, u, 0)
}

// coefA returns the diffusivity of a quasilinear edge and its u-derivative.
func (s *nlSystem) coefA(ed *Edge, x, u float64) (float64, float64) {
	a0, _, _, _, _ := ed.Coeffs(x)
	var l *Coef
	if ed.Law != nil {
		l = ed.Law.A
	}
	return lawCoef(l, x, u, a0)
}

// quasiCoefs returns a, b, c, f and their u-derivatives at (x, u).
func quasiCoefs(ed *Edge, x, u float64) (a, da, b, db, c, dc, f, df float64) {
	a0, b0, c0, f0, _ := ed.Coeffs(x)
	l := ed.Law
	a, da = lawCoef(l.A, x, u, a0)
	b, db = lawCoef(l.B, x, u, b0)
	c, dc = lawCoef(l.C, x, u, c0)
	f, df = lawCoef(l.F, x, u, f0)
	return
}

func edgeLawError(ed *Edge, x, u float64, q string, v float64, want, why string) *LawError {
	if !finite(v) && ed.Law != nil {
		// A coefficient compiled from an expression names the part of it
		// that is not finite there.
		var c *Coef
		switch q {
		case "diffusivity":
			c = ed.Law.A
		case "drift":
			c = ed.Law.B
		}
		if c != nil && c.Why != nil {
			if w := c.Why(x, u, 0); w != "" {
				why = w
			}
		}
	}
	return &LawError{Object: "edge", ID: ed.ID, X: x, U: u, Quantity: q, Value: v, Want: want, Why: why}
}

// quasiFace holds the fitted coefficients of a face and their derivatives in
// either adjacent vertex value (the same for both: ū is their mean).
type quasiFace struct{ r, l, dr, dl float64 }

func (s *nlSystem) face(ed *Edge, j int, h, uj, uk float64) (quasiFace, error) {
	x := (float64(j) + 0.5) * h
	ub := 0.5 * (uj + uk)
	a, da, b, db, _, _, _, _ := quasiCoefs(ed, x, ub)
	if !(a > 0) || math.IsInf(a, 0) {
		return quasiFace{}, edgeLawError(ed, x, ub, "diffusivity", a, "> 0 and finite", "the equation is not elliptic there")
	}
	if !finite(b) || !finite(da) || !finite(db) {
		return quasiFace{}, edgeLawError(ed, x, ub, "drift", b, "finite", "")
	}
	if b == 0 && db == 0 {
		return quasiFace{r: a / h, l: a / h, dr: 0.5 * da / h, dl: 0.5 * da / h}, nil
	}
	p := b * h / a
	bm, bp := sgB(-p), sgB(p)
	bdm, bdp := bernoulliD(-p), bernoulliD(p)
	ra, rb := (bm+p*bdm)/h, -bdm
	la, lb := (bp-p*bdp)/h, bdp
	return quasiFace{r: a / h * bm, l: a / h * bp, dr: 0.5 * (ra*da + rb*db), dl: 0.5 * (la*da + lb*db)}, nil
}

// quasiRun is the state of one quasilinear edge's evaluation between its
// from end (quasiBegin) and its to end (quasiEnd).
type quasiRun struct {
	ed           *Edge
	e, n         int
	h            float64
	in           []float64
	react        func(x, u float64) (float64, float64, error)
	plain, cface bool
	cf, prev     quasiFace
	dPrev        float64
	tx           elim
}

// evalQuasi evaluates the interior rows and the end derivatives of
// quasilinear edge e at end values U0, UL and interior values w.
func (s *nlSystem) evalQuasi(e int, U0, UL float64, w []float64) error {
	q, err := s.quasiBegin(e, U0, UL, w)
	if err != nil {
		return err
	}
	ed, n, h, in, tx := q.ed, q.n, q.h, q.in, &q.tx
	l := ed.Law
	prev, dPrev, cf, react := q.prev, q.dPrev, q.cf, q.react
	if q.cface && !s.keepRows {
		// The common case in a fast loop: faces computed once, the
		// elimination inline with its state in registers.
		var ss float64
		var cC, fC *Coef // the reaction's laws, read directly where there is no profile
		if q.plain {
			cC, fC = l.C, l.F
		}
		if prev, dPrev, ss, err = s.quasiConstFaces(e, tx, react, q.plain, cC, fC, cf, dPrev, h, in, UL); err != nil {
			return err
		}
		s.sumsq += ss
	} else {
		for i := 1; i < n; i++ {
			ui, un := in[i-1], UL
			if i < n-1 {
				un = in[i]
			}
			cur := cf
			if !q.cface {
				if cur, err = s.face(ed, i, h, ui, un); err != nil {
					return err
				}
			}
			dCur := un - ui
			g, dg, err := react(float64(i)*h, ui)
			if err != nil {
				return err
			}
			G := cur.r*dCur - prev.l*dPrev + h*g
			s.sumsq += G * G
			if !finite(G) {
				return edgeLawError(ed, float64(i)*h, ui, "balance", G, "finite", "")
			}
			if !tx.add(i-1, -(prev.l - prev.dl*dPrev), -(-cur.r + cur.dr*dCur - prev.l - prev.dl*dPrev + h*dg),
				-(cur.r + cur.dr*dCur), -G, ui) {
				return singularPivot(ed.ID, float64(i)*h, ui, 0)
			}
			prev, dPrev = cur, dCur
		}
	}
	q.prev, q.dPrev = prev, dPrev
	return s.quasiEnd(&q, UL)
}

// quasiBegin starts the evaluation of quasilinear edge e: the first face,
// the from end's derivative (into s.end[e][0]) and the elimination's start.
func (s *nlSystem) quasiBegin(e int, U0, UL float64, w []float64) (quasiRun, error) {
	ed := &s.net.Edges[e]
	n, o := s.n[e], s.off[e]
	h := ed.Length / float64(n)
	in := w[o : o+n-1]
	l := ed.Law
	plain := ed.Profile == nil
	react := func(x, u float64) (g, dg float64, err error) {
		var c, dc, f, df float64
		if plain {
			c, dc = lawCoef(l.C, x, u, ed.C)
			f, df = lawCoef(l.F, x, u, ed.F)
		} else {
			_, _, _, _, c, dc, f, df = quasiCoefs(ed, x, u)
		}
		g, dg = f-c*u, df-c-u*dc
		if !finite(g) || !finite(dg) {
			return 0, 0, edgeLawError(ed, x, u, "f − c·u", g, "finite", "")
		}
		if dg > 0 && s.nonMono == "" {
			s.noteNonMono(fmt.Sprintf("edge %q at x = %s, u = %s: ∂(f − c·u)/∂u = %s > 0", ed.ID, fmtG(x), fmtG(u), fmtG(dg)))
		}
		return g, dg, nil
	}
	q := quasiRun{ed: ed, e: e, n: n, h: h, in: in, react: react, plain: plain,
		// Faces whose a and b are constants are computed once.
		cface: plain && l.A == nil && l.B == nil}
	u1 := gridVertex(n, U0, UL, in)(1)
	var err error
	if q.prev, err = s.face(ed, 0, h, U0, u1); err != nil {
		return q, err
	}
	q.cf = q.prev
	q.dPrev = u1 - U0
	// From end.
	g, dg, err := react(0, U0)
	if err != nil {
		return q, err
	}
	a, da := s.coefA(ed, 0, U0)
	if !(a > 0) {
		return q, edgeLawError(ed, 0, U0, "diffusivity", a, "> 0", "the equation is not elliptic there")
	}
	prev, dPrev := q.prev, q.dPrev
	flux := prev.r*dPrev + 0.5*h*g
	fU := prev.dr*dPrev - prev.r + 0.5*h*dg
	fA := prev.r + prev.dr*dPrev
	el := endLin{d: flux / a, dSelf: fU/a - flux*da/(a*a), dAdj: fA / a, w: ed.Weight[0]}
	if el.w == 0 {
		el.w, el.dw = a, da
	}
	s.end[e][0] = el
	q.tx = s.newElim(e)
	return q, nil
}

// quasiEnd finishes the evaluation of a quasilinear edge after its interior
// loop left the last face and difference in q: the elimination's results
// and the to end's derivative (into s.end[e][1]).
func (s *nlSystem) quasiEnd(q *quasiRun, UL float64) error {
	ed, e, h, L := q.ed, q.e, q.h, q.ed.Length
	prev, dPrev := q.prev, q.dPrev
	q.tx.finish(e)
	// To end.
	g, dg, err := q.react(L, UL)
	if err != nil {
		return err
	}
	a, da := s.coefA(ed, L, UL)
	if !(a > 0) {
		return edgeLawError(ed, L, UL, "diffusivity", a, "> 0", "the equation is not elliptic there")
	}
	flux := prev.l*dPrev - 0.5*h*g // a(L) u'(L)
	fU := prev.dl*dPrev + prev.l - 0.5*h*dg
	fA := prev.dl*dPrev - prev.l
	el := endLin{d: -flux / a, dSelf: -(fU/a - flux*da/(a*a)), dAdj: -fA / a, w: ed.Weight[1]}
	if el.w == 0 {
		el.w, el.dw = a, da
	}
	s.end[e][1] = el
	return nil
}

// quasiConstFaces runs the interior loop of evalQuasi for an edge whose
// faces are constant (cf) and whose rows are not kept: the same rows and the
// same elimination as elim.add, written out so that the sweep's state stays
// in registers. It returns the last face, its difference and Σ G².
func (s *nlSystem) quasiConstFaces(e int, tx *elim, react func(x, u float64) (float64, float64, error),
	direct bool, cC, fC *Coef, cf quasiFace, dPrev, h float64, in []float64, UL float64) (quasiFace, float64, float64, error) {
	ed := &s.net.Edges[e]
	n := s.n[e]
	al, b0, bs := tx.al, tx.b0, tx.bs
	alpha, beta0, betas := tx.alpha, tx.beta0, tx.betas
	prod, p0, ps, worst, umax := tx.prod, tx.p0, tx.ps, tx.worst, tx.umax
	neg := 0
	ss := 0.0
	c0, f0 := ed.C, ed.F
	// Rows in flux sign: a δu_{i−1} + b δu_i + c δu_{i+1} = −G with
	// a = −L, c = −R (constant faces) and b = R + L − h·∂g/∂u.
	ra, rc := -cf.l, -cf.r
	rb0 := cf.r + cf.l
	for i := 1; i < n; i++ {
		ui, un := in[i-1], UL
		if i < n-1 {
			un = in[i]
		}
		dCur := un - ui
		var g, dg float64
		if direct {
			// react without the closure: c and f are constants or laws.
			x := float64(i) * h
			c, dc, f, df := c0, 0.0, f0, 0.0
			if cC != nil {
				c, dc = cC.Fn(x, ui, 0)
			}
			if fC != nil {
				f, df = fC.Fn(x, ui, 0)
			}
			g, dg = f-c*ui, df-c-ui*dc
			if (g-g)+(dg-dg) != 0 || (dg > 0 && s.nonMono == "") {
				// Not finite, or the first place that is not monotone:
				// react reports or notes it.
				if _, _, err := react(x, ui); err != nil {
					return cf, 0, 0, err
				}
			}
		} else {
			var err error
			if g, dg, err = react(float64(i)*h, ui); err != nil {
				return cf, 0, 0, err
			}
		}
		G := cf.r*dCur - cf.l*dPrev + h*g
		ss += G * G
		b := rb0 - h*dg
		p := b + ra*alpha
		if p == 0 || (p-p)+(G-G) != 0 { // a zero pivot, or p or G not finite
			if !finite(G) {
				return cf, 0, 0, edgeLawError(ed, float64(i)*h, ui, "balance", G, "finite", "")
			}
			return cf, 0, 0, singularPivot(ed.ID, float64(i)*h, ui, 0)
		}
		if p < 0 {
			neg++
		}
		ip := 1 / p
		alpha = -rc * ip
		beta0 = -ra * beta0 * ip
		betas = (G - ra*betas) * ip
		al[i-1], b0[i-1], bs[i-1] = alpha, beta0, betas
		p0 += prod * beta0
		ps += prod * betas
		prod *= alpha
		if ar, ab := math.Abs(G), math.Abs(b); ar > worst*ab {
			worst = ratio(ar, ab)
		}
		if au := math.Abs(ui); au > umax {
			umax = au
		}
		dPrev = dCur
	}
	tx.alpha, tx.beta0, tx.betas = alpha, beta0, betas
	tx.prod, tx.p0, tx.ps, tx.worst, tx.umax = prod, p0, ps, worst, umax
	s.negPivots += neg
	return cf, dPrev, ss, nil
}

// equation evaluates the edge equation and checks it.
func (s *nlSystem) equation(ed *Edge, x, u, p, X float64) (E, Eu, Ep, EX float64, err error) {
	E, Eu, Ep, EX = ed.Law.Equation.Fn(x, u, p, X)
	if !finite(E) || !finite(Eu) || !finite(Ep) || !finite(EX) {
		why := "with its derivatives"
		if w := ed.Law.Equation.Why; w != nil && w(x, u, p, X) != "" {
			why = w(x, u, p, X)
		}
		return 0, 0, 0, 0, edgeLawError(ed, x, u, "E", E, "finite", why)
	}
	if !(EX > 0) {
		return 0, 0, 0, 0, edgeLawError(ed, x, u, "∂E/∂uxx", EX, "> 0", "the equation is not elliptic there")
	}
	if Eu > 0 && s.nonMono == "" {
		s.noteNonMono(fmt.Sprintf("edge %q at x = %s, u = %s: ∂E/∂u = %s > 0", ed.ID, fmtG(x), fmtG(u), fmtG(Eu)))
	}
	return E, Eu, Ep, EX, nil
}

// schemeSide is the first difference of the scheme of an equation edge at
// an interior vertex, from ∂E/∂ux and ∂E/∂uxx at the central difference:
// 0 for the central difference (|∂E/∂ux|·h ≤ 2 ∂E/∂uxx), +1 for the forward
// one (∂E/∂ux > 0), −1 for the backward one. The secant network reads the
// field's derivative with the same rule.
func schemeSide(Ep, EX, h float64) int {
	switch {
	case math.Abs(Ep)*h <= 2*EX:
		return 0
	case Ep > 0:
		return 1
	}
	return -1
}

// evalEquation evaluates the interior rows and the end derivatives of the
// fully nonlinear edge e.
func (s *nlSystem) evalEquation(e int, U0, UL float64, w []float64) error {
	ed := &s.net.Edges[e]
	n, o := s.n[e], s.off[e]
	L := ed.Length
	h := L / float64(n)
	in := w[o : o+n-1]
	val := gridVertex(n, U0, UL, in)
	tx := s.newElim(e)
	for i := 1; i < n; i++ {
		x := float64(i) * h
		um, ui, up := val(i-1), in[i-1], val(i+1)
		X := (up - 2*ui + um) / (h * h)
		p := (up - um) / (2 * h)
		E, Eu, Ep, EX, err := s.equation(ed, x, ui, p, X)
		if err != nil {
			return err
		}
		var ga, gb, gc float64 // ∂(hE)/∂u_{i−1}, ∂u_i, ∂u_{i+1}
		switch schemeSide(Ep, EX, h) {
		case 0:
			ga, gb, gc = EX/h-Ep/2, h*Eu-2*EX/h, EX/h+Ep/2
		case 1:
			p = (up - ui) / h
			if E, Eu, Ep, EX, err = s.equation(ed, x, ui, p, X); err != nil {
				return err
			}
			ga, gb, gc = EX/h, h*Eu-2*EX/h-Ep, EX/h+Ep
		default:
			p = (ui - um) / h
			if E, Eu, Ep, EX, err = s.equation(ed, x, ui, p, X); err != nil {
				return err
			}
			ga, gb, gc = EX/h-Ep, h*Eu-2*EX/h+Ep, EX/h
		}
		s.sumsq += h * h * E * E
		if !tx.add(i-1, -ga, -gb, -gc, -h*E, ui) {
			return singularPivot(ed.ID, x, ui, 0)
		}
	}
	tx.finish(e)
	// Ends: the equation on the node's half cell.
	for side := 0; side < 2; side++ {
		x, U, adj := 0.0, U0, val(1)
		sg := 1.0 // u'(end) = s − sg·(h/2)·X
		if side == 1 {
			x, U, adj = L, UL, val(n-1)
			sg = -1
		}
		sl := (adj - U) / h
		if side == 1 {
			sl = (U - adj) / h
		}
		X := s.xEnd[e][side]
		var p, Eu, Ep, EX, gp float64
		mono := true
		for it := 0; ; it++ {
			p = sl - sg*0.5*h*X
			var E float64
			var err error
			if E, Eu, Ep, EX, err = s.equation(ed, x, U, p, X); err != nil {
				return err
			}
			gp = EX - sg*0.5*h*Ep
			if gp <= 0.5*EX {
				mono = false
				break
			}
			dX := E / gp
			X -= dX
			if math.Abs(dX) <= 1e-13*(1+math.Abs(X)) || it == 40 {
				p = sl - sg*0.5*h*X
				if _, Eu, Ep, EX, err = s.equation(ed, x, U, p, X); err != nil {
					return err
				}
				gp = EX - sg*0.5*h*Ep
				if gp <= 0.5*EX {
					mono = false
				}
				break
			}
		}
		var dS, dU float64 // ∂u'(end)/∂sl and explicit ∂u'(end)/∂U
		if mono {
			s.xEnd[e][side] = X
			dS, dU = EX/gp, sg*0.5*h*Eu/gp
		} else {
			p, dS, dU = sl, 1, 0
			s.xEnd[e][side] = 0
		}
		el := endLin{w: ed.Weight[side]}
		if side == 0 {
			// sl = (u_1 − U0)/h
			el.d, el.dSelf, el.dAdj = p, -dS/h+dU, dS/h
		} else {
			// sl = (UL − u_{n−1})/h; d = −u'(L)
			el.d, el.dSelf, el.dAdj = -p, -(dS/h + dU), dS/h
		}
		s.end[e][side] = el
	}
	return nil
}

// nlGridEl is the element of a grid edge in a nonlinear solve (Law edges
// and linear grid edges alike), as kept by a Solution and used by the
// nonlinear system: eval interpolates the grid and gives the end
// derivatives of the solve; linearize and recover run one Newton
// condensation of the edge inside its system (s), which a Solution drops.
type nlGridEl struct {
	s      *nlSystem
	e, n   int
	L      float64
	d0, dL float64 // u'(0), u'(L) of the solution
	// Linearisation point of the last linearize.
	U0, UL float64
}

func (x *nlGridEl) unknowns() int { return x.n - 1 }
func (x *nlGridEl) cells() int    { return x.n }

// eval implements element: end derivatives as solved, linear interpolation
// inside.
func (x *nlGridEl) eval(at, U0, UL float64, in []float64) (u, du float64) {
	switch {
	case at <= 0:
		return U0, x.d0
	case at >= x.L:
		return UL, x.dL
	}
	ge := gridEnds{n: x.n}
	return gridEval(&ge, x.L, at, U0, UL, in)
}

// linearize implements element for a Law edge inside its system: it
// evaluates the edge at (U0, UL) and the system's interior, eliminates the
// interior of the Newton linearisation and returns the end map of the next
// iterate's end derivatives with the interior residual's max-norm. It panics
// on an element detached from its system (a Solution's) or on a law that
// fails its checks (the system's own Newton loop reports those as errors).
func (x *nlGridEl) linearize(U0, UL float64) (edgeMap, float64) {
	s := x.s
	if s == nil {
		panic("graphpde: linearize of a solved nonlinear element")
	}
	s.keepInterior()
	e := x.e
	var err error
	if s.kind[e] == nlQuasi {
		err = s.evalQuasi(e, U0, UL, s.w)
	} else {
		err = s.evalEquation(e, U0, UL, s.w)
	}
	if err != nil {
		panic("graphpde: " + err.Error())
	}
	s.condense(e)
	x.U0, x.UL = U0, UL
	cd := &s.cond[e]
	el := &s.end[e]
	var m edgeMap
	// u'(0) = d_0; u'(L) = −d_1; affine in the next end values.
	m.d[0] = cd.c[0]
	m.d[1] = [2]float64{-cd.c[1][0], -cd.c[1][1]}
	m.g[0] = el[0].d + cd.kN[0] - cd.c[0][0]*U0 - cd.c[0][1]*UL
	m.g[1] = -(el[1].d + cd.kN[1] - cd.c[1][0]*U0 - cd.c[1][1]*UL)
	// The interior residual's max-norm, from the scaled residual's parts
	// is not available per edge: recompute it from the kept rows.
	return m, x.interiorResidual()
}

// recover implements element: the interior Newton update for the end values
// of the node solve, added to the system's interior.
func (x *nlGridEl) recover(U0, UL float64) bool {
	s := x.s
	o := s.off[x.e]
	s.allocStep()
	s.back(x.e, U0-x.U0, UL-x.UL, s.bs, s.dw)
	ok := true
	for i := o; i < o+x.n-1; i++ {
		s.w[i] += s.dw[i]
		ok = ok && finite(s.w[i])
	}
	return ok
}

// interiorResidual returns the max-norm of the edge's interior residual at
// its last evaluation (the rows are kept: see linearize).
func (x *nlGridEl) interiorResidual() float64 {
	s := x.s
	o := s.off[x.e]
	res := 0.0
	for _, r := range s.ires[o : o+x.n-1] {
		res = math.Max(res, math.Abs(r))
	}
	return res
}

// pairable reports whether law edges e and f can be evaluated together by
// evalQuasiPair: both quasilinear without a profile, with constant faces,
// the same number of cells (≥ 2), and no kept rows.
func (s *nlSystem) pairable(e, f int) bool {
	if s.keepRows || s.kind[e] != nlQuasi || s.kind[f] != nlQuasi || s.n[e] != s.n[f] || s.n[e] < 2 {
		return false
	}
	for _, k := range [2]int{e, f} {
		ed := &s.net.Edges[k]
		if ed.Profile != nil || ed.Law.A != nil || ed.Law.B != nil {
			return false
		}
	}
	return true
}

// evalQuasiPair evaluates the pairable quasilinear edges e and f (see
// pairable) at (U, w) with their interior loops interleaved, so that the two
// independent chains of divisions of their eliminations overlap. Wherever
// the interleaved pass meets anything but the regular case (a law error, a
// zero or non-finite pivot, a new non-monotone note) it undoes its
// accumulations and evaluates e and then f one at a time, so errors and
// notes are exactly those of that order. Everything else it stores is the
// same as there, bit for bit, except in a tie of the running maximum of
// |r|/|b| (rhoWorst), which f starts from e's start instead of e's end and
// which both orders keep within rounding of the exact maximum.
func (s *nlSystem) evalQuasiPair(e, f int, U, w []float64) error {
	sumsq, neg, worst, umax, note := s.sumsq, s.negPivots, s.rhoWorst, s.rhoUmax, s.nonMono
	if s.tryQuasiPair(e, f, U, w) && s.nonMono == note {
		return nil
	}
	s.sumsq, s.negPivots, s.rhoWorst, s.rhoUmax, s.nonMono = sumsq, neg, worst, umax, note
	if err := s.evalEdge(e, U, w); err != nil {
		return err
	}
	return s.evalEdge(f, U, w)
}

// tryQuasiPair is the interleaved pass of evalQuasiPair; it reports false
// where the pass must be redone one edge at a time.
func (s *nlSystem) tryQuasiPair(e, f int, U, w []float64) bool {
	note := s.nonMono
	ed1, ed2 := &s.net.Edges[e], &s.net.Edges[f]
	q1, err := s.quasiBegin(e, U[ed1.From], U[ed1.To], w)
	if err != nil || s.nonMono != note {
		return false
	}
	q2, err := s.quasiBegin(f, U[ed2.From], U[ed2.To], w)
	if err != nil || s.nonMono != note {
		return false
	}
	ss1, ss2, ok := s.quasiConstPair(&q1, &q2, U[ed1.To], U[ed2.To])
	if !ok {
		return false
	}
	s.sumsq += ss1
	if err := s.quasiEnd(&q1, U[ed1.To]); err != nil || s.nonMono != note {
		return false
	}
	// f's running maxima started from e's start: combine them with e's.
	if q2.tx.worst <= s.rhoWorst {
		q2.tx.worst = s.rhoWorst
	}
	q2.tx.umax = math.Max(q2.tx.umax, s.rhoUmax)
	s.sumsq += ss2
	return s.quasiEnd(&q2, U[ed2.To]) == nil && s.nonMono == note
}

// quasiConstPair runs the interior loops of quasiConstFaces (direct laws,
// constant faces) of two edges with the same number of cells side by side.
// It returns each edge's Σ G² and false at the first row that is not the
// regular case (see evalQuasiPair); the loop state is left in q1, q2.
func (s *nlSystem) quasiConstPair(q1, q2 *quasiRun, UL1, UL2 float64) (ss1, ss2 float64, ok bool) {
	type side struct {
		al, b0, bs                 []float64
		alpha, beta0, betas        float64
		prod, p0, ps, worst, umax  float64
		ra, rc, rb0, c0, f0, h, dP float64
		r, l                       float64
		cC, fC                     *Coef
		in                         []float64
		UL                         float64
	}
	mk := func(q *quasiRun, UL float64) side {
		t := &q.tx
		return side{al: t.al, b0: t.b0, bs: t.bs, alpha: t.alpha, beta0: t.beta0, betas: t.betas,
			prod: t.prod, p0: t.p0, ps: t.ps, worst: t.worst, umax: t.umax,
			r: q.cf.r, l: q.cf.l, ra: -q.cf.l, rc: -q.cf.r, rb0: q.cf.r + q.cf.l, c0: q.ed.C, f0: q.ed.F, h: q.h, dP: q.dPrev,
			cC: q.ed.Law.C, fC: q.ed.Law.F, in: q.in, UL: UL}
	}
	a, b := mk(q1, UL1), mk(q2, UL2)
	n := q1.n
	neg := 0
	nomono := s.nonMono == ""
	for i := 1; i < n; i++ {
		ui, un := a.in[i-1], a.UL
		vi, vn := b.in[i-1], b.UL
		if i < n-1 {
			un, vn = a.in[i], b.in[i]
		}
		dA, dB := un-ui, vn-vi
		xa, xb := float64(i)*a.h, float64(i)*b.h
		ca, dca, fa, dfa := a.c0, 0.0, a.f0, 0.0
		cb, dcb, fb, dfb := b.c0, 0.0, b.f0, 0.0
		if a.cC != nil {
			ca, dca = a.cC.Fn(xa, ui, 0)
		}
		if b.cC != nil {
			cb, dcb = b.cC.Fn(xb, vi, 0)
		}
		if a.fC != nil {
			fa, dfa = a.fC.Fn(xa, ui, 0)
		}
		if b.fC != nil {
			fb, dfb = b.fC.Fn(xb, vi, 0)
		}
		ga, dga := fa-ca*ui, dfa-ca-ui*dca
		gb, dgb := fb-cb*vi, dfb-cb-vi*dcb
		if (ga-ga)+(dga-dga)+(gb-gb)+(dgb-dgb) != 0 || (nomono && (dga > 0 || dgb > 0)) {
			return 0, 0, false
		}
		Ga := a.r*dA - a.l*a.dP + a.h*ga
		Gb := b.r*dB - b.l*b.dP + b.h*gb
		ss1 += Ga * Ga
		ss2 += Gb * Gb
		ba, bb := a.rb0-a.h*dga, b.rb0-b.h*dgb
		pa, pb := ba+a.ra*a.alpha, bb+b.ra*b.alpha
		if pa == 0 || pb == 0 || (pa-pa)+(Ga-Ga)+(pb-pb)+(Gb-Gb) != 0 {
			return 0, 0, false
		}
		if pa < 0 {
			neg++
		}
		if pb < 0 {
			neg++
		}
		ipa, ipb := 1/pa, 1/pb
		a.alpha, b.alpha = -a.rc*ipa, -b.rc*ipb
		a.beta0, b.beta0 = -a.ra*a.beta0*ipa, -b.ra*b.beta0*ipb
		a.betas, b.betas = (Ga-a.ra*a.betas)*ipa, (Gb-b.ra*b.betas)*ipb
		a.al[i-1], a.b0[i-1], a.bs[i-1] = a.alpha, a.beta0, a.betas
		b.al[i-1], b.b0[i-1], b.bs[i-1] = b.alpha, b.beta0, b.betas
		a.p0 += a.prod * a.beta0
		b.p0 += b.prod * b.beta0
		a.ps += a.prod * a.betas
		b.ps += b.prod * b.betas
		a.prod *= a.alpha
		b.prod *= b.alpha
		if ar, ab := math.Abs(Ga), math.Abs(ba); ar > a.worst*ab {
			a.worst = ratio(ar, ab)
		}
		if ar, ab := math.Abs(Gb), math.Abs(bb); ar > b.worst*ab {
			b.worst = ratio(ar, ab)
		}
		if au := math.Abs(ui); au > a.umax {
			a.umax = au
		}
		if au := math.Abs(vi); au > b.umax {
			b.umax = au
		}
		a.dP, b.dP = dA, dB
	}
	for _, p := range [2]struct {
		q *quasiRun
		t *side
	}{{q1, &a}, {q2, &b}} {
		t, x := p.t, &p.q.tx
		x.alpha, x.beta0, x.betas = t.alpha, t.beta0, t.betas
		x.prod, x.p0, x.ps, x.worst, x.umax = t.prod, t.p0, t.ps, t.worst, t.umax
		p.q.prev, p.q.dPrev = p.q.cf, t.dP
	}
	s.negPivots += neg
	return ss1, ss2, true
}
