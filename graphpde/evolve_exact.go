package graphpde

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
	"github.com/ramify-dev/ramify/internal/laplace"
	"github.com/ramify-dev/ramify/vertex"
)

// The exact transient: the Laplace transform of the transient problem with
// constant data is, at each s, the steady problem
//
//	a û'' + b û' − (c + sρ) û + f/s + ρ u⁰ = 0     on the edges,
//	Σ Ĵ + (β + sρ_v) û = γ/s + ρ_v u⁰(v)           at balance nodes,
//	û = g/s                                          at fixed nodes,
//
// solved with exact elements at complex s (docs/time-and-spectrum.md §2) and
// inverted by fixed Talbot contours (internal/laplace; about 1e-11 relative).
// It needs constant coefficients on every edge, an initial value that is
// constant along each edge, and fixed values and injections that do not
// depend on time.

// laplaceNet is the transform of a network's transient problem.
type laplaceNet struct {
	net  *Network
	unk  []int
	m    int
	u0   []float64 // per edge: the constant initial value
	mat  *nodesys.Matrix[complex128]
	fac  *nodesys.Factor[complex128]
	rhs  []complex128
	x    []complex128
	node []complex128 // node values at the last s
	s    complex128
}

func newLaplaceNet(net *Network) (*laplaceNet, error) {
	ln := &laplaceNet{net: net, unk: make([]int, len(net.Nodes)), u0: make([]float64, len(net.Edges))}
	for v := range net.Nodes {
		nd := &net.Nodes[v]
		ln.unk[v] = -1
		if nd.Law.Kind != vertex.Fixed {
			ln.unk[v] = ln.m
			ln.m++
		}
		if nd.Time != nil && (nd.Time.Fixed != nil || nd.Time.Inject != nil) {
			return nil, &ModelError{Object: "node", ID: nd.ID, Reason: "has a fixed value or injection that depends on t: method exact needs constant ones (use grid)"}
		}
	}
	init := func(v int) float64 {
		if p := net.Nodes[v].Initial; p != nil {
			return *p
		}
		return 0
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		if !ed.Constant() || (ed.Law != nil && (varies(ed.Law.A) || varies(ed.Law.B) || varies(ed.Law.C) || varies(ed.Law.F) || varies(ed.Law.Rho))) {
			return nil, &ModelError{Object: "edge", ID: ed.ID, Reason: "has coefficients or a source that vary in x or t: method exact needs constant ones (use grid)"}
		}
		switch {
		case ed.Law != nil && ed.Law.Initial != nil:
			if ed.Law.Initial.UsesX {
				return nil, &ModelError{Object: "edge", ID: ed.ID, Field: "initial", Reason: "varies along the edge: method exact needs a constant initial value (use grid)"}
			}
			ln.u0[e], _ = ed.Law.Initial.Fn(0, 0, 0)
		default:
			a, b := init(ed.From), init(ed.To)
			if a != b {
				return nil, &ModelError{Object: "edge", ID: ed.ID, Field: "initial", Reason: "has none, and its end nodes start at different values: method exact needs a constant initial value along the edge (give one, or use grid)"}
			}
			ln.u0[e] = a
		}
	}
	ln.mat = nodesys.NewMatrix[complex128](ln.m)
	ln.fac = nodesys.NewFactor[complex128](nil)
	ln.rhs = make([]complex128, ln.m)
	ln.x = make([]complex128, ln.m)
	ln.node = make([]complex128, len(net.Nodes))
	return ln, nil
}

// edgeData returns the shifted decay and transformed source of edge e at s.
func (ln *laplaceNet) edgeData(e int, s complex128) (c, f complex128) {
	ed := &ln.net.Edges[e]
	rho := complex(ed.Rho, 0)
	return complex(ed.C, 0) + s*rho, complex(ed.F, 0)/s + rho*complex(ln.u0[e], 0)
}

// solve computes the node values of the transform at s.
func (ln *laplaceNet) solve(s complex128) error {
	net := ln.net
	ln.s = s
	ln.mat.ZeroValues()
	clear(ln.rhs)
	for v := range net.Nodes {
		nd := &net.Nodes[v]
		if i := ln.unk[v]; i >= 0 {
			l := nd.Law
			ln.mat.Add(i, i, complex(l.Leak, 0)+s*complex(l.Capacity, 0))
			u0 := 0.0
			if nd.Initial != nil {
				u0 = *nd.Initial
			}
			ln.rhs[i] += complex(l.Inject, 0)/s + complex(l.Capacity*u0, 0)
		} else {
			ln.node[v] = complex(nd.Law.Value, 0) / s
		}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		c, f := ln.edgeData(e, s)
		d, g := exactElement[complex128](ed.A, ed.B, c, f, ed.Length)
		ends := [2]int{ed.From, ed.To}
		// J at the from end: −α₀ u'(0); at the to end: +α_L u'(L).
		for side, v := range ends {
			i := ln.unk[v]
			if i < 0 {
				continue
			}
			al := complex(ed.EndWeight(side), 0)
			sg := complex(-1, 0)
			if side == 1 {
				sg = 1
			}
			for k, w := range ends {
				coef := sg * al * d[side][k]
				if j := ln.unk[w]; j >= 0 {
					ln.mat.Add(i, j, coef)
				} else {
					ln.rhs[i] -= coef * ln.node[w]
				}
			}
			ln.rhs[i] -= sg * al * g[side]
		}
	}
	if ln.m > 0 {
		if err := ln.fac.Factorize(ln.mat); err != nil {
			return err
		}
		ln.fac.SolveTo(ln.x, ln.rhs)
	}
	for v := range net.Nodes {
		if i := ln.unk[v]; i >= 0 {
			ln.node[v] = ln.x[i]
		}
	}
	return nil
}

