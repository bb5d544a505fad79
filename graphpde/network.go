package graphpde

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/ramify-dev/ramify/vertex"
)

// Node is a junction or an end of the network.
type Node struct {
	ID  string
	XY  *[2]float64 // optional position for drawings; nil if not given
	Law vertex.Law  // the node's condition
	// Split, when non-nil, is a walker-only override: the probability of
	// leaving along each incident edge (by edge id) at equal physical radius.
	// The PDE ignores it; a cross-check uses it to test the weights.
	Split map[string]float64
	// Nonlinear, when non-nil, replaces the linear balance of Law (which
	// must then be a Balance with no leak or injection).
	Nonlinear *NodeNonlinear
	// Time, when non-nil, makes the fixed value or the injection depend on t.
	Time *NodeTime
	// Initial is the node's initial value for transient problems (nil: 0).
	Initial *float64
	// Controls, when non-empty, are alternative end weights among which a
	// controller chooses at this (balance) node (control.go).
	Controls []NodeControl
}

// Profile holds coefficients that vary along an edge, as functions of the
// distance x from the edge's from node. A nil function means the edge's
// constant value is used for that coefficient.
type Profile struct {
	A, B, C, F, Rho func(x float64) float64
	// The expressions the functions were compiled from, as written (a
	// reader fills them, a writer writes them back); "" for a function that
	// was not compiled from an expression.
	SrcA, SrcB, SrcC, SrcF, SrcRho string
	// Stretch, when set, gives the lengths from the From and To ends over
	// which the profile is constant (a piecewise constant profile such as
	// a policy's, Network.Apply); 0 means it may vary at once.
	Stretch [2]float64
	// Jumps, when set, lists (sorted, inside the edge) the points where a
	// piecewise constant profile jumps; between them the coefficients are
	// constant. The grid element then fits its cells exactly across them
	// (element_jumps.go) instead of moving each jump to a cell face.
	Jumps []float64
}

// Edge is a thin conductor of length Length between two nodes, carrying
//
//	ρ ∂_t u = ∂_x(a ∂_x u) + b ∂_x u − c u + f,   x ∈ [0, Length],
//
// with x measured from From. The constant coefficients are used where Profile
// (or the corresponding Profile function) is nil.
type Edge struct {
	ID       string
	From, To int // node indices
	Length   float64
	A        float64 // diffusivity a > 0
	B        float64 // drift b, along From → To
	C        float64 // decay c ≥ 0
	F        float64 // source f
	Rho      float64 // capacity per length ρ > 0
	Profile  *Profile
	// Weight holds α at the From and To ends. A zero entry means the default,
	// the diffusivity at that end (conservative, Kirchhoff form).
	Weight [2]float64
	// Cells is the number of grid cells when a grid element is used; 0 means
	// the solver's default.
	Cells int
	// Law, when non-nil, holds coefficients that depend on x, u or t, or a
	// fully nonlinear equation (see EdgeLaw).
	Law *EdgeLaw
	// Controls, when non-empty, are alternative coefficient sets among
	// which a controller chooses at every point of the edge (control.go).
	Controls *EdgeControls
}

// Constant reports whether the edge's coefficients are constant along it.
func (e *Edge) Constant() bool {
	p := e.Profile
	return p == nil || (p.A == nil && p.B == nil && p.C == nil && p.F == nil && p.Rho == nil)
}

// Coeffs returns a, b, c, f, ρ at distance x from the From node.
func (e *Edge) Coeffs(x float64) (a, b, c, f, rho float64) {
	a, b, c, f, rho = e.A, e.B, e.C, e.F, e.Rho
	if p := e.Profile; p != nil {
		if p.A != nil {
			a = p.A(x)
		}
		if p.B != nil {
			b = p.B(x)
		}
		if p.C != nil {
			c = p.C(x)
		}
		if p.F != nil {
			f = p.F(x)
		}
		if p.Rho != nil {
			rho = p.Rho(x)
		}
	}
	return a, b, c, f, rho
}

// EndWeight returns α at the given side (0 = From, 1 = To): the stored weight,
// or the diffusivity at that end when the weight is left at zero.
func (e *Edge) EndWeight(side int) float64 {
	if w := e.Weight[side]; w != 0 {
		return w
	}
	x := 0.0
	if side == 1 {
		x = e.Length
	}
	a, _, _, _, _ := e.Coeffs(x)
	return a
}

