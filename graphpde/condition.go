package graphpde

import "github.com/ramify-dev/ramify/vertex"

// Condition returns node v's law in residual form (vertex.Condition), with
// the end derivatives in Incident(v) order: the linear law of Node.Law with
// the edges' end weights, or the node's nonlinear law (Node.Nonlinear).
// Solvers that treat linear and nonlinear nodes alike (Newton) read every
// node through it. It allocates the weights. Cost O(degree).
func (n *Network) Condition(v int) vertex.Condition {
	nd := &n.Nodes[v]
	inc := n.Incident(v)
	alpha := make([]float64, len(inc))
	for k, end := range inc {
		alpha[k] = n.Edges[end.Edge].EndWeight(end.Side)
	}
	switch nl := nd.Nonlinear; {
	case nl == nil || nd.Law.Kind == vertex.Fixed:
		return vertex.Linear{Law: nd.Law, Alpha: alpha}
	case nl.General != nil:
		return generalCondition{nl}
	default:
		return lossCondition{loss: nl.Loss, alpha: alpha}
	}
}

// lossCondition is NodeNonlinear.Loss in residual form:
// G = Σ_j J_j + loss(u), J_j = −α_j d_j.
type lossCondition struct {
	loss  func(u float64) (v, du float64)
	alpha []float64
}

func (c lossCondition) Residual(u float64, d, dd []float64) (g, du float64) {
	g, du = c.loss(u)
	dd = dd[:len(d)]
	for j, x := range d {
		g -= c.alpha[j] * x
		dd[j] = -c.alpha[j]
	}
	return g, du
}

// Monotone checks that the loss does not decrease at u (the weights are
// positive by construction of the network).
func (c lossCondition) Monotone(u float64, d []float64) error {
	if _, du := c.loss(u); du < 0 {
		return &vertex.MonotoneError{End: -1, Slope: du, U: u}
	}
	return nil
}

// generalCondition is NodeNonlinear.General, already in residual form.
type generalCondition struct{ nl *NodeNonlinear }

func (c generalCondition) Residual(u float64, d, dd []float64) (g, du float64) {
	return c.nl.General(u, d, dd)
}

// Monotone evaluates the law at (u, d) and checks the signs; it needs
// scratch for the derivatives and allocates it for nodes of degree above 8.
func (c generalCondition) Monotone(u float64, d []float64) error {
	var buf [8]float64
	dd := buf[:0]
	if len(d) > len(buf) {
		dd = make([]float64, len(d))
	}
	return vertex.CheckMonotone(c, u, d, dd[:len(d)])
}
