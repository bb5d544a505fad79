package graphpde

import (
	"context"
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
	"github.com/ramify-dev/ramify/vertex"
)

// system is the steady node system of a network for one choice of
// elements (one element per edge, behind the element interface), built once
// and re-assembled as often as needed (the steady solve, the grid path of
// the exit statistics; the pattern, its slots and the assembly functions
// are the nodePattern shared with every other node system of the package):
//
//	sys, err := newSystem(net, variant, settings) // choose elements, check anchoring,
//	                                              // number unknowns, allocate (once)
//	sys.assemble(shift)  // element maps with decay c+shift·ρ, leak β+shift·ρ_v,
//	                     // the current sys.v sources; values into the SAME matrix pattern
//	sys.assembleRHS()    // or the right-hand side alone, for new node data
//	err = sys.factor()   // numeric factorisation; the ordering is computed on the
//	                     // first call only (nodesys keeps it while the pattern is unchanged)
//	sys.solve()          // node values into sys.u (fixed nodes included), then
//	                     // every element's interior (recover; edge e's interior
//	                     // values are sys.st[sys.off[e]:])
//
// Between calls a caller may change sys.v (sources, injections, fixed values;
// not the kind of an edge: EdgeSource must stay nil or non-nil as at
// construction, and an edge with a capacity profile is exact when built with
// v.Shift = 0, so a later non-zero shift panics there — build with the shift
// set) and call assemble again: nothing is re-allocated and nothing is
// re-ordered. solution() shares the interior storage with the system: copy
// it (gval) to keep it across assemblies.
//
// Unknown numbering: balance node v is unknown unk[v] ≥ 0, fixed nodes have
// unk[v] = −1 and go to the right-hand side. Row of a balance node v:
//
//	Σ_ends J_e(v) + (β_v + shift·ρ_v) u(v) = γ_v,
//	J = −α₀ u'(0) at a From end,  J = +α_L u'(L) at a To end,
//
// with u'(0), u'(L) the affine end maps of the elements (exactElement or the
// condensed grid element, half cells included).
type system struct {
	net   *Network
	v     Variant
	cells int

	els  []element // per edge
	off  []int     // per edge: index of its first interior value in st
	maps []edgeMap // per edge: the end map of the last assembly
	st   []float64 // interior values of all elements (grid values; for a
	//                 constant grid edge after assemble the sweep factors of
	//                 condenseConst, overwritten by recover)
	scr   []float64 // recovery scratch, 2·(most cells of an edge)
	bad   int       // first edge with a non-finite interior after recover, or −1
	shift float64

	unk   []int                    // node → unknown, −1 for fixed nodes
	nodes []int                    // unknown → node
	mat   *nodesys.Matrix[float64] // pattern from s.pattern, fixed
	pat   *nodePattern             // numbering, pattern and slots
	dslot []int                    // unknown → slot of its diagonal entry in mat (pat.dslot)
	eslot [][2]int                 // edge → slots of (From,To) and (To,From), −1 at a fixed end (pat.eslot)
	fac   *nodesys.Factor[float64]
	// Settings.Analysis, and whether the first factorisation has looked
	// at it.
	ana     *NodeAnalysis
	anaSeen bool
	rhs     []float64
	x       []float64
	u       []float64 // node values
	stats   Stats

	// Accuracy (accuracy.go): the node matrix pattern, the residual and
	// refinement step, and the scaled residual after refine.
	rp, ci  []int
	res, dx []float64
	omega   float64
	omegaAt int
	// nodesys Stats.MinPivotRatio and MinPivotIndex of the last factor.
	pivotRatio float64
	pivotAt    int
	// ctl, when non-nil, holds the policy of a controlled solve
	// (control_solve.go); its edges use ctlGridEl.
	ctl *ctlState
	// ex holds the row sums Σ_j A_rj of the node matrix, formed from the
	// elements' row sums without cancellation (addExcess); the factor
	// uses them for its pivots on forests (nodesys SetRowExcess).
	ex []float64
	// rowForm: the residual of the last refine used the row sums, whose
	// scaled residual in that form is omegaRow.
	rowForm  bool
	omegaRow float64
	// ctx is Settings.Context (nil: never stopped); halt is set to a
	// *CanceledError when assemble or recover stopped early on it, which
	// leaves the system unusable.
	ctx  context.Context
	halt error
}