// at returns the transform at p after solve.
func (ln *laplaceNet) at(p Point) complex128 {
	if p.Edge < 0 {
		return ln.node[p.Node]
	}
	ed := &ln.net.Edges[p.Edge]
	c, f := ln.edgeData(p.Edge, ln.s)
	return exactValue[complex128](ed.A, ed.B, c, f, ed.Length, p.X, ln.node[ed.From], ln.node[ed.To])
}

// values inverts the transform at time t > 0 for every probe into dst.
func (ln *laplaceNet) values(dst []float64, probes []Point, t float64) error {
	ct := laplace.TalbotContour(t, laplace.DefaultM)
	clear(dst)
	for k, s := range ct.S {
		if err := ln.solve(s); err != nil {
			return fmt.Errorf("transform at s = %v: %w", s, err)
		}
		w := ct.D[k] * cmplx.Exp(complex(t, 0)*s)
		for j, p := range probes {
			dst[j] += real(w * ln.at(p))
		}
	}
	for _, v := range dst {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return errors.New("the inverse transform is not finite")
		}
	}
	return nil
}

// initialAt returns u(p, 0).
func (ln *laplaceNet) initialAt(p Point) float64 {
	net := ln.net
	if p.Edge < 0 {
		nd := &net.Nodes[p.Node]
		if nd.Law.Kind == vertex.Fixed {
			return nd.Law.Value
		}
		if nd.Initial != nil {
			return *nd.Initial
		}
		return 0
	}
	return ln.u0[p.Edge]
}

// evolveExact inverts the Laplace transform at the output times (100 equal
// intervals when Every is 0). Crossing times are found by bisection on the
// inverse transform, to a relative 1e-9 of Until.
func evolveExact(net *Network, s *EvolveSettings) (*EvolveResult, error) {
	if s.Fields {
		return nil, errors.New("method exact gives probe values only (use grid for snapshots)")
	}
	ln, err := newLaplaceNet(net)
	if err != nil {
		return nil, err
	}
	every := s.Every
	if every == 0 {
		every = s.Until / 100
	}
	res := &EvolveResult{Status: Converged, Probes: make([][]float64, len(s.Probes))}
	res.Stats.Unknowns = ln.m
	vals := make([]float64, len(s.Probes))
	for _, t := range outputTimes(every, s.Until) {
		if s.Context.Err() != nil {
			res.Status = IterationLimit
			break
		}
		if t == 0 {
			for j, p := range s.Probes {
				vals[j] = ln.initialAt(p)
			}
		} else if err := ln.values(vals, s.Probes, t); err != nil {
			return nil, fmt.Errorf("at t = %g: %w", t, err)
		}
		res.Times = append(res.Times, t)
		for j := range s.Probes {
			res.Probes[j] = append(res.Probes[j], vals[j])
		}
		res.Stats.Factorizations += laplace.DefaultM
		if s.Progress != nil {
			s.Progress(t, s.Until)
		}
	}
	if s.Crossing > 0 && res.Status == Converged {
		sol, err := Solve(net, &Settings{Method: MethodExact})
		if err != nil {
			return nil, fmt.Errorf("steady values for the crossing times: %w", err)
		}
		res.Steady = make([]float64, len(s.Probes))
		res.Crossing = make([]float64, len(s.Probes))
		one := make([]float64, 1)
		for j, p := range s.Probes {
			if res.Steady[j], err = sol.At(p); err != nil {
				return nil, err
			}
			start := res.Probes[j][0]
			level := start + s.Crossing*(res.Steady[j]-start)
			up := level >= start
			reached := func(v float64) bool { return (up && v >= level) || (!up && v <= level) }
			res.Crossing[j] = math.NaN()
			// first output time at which the level is reached, then bisection
			for i := 1; i < len(res.Times); i++ {
				if !reached(res.Probes[j][i]) {
					continue
				}
				lo, hi := res.Times[i-1], res.Times[i]
				for hi-lo > 1e-9*s.Until {
					mid := 0.5 * (lo + hi)
					if err := ln.values(one, []Point{p}, mid); err != nil {
						return nil, err
					}
					res.Stats.Factorizations += laplace.DefaultM
					if reached(one[0]) {
						hi = mid
					} else {
						lo = mid
					}
				}
				res.Crossing[j] = 0.5 * (lo + hi)
				break
			}
		}
	}
	return res, nil
}
