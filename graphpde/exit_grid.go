package graphpde

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde/internal/laplace"
	"github.com/ramify-dev/ramify/vertex"
)

// gridOccupationBudget bounds the work of the per-edge occupation solves on
// grid networks: edges × unknowns of one solve. Above it Occupation is left
// NaN with a note (about a second of solves at this size).
const gridOccupationBudget = 2e7

// componentNetwork returns a copy of the connected component of p as a
// network of its own (nodes and edges in their original order, Profiles
// shared), the maps from its node and edge indices to those of net, and p
// in its numbering. Cost O(nodes + edges).
func componentNetwork(net *Network, p Point) (sub *Network, nodeOf, edgeOf []int, sp Point, err error) {
	comp, _ := net.Components()
	var c0 int
	if p.Edge >= 0 {
		c0 = comp[net.Edges[p.Edge].From]
	} else {
		c0 = comp[p.Node]
	}
	sub = &Network{Name: net.Name}
	local := make([]int, len(net.Nodes))
	for v := range net.Nodes {
		local[v] = -1
		if comp[v] != c0 {
			continue
		}
		nd := net.Nodes[v]
		if local[v], err = sub.AddNode(nd); err != nil {
			return nil, nil, nil, Point{}, err
		}
		nodeOf = append(nodeOf, v)
	}
	sp = Point{Node: -1, Edge: -1, X: p.X}
	if p.Edge < 0 {
		sp.Node = local[p.Node]
	}
	for e := range net.Edges {
		ed := net.Edges[e]
		if comp[ed.From] != c0 {
			continue
		}
		ed.From, ed.To = local[ed.From], local[ed.To]
		k, err := sub.AddEdge(ed)
		if err != nil {
			return nil, nil, nil, Point{}, err
		}
		if e == p.Edge {
			sp.Edge = k
		}
		edgeOf = append(edgeOf, e)
	}
	return sub, nodeOf, edgeOf, sp, nil
}

// gridExit holds the grid node system of the start's component, re-used by
// every problem of the grid path: the system is built once with a source
// function (so every edge is a grid edge) and only its data change between
// solves.
type gridExit struct {
	net   *Network // the component
	start Point    // in its numbering
	sys   *system
	v     *Variant // shares its slices with sys.v
	src   func(e int, x float64) float64
}

func newGridExit(net *Network, p Point, set *Settings) (*gridExit, []int, []int, error) {
	sub, nodeOf, edgeOf, sp, err := componentNetwork(net, p)
	if err != nil {
		return nil, nil, nil, err
	}
	g := &gridExit{net: sub, start: sp}
	g.v = &Variant{
		EdgeSource: func(e int, x float64) float64 { return g.src(e, x) },
		NodeInject: make([]float64, len(sub.Nodes)),
		FixedValue: make([]float64, len(sub.Nodes)),
	}
	g.src = func(int, float64) float64 { return 0 }
	gs := Settings{Method: MethodGrid}
	if set != nil {
		gs.Cells = set.Cells
	}
	if g.sys, err = newSystem(sub, g.v, &gs); err != nil {
		return nil, nil, nil, err
	}
	return g, nodeOf, edgeOf, nil
}

// solve assembles with the current data and shift, factors (re-using the
// ordering) and solves. The Solution shares the system's grid storage: it
// is valid until the next solve.
func (g *gridExit) solve(shift float64) (*Solution, error) {
	s := g.sys
	s.v.Shift = shift
	s.assemble(shift)
	if err := s.factor(); err != nil {
		return nil, err
	}
	s.solve()
	return s.solution()
}

// snapshot copies the grid values of sol so that it survives later solves.
func snapshot(sol *Solution) *Solution {
	c := *sol
	c.gval = append([]float64(nil), sol.gval...)
	c.U = append([]float64(nil), sol.U...)
	return &c
}

func (g *gridExit) rho(e int, x float64) float64 {
	_, _, _, _, r := g.net.Edges[e].Coeffs(x)
	return r
}