// Network is a metric graph with a node condition on every node and a linear
// equation on every edge. Build it with AddNode and AddEdge (or a reader such
// as graphpde/netfile); the zero value is an empty network.
type Network struct {
	Name        string
	Description string
	Nodes       []Node
	Edges       []Edge
	// Params are the named numbers that the network's laws read (nil: none).
	Params *Params
	// Physical, when non-nil, says what the numbers mean physically (set by
	// a reader from the file's physical models).
	Physical *Physical
	// Objective says whether the controls of a controlled network minimise
	// or maximise the payoff (NoObjective for a network without controls).
	Objective Objective

	nodeIndex idIndex // by id (idindex.go)
	edgeIndex idIndex
	incident  [][]vertex.End // built lazily by Incident; reset by Add*
}

// ModelError reports an inadmissible network: the kind of object, its id and
// what is wrong. Readers wrap it with a line number.
type ModelError struct {
	Object string // "node" or "edge"
	ID     string
	Field  string // the offending field, if any
	Reason string
}

func (e *ModelError) Error() string {
	if e.Field != "" {
		return fmt.Sprintf("%s %q: %s %s", e.Object, e.ID, e.Field, e.Reason)
	}
	return fmt.Sprintf("%s %q: %s", e.Object, e.ID, e.Reason)
}

// ValidID reports whether id is a legal node or edge id: a non-empty string
// of letters, digits, '_', '-' and '.'.
func ValidID(id string) bool {
	if id == "" {
		return false
	}
	for _, r := range id {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '_', r == '-', r == '.':
		default:
			return false
		}
	}
	return true
}

// AddNode appends a node and returns its index. It rejects an illegal or
// duplicate id and an inadmissible law.
func (n *Network) AddNode(nd Node) (int, error) {
	if !ValidID(nd.ID) {
		return -1, &ModelError{Object: "node", ID: nd.ID, Reason: "id must be letters, digits, '_', '-' or '.'"}
	}
	if _, dup := n.NodeIndex(nd.ID); dup {
		return -1, &ModelError{Object: "node", ID: nd.ID, Reason: "duplicate id"}
	}
	if err := nd.Law.Validate(); err != nil {
		le := err.(*vertex.LawError)
		return -1, &ModelError{Object: "node", ID: nd.ID, Field: le.Field, Reason: fmt.Sprintf("= %g %s", le.Value, le.Reason)}
	}
	if nl := nd.Nonlinear; nl != nil {
		switch {
		case nd.Law.Kind != vertex.Balance:
			return -1, &ModelError{Object: "node", ID: nd.ID, Reason: "a nonlinear law needs a balance node, not a fixed one"}
		case (nl.Loss == nil) == (nl.General == nil):
			return -1, &ModelError{Object: "node", ID: nd.ID, Reason: "a nonlinear law needs exactly one of Loss and General"}
		}
	}
	if err := checkNodeControls(&nd); err != nil {
		return -1, err
	}
	if nd.Initial != nil && (math.IsNaN(*nd.Initial) || math.IsInf(*nd.Initial, 0)) {
		return -1, &ModelError{Object: "node", ID: nd.ID, Field: "initial", Reason: fmt.Sprintf("= %g must be a finite number", *nd.Initial)}
	}
	n.nodeIndex.add(nd.ID, len(n.Nodes))
	n.Nodes = append(n.Nodes, nd)
	n.incident = nil
	return len(n.Nodes) - 1, nil
}

// AddEdge appends an edge whose From and To are node indices already added,
// and returns its index. A zero Rho is taken as the default capacity 1. It
// rejects an illegal or duplicate id, unknown nodes, a non-positive or
// non-finite length, diffusivity, capacity or weight, negative decay, and
// non-finite drift or source. A coefficient given by e.Law is not checked
// here (its plain field is ignored; solvers check the law where they
// evaluate it); an edge with an equation has its A, B, C and F stored as 0
// (its end weights are checked by the solver, which needs them).
// minScale bounds the lengths and the conductances a/L of edges: the
// element maps have entries of size a/L (more with drift or decay), and
// 1e−280 … 1e280 leaves float64 room for products of a few of them and for
// the pivots of the node system (common practice, no source). A length of
// 5e−324 used to reach the node system as an infinite pivot.
const minScale = 1e-280

