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
// It needs constant coefficients on every edge and an initial value that is
// constant along each edge. Fixed values and injections are constants or
// tables (TimeTable): a table is its value at 0+ plus delayed steps and
// ramps, and by linearity the response to C·H(t − τ) is C times the unit
// step response R₁(t − τ) = L⁻¹[H(s)/s](t − τ), to a ramp C·(t − τ)₊ the
// unit ramp response L⁻¹[H(s)/s²](t − τ), H the transfer function from the
// node's data (derived). Each delayed term is inverted at its own shifted
// time, since a Talbot contour cannot carry the factor e^{−sτ}.

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
	// Tables: per node its value at 0+ (used instead of the law's
	// constant) and the delayed steps and ramps (driven lists the nodes
	// that have some).
	g0     []float64
	tabled []bool
	kinks  [][]kink
	driven []int
	// drive ≥ 0 solves for the transfer function from node drive's data
	// (unit transform there, no other data, zero initial value); −1 for the
	// network's own data.
	drive int
}

func newLaplaceNet(net *Network) (*laplaceNet, error) {
	ln := &laplaceNet{net: net, unk: make([]int, len(net.Nodes)), u0: make([]float64, len(net.Edges)), drive: -1,
		g0: make([]float64, len(net.Nodes)), tabled: make([]bool, len(net.Nodes)), kinks: make([][]kink, len(net.Nodes))}
	for v := range net.Nodes {
		nd := &net.Nodes[v]
		ln.unk[v] = -1
		if nd.Law.Kind != vertex.Fixed {
			ln.unk[v] = ln.m
			ln.m++
		}
		tm := nd.Time
		if tm == nil || (tm.Fixed == nil && tm.Inject == nil) || !tm.UsesT {
			continue
		}
		key := "inject"
		if tm.Fixed != nil {
			key = "fixed"
		}
		if tm.Table == nil {
			return nil, &ModelError{Object: "node", ID: nd.ID, Field: key, Reason: fmt.Sprintf("%q depends on t: method exact takes constants or a schedule table (steps or linear), not an expression of t (use --method grid, the time stepper, or give the data as a --schedule table)", tm.Src)}
		}
		ln.tabled[v] = true
		ln.g0[v], ln.kinks[v] = tm.Table.expand()
		if len(ln.kinks[v]) > 0 {
			ln.driven = append(ln.driven, v)
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
	if ln.drive >= 0 {
		return complex(ed.C, 0) + s*rho, 0
	}
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
			switch {
			case ln.drive == v:
				ln.rhs[i] += 1
			case ln.drive < 0:
				u0, g := 0.0, l.Inject
				if nd.Initial != nil {
					u0 = *nd.Initial
				}
				if ln.tabled[v] {
					g = ln.g0[v]
				}
				ln.rhs[i] += complex(g, 0)/s + complex(l.Capacity*u0, 0)
			}
		} else {
			g := nd.Law.Value
			if ln.tabled[v] {
				g = ln.g0[v]
			}
			switch {
			case ln.drive == v:
				ln.node[v] = 1
			case ln.drive < 0:
				ln.node[v] = complex(g, 0) / s
			default:
				ln.node[v] = 0
			}
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

// values inverts the transform at time t > 0 for every probe into dst: the
// response to the network's own data, plus each table's delayed steps and
// ramps that have begun by t, inverted at t − τ. It returns the number of
// transforms solved.
func (ln *laplaceNet) values(dst []float64, probes []Point, t float64) (int, error) {
	clear(dst)
	ln.drive = -1
	if err := ln.invert(dst, probes, t, 1, 0); err != nil {
		return 0, err
	}
	n := laplace.DefaultM
	for _, v := range ln.driven {
		ln.drive = v
		for _, k := range ln.kinks[v] {
			if tau := t - k.At; tau > 0 {
				if err := ln.invert(dst, probes, tau, k.C, k.Order); err != nil {
					ln.drive = -1
					return n, err
				}
				n += laplace.DefaultM
			}
		}
	}
	ln.drive = -1
	for _, v := range dst {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return n, errors.New("the inverse transform is not finite")
		}
	}
	return n, nil
}

// invert adds c times the inverse at time t of the current transform
// (ln.drive's data) divided by s^order to dst.
func (ln *laplaceNet) invert(dst []float64, probes []Point, t, c float64, order int) error {
	ct := laplace.TalbotContour(t, laplace.DefaultM)
	for k, s := range ct.S {
		if err := ln.solve(s); err != nil {
			return fmt.Errorf("transform at s = %v: %w", s, err)
		}
		w := ct.D[k] * cmplx.Exp(complex(t, 0)*s) * complex(c, 0)
		for range order {
			w /= s
		}
		for j, p := range probes {
			dst[j] += real(w * ln.at(p))
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
		} else {
			n, err := ln.values(vals, s.Probes, t)
			res.Stats.Factorizations += n
			if err != nil {
				return nil, fmt.Errorf("at t = %g: %w", t, err)
			}
		}
		res.Times = append(res.Times, t)
		for j := range s.Probes {
			res.Probes[j] = append(res.Probes[j], vals[j])
		}
		if s.Progress != nil {
			s.Progress(t, s.Until)
		}
	}
	if s.Crossing > 0 && res.Status == Converged {
		sol, err := Solve(dataAt(net, s.Until), &Settings{Method: MethodExact})
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
			if reached(start) {
				// Nothing to cover (the steady value is the initial one, as
				// at a fixed node): the level holds from the start, as the
				// stepper reports it.
				res.Crossing[j] = res.Times[0]
				continue
			}
			// first output time at which the level is reached, then bisection
			for i := 1; i < len(res.Times); i++ {
				if !reached(res.Probes[j][i]) {
					continue
				}
				lo, hi := res.Times[i-1], res.Times[i]
				for hi-lo > 1e-9*s.Until {
					mid := 0.5 * (lo + hi)
					n, err := ln.values(one, []Point{p}, mid)
					res.Stats.Factorizations += n
					if err != nil {
						return nil, err
					}
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

// dataAt returns net with the fixed values and injections of its tables
// as they are at time t (a copy of the node list; net itself when no node
// has a table).
func dataAt(net *Network, t float64) *Network {
	var cp *Network
	for v := range net.Nodes {
		tm := net.Nodes[v].Time
		if tm == nil || tm.Table == nil {
			continue
		}
		if cp == nil {
			c := *net
			c.Nodes = append([]Node(nil), net.Nodes...)
			cp = &c
		}
		nd := &cp.Nodes[v]
		if nd.Law.Kind == vertex.Fixed {
			nd.Law.Value = tm.Table.At(t)
		} else {
			nd.Law.Inject = tm.Table.At(t)
		}
	}
	if cp == nil {
		return net
	}
	return cp
}
