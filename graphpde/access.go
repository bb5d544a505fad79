package graphpde

import "github.com/ramify-dev/ramify/vertex"

// The accessors below give read access with plain types, so that a package
// that must not import graphpde (montecarlo) can declare them in a small
// interface of its own that *Network satisfies.

// NumNodes returns the number of nodes.
func (n *Network) NumNodes() int { return len(n.Nodes) }

// NumEdges returns the number of edges.
func (n *Network) NumEdges() int { return len(n.Edges) }

// NodeID returns the id of node v.
func (n *Network) NodeID(v int) string { return n.Nodes[v].ID }

// EdgeID returns the id of edge e.
func (n *Network) EdgeID(e int) string { return n.Edges[e].ID }

// EdgeNodes returns the From and To node indices of edge e.
func (n *Network) EdgeNodes(e int) (from, to int) { return n.Edges[e].From, n.Edges[e].To }

// Size returns the numbers of nodes and edges.
func (n *Network) Size() (nodes, edges int) { return len(n.Nodes), len(n.Edges) }

// WalkNode returns what a walker needs of node v: its id, law, incident
// ends (Incident order) and the walker-only split override as probabilities
// aligned with the ends, nil when the node has none. A self-loop's share is
// divided equally between its two ends; the probabilities are normalised to
// sum to one. It allocates the split.
func (n *Network) WalkNode(v int) (id string, law vertex.Law, ends []vertex.End, split []float64) {
	nd := &n.Nodes[v]
	ends = n.Incident(v)
	if nd.Split == nil {
		return nd.ID, nd.Law, ends, nil
	}
	split = make([]float64, len(ends))
	count := make(map[int]int, len(ends))
	for _, end := range ends {
		count[end.Edge]++
	}
	var sum float64
	for k, end := range ends {
		split[k] = nd.Split[n.Edges[end.Edge].ID] / float64(count[end.Edge])
		sum += split[k]
	}
	if sum > 0 {
		for k := range split {
			split[k] /= sum
		}
	}
	return nd.ID, nd.Law, ends, split
}

// WalkEdge returns what a walker needs of edge e: its id, end nodes,
// length, the weights α at its From and To ends (EndWeight), and whether its
// coefficients are constant along it.
func (n *Network) WalkEdge(e int) (id string, from, to int, length float64, alpha [2]float64, constant bool) {
	ed := &n.Edges[e]
	return ed.ID, ed.From, ed.To, ed.Length, [2]float64{ed.EndWeight(0), ed.EndWeight(1)}, ed.Constant()
}

// EdgeCoeffs returns a, b, c, f, ρ of edge e at distance x from its From node.
func (n *Network) EdgeCoeffs(e int, x float64) (a, b, c, f, rho float64) {
	return n.Edges[e].Coeffs(x)
}

// ConstantStretch returns the length from the given end (0 = From, 1 = To)
// of edge e over which its coefficients are constant: the edge's length for
// a constant edge, Profile.Stretch for a piecewise constant profile, else 0.
// (It makes *Network a montecarlo.StretchNetwork.)
func (n *Network) ConstantStretch(e, side int) float64 {
	ed := &n.Edges[e]
	if ed.Law == nil && ed.Constant() {
		return ed.Length
	}
	if ed.Law == nil && ed.Profile != nil {
		return ed.Profile.Stretch[side]
	}
	return 0
}

// Jumps returns the points inside edge e where its piecewise constant
// profile jumps (Profile.Jumps, set by Apply), nil otherwise. (It makes
// *Network a montecarlo.JumpNetwork.)
func (n *Network) Jumps(e int) []float64 {
	ed := &n.Edges[e]
	if ed.Law == nil && ed.Profile != nil {
		return ed.Profile.Jumps
	}
	return nil
}
