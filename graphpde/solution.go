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

	exact []bool
	grid  []gridEnds
	gval  []float64 // grid interiors: value k (from gridEnds.off) at gval[k]
	ecf   [][2]float64
}

// FieldPoint is one sample of the field along an edge: the distance X from
// the edge's From node and the value U there.
type FieldPoint struct{ X, U float64 }

// exactSamples is the number of points Sample returns for an exact edge.
const exactSamples = 33

// At returns the solution at p: a node value, or a value inside an edge
// (closed form on exact edges; linear interpolation between grid points on
// grid edges, second-order accurate like the grid). It panics if p is not on
// the network. Cost O(1).
func (s *Solution) At(p Point) float64 {
	if p.Edge < 0 {
		return s.U[p.Node]
	}
	e := p.Edge
	ed := &s.Net.Edges[e]
	U0, UL := s.U[ed.From], s.U[ed.To]
	if p.X < 0 || p.X > ed.Length {
		panic("graphpde: point off its edge")
	}
	if s.exact[e] {
		cf := s.ecf[e]
		return exactValue(ed.A, ed.B, cf[0], cf[1], ed.Length, p.X, U0, UL)
	}
	ge := &s.grid[e]
	h := ed.Length / float64(ge.n)
	i := int(math.Floor(p.X / h))
	if i >= ge.n {
		i = ge.n - 1
	}
	t := p.X/h - float64(i)
	return (1-t)*s.gridValue(e, i) + t*s.gridValue(e, i+1)
}

// gridValue returns the value at vertex i (0 … n) of grid edge e.
func (s *Solution) gridValue(e, i int) float64 {
	ed := &s.Net.Edges[e]
	ge := &s.grid[e]
	switch i {
	case 0:
		return s.U[ed.From]
	case ge.n:
		return s.U[ed.To]
	}
	return s.gval[ge.off+i-1]
}

// Sample appends to dst[:0] the field along edge e and returns it: the grid
// vertices (ends included) of a grid edge, or 33 evenly spaced points (ends
// included) of an exact edge. Cost O(points).
func (s *Solution) Sample(dst []FieldPoint, e int) []FieldPoint {
	dst = dst[:0]
	ed := &s.Net.Edges[e]
	L := ed.Length
	if s.exact[e] {
		U0, UL := s.U[ed.From], s.U[ed.To]
		cf := s.ecf[e]
		for k := range exactSamples {
			x := L * float64(k) / (exactSamples - 1)
			dst = append(dst, FieldPoint{x, exactValue(ed.A, ed.B, cf[0], cf[1], L, x, U0, UL)})
		}
		return dst
	}
	n := s.grid[e].n
	for i := 0; i <= n; i++ {
		dst = append(dst, FieldPoint{L * float64(i) / float64(n), s.gridValue(e, i)})
	}
	return dst
}

// ExactEdge reports whether edge e was solved with an exact element.
func (s *Solution) ExactEdge(e int) bool { return s.exact[e] }
