package graphpde

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/vertex"
)

// fvSystem is the whole finite-volume discretisation of a linear network,
// nodes and grid interiors together, as the system of ordinary differential
// equations
//
//	M u̇ = −K u + r(t)
//
// with M diagonal (docs/time-and-spectrum.md §1). Every edge gets the
// vertex-centred grid of the grid element (element_grid.go): n cells of
// width h, Scharfetter–Gummel fluxes R_j, L_j through cell j, vertex shares
// m_i of the cells; the nodes own the end half cells. The row of interior
// vertex i of edge e, scaled by s_e = α_e(from)/a_e(0) so that K is
// symmetric when the network is self-adjoint, is
//
//	s m_i ρ_i u̇_i = s[R_i (u_{i+1} − u_i) − L_{i−1}(u_i − u_{i−1}) + m_i (f_i − c_i u_i)],
//
// and the row of a balance node v is its balance Σ J + β u + ρ_v u̇ = γ with
// J = −(α/a)·(a u') at the edge end, a u' the reconstructed end derivative
// of the grid element (half-cell storage and sources included). Fixed nodes
// are not unknowns: their values enter r(t). Unknown numbering: the balance
// nodes first, then the interiors of edge e from off[e] (n_e − 1 values, in
// the direction of the edge).
type fvSystem struct {
	odeRows
	net   *Network
	nb    int       // balance-node unknowns
	unk   []int     // node → unknown, −1 for fixed nodes
	cells []int     // per edge
	off   []int     // per edge: unknown of its first interior vertex
	r0    []float64 // the load at t = 0 without fixed values: sources, injections
	// Couplings to fixed nodes: r_row += coef·g_node(t).
	fixRow, fixNode []int
	fixCoef         []float64
	// Time-dependent loads: node injections and edge sources that use t.
	injT  []int // balance nodes with Time.Inject
	srcT  []int // edges whose source depends on t
	scale []float64
	// The slots of K (gridPattern): cell j of edge e is element
	// base[e] + j.
	pat  *nodePattern
	base []int
}

// fvCoefs returns a, b, c, f, ρ of edge ed at x and time t, from the plain
// fields, the profile and the edge's law (laws of u are evaluated at u = 0:
// callers reject them first).
func fvCoefs(ed *Edge, x, t float64) (a, b, c, f, rho float64) {
	a, b, c, f, rho = ed.Coeffs(x)
	if l := ed.Law; l != nil {
		ev := func(k *Coef, v *float64) {
			if k != nil {
				*v, _ = k.Fn(x, 0, t)
			}
		}
		ev(l.A, &a)
		ev(l.B, &b)
		ev(l.C, &c)
		ev(l.F, &f)
		ev(l.Rho, &rho)
	}
	return a, b, c, f, rho
}

// linearTimeInvariant rejects what the transient solvers cannot do yet:
// nonlinear laws, and coefficients other than the source that change in
// time.
func linearTimeInvariant(net *Network, what string) error {
	for i := range net.Nodes {
		if nd := &net.Nodes[i]; nd.Nonlinear != nil {
			return &ModelError{Object: "node", ID: nd.ID, Reason: "has a nonlinear law, which " + what + " does not handle yet"}
		}
	}
	for i := range net.Edges {
		ed := &net.Edges[i]
		l := ed.Law
		if l == nil {
			continue
		}
		if l.Equation != nil {
			return &ModelError{Object: "edge", ID: ed.ID, Reason: "has a nonlinear equation, which " + what + " does not handle yet"}
		}
		for _, k := range []struct {
			name string
			c    *Coef
		}{{"diffusivity", l.A}, {"drift", l.B}, {"decay", l.C}, {"source", l.F}, {"capacity", l.Rho}} {
			if k.c == nil {
				continue
			}
			if k.c.UsesU {
				return &ModelError{Object: "edge", ID: ed.ID, Field: k.name, Reason: fmt.Sprintf("%q depends on u, which %s does not handle yet", k.c.Src, what)}
			}
			if k.c.UsesT && k.name != "source" {
				return &ModelError{Object: "edge", ID: ed.ID, Field: k.name, Reason: fmt.Sprintf("%q depends on t; only sources, fixed values and injections may (%s)", k.c.Src, what)}
			}
		}
	}
	return nil
}

