package graphpde

import "math"

// Extreme is the largest and the smallest value of the field along one edge
// (ends included) and where they sit.
type Extreme struct {
	Max, Min     float64
	AtMax, AtMin float64 // distance from the edge's From node
	// Flat is set when the field is so flat around an interior extremum
	// that points more than 1 % of the edge's length away agree with it to
	// 1e-9 (relative): the value is sharp but its place is not.
	Flat bool
	// Exact is true when the places are located on the closed-form solution
	// of an exact element (to round-off); false on a grid edge, where they are
	// the best grid vertex refined by the parabola through its neighbours.
	Exact bool
}

// Extremes returns the largest and smallest value along edge e.
//
// On an exact element (constant a > 0, b, c ≥ 0, f) the solution is
// A e^{r₁x} + B e^{r₂x} + (a particular part that is constant or linear),
// with r₁ ≠ r₂ real, or a parabola when b = c = 0, so u' has at most one zero
// on the edge: when u' changes sign between the ends, the interior extremum
// is the root of u', found by bisection safeguarded Newton steps (uxx is
// available in closed form from the equation, a·uxx = −b·ux + c·u − f) to
// round-off in x. Cost O(1) on exact edges (about 60 evaluations at most);
// O(cells) on grid edges.
func (s *Solution) Extremes(e int) Extreme {
	ed := &s.Net.Edges[e]
	L := ed.Length
	u0, uL := s.U[ed.From], s.U[ed.To]
	x := Extreme{Max: u0, AtMax: 0, Min: u0, AtMin: 0}
	if uL > x.Max {
		x.Max, x.AtMax = uL, L
	}
	if uL < x.Min {
		x.Min, x.AtMin = uL, L
	}
	if g, grid := s.els[e].(gridCells); grid {
		n := g.cells()
		var pts []FieldPoint
		pts = s.Sample(pts, e)
		imax, imin := 0, 0
		for i, p := range pts {
			if p.U > pts[imax].U {
				imax = i
			}
			if p.U < pts[imin].U {
				imin = i
			}
		}
		h := L / float64(n)
		refine := func(i int) (float64, float64) {
			if i == 0 || i == n {
				return pts[i].X, pts[i].U
			}
			um, u, up := pts[i-1].U, pts[i].U, pts[i+1].U
			d2 := um - 2*u + up
			if d2 == 0 {
				return pts[i].X, u
			}
			t := (um - up) / (2 * d2) // vertex of the parabola, in cells
			return pts[i].X + t*h, u - (up-um)*(up-um)/(8*d2)
		}
		x.AtMax, x.Max = refine(imax)
		x.AtMin, x.Min = refine(imin)
		return x
	}
	el, ok := s.els[e].(*exactEl)
	if !ok {
		return x // no other element kinds yet
	}
	x.Exact = true
	// The end slopes from the end fluxes J = −a u' (no element evaluation).
	d0, dL := -s.Flux[e][0]/el.a, -s.Flux[e][1]/el.a
	if math.IsNaN(d0) || math.IsNaN(dL) {
		_, d0 = s.eval(e, 0)
		_, dL = s.eval(e, L)
	}
	// A slope that is round-off against the other end's (a sealed end,
	// u' = 0 there) counts as zero: the extremum is then at that end.
	const flatEnd = 1e-10
	if d, m := math.Abs(d0), math.Abs(dL); d <= flatEnd*m || m <= flatEnd*d || math.Signbit(d0) == math.Signbit(dL) {
		return x // monotone: the extremes are at the ends
	}
	// One interior zero of u' in (0, L): bisection on the sign of u',
	// with Newton steps accepted only inside the bracket.
	lo, hi := 0.0, L
	xm := 0.5 * L
	for range 200 {
		u, du := s.eval(e, xm)
		if du == 0 {
			break
		}
		if math.Signbit(du) == math.Signbit(d0) {
			lo = xm
		} else {
			hi = xm
		}
		d2 := (-el.b*du + el.c*u - el.f) / el.a
		next := xm - du/d2
		newton := d2 != 0 && next > lo && next < hi
		if !newton {
			next = 0.5 * (lo + hi)
		}
		// Stop when the bracket or an accepted Newton step is down to a few
		// ulps of L (Newton converges quadratically near the simple root).
		tiny := 4 * (math.Nextafter(L, math.Inf(1)) - L)
		if hi-lo <= tiny || next == xm || (newton && math.Abs(next-xm) <= tiny) {
			if newton {
				xm = next
			}
			break
		}
		xm = next
	}
	um, dum := s.eval(e, xm)
	scale := math.Max(math.Max(math.Abs(um), math.Abs(u0)), math.Abs(uL))
	curv := math.Abs((-el.b*dum + el.c*um - el.f) / el.a)
	if flat := 2 * 1e-9 * scale; curv*(0.01*L)*(0.01*L) < flat {
		x.Flat = true
	}
	if um > x.Max {
		x.Max, x.AtMax = um, xm
	}
	if um < x.Min {
		x.Min, x.AtMin = um, xm
	}
	return x
}
