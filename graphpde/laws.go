package graphpde

import "fmt"

// This file holds the data types through which a network carries laws that
// are not constant numbers: coefficients that depend on x, u or t, fully
// nonlinear edge equations, nonlinear node laws, time-dependent node data and
// initial fields. Readers (graphpde/netfile) fill them from expressions in
// the file; solvers evaluate them. A nil pointer everywhere means "the
// constant value of the plain fields" (Edge.A, …, vertex.Law), so linear
// networks are unchanged.

// Params are the named numbers of a network (a file's [parameters] table).
// Laws compiled from expressions read Values at evaluation time, so a solver
// that changes a parameter (a sweep) sees the change in every law at once.
type Params struct {
	Names  []string
	Values []float64
}

// Index returns the position of the named parameter, or -1.
func (p *Params) Index(name string) int {
	if p == nil {
		return -1
	}
	for i, n := range p.Names {
		if n == name {
			return i
		}
	}
	return -1
}

// Set changes the value of the named parameter. It fails when p has no
// parameter of that name.
func (p *Params) Set(name string, v float64) error {
	i := p.Index(name)
	if i < 0 {
		return fmt.Errorf("no parameter %q", name)
	}
	p.Values[i] = v
	return nil
}

// Coef is a coefficient that may depend on the distance x along the edge,
// the field value u, the time t and the network's parameters. Fn returns the
// value and its partial derivative in u (zero when the law does not use u).
type Coef struct {
	Fn func(x, u, t float64) (v, du float64)
	// Which variables the law uses. A coefficient that uses none of them and
	// no parameter is a constant and is stored in the plain field instead.
	// One that reads parameters only (UsesP, not X, U or T) is kept as a Coef
	// so that a parameter sweep sees the change; the plain field then holds
	// its value at the parameters the network was read with, for engines
	// that read constants. (The file reader puts a coefficient that depends
	// on x and parameters only in Edge.Profile, which every linear engine
	// reads, not here.)
	UsesX, UsesU, UsesT bool
	UsesP               bool   // reads a parameter (Params)
	Src                 string // the expression as written, for messages and writers
	// Why, when not nil, names the part of the expression whose value is
	// not finite at (x, u, t), e.g. "log(u - 0.5) = NaN at u = 0.2
	// (column 5)", or returns "" when the value is finite: for error
	// messages, not fast.
	Why func(x, u, t float64) string
}

// Equation is a fully nonlinear edge law in generator sign,
//
//	E(x, u, ux, uxx) = 0,
//
// which must be increasing in uxx (elliptic). Fn returns E and its partial
// derivatives in u, ux and uxx.
type Equation struct {
	Fn  func(x, u, ux, uxx float64) (e, du, dux, duxx float64)
	Src string
	// Why, when not nil, names the part of the expression whose value is
	// not finite at (x, u, ux, uxx), or returns "" (see Coef.Why).
	Why func(x, u, ux, uxx float64) string
}

// EdgeLaw is the non-constant part of an edge. A nil field means the plain
// constant (Edge.A, Edge.B, Edge.C, Edge.F, Edge.Rho). When Equation is set
// it replaces A, B, C and F, and the edge's end weights must be given.
type EdgeLaw struct {
	A, B, C, F, Rho *Coef
	Equation        *Equation
	// Initial is the initial field along the edge for transient problems
	// (a function of x; nil means 0, or the node values where given).
	Initial *Coef
}

// NodeNonlinear is a nonlinear balance law at a node. Exactly one of Loss and
// General is set.
//
// Loss: Σ_e J_e + loss(u) = 0, loss non-decreasing in u for uniqueness.
// General: G(u, d_1, …, d_k) = 0 with d_e the derivative of u leaving the
// node along its k-th incident end (Network.Incident order); G must be
// non-increasing in every d_e. Fn writes ∂G/∂d_e into dd (len k) and returns
// G and ∂G/∂u.
type NodeNonlinear struct {
	Loss    func(u float64) (v, du float64)
	General func(u float64, d, dd []float64) (g, du float64)
	Src     string
}

// NodeTime holds node data that depend on time t or on parameters (nil: the
// constants of the node's vertex.Law). Fixed is set on a fixed node, Inject
// on a balance node. The node's Law.Value or Law.Inject holds the value at
// t = 0 with the parameters the network was read with; a steady solver that
// follows a parameter (a sweep) evaluates the function at t = 0.
type NodeTime struct {
	Fixed, Inject func(t float64) float64
	UsesT         bool   // depends on t (false: on parameters only)
	Src           string // the expression as written
	// Table, when not nil, is the table (a schedule) that Fixed or Inject
	// interpolate: Evolve's exact method transforms it exactly, where it
	// refuses a general expression of t.
	Table *TimeTable
}

// TimeDependence lists the data of net that depend on the time t, e.g.
// `edge "e": source` or `node "a": fixed`, in network order: a steady solver
// uses their values at t = 0 and should say so. Cost O(nodes + edges).
func TimeDependence(net *Network) []string {
	var out []string
	for i := range net.Nodes {
		nd := &net.Nodes[i]
		if tm := nd.Time; tm != nil && tm.UsesT {
			key := "inject"
			if tm.Fixed != nil {
				key = "fixed"
			}
			out = append(out, fmt.Sprintf("node %q: %s", nd.ID, key))
		}
	}
	for i := range net.Edges {
		ed := &net.Edges[i]
		if ed.Law == nil {
			continue
		}
		l := ed.Law
		for _, c := range []struct {
			key string
			c   *Coef
		}{{"diffusivity", l.A}, {"drift", l.B}, {"decay", l.C}, {"source", l.F}, {"capacity", l.Rho}} {
			if c.c != nil && c.c.UsesT {
				out = append(out, fmt.Sprintf("edge %q: %s", ed.ID, c.key))
			}
		}
	}
	return out
}