func (n *Network) AddEdge(e Edge) (int, error) {
	bad := func(field, reason string) (int, error) {
		return -1, &ModelError{Object: "edge", ID: e.ID, Field: field, Reason: reason}
	}
	if !ValidID(e.ID) {
		return bad("", "id must be letters, digits, '_', '-' or '.'")
	}
	if _, dup := n.EdgeIndex(e.ID); dup {
		return bad("", "duplicate id")
	}
	if e.From < 0 || e.From >= len(n.Nodes) || e.To < 0 || e.To >= len(n.Nodes) {
		return bad("", "unknown node")
	}
	if e.Rho == 0 {
		e.Rho = 1
	}
	fin := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	// A coefficient given by a law (EdgeLaw) is checked where a solver
	// evaluates it; the plain field is checked otherwise. An equation
	// replaces a, b, c and f.
	var law EdgeLaw
	if e.Law != nil {
		law = *e.Law
		if law.Equation != nil {
			e.A, e.B, e.C, e.F = 0, 0, 0, 0
		}
	}
	eq := law.Equation != nil
	switch {
	case !fin(e.Length) || e.Length <= 0:
		return bad("length", fmt.Sprintf("= %g must be a finite number > 0", e.Length))
	case law.A == nil && !eq && (!fin(e.A) || e.A <= 0):
		return bad("diffusivity", fmt.Sprintf("= %g must be a finite number > 0", e.A))
	case law.Rho == nil && (!fin(e.Rho) || e.Rho <= 0):
		return bad("capacity", fmt.Sprintf("= %g must be a finite number > 0", e.Rho))
	case law.C == nil && !eq && (!fin(e.C) || e.C < 0):
		return bad("decay", fmt.Sprintf("= %g must be a finite number ≥ 0", e.C))
	case law.B == nil && !eq && !fin(e.B):
		return bad("drift", fmt.Sprintf("= %g must be a finite number", e.B))
	case law.F == nil && !eq && !fin(e.F):
		return bad("source", fmt.Sprintf("= %g must be a finite number", e.F))
	case e.Cells < 0:
		return bad("cells", fmt.Sprintf("= %d must be ≥ 0", e.Cells))
	case e.Length < minScale || e.Length > 1/minScale:
		return bad("length", fmt.Sprintf("= %g is out of range: lengths from %g to %g keep the edge's element finite in float64", e.Length, minScale, 1/minScale))
	case law.A == nil && !eq && (e.A/e.Length < minScale || e.A/e.Length > 1/minScale):
		return bad("diffusivity", fmt.Sprintf("= %g with length %g gives a/L = %g, out of range: the edge's element (entries of size a/L) would underflow or overflow; a/L from %g to %g is allowed", e.A, e.Length, e.A/e.Length, minScale, 1/minScale))
	}
	if err := checkEdgeControls(&e); err != nil {
		return -1, err
	}
	for s, w := range e.Weight {
		if !fin(w) || w < 0 || (w == 0 && math.Signbit(w)) {
			return bad("weight", fmt.Sprintf("= %g at the %s end must be a finite number > 0", w, [2]string{"from", "to"}[s]))
		}
	}
	n.edgeIndex.add(e.ID, len(n.Edges))
	n.Edges = append(n.Edges, e)
	n.incident = nil
	return len(n.Edges) - 1, nil
}

// NodeIndex returns the index of the node with the given id.
func (n *Network) NodeIndex(id string) (int, bool) {
	return find(&n.nodeIndex, n.Nodes, nodeID, id)
}

// EdgeIndex returns the index of the edge with the given id.
func (n *Network) EdgeIndex(id string) (int, bool) {
	return find(&n.edgeIndex, n.Edges, edgeID, id)
}

// Incident returns the edge ends at node v, in edge order (a self-loop gives
// its From end then its To end). The returned slice is shared: do not modify
// it. The incidence lists are built once, in O(nodes + edges), after the last
// Add*.
func (n *Network) Incident(v int) []vertex.End {
	if n.incident == nil {
		n.buildIncidence()
	}
	return n.incident[v]
}