// weightScale returns α/a at the given end (0 from, 1 to) of ed, a the
// diffusivity there: 1 for the default weight (which is that diffusivity,
// also when it is a law), else the given weight over a.
func weightScale(ed *Edge, side int, a float64) float64 {
	if w := ed.Weight[side]; w != 0 {
		return w / a
	}
	return 1
}

// checkIsolated rejects a balance node with no edges, no capacity and no
// leak: nothing determines its value (in time or in a mode).
func checkIsolated(net *Network) error {
	for v := range net.Nodes {
		nd := &net.Nodes[v]
		l := nd.Law
		if l.Kind == vertex.Fixed || len(net.Incident(v)) > 0 || l.Capacity > 0 || l.Leak > 0 {
			continue
		}
		return &ModelError{Object: "node", ID: nd.ID, Reason: "has no edges, no capacity and no leak: nothing determines its value (connect it, or give it a capacity or a leak)"}
	}
	return nil
}

// edgeCells returns the number of cells of edge e (at least 2, so that
// every edge has an interior vertex).
func edgeCells(ed *Edge, cells int) int {
	n := ed.Cells
	if n == 0 {
		n = cells
	}
	return max(n, 2)
}

// gridNumbering numbers the unknowns of net on a grid with the given
// default cell count (already made positive): first every node that is not
// Fixed (unk[v], -1 for Fixed nodes; nb of them), then the interior
// vertices of each edge in turn (edge e has ecells[e] cells and its
// interior vertices start at off[e]); n is the total. It returns a
// *GridSizeError when the total exceeds maxUnknowns > 0. Used by the
// finite-volume and the forward (density) discretisations alike.
func gridNumbering(net *Network, cells int, maxUnknowns int64) (unk, ecells, off []int, nb, n int, err error) {
	unk = make([]int, len(net.Nodes))
	ecells = make([]int, len(net.Edges))
	off = make([]int, len(net.Edges))
	for v := range net.Nodes {
		unk[v] = -1
		if net.Nodes[v].Law.Kind != vertex.Fixed {
			unk[v] = n
			n++
		}
	}
	nb = n
	total := int64(n)
	for e := range net.Edges {
		ecells[e] = edgeCells(&net.Edges[e], cells)
		total += int64(ecells[e] - 1)
	}
	if maxUnknowns > 0 && total > maxUnknowns {
		return nil, nil, nil, 0, 0, &GridSizeError{Unknowns: total, Max: maxUnknowns}
	}
	for e := range net.Edges {
		off[e] = n
		n += ecells[e] - 1
	}
	return unk, ecells, off, nb, n, nil
}

// newFV discretises net with the given default cell count.
func newFV(net *Network, cells int, maxUnknowns int64) (*fvSystem, error) {
	if cells <= 0 {
		cells = DefaultCells
	}
	s := &fvSystem{net: net}
	var err error
	if s.unk, s.cells, s.off, s.nb, s.n, err = gridNumbering(net, cells, maxUnknowns); err != nil {
		return nil, err
	}
	s.M = make([]float64, s.n)
	s.r0 = make([]float64, s.n)
	s.scale = make([]float64, len(net.Edges))
	s.pat, s.base = gridPattern(net, s.unk, s.cells, s.off, s.nb, s.n)
	s.setPattern(s.pat)
	for v := range net.Nodes {
		i := s.unk[v]
		if i < 0 {
			continue
		}
		l := net.Nodes[v].Law
		s.cv[s.pat.dslot[i]] += l.Leak
		s.M[i] += l.Capacity
		s.r0[i] += l.Inject
		if tm := net.Nodes[v].Time; tm != nil && tm.Inject != nil {
			s.injT = append(s.injT, v)
		}
	}
	for e := range net.Edges {
		s.addEdge(e)
		if l := net.Edges[e].Law; l != nil && l.F != nil && l.F.UsesT {
			s.srcT = append(s.srcT, e)
		}
	}
	s.rowTriplets()
	return s, nil
}

