package graphpde

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/internal/laplace"
	"github.com/ramify-dev/ramify/vertex"
)

// gridOccupationBudget bounds the work of the per-edge occupation solves on
// grid networks: edges × unknowns of one solve. Above it Occupation is left
// NaN with a note (about a second of solves at this size).
const gridOccupationBudget = 2e7

// gridMomentRounding is the relative rounding of the grid moment hierarchy
// allowed by setSD before a negative variance is reported as NaN (common
// practice, no source: a few thousand ε for a chain of solves).
const gridMomentRounding = 1e-12

// componentNetwork returns a copy of the connected component of p as a
// network of its own (nodes and edges in their original order, Profiles
// shared), the maps from its node and edge indices to those of net, and p
// in its numbering. Cost O(nodes + edges).
func componentNetwork(net *Network, p Point) (sub *Network, nodeOf, edgeOf []int, sp Point, err error) {
	comp, _ := net.Components()
	c0 := pointComponent(net, comp, p)
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
	sp = vertex.OnEdge(-1, p.X) // edge set below
	if p.Edge < 0 {
		sp = vertex.AtNode(local[p.Node])
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

// gridExit holds the grid node systems of the start's component, re-used
// by every problem of the grid path; only their data change between solves.
// vsys takes the edge source as a function of x (needed for the moment
// hierarchy and for sources that follow a capacity or decay profile); csys
// takes one constant source per edge, which lets constant-coefficient edges
// use the faster constant grid condensation. Each system keeps its ordering
// and symbolic factorisation across solves.
type gridExit struct {
	net   *Network // the component
	start Point    // in its numbering
	set   Settings

	vsys *system
	vv   *Variant // shares its slices with vsys.v
	src  func(e int, x float64) float64

	csys *system
	cv   *Variant // shares its slices with csys.v
}

func newGridExit(net *Network, p Point, set *Settings) (*gridExit, []int, []int, error) {
	sub, nodeOf, edgeOf, sp, err := componentNetwork(net, p)
	if err != nil {
		return nil, nil, nil, err
	}
	g := &gridExit{net: sub, start: sp, set: Settings{Method: MethodGrid, Cells: set.Cells}}
	g.src = func(int, float64) float64 { return 0 }
	g.vv = &Variant{
		EdgeSource: func(e int, x float64) float64 { return g.src(e, x) },
		NodeInject: make([]float64, len(sub.Nodes)),
		FixedValue: make([]float64, len(sub.Nodes)),
	}
	g.cv = &Variant{
		ConstSource: make([]float64, len(sub.Edges)),
		NodeInject:  make([]float64, len(sub.Nodes)),
		FixedValue:  make([]float64, len(sub.Nodes)),
	}
	if g.csys, err = newSystem(sub, g.cv, &g.set); err != nil {
		return nil, nil, nil, err
	}
	return g, nodeOf, edgeOf, nil
}

// solve assembles sys with its current data and the shift, factors
// (re-using the ordering) and solves. The Solution shares the system's grid
// storage: it is valid until the next solve of the same system.
func (g *gridExit) solve(sys *system, shift float64) (*Solution, error) {
	sys.v.Shift = shift
	sys.assemble(shift)
	if err := sys.factor(); err != nil {
		return nil, err
	}
	sys.solve()
	return sys.solution()
}

// resolve solves sys again after a change of its node data only (fixed
// values, injections), re-using its matrix and factorisation. Like solve,
// the Solution shares the system's interior storage.
func (g *gridExit) resolve(sys *system) (*Solution, error) {
	sys.assembleRHS()
	sys.solve()
	return sys.solution()
}

// solveVar solves the function-source system, building it on first use.
func (g *gridExit) solveVar(shift float64) (*Solution, error) {
	if g.vsys == nil {
		var err error
		if g.vsys, err = newSystem(g.net, g.vv, &g.set); err != nil {
			return nil, err
		}
	}
	return g.solve(g.vsys, shift)
}

// constProfile reports whether no edge of the component has a profile for
// the coefficient picked by which (so a constant source per edge can
// stand for it).
func (g *gridExit) constProfile(which func(p *Profile) bool) bool {
	for e := range g.net.Edges {
		if p := g.net.Edges[e].Profile; p != nil && which(p) {
			return false
		}
	}
	return true
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
	cv, nv := g.cv, g.vv
	var hitSum float64
	factored := false
	for v := range sub.Nodes {
		if sub.Nodes[v].Law.Kind != vertex.Fixed {
			continue
		}
		cv.FixedValue[v] = 1
		var sol *Solution
		var err error
		if !factored {
			sol, err = g.solve(g.csys, 0)
			factored = err == nil
		} else {
			// Only the fixed values changed: the matrix and its factor
			// stand, the right-hand side is assembled alone.
			sol, err = g.resolve(g.csys)
		}
		cv.FixedValue[v] = 0
		if err != nil {
			return err
		}
		h := sol.at(g.start)
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
				return nf * g.rho(e, xx) * p.at(vertex.OnEdge(e, xx))
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
		sol, err := g.solveVar(0)
		if err != nil {
			return err
		}
		x.Moments[n-1] = sol.at(g.start)
		prev = snapshot(sol)
	}
	x.Mean = x.Moments[0]
	x.setSD(gridMomentRounding)

	// Occupations: the mean problem with the source on one edge only.
	clear(nv.NodeInject)
	constRho := g.constProfile(func(p *Profile) bool { return p.Rho != nil })
	if float64(len(sub.Edges))*float64(g.csys.stats.Unknowns) > gridOccupationBudget {
		for _, e := range edgeOf {
			x.Occupation[e] = math.NaN()
		}
		x.Notes = append(x.Notes, fmt.Sprintf("occupation times not computed: %d edges × %d grid unknowns is above the budget of %g solves×unknowns (one grid solve per edge)", len(sub.Edges), g.csys.stats.Unknowns, gridOccupationBudget))
	} else {
		for k := range sub.Edges {
			var sol *Solution
			var err error
			if constRho {
				clear(cv.ConstSource)
				cv.ConstSource[k] = sub.Edges[k].Rho
				sol, err = g.solve(g.csys, 0)
			} else {
				g.src = func(e int, xx float64) float64 {
					if e != k {
						return 0
					}
					return g.rho(e, xx)
				}
				sol, err = g.solveVar(0)
			}
			if err != nil {
				return err
			}
			x.Occupation[edgeOf[k]] = sol.at(g.start)
		}
	}

	// The law of τ: L(s) at real s ≥ 0 with decay c + sρ, leak β + sρ_v,
	// value 1 at fixed nodes and the killing paid as a reward.
	sys, v := g.csys, cv
	if g.constProfile(func(p *Profile) bool { return p.C != nil }) {
		for e := range sub.Edges {
			cv.ConstSource[e] = sub.Edges[e].C
		}
	} else {
		g.src = func(e int, xx float64) float64 {
			_, _, c, _, _ := g.net.Edges[e].Coeffs(xx)
			return c
		}
		if _, err := g.solveVar(0); err != nil { // builds vsys
			return err
		}
		sys, v = g.vsys, nv
	}
	for i := range sub.Nodes {
		l := sub.Nodes[i].Law
		v.NodeInject[i], v.FixedValue[i] = 0, 0
		switch l.Kind {
		case vertex.Balance:
			v.NodeInject[i] = l.Leak
		case vertex.Fixed:
			v.FixedValue[i] = 1
		}
	}
	x.law = &lifetimeLaw{real: func(sh float64) (float64, error) {
		if s.Context != nil {
			if err := s.Context.Err(); err != nil {
				return 0, fmt.Errorf("Laplace transform of the lifetime: stopped: %w", err)
			}
		}
		x.Transforms++
		sol, err := g.solve(sys, sh)
		if err != nil {
			return 0, err
		}
		return sol.at(g.start), nil
	}, stehfest: laplace.StehfestWeights(laplace.DefaultStehfestN), stehfestCheck: laplace.StehfestWeights(stehfestCheckN)}
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
	var S2 float64 // the same with stehfestCheckN terms (the first shifts)
	for k, w := range lw.stehfest {
		s := float64(k+1) * a
		L, err := lw.real(s)
		if err != nil {
			return math.NaN(), math.NaN(), err
		}
		L = real(lw.shifted(complex(s, 0), complex(L, 0)))
		S += w * (1 - L) / s
		dens += w * L
		if k < len(lw.stehfestCheck) {
			S2 += lw.stehfestCheck[k] * (1 - L) / s
		}
	}
	S, dens, S2 = a*S, a*dens, a*S2
	if S < -stehfestClampSlack || S > 1+stehfestClampSlack || math.Abs(S-S2) > stehfestAgreement {
		S, dens = math.NaN(), math.NaN() // the inversion failed here
	} else {
		S = math.Min(1, math.Max(0, S))
	}
	if lw.cache == nil {
		lw.cache = make(map[float64][2]float64)
	}
	lw.cache[t] = [2]float64{S, dens}
	return S, dens, nil
}
