package graphpde

import "math"

// element is an edge element: what the node system needs of one edge. The
// system is the same for every kind of edge; everything an edge kind does
// differently lives behind this interface, which the system calls once per
// edge and per assembly (never per cell). The equation on the edge and its
// discretisations are described in docs/equations.md and
// docs/discretisation.md.
//
// Write U = (U0, UL) for the values at the From (x = 0) and To (x = L) ends.
// An element keeps an interior state (unknowns() values: the grid values of
// a grid edge, none for an exact one) and, at the current data of its system
// (shift, sources, parameters), provides
//
//   - linearize(U0, UL): the affine end map
//
//     u'(0) ≈ m.d[0][0]·U0' + m.d[0][1]·UL' + m.g[0],
//     u'(L) ≈ m.d[1][0]·U0' + m.d[1][1]·UL' + m.g[1]
//
//     of the end derivatives as functions of the end values U' of the next
//     iterate, with the interior eliminated (condensed), together with the
//     max-norm of the residual of the interior equations at the current
//     state. For a linear element the map is exact, U0 and UL are not
//     used and the residual is 0 (its interior is a function of the end
//     values, eliminated exactly). A nonlinear element linearises its
//     interior equations R(z, U) = 0 at its state z and the given U
//     (Newton: J_zz δz + J_zU δU = −R) and condenses δz, so that the map
//     holds to first order in U' − U.
//
//   - recover(U0', UL'): the interior for the end values of the node solve
//     (back substitution for a linear element, the Newton update δz for a
//     nonlinear one), reporting whether every value is finite.
//
//   - eval(x, U0, UL, in): u and u' at distance x from the From end, from
//     the end values and the interior values in (unknowns() of them, as
//     recover left them; callers may pass a copy kept from an earlier
//     solve).
//
//   - unknowns(): the number of interior values.
//
// The rows of the node system are written by the system from the end map
// and the edge's end weights (docs/node-laws.md); an element never sees the
// matrix. To add an element: implement these four methods on a type that
// refers to its edge, and choose it in newSystem (see DEVELOPERS.md for a
// worked example).
type element interface {
	linearize(U0, UL float64) (m edgeMap, interiorRes float64)
	recover(U0, UL float64) bool
	eval(x, U0, UL float64, in []float64) (u, du float64)
	unknowns() int
}

// exactEl is the exact element of an edge with constant coefficients:
// exactElement's closed form with decay c + shift·ρ and the edge's source.
// It has no interior unknowns; the value and derivative at an inner point
// come from the closed form on the two sub-intervals.
type exactEl struct {
	s *system
	e int
	// Coefficients and end map of the last linearize.
	a, b, c, f, L float64
	m             edgeMap
}

func (x *exactEl) unknowns() int { return 0 }

func (x *exactEl) linearize(_, _ float64) (edgeMap, float64) {
	s := x.s
	ed := &s.net.Edges[x.e]
	if s.shift != 0 && ed.Profile != nil && ed.Profile.Rho != nil {
		panic("graphpde: shift on an exact edge with a capacity profile")
	}
	x.a, x.b, x.L = ed.A, ed.B, ed.Length
	x.c = ed.C + s.shift*ed.Rho
	x.f = s.edgeSource(x.e)
	// One evaluation with f = 1 gives the source terms (linear in f) and
	// the row sums, −c·g (exactRowSums).
	d, g1 := exactElement(x.a, x.b, x.c, 1.0, x.L)
	x.m = edgeMap{d: d, g: [2]float64{x.f * g1[0], x.f * g1[1]}, rs: [2]float64{-x.c * g1[0], -x.c * g1[1]}}
	return x.m, 0
}

func (x *exactEl) recover(_, _ float64) bool { return true }

// eval uses u(x) from the closed forms on [0, x] and [x, L] (exactValue) and
// u'(x) from the end map of [x, L]. Cost O(1).
func (x *exactEl) eval(at, U0, UL float64, _ []float64) (u, du float64) {
	m := &x.m
	if ed := &x.s.net.Edges[x.e]; ed.From == ed.To && (at <= 0 || at >= x.L) {
		// A self-loop: U0 = UL, and the row sums carry it without
		// cancellation.
		if at <= 0 {
			return U0, m.rs[0]*U0 + m.g[0]
		}
		return UL, m.rs[1]*UL + m.g[1]
	}
	switch {
	case at <= 0:
		return U0, m.d[0][0]*U0 + m.d[0][1]*UL + m.g[0]
	case at >= x.L:
		return UL, m.d[1][0]*U0 + m.d[1][1]*UL + m.g[1]
	}
	u = exactValue(x.a, x.b, x.c, x.f, x.L, at, U0, UL)
	d, g := exactElement(x.a, x.b, x.c, x.f, x.L-at)
	return u, d[0][0]*u + d[0][1]*UL + g[0]
}

