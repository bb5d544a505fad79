package montecarlo_test

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/vertex"
)

// tNet is a small network for the tests, so that they do not depend on the
// graphpde package (which the example uses).
type tNet struct {
	nodes []tNode
	edges []tEdge
	inc   [][]vertex.End
}

type tNode struct {
	law   vertex.Law
	split []float64
}

type tEdge struct {
	from, to         int
	L, a, b, c, f, r float64    // r is ρ; 0 means 1
	w                [2]float64 // α at the ends; 0 means a
	varying          bool       // report non-constant: forces time stepping
	prof             func(x float64) (a, b, c, f, rho float64)
}

func (n *tNet) node(l vertex.Law) int {
	n.nodes = append(n.nodes, tNode{law: l})
	n.inc = nil
	return len(n.nodes) - 1
}

func (n *tNet) edge(e tEdge) int {
	if e.r == 0 {
		e.r = 1
	}
	n.edges = append(n.edges, e)
	n.inc = nil
	return len(n.edges) - 1
}

func fixed(g float64) vertex.Law { return vertex.Law{Kind: vertex.Fixed, Value: g} }

var kirchhoff = vertex.Law{Kind: vertex.Balance}

func (n *tNet) Size() (int, int) { return len(n.nodes), len(n.edges) }

func (n *tNet) WalkNode(v int) (string, vertex.Law, []vertex.End, []float64) {
	if n.inc == nil {
		n.inc = make([][]vertex.End, len(n.nodes))
		for i, e := range n.edges {
			n.inc[e.from] = append(n.inc[e.from], vertex.End{Edge: i, Side: 0})
			n.inc[e.to] = append(n.inc[e.to], vertex.End{Edge: i, Side: 1})
		}
	}
	return fmt.Sprintf("n%d", v), n.nodes[v].law, n.inc[v], n.nodes[v].split
}

func (n *tNet) WalkEdge(e int) (string, int, int, float64, [2]float64, bool) {
	ed := &n.edges[e]
	var w [2]float64
	for side := range w {
		if w[side] = ed.w[side]; w[side] == 0 {
			w[side], _, _, _, _ = n.EdgeCoeffs(e, [2]float64{0, ed.L}[side])
		}
	}
	return fmt.Sprintf("e%d", e), ed.from, ed.to, ed.L, w, !ed.varying && ed.prof == nil
}

func (n *tNet) EdgeCoeffs(e int, x float64) (a, b, c, f, rho float64) {
	ed := n.edges[e]
	if ed.prof != nil {
		return ed.prof(x)
	}
	return ed.a, ed.b, ed.c, ed.f, ed.r
}

func interval(e tEdge, g0, gL float64) *tNet {
	n := &tNet{}
	e.from, e.to = n.node(fixed(g0)), n.node(fixed(gL))
	n.edge(e)
	return n
}

// starArm is one arm of a star: the edge runs from the centre (node 0) to a
// fixed end with value g.
type starArm struct {
	L, a, c, f, rho, alpha, g float64
	b                         float64 // drift away from the centre
}

// star builds a star with centre law centre and the given arms; node k+1 is
// the end of arm k, edge k runs from the centre.
func star(centre vertex.Law, arms []starArm) *tNet {
	n := &tNet{}
	n.node(centre)
	for _, a := range arms {
		end := n.node(fixed(a.g))
		n.edge(tEdge{from: 0, to: end, L: a.L, a: a.a, b: a.b, c: a.c, f: a.f, r: a.rho, w: [2]float64{a.alpha, 0}})
	}
	return n
}

// starCentre returns the exact value at the centre of a star with constant
// coefficient arms, from the ODE a u” − c u + f = 0 on each arm with
// u(L) = g, and the balance law Σ α_e(−u_e'(0)) + β u0 = γ at the centre
// (docs/node-laws.md §2). On an arm, with κ = sqrt(c/a) and v = f/c,
//
//	u(x) = v + [(u0 − v) sinh κ(L−x) + (g − v) sinh κx]/sinh κL,
//	u'(0) = κ[(g − v) − (u0 − v) cosh κL]/sinh κL,
//
// and for c = 0, u(x) = u0 + (g − u0)x/L + f x(L − x)/(2a),
// u'(0) = (g − u0)/L + fL/(2a). Both are linear in u0: u'(0) = −A u0 + R.
func starCentre(beta, gamma float64, arms []starArm) float64 {
	den, num := beta, gamma
	for _, s := range arms {
		A, R := armSlope(s)
		den += s.alpha * A
		num += s.alpha * R
	}
	return num / den
}

func armSlope(s starArm) (A, R float64) {
	if s.c == 0 {
		return 1 / s.L, s.g/s.L + s.f*s.L/(2*s.a)
	}
	k := math.Sqrt(s.c / s.a)
	v := s.f / s.c
	sh, ch := math.Sinh(k*s.L), math.Cosh(k*s.L)
	return k * ch / sh, k*(s.g-v)/sh + k*v*ch/sh
}

// armValue returns u at x on an arm whose centre value is u0 (formulas of
// starCentre).
func armValue(s starArm, u0, x float64) float64 {
	if s.c == 0 {
		return u0 + (s.g-u0)*x/s.L + s.f*x*(s.L-x)/(2*s.a)
	}
	k := math.Sqrt(s.c / s.a)
	v := s.f / s.c
	return v + ((u0-v)*math.Sinh(k*(s.L-x))+(s.g-v)*math.Sinh(k*x))/math.Sinh(k*s.L)
}

// timeArms turns a star into its mean-lifetime problem (docs/exit-statistics.md §2): source
// ρ on the edges, payoff 0, decay kept.
func timeArms(arms []starArm) []starArm {
	out := make([]starArm, len(arms))
	for i, a := range arms {
		a.f, a.g = a.rho, 0
		out[i] = a
	}
	return out
}