// stop reports whether s.ctx is cancelled, and if so records in s.halt
// that stage stopped.
func (s *system) stop(stage string) bool {
	if s.ctx == nil || s.halt != nil {
		return s.halt != nil
	}
	s.halt = canceled(s.ctx, stage)
	return s.halt != nil
}

// edgeMap is an element's affine end map: u'(0) = d[0]·(U0,UL) + g[0],
// u'(L) = d[1]·(U0,UL) + g[1]. rs holds its row sums d[0][0] + d[0][1] and
// d[1][0] + d[1][1], formed without cancellation (0 exactly without decay);
// the elements set them for self-loops at least, whose node row gets only
// them: a loop's d[0][0] and d[0][1] are large and nearly opposite, and
// their rounded sum would swamp an e^{−Pe} small coupling of the node to the
// rest of the network (docs/discretisation.md).
type edgeMap struct {
	d  [2][2]float64
	g  [2]float64
	rs [2]float64
}

func newSystem(net *Network, v *Variant, set *Settings) (*system, error) {
	if Controlled(net) {
		return nil, fmt.Errorf("the network has controls: solve it with SolveControl (policy iteration), or apply a policy first (Network.Apply)")
	}
	return newSystemCtl(net, v, set, nil)
}

// newSystemCtl is newSystem with the policy of a controlled solve: the edges
// that ctl marks get control grid elements (ctlGridEl).
func newSystemCtl(net *Network, v *Variant, set *Settings, ctl *ctlState) (*system, error) {
	s := &system{net: net, cells: DefaultCells, ctl: ctl}
	if v != nil {
		s.v = *v
	}
	method := MethodAuto
	maxGrid := int64(DefaultMaxGridUnknowns)
	if set != nil {
		method = set.Method
		s.ctx = set.Context
		if set.MaxGridUnknowns > 0 {
			maxGrid = int64(set.MaxGridUnknowns)
		}
		if set.Cells > 0 {
			s.cells = set.Cells
		} else if set.Cells < 0 {
			return nil, fmt.Errorf("cells = %d must be ≥ 0", set.Cells)
		}
	}
	ne, nn := len(net.Edges), len(net.Nodes)
	checkLen := func(name string, got, want int) {
		if got != 0 && got != want {
			panic(fmt.Sprintf("graphpde: Variant.%s has length %d, want %d", name, got, want))
		}
	}
	checkLen("ConstSource", len(s.v.ConstSource), ne)
	checkLen("NodeInject", len(s.v.NodeInject), nn)
	checkLen("FixedValue", len(s.v.FixedValue), nn)
	if s.v.EdgeSource != nil && s.v.ConstSource != nil {
		panic("graphpde: Variant.EdgeSource and Variant.ConstSource are both set")
	}
	if math.IsNaN(s.v.Shift) || math.IsInf(s.v.Shift, 0) {
		return nil, fmt.Errorf("shift = %g must be a finite number", s.v.Shift)
	}

	// Choose the elements: count first, then allocate the interior storage
	// and the elements of each kind in one slice apiece.
	const (
		kindExact = iota
		kindConstGrid
		kindVarGrid
		kindCtl
	)
	kind := make([]uint8, ne)
	cells := make([]int, ne)
	var interior, varInterior int64
	nExact, nConst, nVar, nCtl := 0, 0, 0, 0
	maxCells := 0
	for e := range net.Edges {
		ed := &net.Edges[e]
		if ctl != nil && ctl.edges[e] != nil {
			n := ctl.edges[e].n
			kind[e], cells[e] = kindCtl, n
			interior += int64(n - 1)
			varInterior += int64(n - 1)
			maxCells = max(maxCells, n)
			nCtl++
			continue
		}
		cons := s.constantEdge(ed)
		exact := false
		switch method {
		case MethodExact:
			if !cons {
				why := "has coefficients that vary along it"
				if s.v.EdgeSource != nil {
					why = "gets a source that varies along it"
				}
				return nil, &ModelError{Object: "edge", ID: ed.ID, Reason: why + ": method exact needs constant ones (use auto or grid)"}
			}
			exact = true
		case MethodAuto:
			exact = cons
		case MethodGrid:
		default:
			return nil, fmt.Errorf("unknown method %v", method)
		}
		if exact {
			kind[e] = kindExact
			nExact++
			continue
		}
		n := ed.Cells
		if n == 0 {
			n = s.cells
		}
		cells[e] = n
		interior += int64(n - 1)
		maxCells = max(maxCells, n)
		if s.v.EdgeSource == nil && ed.Constant() {
			kind[e] = kindConstGrid
			nConst++
		} else {
			kind[e] = kindVarGrid
			nVar++
			varInterior += int64(n - 1)
		}
		if interior > maxGrid {
			// count the rest for the message
			for _, rest := range net.Edges[e+1:] {
				if m := rest.Cells; m > 0 {
					interior += int64(m - 1)
				} else {
					interior += int64(s.cells - 1)
				}
			}
			return nil, &GridSizeError{Unknowns: interior, Max: maxGrid}
		}
	}
	s.stats.ExactEdges = nExact
	s.stats.GridEdges = nConst + nVar + nCtl
	s.st = make([]float64, interior)
	vst := make([]float64, 3*varInterior)
	s.scr = make([]float64, 2*maxCells)
	s.maps = make([]edgeMap, ne)
	s.els = make([]element, ne)
	s.off = make([]int, ne)
	exs := make([]exactEl, nExact)
	cgs := make([]constGridEl, nConst)
	vgs := make([]varGridEl, nVar)
	o, vo := 0, 0
	for e := range net.Edges {
		n := cells[e]
		s.off[e] = o
		switch kind[e] {
		case kindExact:
			x := &exs[len(exs)-nExact]
			nExact--
			*x = exactEl{s: s, e: e}
			s.els[e] = x
		case kindConstGrid:
			x := &cgs[len(cgs)-nConst]
			nConst--
			*x = constGridEl{s: s, e: e, n: n, st: s.st[o : o+n-1 : o+n-1]}
			s.els[e] = x
		case kindVarGrid:
			x := &vgs[len(vgs)-nVar]
			nVar--
			*x = varGridEl{s: s, e: e, n: n, st: s.st[o : o+n-1 : o+n-1], vst: vst[3*vo : 3*(vo+n-1) : 3*(vo+n-1)]}
			x.ends.n = n
			s.els[e] = x
			vo += n - 1
		case kindCtl:
			s.els[e] = &ctlGridEl{s: s, e: e, n: n, c: ctl.edges[e], st: s.st[o : o+n-1 : o+n-1], vst: vst[3*vo : 3*(vo+n-1) : 3*(vo+n-1)]}
			vo += n - 1
		}
		o += s.els[e].unknowns()
	}
	if err := canceled(s.ctx, "set-up"); err != nil {
		return nil, err
	}
	if err := s.checkAnchors(); err != nil {
		return nil, err
	}

	// Number the unknowns.
	s.unk, s.nodes = numberNodes(net)
	m := len(s.nodes)
	rowPtr, col := s.pattern()
	s.rp, s.ci = rowPtr, col
	s.mat = nodesys.NewMatrixPattern[float64](m, rowPtr, col)
	// A pivot share down to nodePivotTol is accepted: the refinement
	// with the row-sum residual (accuracy.go) recovers what such a factor
	// loses, and judge states the accuracy where it cannot.
	fset := &nodesys.Settings{PivotTol: nodePivotTol}
	if ctx := s.ctx; ctx != nil {
		fset.Stop = func() bool { return ctx.Err() != nil }
	}
	if set != nil && set.Analysis != nil {
		s.ana = set.Analysis
		var a *nodesys.Analysis[float64]
		if s.ana.a != nil && s.ana.a.Dim() == m {
			a = s.ana.a // the pattern itself is compared at Factorize
		}
		s.fac = nodesys.NewFactorFrom(a, fset)
	} else {
		s.fac = nodesys.NewFactor[float64](fset)
	}
	s.ex = make([]float64, m)
	s.fac.SetRowExcess(s.ex)
	s.rhs = make([]float64, m)
	s.x = make([]float64, m)
	s.u = make([]float64, nn)
	s.stats.NodeUnknowns = m
	s.stats.Unknowns = m + int(interior)
	return s, nil
}

