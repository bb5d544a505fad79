package graphpde

import "math"

// Solution is the result of a steady solve.
type Solution struct {
	Net *Network
	// U is the value at every node, fixed nodes included.
	U []float64
	// Flux[e] is the diffusive flux −a u' along edge e's orientation
	// (From → To) at its From and To ends.
	Flux [][2]float64
	// Residual[v] is, for a balance node,
	//
	//	Σ_e J_e(v) + β u(v) − γ,   J_e(v) = −α_e ∂_e u(v),
	//
	// with the end derivatives reconstructed from the elements (for grid
	// edges from the recovered interior and the node-owned half cells);
	// it is at round-off level for a successful solve. It is 0 for fixed
	// nodes.
	Residual []float64
	Status   Status
	Stats    Stats
	// Notes explain a Status other than Converged and values that are
	// not reported (NaN end fluxes that are pure rounding).
	Notes []string

	els  []element // per edge
	off  []int     // per edge: its first interior value in gval
	gval []float64 // interior values of the elements
}

// FieldPoint is one sample of the field along an edge: the distance X from
// the edge's From node and the value U there.
type FieldPoint struct{ X, U float64 }

// exactSamples is the number of points Sample returns for an exact edge.
const exactSamples = 33

// At returns the solution at p: a node value, or a value inside an edge
// (closed form on exact edges; linear interpolation between grid points on
// grid edges, second-order accurate like the grid). A point that is not on
// the network (the zero Point included) is a *vertex.PointError. Cost O(1).
func (s *Solution) At(p Point) (float64, error) {
	if err := s.Net.CheckPoint(p); err != nil {
		return 0, err
	}
	return s.at(p), nil
}

// at is At for a point known to be on the network.
func (s *Solution) at(p Point) float64 {
	if p.Edge < 0 {
		return s.U[p.Node]
	}
	u, _ := s.eval(p.Edge, p.X)
	return u
}

// eval returns u and u' at distance x along edge e.
func (s *Solution) eval(e int, x float64) (u, du float64) {
	ed := &s.Net.Edges[e]
	el := s.els[e]
	o := s.off[e]
	return el.eval(x, s.U[ed.From], s.U[ed.To], s.gval[o:o+el.unknowns()])
}

// Sample appends to dst[:0] the field along edge e and returns it: the grid
// vertices (ends included) of a grid edge, or 33 evenly spaced points (ends
// included) of an exact edge. Cost O(points).
func (s *Solution) Sample(dst []FieldPoint, e int) []FieldPoint {
	dst = dst[:0]
	ed := &s.Net.Edges[e]
	L := ed.Length
	g, grid := s.els[e].(gridCells)
	if !grid {
		for k := range exactSamples {
			x := L * float64(k) / (exactSamples - 1)
			u, _ := s.eval(e, x)
			dst = append(dst, FieldPoint{x, u})
		}
		return dst
	}
	n := g.cells()
	in := s.gval[s.off[e]:]
	for i := 0; i <= n; i++ {
		u := s.U[ed.From]
		switch {
		case i == n:
			u = s.U[ed.To]
		case i > 0:
			u = in[i-1]
		}
		dst = append(dst, FieldPoint{L * float64(i) / float64(n), u})
	}
	return dst
}

// ExactEdge reports whether edge e was solved with an exact element.
func (s *Solution) ExactEdge(e int) bool {
	_, ok := s.els[e].(*exactEl)
	return ok
}

// solution packages the current state (after solve) as a Solution: node
// values, end fluxes and node residuals reconstructed from the elements, and
// a finiteness check of everything. The Solution shares the grid storage and
// the element data with s: a later assemble changes it.
func (s *system) solution() (*Solution, error) {
	net := s.net
	sol := &Solution{
		Net:      net,
		U:        append([]float64(nil), s.u...),
		Flux:     make([][2]float64, len(net.Edges)),
		Residual: make([]float64, len(net.Nodes)),
		Status:   Converged,
		Stats:    s.stats,
		els:      s.els,
		off:      s.off,
		gval:     s.st,
	}
	for i, u := range sol.U {
		if math.IsNaN(u) || math.IsInf(u, 0) {
			return nil, &NonFiniteError{Object: "node", ID: net.Nodes[i].ID}
		}
	}
	if s.bad >= 0 {
		return nil, &NonFiniteError{Object: "edge", ID: net.Edges[s.bad].ID}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		d0, dL := s.endDerivs(e)
		a0, _, _, _, _ := ed.Coeffs(0)
		aL, _, _, _, _ := ed.Coeffs(ed.Length)
		if c, ok := s.els[e].(*ctlGridEl); ok {
			a0, aL = c.ends.a0, c.ends.aL // the diffusivities of the end controls
		}
		sol.Flux[e] = [2]float64{-a0 * d0, -aL * dL}
		if f := sol.Flux[e]; math.IsNaN(f[0]+f[1]) || math.IsInf(f[0]+f[1], 0) {
			return nil, &NonFiniteError{Object: "edge", ID: ed.ID}
		}
		if r := s.unk[ed.From]; r >= 0 {
			sol.Residual[ed.From] += -ed.EndWeight(0) * d0
		}
		if r := s.unk[ed.To]; r >= 0 {
			sol.Residual[ed.To] += ed.EndWeight(1) * dL
		}
	}
	for _, i := range s.nodes {
		diag, rhs := net.Nodes[i].Law.Row(s.shift)
		if s.v.NodeInject != nil {
			rhs = s.v.NodeInject[i]
		}
		sol.Residual[i] += diag*s.u[i] - rhs
	}
	return sol, nil
}
