package graphpde

import (
	"errors"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// assemble computes every element map with decay c + shift·ρ and leak
// β + shift·ρ_v and writes the node system into s.mat (same pattern on every
// call after the first) and s.rhs. Constant grid edges with equal cells are
// condensed in pairs (condenseConstPair). Cost O(grid unknowns + edges); it
// allocates only on the first call (the pattern).
func (s *system) assemble(shift float64) {
	net := s.net
	s.shift = shift
	s.mat.ZeroValues()
	clear(s.rhs)
	clear(s.ex)
	// The elements first, then the node rows: the sweeps stream through
	// the grid storage, which would evict the node system between edges.
	var pend *constGridEl // a constant grid edge waiting for a partner
	for e, el := range s.els {
		if e%stopEvery == 0 && s.stop("assembly") {
			return
		}
		k, ok := el.(*constGridEl)
		if !ok {
			s.maps[e], _ = el.linearize(0, 0)
			continue
		}
		if pend == nil || pend.n != k.n {
			if pend != nil {
				s.maps[pend.e], _ = pend.linearize(0, 0)
			}
			pend = k
			continue
		}
		pend.k, k.k = pend.cell(), k.cell()
		da, db, ga, gb := condenseConstPair(pend.st, k.st, &pend.k, &k.k)
		pend.kc, k.kc = pend.k.sweep(), k.k.sweep()
		s.maps[pend.e], s.maps[e] = edgeMap{da, ga, pend.k.ends.rs}, edgeMap{db, gb, k.k.ends.rs}
		pend = nil
	}
	if pend != nil {
		s.maps[pend.e], _ = pend.linearize(0, 0)
	}
	val := s.mat.Values()
	for e := range net.Edges {
		s.addEdge(val, e)
	}
	for r, i := range s.nodes {
		diag, rhs := net.Nodes[i].Law.Row(shift)
		if s.v.NodeInject != nil {
			rhs = s.v.NodeInject[i]
		}
		val[s.dslot[r]] += diag
		s.ex[r] += diag
		s.rhs[r] += rhs
	}
}

// addEdge adds the rows of edge e's end map (s.maps[e]) to the node system,
// whose values (in the pattern of s.pattern) are val, and to s.rhs.
func (s *system) addEdge(val []float64, e int) {
	ed := &s.net.Edges[e]
	m := &s.maps[e]
	a0, aL := ed.EndWeight(0), ed.EndWeight(1)
	addMatrix(s.pat, val, e, a0, aL, &m.d, &m.rs)
	addExcess(s.pat, s.ex, e, a0, aL, &m.d, &m.rs)
	s.addEdgeRHS(e, a0, aL)
}

// addEdgeRHS adds edge e's right-hand side terms (sources and fixed end
// values) with end weights a0, aL.
func (s *system) addEdgeRHS(e int, a0, aL float64) {
	ed := &s.net.Edges[e]
	m := &s.maps[e]
	var g0, g1 float64 // fixed end values
	if s.unk[ed.From] < 0 {
		g0 = s.fixedValue(ed.From)
	}
	if s.unk[ed.To] < 0 {
		g1 = s.fixedValue(ed.To)
	}
	addRHS(s.pat, s.rhs, e, a0, aL, &m.d, &m.g, g0, g1)
}

// assembleRHS recomputes the right-hand side alone from the element maps of
// the last assemble, for new node data (Variant.NodeInject, FixedValue) with
// the matrix, the element maps and the factorisation unchanged (the sources
// and the shift must be those of the last assemble). Constant grid elements,
// whose recovery overwrote their sweep factors with values, condense again
// (the same map, bit for bit). Cost O(nodes + edges + constant grid cells).
func (s *system) assembleRHS() {
	for _, el := range s.els {
		if k, ok := el.(*constGridEl); ok {
			k.linearize(0, 0)
		}
	}
	clear(s.rhs)
	for e := range s.net.Edges {
		ed := &s.net.Edges[e]
		s.addEdgeRHS(e, ed.EndWeight(0), ed.EndWeight(1))
	}
	for r, i := range s.nodes {
		_, rhs := s.net.Nodes[i].Law.Row(s.shift)
		if s.v.NodeInject != nil {
			rhs = s.v.NodeInject[i]
		}
		s.rhs[r] += rhs
	}
}

// factor factors the assembled node system.
func (s *system) factor() error {
	if err := s.fac.Factorize(s.mat); err != nil {
		var se *nodesys.SingularError
		if errors.As(err, &se) {
			return &SingularNodeError{Node: s.net.Nodes[s.nodes[se.Index]].ID, Pivot: se.Pivot, Scale: se.Scale}
		}
		if errors.Is(err, nodesys.ErrStopped) {
			if c := canceled(s.ctx, "factorisation"); c != nil {
				return c
			}
		}
		return err
	}
	fs := s.fac.Stats()
	s.pivotRatio, s.pivotAt = fs.MinPivotRatio, fs.MinPivotIndex
	s.stats.FillNNZ = fs.NNZL
	s.stats.FactorTime = fs.OrderTime + fs.SymbolicTime + fs.NumericTime
	if s.ana != nil && !s.anaSeen {
		// The first factorisation of this system tells whether the
		// analysis came from Settings.Analysis; a new one is kept there.
		s.anaSeen = true
		s.stats.Reused = fs.Reused
		if !fs.Reused {
			s.ana.a = s.fac.Analysis()
		}
	}
	if s.stats.Reused {
		s.stats.FactorTime = fs.NumericTime
	}
	return nil
}

// solve solves the factored system, fills s.u and recovers the grid
// interiors. Cost O(nnz(L) + grid unknowns).
func (s *system) solve() {
	if len(s.rhs) > 0 {
		s.fac.SolveTo(s.x, s.rhs)
	}
	s.refine() // before the recovery, which may run once per assemble
	for i := range s.net.Nodes {
		if r := s.unk[i]; r >= 0 {
			s.u[i] = s.x[r]
		} else {
			s.u[i] = s.fixedValue(i)
		}
	}
	s.recover()
}

// assembleSolve assembles the system with the given shift, factors and
// solves it. It returns the stop of Settings.Context (s.halt) when that
// came during the assembly or the solve, or the factorisation's error.
func (s *system) assembleSolve(shift float64) error {
	s.assemble(shift)
	if s.halt != nil { // Linear.Context
		return s.halt
	}
	if err := s.factor(); err != nil {
		return err
	}
	s.solve()
	return s.halt
}

// recover sets every element's interior for the node values s.u and notes
// the first edge with a non-finite value in s.bad. Constant grid edges with
// equal cells are recovered in pairs (recoverConstPair).
func (s *system) recover() {
	s.bad = -1
	note := func(e int, ok bool) {
		if !ok && (s.bad < 0 || e < s.bad) {
			s.bad = e
		}
	}
	edges := s.net.Edges
	var pend *constGridEl // a constant grid edge waiting for a partner
	for e, el := range s.els {
		if e%stopEvery == 0 && s.stop("recovery") {
			return
		}
		if el.unknowns() == 0 {
			continue
		}
		ed := &edges[e]
		k, ok := el.(*constGridEl)
		if !ok {
			note(e, el.recover(s.u[ed.From], s.u[ed.To]))
			continue
		}
		if pend != nil && pend.n == k.n {
			pd := &edges[pend.e]
			oka, okb := recoverConstPair(pend.st, k.st, s.scr, pend.kc, k.kc,
				s.u[pd.From], s.u[pd.To], s.u[ed.From], s.u[ed.To])
			note(pend.e, oka)
			note(e, okb)
			pend = nil
			continue
		}
		if pend != nil {
			pd := &edges[pend.e]
			note(pend.e, pend.recover(s.u[pd.From], s.u[pd.To]))
		}
		pend = k
	}
	if pend != nil {
		pd := &edges[pend.e]
		note(pend.e, pend.recover(s.u[pd.From], s.u[pd.To]))
	}
}

// interior returns the interior values of edge e.
func (s *system) interior(e int) []float64 {
	o := s.off[e]
	return s.st[o : o+s.els[e].unknowns()]
}

// endDerivs returns u'(0) and u'(L) of edge e in the current solution.
func (s *system) endDerivs(e int) (d0, dL float64) {
	ed := &s.net.Edges[e]
	U0, UL := s.u[ed.From], s.u[ed.To]
	el := s.els[e]
	in := s.interior(e)
	_, d0 = el.eval(0, U0, UL, in)
	_, dL = el.eval(ed.Length, U0, UL, in)
	return d0, dL
}