// pattern returns the pattern of the node system (newNodePattern over the
// network's edges) and records its slots in s.dslot and s.eslot.
func (s *system) pattern() (rowPtr, col []int) {
	ends := make([][2]int, len(s.net.Edges))
	for e := range s.net.Edges {
		ends[e] = [2]int{s.net.Edges[e].From, s.net.Edges[e].To}
	}
	p := newNodePattern(s.unk, s.nodes, ends)
	s.pat, s.dslot, s.eslot = p, p.dslot, p.eslot
	return p.rowPtr, p.col
}

// constantEdge reports whether edge ed has constant coefficients for this
// system (a varying capacity matters only with a shift; a varying source is
// irrelevant when ConstSource replaces it).
func (s *system) constantEdge(ed *Edge) bool {
	if s.v.EdgeSource != nil {
		return false
	}
	p := ed.Profile
	if p == nil {
		return true
	}
	if p.A != nil || p.B != nil || p.C != nil {
		return false
	}
	if p.F != nil && s.v.ConstSource == nil {
		return false
	}
	if p.Rho != nil && s.v.Shift != 0 {
		return false
	}
	return true
}

// checkAnchors returns an *UnanchoredError if some connected component has no
// fixed node, no node with a positive leak (shift·capacity included) and no
// edge with positive decay (shift·ρ included). Cost O(nodes + edges), plus
// the grid vertices of edges with a decay profile.
func (s *system) checkAnchors() error {
	net := s.net
	comp, count := net.Components()
	anchored := make([]bool, count)
	for i := range net.Nodes {
		l := net.Nodes[i].Law
		if l.Anchors() || (l.Kind == vertex.Balance && s.v.Shift*l.Capacity > 0) {
			anchored[comp[i]] = true
		}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		if anchored[comp[ed.From]] {
			continue
		}
		if s.edgeDecays(e) {
			anchored[comp[ed.From]] = true
		}
	}
	var first = -1
	bad := 0
	for c, ok := range anchored {
		if !ok {
			if first < 0 {
				first = c
			}
			bad++
		}
	}
	if bad == 0 {
		return nil
	}
	var ids []string
	for i := range net.Nodes {
		if comp[i] == first {
			ids = append(ids, net.Nodes[i].ID)
		}
	}
	return &UnanchoredError{Nodes: ids, Components: bad}
}