// gridPattern is the node pattern (pattern.go) of the grid of net numbered
// by gridNumbering (unk, cells, off, nb balance nodes, n unknowns): its
// system nodes are the network's nodes followed by the interior grid
// vertices (system node len(net.Nodes) + k is unknown nb + k), its elements
// the cells of every edge in turn, cell j of edge e being element
// base[e] + j. Grid assemblies write K's entries straight into its slots:
// the diagonal of unknown i at dslot[i], the coupling of a cell's left
// vertex to its right one at eslot[k][0], the reverse at eslot[k][1].
// Cost O(unknowns + cells).
func gridPattern(net *Network, unk, cells, off []int, nb, n int) (*nodePattern, []int) {
	nn := len(net.Nodes)
	sysUnk := make([]int, nn+n-nb)
	nodes := make([]int, n)
	copy(sysUnk, unk)
	for v, r := range unk {
		if r >= 0 {
			nodes[r] = v
		}
	}
	for k := 0; k < n-nb; k++ {
		sysUnk[nn+k] = nb + k
		nodes[nb+k] = nn + k
	}
	base := make([]int, len(net.Edges))
	total := 0
	for e := range net.Edges {
		base[e] = total
		total += cells[e]
	}
	ends := make([][2]int, total)
	for e := range net.Edges {
		ed := &net.Edges[e]
		c := cells[e]
		vtx := func(i int) int {
			switch i {
			case 0:
				return ed.From
			case c:
				return ed.To
			}
			return nn + off[e] + i - 1 - nb
		}
		for j := 0; j < c; j++ {
			ends[base[e]+j] = [2]int{vtx(j), vtx(j + 1)}
		}
	}
	return newNodePattern(sysUnk, nodes, ends), base
}

// setPattern makes K's compressed rows those of p, with values 0.
func (s *odeRows) setPattern(p *nodePattern) {
	s.rp, s.ci = p.rowPtr, p.col
	s.cv = make([]float64, len(p.col))
}

// rowTriplets sets the triplets kI, kJ, kV from the compressed rows (one
// per entry, duplicates already summed), for the grid spectrum, which reads
// K that way.
func (s *odeRows) rowTriplets() {
	s.kI = make([]int, len(s.ci))
	s.kJ = s.ci
	s.kV = s.cv
	for i := 0; i < s.n; i++ {
		for p := s.rp[i]; p < s.rp[i+1]; p++ {
			s.kI[p] = i
		}
	}
}

// vertexUnknown returns the unknown of vertex i of edge e (−1 at a fixed
// end) and the node at that end (−1 inside).
func (s *fvSystem) vertexUnknown(e, i int) (int, int) {
	ed := &s.net.Edges[e]
	switch i {
	case 0:
		return s.unk[ed.From], ed.From
	case s.cells[e]:
		return s.unk[ed.To], ed.To
	}
	return s.off[e] + i - 1, -1
}

// cellFlux returns R_j and L_j of cell j of edge e (the Scharfetter–Gummel
// fluxes seen from its left and right vertex) and P_j.
func cellFlux(ed *Edge, h float64, j int) (r, l, p float64) {
	a, b, _, _, _ := fvCoefs(ed, (float64(j)+0.5)*h, 0)
	p = b * h / a
	return a / h * sgB(-p), a / h * sgB(p), p
}

