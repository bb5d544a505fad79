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

// NodeLaw returns the condition of node v.
func (n *Network) NodeLaw(v int) vertex.Law { return n.Nodes[v].Law }

// NodeIncident is Incident under the name the walker interface uses.
func (n *Network) NodeIncident(v int) []vertex.End { return n.Incident(v) }

// EdgeNodes returns the From and To node indices of edge e.
func (n *Network) EdgeNodes(e int) (from, to int) { return n.Edges[e].From, n.Edges[e].To }

// EdgeLength returns the length of edge e.
func (n *Network) EdgeLength(e int) float64 { return n.Edges[e].Length }

// EdgeConstant reports whether the coefficients of edge e are constant.
func (n *Network) EdgeConstant(e int) bool { return n.Edges[e].Constant() }

// EdgeCoeffs returns a, b, c, f, ρ of edge e at distance x from its From node.
func (n *Network) EdgeCoeffs(e int, x float64) (a, b, c, f, rho float64) {
	return n.Edges[e].Coeffs(x)
}

// EdgeWeight returns α of edge e at side 0 (From) or 1 (To).
func (n *Network) EdgeWeight(e, side int) float64 { return n.Edges[e].EndWeight(side) }

// NodeSplit returns the walker-only split override of node v as probabilities
// aligned with Incident(v), or nil when the node has none. A self-loop's share
// is divided equally between its two ends. The probabilities are normalised to
// sum to one. It allocates the returned slice.
func (n *Network) NodeSplit(v int) []float64 {
	sp := n.Nodes[v].Split
	if sp == nil {
		return nil
	}
	inc := n.Incident(v)
	out := make([]float64, len(inc))
	count := make(map[int]int, len(inc))
	for _, end := range inc {
		count[end.Edge]++
	}
	var sum float64
	for k, end := range inc {
		out[k] = sp[n.Edges[end.Edge].ID] / float64(count[end.Edge])
		sum += out[k]
	}
	if sum > 0 {
		for k := range out {
			out[k] /= sum
		}
	}
	return out
}
