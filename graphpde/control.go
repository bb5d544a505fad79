package graphpde

import (
	"fmt"
	"math"
	"sort"

	"github.com/ramify-dev/ramify/vertex"
)

// Controlled networks (docs/controls.md). An edge may carry alternative
// coefficient sets (Edge.Controls), a balance node alternative end weights
// (Node.Controls); a controller picks one at every point of the edge and at
// every visit of the node so as to minimise or maximise the payoff
// (Network.Objective). On an edge the value solves
//
//	0 = opt_k [ a_k u'' + b_k u' − c_k u + f_k ],
//
// at a controlled node opt_j [ Σ_e α_{j,e} ∂_e u ] − β u + γ = 0 (generator
// sign, ∂_e u the derivative leaving the node). SolveControl computes the
// value and an optimal feedback policy by policy iteration.

// Objective says whether a controlled network's controller minimises (an
// expected cost) or maximises (an expected reward).
type Objective int

const (
	// NoObjective: the network has no controls.
	NoObjective Objective = iota
	// Minimize: the controller minimises the expected payoff.
	Minimize
	// Maximize: the controller maximises the expected payoff.
	Maximize
)

// String returns "min", "max" or "" (NoObjective).
func (o Objective) String() string {
	switch o {
	case Minimize:
		return "min"
	case Maximize:
		return "max"
	}
	return ""
}

// ParseObjective reads "min" or "max".
func ParseObjective(s string) (Objective, error) {
	switch s {
	case "min":
		return Minimize, nil
	case "max":
		return Maximize, nil
	}
	return NoObjective, fmt.Errorf("objective %q: want \"min\" or \"max\"", s)
}

// EdgeControl is one alternative coefficient set of a controlled edge: the
// diffusivity a > 0, drift b, decay c ≥ 0 and source f of the generator
// a u” + b u' − c u + f while this control is in force. A reader fills the
// coefficients a control does not override from the edge's own.
type EdgeControl struct {
	A, B, C, F float64
}

// EdgeControls holds the alternatives of a controlled edge (behind a
// pointer so that Edge stays comparable).
type EdgeControls struct {
	Alt []EdgeControl
}

// ControlSet returns the edge's control alternatives (nil without controls).
func (e *Edge) ControlSet() []EdgeControl {
	if e.Controls == nil {
		return nil
	}
	return e.Controls.Alt
}

// NodeControl is one alternative set of end weights at a controlled node:
// Weights[edge id] is α at the end(s) of that edge at the node (both ends
// of a self-loop); edges not listed keep their own end weight.
type NodeControl struct {
	Weights map[string]float64
}

// Controlled reports whether any edge or node of net has controls.
func Controlled(net *Network) bool {
	for i := range net.Edges {
		if len(net.Edges[i].ControlSet()) > 0 {
			return true
		}
	}
	for i := range net.Nodes {
		if len(net.Nodes[i].Controls) > 0 {
			return true
		}
	}
	return false
}

// checkEdgeControls validates an edge's controls (AddEdge): every control
// must keep the equation elliptic (a > 0) and proper (c ≥ 0) with finite
// coefficients, and a controlled edge must have plain constant coefficients
// (no profile, no law).
func checkEdgeControls(e *Edge) error {
	if len(e.ControlSet()) == 0 {
		return nil
	}
	bad := func(k int, field string, v float64, want string) error {
		return &ModelError{Object: "edge", ID: e.ID, Field: "controls",
			Reason: fmt.Sprintf("entry %d: %s = %g %s", k, field, v, want)}
	}
	if e.Law != nil || !e.Constant() {
		return &ModelError{Object: "edge", ID: e.ID, Field: "controls", Reason: "need constant coefficients on the edge (no expressions or profiles)"}
	}
	fin := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	for k, c := range e.ControlSet() {
		switch {
		case !fin(c.A) || c.A <= 0:
			return bad(k, "diffusivity", c.A, "must be a finite number > 0: the edge equation would not be elliptic under this control")
		case c.A/e.Length < minScale || c.A/e.Length > 1/minScale:
			return bad(k, "diffusivity", c.A, "gives a/L out of range")
		case !fin(c.C) || c.C < 0:
			return bad(k, "decay", c.C, "must be a finite number ≥ 0")
		case !fin(c.B):
			return bad(k, "drift", c.B, "must be a finite number")
		case !fin(c.F):
			return bad(k, "source", c.F, "must be a finite number")
		}
	}
	return nil
}