// addEdge adds the rows (or row parts) of edge e.
func (s *fvSystem) addEdge(e int) {
	ed := &s.net.Edges[e]
	n := s.cells[e]
	h := ed.Length / float64(n)
	a0, _, _, _, _ := fvCoefs(ed, 0, 0)
	aL, _, _, _, _ := fvCoefs(ed, ed.Length, 0)
	s0 := weightScale(ed, 0, a0)
	sL := weightScale(ed, 1, aL)
	s.scale[e] = s0
	var lPrev, pPrev float64
	for i := 0; i <= n; i++ {
		row, _ := s.vertexUnknown(e, i)
		sc := s0
		if i == n {
			sc = sL
		}
		var r, l, p float64
		if i < n {
			r, l, p = cellFlux(ed, h, i)
		}
		if row >= 0 {
			x := float64(i) * h
			_, _, c, f, rho := fvCoefs(ed, x, 0)
			m := vertexShare(i, n, h, pPrev, p)
			dg := s.pat.dslot[row]
			if i > 0 {
				nb, nd := s.vertexUnknown(e, i-1)
				s.couple(row, s.pat.eslot[s.base[e]+i-1][1], nb, nd, -sc*lPrev)
				s.cv[dg] += sc * lPrev
			}
			if i < n {
				nb, nd := s.vertexUnknown(e, i+1)
				s.couple(row, s.pat.eslot[s.base[e]+i][0], nb, nd, -sc*r)
				s.cv[dg] += sc * r
			}
			s.cv[dg] += sc * m * c
			s.M[row] += sc * m * rho
			s.r0[row] += sc * m * f
		}
		lPrev, pPrev = l, p
	}
}

// odeRows is M u̇ = −K u + r(t) without r: the unknowns, the diagonal of M
// and K in compressed rows (columns increasing, the diagonal present: the
// rows of a gridPattern, assembled into its slots).
type odeRows struct {
	n  int
	M  []float64
	rp []int
	ci []int
	cv []float64
	// K as triplets (i, j, value), one per entry of the rows, for the
	// grid spectrum (fvSystem only: rowTriplets).
	kI, kJ []int
	kV     []float64
}

func (s *odeRows) rows() *odeRows { return s }

// odeSystem is what the time stepper needs of a discretised network.
type odeSystem interface {
	rows() *odeRows
	load(dst []float64, t float64)                     // dst = r(t)
	initial(u []float64) (nodeVals []float64)          // u(0); the node values
	at(u []float64, p Point, t float64) float64        // value at a point
	edgeField(u []float64, e int, t float64) []float64 // values at the grid vertices
}

// mulK sets dst = K x. Cost O(entries).
func (s *odeRows) mulK(dst, x []float64) {
	ci, cv := s.ci, s.cv
	for i := 0; i < s.n; i++ {
		sum := 0.0
		for p := s.rp[i]; p < s.rp[i+1]; p++ {
			sum += cv[p] * x[ci[p]]
		}
		dst[i] = sum
	}
}

// couple adds coefficient v of row's neighbour: into K at slot, or for a
// fixed neighbour node into the fixed-value couplings (with the sign of the
// right-hand side).
func (s *fvSystem) couple(row, slot, nb, node int, v float64) {
	if nb >= 0 {
		s.cv[slot] += v
		return
	}
	s.fixRow = append(s.fixRow, row)
	s.fixNode = append(s.fixNode, node)
	s.fixCoef = append(s.fixCoef, -v)
}

// setInitialInterior puts the initial values of the interior grid vertices
// of every edge (edge e has cells[e] cells, its interior vertices from
// u[off[e]]) into u: the edge law's initial profile where it has one, else
// the straight line between end[e][0]·nodeVals[From] and
// end[e][1]·nodeVals[To] (end nil: factors 1).
func setInitialInterior(net *Network, cells, off []int, end [][2]float64, nodeVals, u []float64) {
	for e := range net.Edges {
		ed := &net.Edges[e]
		n := cells[e]
		h := ed.Length / float64(n)
		f0, fL := 1.0, 1.0
		if end != nil {
			f0, fL = end[e][0], end[e][1]
		}
		for i := 1; i < n; i++ {
			x := float64(i) * h
			var v float64
			if l := ed.Law; l != nil && l.Initial != nil {
				v, _ = l.Initial.Fn(x, 0, 0)
			} else {
				w := x / ed.Length
				v = (1-w)*f0*nodeVals[ed.From] + w*fL*nodeVals[ed.To]
			}
			u[off[e]+i-1] = v
		}
	}
}