// edgeDecays reports whether the decay c + shift·ρ of edge e is positive
// somewhere the element sees it (the constant, or a grid vertex).
func (s *system) edgeDecays(e int) bool {
	ed := &s.net.Edges[e]
	p := ed.Profile
	if p == nil || (p.C == nil && (p.Rho == nil || s.v.Shift == 0)) {
		return ed.C+s.v.Shift*ed.Rho > 0
	}
	n := 2
	if g, ok := s.els[e].(gridCells); ok {
		n = g.cells()
	}
	L := ed.Length
	for i := 0; i <= n; i++ {
		_, _, c, _, rho := ed.Coeffs(L * float64(i) / float64(n))
		if c+s.v.Shift*rho > 0 {
			return true
		}
	}
	return false
}

// fixedValue returns g of fixed node i (Variant.FixedValue applied).
func (s *system) fixedValue(i int) float64 {
	if s.v.FixedValue != nil {
		return s.v.FixedValue[i]
	}
	return s.net.Nodes[i].Law.Value
}

// edgeSource returns the constant source of edge e (Variant applied).
func (s *system) edgeSource(e int) float64 {
	if s.v.ConstSource != nil {
		return s.v.ConstSource[e]
	}
	return s.net.Edges[e].F
}

// numberNodes numbers the balance nodes of net in node order: unk maps a
// node to its unknown (−1 for a fixed node), nodes an unknown to its node.
func numberNodes(net *Network) (unk, nodes []int) {
	unk = make([]int, len(net.Nodes))
	for i := range net.Nodes {
		if net.Nodes[i].Law.Kind == vertex.Fixed {
			unk[i] = -1
			continue
		}
		unk[i] = len(nodes)
		nodes = append(nodes, i)
	}
	return unk, nodes
}