// checkNodeControls validates a node's controls (AddNode): balance nodes
// only, with finite positive weights. That every weight names an edge at
// the node is checked by SolveControl and Apply, which see the edges.
func checkNodeControls(nd *Node) error {
	if len(nd.Controls) == 0 {
		return nil
	}
	if nd.Law.Kind != vertex.Balance {
		return &ModelError{Object: "node", ID: nd.ID, Field: "controls", Reason: "only a balance node can have controls"}
	}
	if nd.Nonlinear != nil {
		return &ModelError{Object: "node", ID: nd.ID, Field: "controls", Reason: "a node with a nonlinear law cannot have controls"}
	}
	for k, c := range nd.Controls {
		if len(c.Weights) == 0 {
			return &ModelError{Object: "node", ID: nd.ID, Field: "controls", Reason: fmt.Sprintf("entry %d gives no weights", k)}
		}
		for id, w := range c.Weights {
			if math.IsNaN(w) || math.IsInf(w, 0) || w <= 0 {
				return &ModelError{Object: "node", ID: nd.ID, Field: "controls",
					Reason: fmt.Sprintf("entry %d: weight %s = %g must be a finite number > 0 (the balance would not be monotone)", k, id, w)}
			}
		}
	}
	return nil
}

// checkControls validates what needs the whole network: an objective when
// there are controls, and node weights that name edges at the node.
func checkControls(net *Network) error {
	if !Controlled(net) {
		return fmt.Errorf("the network has no controls")
	}
	if net.Objective != Minimize && net.Objective != Maximize {
		return fmt.Errorf("the network has controls but no objective (\"min\" or \"max\")")
	}
	if HasLaws(net) {
		return fmt.Errorf("the network has controls and laws that depend on u (or nonlinear node laws): policy iteration needs every uncontrolled part linear")
	}
	for v := range net.Nodes {
		nd := &net.Nodes[v]
		for k, c := range nd.Controls {
			for id := range c.Weights {
				e, ok := net.EdgeIndex(id)
				if !ok || (net.Edges[e].From != v && net.Edges[e].To != v) {
					return &ModelError{Object: "node", ID: nd.ID, Field: "controls",
						Reason: fmt.Sprintf("entry %d: %q is not an edge at this node", k, id)}
				}
			}
		}
	}
	return nil
}

// PolicyPiece is a stretch [From, To] of an edge (distances from its From
// node) on which the control with index Control is in force.
type PolicyPiece struct {
	From, To float64
	Control  int
}

// Policy is a feedback policy of a controlled network: Edges[e] lists the
// pieces of edge e in order, covering [0, length] (nil for an edge without
// controls), Nodes[v] is the control index of node v (−1 for a node without
// controls).
type Policy struct {
	Edges [][]PolicyPiece
	Nodes []int
}

// ConstantPolicy returns the policy that uses control k on every controlled
// edge and node (k is clamped to each object's number of controls).
func ConstantPolicy(net *Network, k int) *Policy {
	p := &Policy{Edges: make([][]PolicyPiece, len(net.Edges)), Nodes: make([]int, len(net.Nodes))}
	for e := range net.Edges {
		ed := &net.Edges[e]
		if n := len(ed.ControlSet()); n > 0 {
			p.Edges[e] = []PolicyPiece{{0, ed.Length, min(k, n-1)}}
		}
	}
	for v := range net.Nodes {
		p.Nodes[v] = -1
		if n := len(net.Nodes[v].Controls); n > 0 {
			p.Nodes[v] = min(k, n-1)
		}
	}
	return p
}