func (n *Network) buildIncidence() {
	deg := make([]int, len(n.Nodes))
	for _, e := range n.Edges {
		deg[e.From]++
		deg[e.To]++
	}
	flat := make([]vertex.End, 2*len(n.Edges))
	inc := make([][]vertex.End, len(n.Nodes))
	off := 0
	for v, d := range deg {
		inc[v] = flat[off : off : off+d]
		off += d
	}
	for i, e := range n.Edges {
		inc[e.From] = append(inc[e.From], vertex.End{Edge: i, Side: 0})
		inc[e.To] = append(inc[e.To], vertex.End{Edge: i, Side: 1})
	}
	n.incident = inc
}

// Components labels the connected components: comp[v] is the component of
// node v, numbered from 0 in order of their lowest node index. O(nodes+edges).
func (n *Network) Components() (comp []int, count int) {
	parent := make([]int, len(n.Nodes))
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	for _, e := range n.Edges {
		a, b := find(e.From), find(e.To)
		if a != b {
			if a < b {
				parent[b] = a
			} else {
				parent[a] = b
			}
		}
	}
	comp = make([]int, len(n.Nodes))
	label := make(map[int]int)
	for v := range comp {
		r := find(v)
		l, ok := label[r]
		if !ok {
			l = count
			label[r] = l
			count++
		}
		comp[v] = l
	}
	return comp, count
}

// Point is a place on the network (vertex.Point): build it with
// vertex.AtNode or vertex.OnEdge; its zero value is invalid.
type Point = vertex.Point

// CheckPoint reports whether p lies on the network (a *vertex.PointError if
// not; the zero Point never does). Cost O(1).
func (n *Network) CheckPoint(p Point) error {
	return p.Check(len(n.Nodes), len(n.Edges), func(e int) float64 { return n.Edges[e].Length })
}

// PointString writes p in the network-file syntax, NODE or EDGE@X.
func (n *Network) PointString(p Point) string {
	if p.Edge < 0 {
		return n.Nodes[p.Node].ID
	}
	return n.Edges[p.Edge].ID + "@" + strconv.FormatFloat(p.X, 'g', -1, 64)
}

// ParsePoint reads a point written NODE or EDGE@X, X the distance from the
// edge's From node in length units, 0 ≤ X ≤ length. A point at an edge's end
// is returned as that node.
func (n *Network) ParsePoint(s string) (Point, error) {
	if i := strings.LastIndexByte(s, '@'); i >= 0 {
		id, xs := s[:i], s[i+1:]
		e, ok := n.EdgeIndex(id)
		if !ok {
			return Point{}, fmt.Errorf("point %q: no edge %q", s, id)
		}
		x, err := strconv.ParseFloat(xs, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return Point{}, fmt.Errorf("point %q: %q is not a distance along edge %q", s, xs, id)
		}
		L := n.Edges[e].Length
		if x < 0 || x > L {
			return Point{}, fmt.Errorf("point %q: %g is off edge %q, whose length is %g", s, x, id, L)
		}
		switch x {
		case 0:
			return vertex.AtNode(n.Edges[e].From), nil
		case L:
			return vertex.AtNode(n.Edges[e].To), nil
		}
		return vertex.OnEdge(e, x), nil
	}
	v, ok := n.NodeIndex(s)
	if !ok {
		return Point{}, fmt.Errorf("point %q: no node %q (write NODE or EDGE@X)", s, s)
	}
	return vertex.AtNode(v), nil
}

// Reserve makes room for nodes more nodes and edges more edges, so that
// adding that many does not grow the network's arrays and indices step by
// step (readers that know or estimate the counts call it first, or early).
// It changes nothing else.
func (n *Network) Reserve(nodes, edges int) {
	if nodes > 0 {
		n.Nodes = slices.Grow(n.Nodes, nodes)
		n.nodeIndex.reserve(len(n.Nodes) + nodes)
	}
	if edges > 0 {
		n.Edges = slices.Grow(n.Edges, edges)
		n.edgeIndex.reserve(len(n.Edges) + edges)
	}
}
