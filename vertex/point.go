package vertex

import (
	"fmt"
	"math"
)

// Point is a place on a network, shared by both engines: node Node (with
// Edge < 0), or the point at distance X (length units) from the From node
// of edge Edge (with Node < 0). Build it with AtNode or OnEdge. Exactly one
// of Node and Edge must be ≥ 0, so the zero value (node 0 and edge 0 at
// once) is invalid: every solver and walker rejects it with a *PointError
// rather than guess which was meant.
type Point struct {
	Node int
	Edge int
	X    float64
}

// AtNode returns the point at node v.
func AtNode(v int) Point { return Point{Node: v, Edge: -1} }

// OnEdge returns the point at distance x from the From node of edge e.
func OnEdge(e int, x float64) Point { return Point{Node: -1, Edge: e, X: x} }

// PointError reports a point that is not on the network.
type PointError struct {
	Point  Point
	Reason string
}

func (e *PointError) Error() string {
	p := e.Point
	switch {
	case p.Node >= 0 && p.Edge >= 0:
		return fmt.Sprintf("point names both node %d and edge %d: %s", p.Node, p.Edge, e.Reason)
	case p.Node >= 0:
		return fmt.Sprintf("point at node %d: %s", p.Node, e.Reason)
	case p.Edge >= 0:
		return fmt.Sprintf("point on edge %d at x = %g: %s", p.Edge, p.X, e.Reason)
	}
	return "point names neither a node nor an edge: " + e.Reason
}

// Check reports whether p lies on a network with nodes nodes and edges
// edges, edge e of length length(e): a *PointError when it names both a node
// and an edge (the zero value does) or neither, an index out of range, or a
// distance that is not in [0, length]. Cost O(1).
func (p Point) Check(nodes, edges int, length func(e int) float64) error {
	switch {
	case p.Node >= 0 && p.Edge >= 0:
		return &PointError{Point: p, Reason: "build points with AtNode or OnEdge"}
	case p.Node >= 0:
		if p.Node >= nodes {
			return &PointError{Point: p, Reason: fmt.Sprintf("the network has %d nodes", nodes)}
		}
		return nil
	case p.Edge < 0:
		return &PointError{Point: p, Reason: "build points with AtNode or OnEdge"}
	case p.Edge >= edges:
		return &PointError{Point: p, Reason: fmt.Sprintf("the network has %d edges", edges)}
	}
	L := length(p.Edge)
	if math.IsNaN(p.X) || p.X < 0 || p.X > L {
		return &PointError{Point: p, Reason: fmt.Sprintf("x is off the edge, whose length is %g", L)}
	}
	return nil
}

// DefaultQuantiles returns the probabilities at which both engines report
// exit-time quantiles when the caller names none: 0.1, 0.25, 0.5, 0.75,
// 0.9 (a fresh slice each call).
func DefaultQuantiles() []float64 { return []float64{0.1, 0.25, 0.5, 0.75, 0.9} }