// Check reports whether p fits net: pieces that cover every controlled edge
// in order with valid control indices, and a valid index at every
// controlled node.
func (p *Policy) Check(net *Network) error {
	if len(p.Edges) != len(net.Edges) || len(p.Nodes) != len(net.Nodes) {
		return fmt.Errorf("policy: sized for %d edges and %d nodes, the network has %d and %d", len(p.Edges), len(p.Nodes), len(net.Edges), len(net.Nodes))
	}
	const gap = 1e-9 // relative gap between pieces tolerated (rounding of printed numbers)
	for e := range net.Edges {
		ed := &net.Edges[e]
		ps := p.Edges[e]
		if len(ed.ControlSet()) == 0 {
			if len(ps) != 0 {
				return fmt.Errorf("policy: edge %q has no controls", ed.ID)
			}
			continue
		}
		if len(ps) == 0 {
			return fmt.Errorf("policy: no pieces for edge %q", ed.ID)
		}
		at := 0.0
		for i, q := range ps {
			if q.Control < 0 || q.Control >= len(ed.ControlSet()) {
				return fmt.Errorf("policy: edge %q piece %d: control %d out of range (the edge has %d)", ed.ID, i, q.Control, len(ed.ControlSet()))
			}
			if math.Abs(q.From-at) > gap*ed.Length || !(q.To > q.From) {
				return fmt.Errorf("policy: edge %q piece %d: [%g, %g] does not continue at %g", ed.ID, i, q.From, q.To, at)
			}
			at = q.To
		}
		if math.Abs(at-ed.Length) > gap*ed.Length {
			return fmt.Errorf("policy: edge %q: pieces end at %g, the edge's length is %g", ed.ID, at, ed.Length)
		}
	}
	for v := range net.Nodes {
		n := len(net.Nodes[v].Controls)
		k := p.Nodes[v]
		if n == 0 && k >= 0 {
			return fmt.Errorf("policy: node %q has no controls", net.Nodes[v].ID)
		}
		if n > 0 && (k < 0 || k >= n) {
			return fmt.Errorf("policy: node %q: control %d out of range (the node has %d)", net.Nodes[v].ID, k, n)
		}
	}
	return nil
}

// ControlAt returns the control index in force at distance x along edge e
// (the piece that holds x; at a boundary between pieces the later one).
func (p *Policy) ControlAt(e int, x float64) int {
	ps := p.Edges[e]
	i := sort.Search(len(ps), func(i int) bool { return ps[i].To > x })
	if i == len(ps) {
		i = len(ps) - 1
	}
	return ps[i].Control
}

// copyNetwork returns a copy of net whose Nodes and Edges slices are its
// own (the elements are copied; maps and functions inside are shared).
func copyNetwork(net *Network) *Network {
	cp := *net
	cp.Nodes = append([]Node(nil), net.Nodes...)
	cp.Edges = append([]Edge(nil), net.Edges...)
	cp.incident = nil
	if cp.nodeIndex.n != len(cp.Nodes) || cp.edgeIndex.n != len(cp.Edges) {
		// Built without AddNode and AddEdge (or changed since): index anew.
		cp.nodeIndex, cp.edgeIndex = idIndex{}, idIndex{}
		cp.nodeIndex.reserve(len(cp.Nodes))
		cp.edgeIndex.reserve(len(cp.Edges))
		for i := range cp.Nodes {
			cp.nodeIndex.add(cp.Nodes[i].ID, i)
		}
		for i := range cp.Edges {
			cp.edgeIndex.add(cp.Edges[i].ID, i)
		}
	}
	return &cp
}

// ScaleViscosity returns a copy of net with every diffusivity (edge
// coefficients and the diffusivities of every control) and every explicit
// end weight multiplied by eps > 0, so that the balances keep their form
// (the default end weight is the diffusivity). Used for the vanishing
// viscosity limit (docs/controls.md §4). Edges with laws or profiles are
// refused.
func ScaleViscosity(net *Network, eps float64) (*Network, error) {
	if !(eps > 0) || math.IsInf(eps, 0) {
		return nil, fmt.Errorf("viscosity scale = %g must be a finite number > 0", eps)
	}
	cp := copyNetwork(net)
	if eps == 1 {
		return cp, nil
	}
	for e := range cp.Edges {
		ed := &cp.Edges[e]
		if ed.Law != nil || !ed.Constant() {
			return nil, &ModelError{Object: "edge", ID: ed.ID, Reason: "the viscosity scale needs constant coefficients"}
		}
		ed.A *= eps
		ed.Weight[0] *= eps
		ed.Weight[1] *= eps
		if len(ed.ControlSet()) > 0 {
			cs := append([]EdgeControl(nil), ed.ControlSet()...)
			for k := range cs {
				cs[k].A *= eps
			}
			ed.Controls = &EdgeControls{Alt: cs}
		}
	}
	for v := range cp.Nodes {
		nd := &cp.Nodes[v]
		if len(nd.Controls) == 0 {
			continue
		}
		cs := make([]NodeControl, len(nd.Controls))
		for k, c := range nd.Controls {
			w := make(map[string]float64, len(c.Weights))
			for id, x := range c.Weights {
				w[id] = x * eps
			}
			cs[k] = NodeControl{Weights: w}
		}
		nd.Controls = cs
	}
	return cp, nil
}