// constGridEl is the grid element of an edge whose coefficients and source
// are constant (condenseConst; n−1 interior values, 8 bytes each). The
// system condenses and recovers two such edges with equal cells together
// (condenseConstPair, recoverConstPair); linearize and recover here are the
// single-edge versions of the same arithmetic.
type constGridEl struct {
	s  *system
	e  int
	n  int
	st []float64 // interior values (after recover) or sweep factors (after linearize)
	k  constCell
	kc sweepCoef
}

func (x *constGridEl) unknowns() int { return x.n - 1 }

// cell returns the cell coefficients for the system's current data.
func (x *constGridEl) cell() constCell {
	s := x.s
	ed := &s.net.Edges[x.e]
	return newConstCell(x.n, ed.Length, ed.A, ed.B, ed.C+s.shift*ed.Rho, s.edgeSource(x.e))
}

func (x *constGridEl) linearize(_, _ float64) (edgeMap, float64) {
	x.k = x.cell()
	d, g := condenseConst(x.st, &x.k)
	x.kc = x.k.sweep()
	return edgeMap{d, g, x.k.ends.rs}, 0
}

func (x *constGridEl) recover(U0, UL float64) bool {
	return recoverConst(x.st, x.s.scr, x.kc, U0, UL)
}

func (x *constGridEl) eval(at, U0, UL float64, in []float64) (u, du float64) {
	return gridEval(&x.k.ends, x.s.net.Edges[x.e].Length, at, U0, UL, in)
}

// varGridEl is the grid element of an edge whose coefficients (or source)
// vary along it (condenseVar; per interior value 8 bytes of value and 24 of
// sweep triples).
type varGridEl struct {
	s    *system
	e    int
	n    int
	st   []float64 // interior values
	vst  []float64 // sweep triples, 3(n−1)
	ends gridEnds
}

func (x *varGridEl) unknowns() int { return x.n - 1 }

func (x *varGridEl) linearize(_, _ float64) (edgeMap, float64) {
	s := x.s
	e := x.e
	ed := &s.net.Edges[e]
	shift := s.shift
	src := s.v.EdgeSource
	cs := s.v.ConstSource
	coef := func(at float64) (a, b, c, f float64) {
		a, b, c, f, rho := ed.Coeffs(at)
		switch {
		case src != nil:
			f = src(e, at)
		case cs != nil:
			f = cs[e]
		}
		return a, b, c + shift*rho, f
	}
	var d [2][2]float64
	var g [2]float64
	var out gridEnds
	if p := ed.Profile; p != nil && len(p.Jumps) > 0 {
		d, g, out = condenseJumps(x.vst, x.n, ed.Length, p.Jumps, coef)
	} else {
		d, g, out = condenseVar(x.vst, x.n, ed.Length, coef)
	}
	x.ends = out
	return edgeMap{d, g, out.rs}, 0
}

func (x *varGridEl) recover(U0, UL float64) bool {
	return recoverGrid(x.st, x.vst, U0, UL)
}

func (x *varGridEl) eval(at, U0, UL float64, in []float64) (u, du float64) {
	return gridEval(&x.ends, x.s.net.Edges[x.e].Length, at, U0, UL, in)
}

// gridVertex returns the value at vertex i = 0…n of a grid edge with n
// cells, end values U0, UL and interior values in (vertex i of 1…n−1 is
// in[i−1]).
func gridVertex(n int, U0, UL float64, in []float64) func(i int) float64 {
	return func(i int) float64 {
		switch i {
		case 0:
			return U0
		case n:
			return UL
		}
		return in[i-1]
	}
}

// gridEval returns u and u' at x on a grid edge of length L with end terms
// ge, end values U0, UL and interior values in (n−1): u by linear
// interpolation between the vertices (second order, like the grid), u' at
// the ends from the reconstructed end derivatives (half cells included) and
// inside from the slope of the cell holding x (second order at cell
// midpoints, first order elsewhere). Cost O(1).
func gridEval(ge *gridEnds, L, x, U0, UL float64, in []float64) (u, du float64) {
	n := ge.n
	first, last := UL, U0
	if n > 1 {
		first, last = in[0], in[n-2]
	}
	switch {
	case x <= 0:
		d0, _ := ge.endDerivs(U0, UL, first, last)
		return U0, d0
	case x >= L:
		_, dL := ge.endDerivs(U0, UL, first, last)
		return UL, dL
	}
	val := gridVertex(n, U0, UL, in)
	h := L / float64(n)
	i := int(math.Floor(x / h))
	if i >= n {
		i = n - 1
	}
	t := x/h - float64(i)
	ui, uj := val(i), val(i+1)
	return (1-t)*ui + t*uj, (uj - ui) / h
}

// gridCells is implemented by grid elements: the number of cells, so that
// Solution.Sample can list the grid vertices.
type gridCells interface{ cells() int }

func (x *constGridEl) cells() int { return x.n }
func (x *varGridEl) cells() int   { return x.n }