// gridStatistics fills x by the grid path: one steady solve per fixed node
// (hits), the moment hierarchy T_n with source nρT_{n−1} (second order in
// the cell size), one solve per edge for the occupations (within
// gridOccupationBudget), and the law of τ by Gaver–Stehfest inversion of
// the transform at real shifts.
func (x *ExitStats) gridStatistics(net *Network, start Point, s *ExitSettings) error {
	g, nodeOf, edgeOf, err := newGridExit(net, start, &Settings{Cells: s.Cells})
	if err != nil {
		return err
	}
	sub := g.net
	nv := g.v
	clear(nv.NodeInject)
	clear(nv.FixedValue)
	g.src = func(int, float64) float64 { return 0 }
	var hitSum float64
	for v := range sub.Nodes {
		if sub.Nodes[v].Law.Kind != vertex.Fixed {
			continue
		}
		nv.FixedValue[v] = 1
		sol, err := g.solve(0)
		nv.FixedValue[v] = 0
		if err != nil {
			return err
		}
		h := sol.At(g.start)
		x.Hit[nodeOf[v]] = h
		hitSum += h
	}
	x.Killed = math.Max(0, 1-hitSum)

	// Moments: T_0 = 1; a T_n'' + … = −nρT_{n−1}, node injection nρ_vT_{n−1}.
	var prev *Solution
	for n := 1; n <= len(x.Moments); n++ {
		nf := float64(n)
		if prev == nil {
			g.src = func(e int, xx float64) float64 { return g.rho(e, xx) }
		} else {
			p := prev
			g.src = func(e int, xx float64) float64 {
				return nf * g.rho(e, xx) * p.At(Point{Node: -1, Edge: e, X: xx})
			}
		}
		for v := range sub.Nodes {
			nv.NodeInject[v] = 0
			if l := sub.Nodes[v].Law; l.Kind == vertex.Balance {
				T := 1.0
				if prev != nil {
					T = prev.U[v]
				}
				nv.NodeInject[v] = nf * l.Capacity * T
			}
		}
		sol, err := g.solve(0)
		if err != nil {
			return err
		}
		x.Moments[n-1] = sol.At(g.start)
		prev = snapshot(sol)
	}
	x.Mean = x.Moments[0]
	x.SD = math.Sqrt(math.Max(0, x.Moments[1]-x.Mean*x.Mean))

	// Occupations: the mean problem with the source on one edge only.
	clear(nv.NodeInject)
	if float64(len(sub.Edges))*float64(g.sys.stats.Unknowns) > gridOccupationBudget {
		for _, e := range edgeOf {
			x.Occupation[e] = math.NaN()
		}
		x.Notes = append(x.Notes, fmt.Sprintf("occupation times not computed: %d edges × %d grid unknowns is above the budget of %g solves×unknowns (one grid solve per edge)", len(sub.Edges), g.sys.stats.Unknowns, gridOccupationBudget))
	} else {
		for k := range sub.Edges {
			g.src = func(e int, xx float64) float64 {
				if e != k {
					return 0
				}
				return g.rho(e, xx)
			}
			sol, err := g.solve(0)
			if err != nil {
				return err
			}
			x.Occupation[edgeOf[k]] = sol.At(g.start)
		}
	}

	// The law of τ: L(s) at real s ≥ 0 with decay c + sρ, leak β + sρ_v,
	// value 1 at fixed nodes and the killing paid as a reward.
	g.src = func(e int, xx float64) float64 {
		_, _, c, _, _ := g.net.Edges[e].Coeffs(xx)
		return c
	}
	for v := range sub.Nodes {
		l := sub.Nodes[v].Law
		nv.NodeInject[v], nv.FixedValue[v] = 0, 0
		switch l.Kind {
		case vertex.Balance:
			nv.NodeInject[v] = l.Leak
		case vertex.Fixed:
			nv.FixedValue[v] = 1
		}
	}
	x.law = &lifetimeLaw{real: func(sh float64) (float64, error) {
		sol, err := g.solve(sh)
		if err != nil {
			return 0, err
		}
		return sol.At(g.start), nil
	}, stehfest: laplace.StehfestWeights(laplace.DefaultStehfestN)}
	x.Notes = append(x.Notes,
		"grid elements: moments from the hierarchy T_n (source nρT_{n−1}), second order in the cell size",
		fmt.Sprintf("grid elements: the law of τ by Gaver–Stehfest inversion (%d real shifts per time, error about 1e−5) of the grid transform", laplace.DefaultStehfestN))
	return nil
}

// stehfest returns P(τ > t) and the density at t by the Gaver–Stehfest
// formula with real shifts s_k = k ln2/t: S from (1 − L(s))/s, the density
// from L(s). The caller holds lw.mu.
func (lw *lifetimeLaw) stehfestAt(t float64) (S, dens float64, err error) {
	if v, ok := lw.cache[t]; ok {
		return v[0], v[1], nil
	}
	a := math.Ln2 / t
	for k, w := range lw.stehfest {
		s := float64(k+1) * a
		L, err := lw.real(s)
		if err != nil {
			return math.NaN(), math.NaN(), err
		}
		S += w * (1 - L) / s
		dens += w * L
	}
	S, dens = a*S, a*dens
	S = math.Min(1, math.Max(0, S))
	if lw.cache == nil {
		lw.cache = make(map[float64][2]float64)
	}
	lw.cache[t] = [2]float64{S, dens}
	return S, dens, nil
}