// baseWeights fixes the end weights of every edge of cp at their values
// before any control is applied (the default is the edge's own
// diffusivity, not a control's).
func baseWeights(cp *Network) {
	for e := range cp.Edges {
		ed := &cp.Edges[e]
		if len(ed.ControlSet()) > 0 || ed.Weight[0] == 0 || ed.Weight[1] == 0 {
			ed.Weight = [2]float64{ed.EndWeight(0), ed.EndWeight(1)}
		}
	}
}

// setNodeWeights writes node v's control k into the end weights of cp
// (base holds the end weights without node controls).
func setNodeWeights(cp *Network, cs []NodeControl, base [][2]float64, v, k int) {
	for _, end := range cp.Incident(v) {
		cp.Edges[end.Edge].Weight[end.Side] = base[end.Edge][end.Side]
	}
	if k < 0 {
		return
	}
	for id, w := range cs[k].Weights {
		e, _ := cp.EdgeIndex(id)
		ed := &cp.Edges[e]
		if ed.From == v {
			ed.Weight[0] = w
		}
		if ed.To == v {
			ed.Weight[1] = w
		}
	}
}

// Apply returns the linear network that follows policy p: on a piece of an
// edge the coefficients of its control, at a node the end weights of its
// control. An edge with one piece gets constant coefficients (exact
// elements, exact walkers); an edge whose control changes along it gets
// piecewise constant coefficients (a Profile), on which walkers step in
// time. The result has no controls and no objective. End weights are
// those of the controlled network (the edge's own diffusivity by default,
// not a control's). A diffusivity that changes inside an edge is read by
// the linear solver and the walkers in the conservative form (the flux
// a u' is continuous at the switch), while the control problem keeps u'
// continuous: such a policy network is only an approximation of the
// policy's value, and Apply says so in its note (empty otherwise).
func (net *Network) Apply(p *Policy) (out *Network, note string, err error) {
	if err := p.Check(net); err != nil {
		return nil, "", err
	}
	if err := checkControls(net); err != nil {
		return nil, "", err
	}
	cp := copyNetwork(net)
	baseWeights(cp)
	base := make([][2]float64, len(cp.Edges))
	for e := range cp.Edges {
		base[e] = cp.Edges[e].Weight
	}
	for v := range cp.Nodes {
		if k := p.Nodes[v]; k >= 0 {
			setNodeWeights(cp, cp.Nodes[v].Controls, base, v, k)
		}
	}
	for v := range cp.Nodes {
		cp.Nodes[v].Controls = nil
	}
	for e := range cp.Edges {
		ed := &cp.Edges[e]
		if len(ed.ControlSet()) == 0 {
			continue
		}
		ps := p.Edges[e]
		cs := ed.ControlSet()
		ed.Controls = nil
		if len(ps) == 1 {
			c := cs[ps[0].Control]
			ed.A, ed.B, ed.C, ed.F = c.A, c.B, c.C, c.F
			continue
		}
		ends := make([]float64, len(ps))
		ks := make([]int, len(ps))
		for i, q := range ps {
			ends[i], ks[i] = q.To, q.Control
		}
		at := func(x float64) EdgeControl {
			i := sort.SearchFloat64s(ends, x)
			if i < len(ends) && ends[i] == x && i+1 < len(ends) {
				i++
			}
			if i >= len(ends) {
				i = len(ends) - 1
			}
			return cs[ks[i]]
		}
		a0 := cs[ks[0]].A
		varyA := false
		for _, k := range ks {
			if cs[k].A != a0 {
				varyA = true
			}
		}
		ed.A, ed.B, ed.C, ed.F = a0, cs[ks[0]].B, cs[ks[0]].C, cs[ks[0]].F
		pr := &Profile{
			Stretch: [2]float64{ps[0].To - ps[0].From, ps[len(ps)-1].To - ps[len(ps)-1].From},
			B:       func(x float64) float64 { return at(x).B },
			C:       func(x float64) float64 { return at(x).C },
			F:       func(x float64) float64 { return at(x).F },
		}
		for i := 0; i+1 < len(ps); i++ {
			if cs[ks[i]] != cs[ks[i+1]] {
				pr.Jumps = append(pr.Jumps, ps[i].To)
			}
		}
		if varyA {
			pr.A = func(x float64) float64 { return at(x).A }
			note = fmt.Sprintf("edge %q: the policy switches between controls of different diffusivity inside the edge; the policy network carries the flux a·u' across the switch, the control problem u' (values of the policy differ by the jump in a)", ed.ID)
		}
		ed.Profile = pr
	}
	cp.Objective = NoObjective
	return cp, note, nil
}