// nodeValueAt returns the value of fixed node v at time t.
func nodeValueAt(nd *Node, t float64) float64 {
	if tm := nd.Time; tm != nil && tm.Fixed != nil {
		return tm.Fixed(t)
	}
	return nd.Law.Value
}

// load sets dst = r(t).
func (s *fvSystem) load(dst []float64, t float64) {
	copy(dst, s.r0)
	net := s.net
	for k, row := range s.fixRow {
		dst[row] += s.fixCoef[k] * nodeValueAt(&net.Nodes[s.fixNode[k]], t)
	}
	for _, v := range s.injT {
		nd := &net.Nodes[v]
		dst[s.unk[v]] += nd.Time.Inject(t) - nd.Law.Inject
	}
	for _, e := range s.srcT {
		// the time-dependent source: replace the t = 0 part by the value at t
		ed := &net.Edges[e]
		n := s.cells[e]
		h := ed.Length / float64(n)
		s0 := s.scale[e]
		aL, _, _, _, _ := fvCoefs(ed, ed.Length, 0)
		sL := weightScale(ed, 1, aL)
		pPrev := 0.0
		for i := 0; i <= n; i++ {
			row, _ := s.vertexUnknown(e, i)
			var p float64
			if i < n {
				_, _, p = cellFlux(ed, h, i)
			}
			if row >= 0 {
				sc := s0
				if i == n {
					sc = sL
				}
				m := vertexShare(i, n, h, pPrev, p)
				x := float64(i) * h
				f0 := ed.Law.F
				ft, _ := f0.Fn(x, 0, t)
				fz, _ := f0.Fn(x, 0, 0)
				dst[row] += sc * m * (ft - fz)
			}
			pPrev = p
		}
	}
}

// initial sets u(0): node Initial values (0 where not given), and along
// each edge its Initial law, or where it has none the straight line between
// its end nodes' initial values. Fixed nodes take their value at t = 0 in
// the returned node values.
func (s *fvSystem) initial(u []float64) (nodeVals []float64) {
	net := s.net
	nodeVals = make([]float64, len(net.Nodes))
	for v := range net.Nodes {
		nd := &net.Nodes[v]
		if nd.Initial != nil {
			nodeVals[v] = *nd.Initial
		}
		if i := s.unk[v]; i >= 0 {
			u[i] = nodeVals[v]
		}
	}
	setInitialInterior(net, s.cells, s.off, nil, nodeVals, u)
	for v := range net.Nodes {
		if s.unk[v] < 0 {
			nodeVals[v] = nodeValueAt(&net.Nodes[v], 0)
		}
	}
	return nodeVals
}

// at returns the value at point p of the field u at time t (linear between
// grid vertices).
func (s *fvSystem) at(u []float64, p Point, t float64) float64 {
	net := s.net
	nodeVal := func(v int) float64 {
		if i := s.unk[v]; i >= 0 {
			return u[i]
		}
		return nodeValueAt(&net.Nodes[v], t)
	}
	if p.Edge < 0 {
		return nodeVal(p.Node)
	}
	ed := &net.Edges[p.Edge]
	n := s.cells[p.Edge]
	h := ed.Length / float64(n)
	j := int(math.Floor(p.X / h))
	j = min(max(j, 0), n-1)
	w := p.X/h - float64(j)
	val := func(i int) float64 {
		row, node := s.vertexUnknown(p.Edge, i)
		if row >= 0 {
			return u[row]
		}
		return nodeVal(node)
	}
	return (1-w)*val(j) + w*val(j+1)
}

// field returns the values of u along edge e at its grid vertices x_i = i·h.
func (s *fvSystem) edgeField(u []float64, e int, t float64) []float64 {
	n := s.cells[e]
	out := make([]float64, n+1)
	for i := 0; i <= n; i++ {
		row, node := s.vertexUnknown(e, i)
		if row >= 0 {
			out[i] = u[row]
		} else {
			out[i] = nodeValueAt(&s.net.Nodes[node], t)
		}
	}
	return out
}
