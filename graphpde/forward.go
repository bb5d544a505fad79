package graphpde

import (
	"errors"
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
	"github.com/ramify-dev/ramify/vertex"
)

// fwdSystem is the finite-volume discretisation of forward transport (the
// walkers' density; docs/time-and-spectrum.md §3):
//
//	ρ ∂_t q = ∂_x(a ∂_x q − b q) − c q   on the edges,
//
// with the flux Φ = b q − a q' (along the edge) through cell j by
// Scharfetter–Gummel, Φ_j = (a_j/h)[B(−P_j) q_j − B(P_j) q_{j+1}], exact for
// constant a, b. At a balance node v the unknown is Q_v, the common value
// of a_e q_e/α_e over the edge ends at v (so q_e = (α_e/a_e) Q_v there), and
// the node balance is
//
//	(ρ_v + Σ_e (α_e/a_e) ρ_e h_e/2) Q̇_v = Σ_e (flux from e into v) − β Q_v − Σ_e (α_e/a_e) c_e h_e/2 Q_v,
//
// which conserves the total amount Σ_e ∫ρ_e q_e + Σ_v ρ_v Q_v up to decay,
// leak and absorption at fixed nodes (q = 0 there). This is the adjoint of
// the backward problem in the pairing ⟨q, u⟩ = Σ_e ∫ ρ_e q_e u_e + Σ_v ρ_v Q_v u_v
// (derived by integrating by parts; the walkers' law).
type fwdSystem struct {
	odeRows
	net     *Network
	unk     []int
	cells   []int
	off     []int
	end     [][2]float64 // per edge: α/a at the from and to ends
	release *Point
	pat     *nodePattern // the slots of K (gridPattern)
	base    []int        // cell j of edge e is element base[e] + j
}

func newForward(net *Network, cells int, maxUnknowns int64, release *Point) (*fwdSystem, error) {
	if cells <= 0 {
		cells = DefaultCells
	}
	s := &fwdSystem{net: net, end: make([][2]float64, len(net.Edges)), release: release}
	var err error
	var nb int
	if s.unk, s.cells, s.off, nb, s.n, err = gridNumbering(net, cells, maxUnknowns); err != nil {
		return nil, err
	}
	s.M = make([]float64, s.n)
	s.pat, s.base = gridPattern(net, s.unk, s.cells, s.off, nb, s.n)
	s.setPattern(s.pat)
	for v := range net.Nodes {
		if i := s.unk[v]; i >= 0 {
			l := net.Nodes[v].Law
			s.cv[s.pat.dslot[i]] += l.Leak
			s.M[i] += l.Capacity
		}
	}
	for e := range net.Edges {
		s.addEdge(e)
	}
	return s, nil
}

// vertex returns the unknown of vertex i of edge e and the factor that
// turns it into q there (α/a at a node end, 1 inside); −1 at a fixed end.
func (s *fwdSystem) vertex(e, i int) (int, float64) {
	ed := &s.net.Edges[e]
	switch i {
	case 0:
		return s.unk[ed.From], s.end[e][0]
	case s.cells[e]:
		return s.unk[ed.To], s.end[e][1]
	}
	return s.off[e] + i - 1, 1
}

func (s *fwdSystem) addEdge(e int) {
	ed := &s.net.Edges[e]
	n := s.cells[e]
	h := ed.Length / float64(n)
	a0, _, _, _, _ := fvCoefs(ed, 0, 0)
	aL, _, _, _, _ := fvCoefs(ed, ed.Length, 0)
	s.end[e] = [2]float64{weightScale(ed, 0, a0), weightScale(ed, 1, aL)}
	// Storage and decay of the vertices' shares (half cells at the ends).
	for i := 0; i <= n; i++ {
		row, f := s.vertex(e, i)
		if row < 0 {
			continue
		}
		_, _, c, _, rho := fvCoefs(ed, float64(i)*h, 0)
		m := h
		if i == 0 || i == n {
			m = h / 2
		}
		s.M[row] += m * rho * f
		s.cv[s.pat.dslot[row]] += m * c * f
	}
	// Fluxes: Φ_j leaves vertex j and enters vertex j+1.
	for j := 0; j < n; j++ {
		a, b, _, _, _ := fvCoefs(ed, (float64(j)+0.5)*h, 0)
		p := b * h / a
		cl, cr := a/h*sgB(-p), a/h*sgB(p) // Φ = cl q_j − cr q_{j+1}
		rl, fl := s.vertex(e, j)
		rr, fr := s.vertex(e, j+1)
		// row j: −Φ on the right side, i.e. +Φ in K; row j+1: −Φ in K.
		sl := s.pat.eslot[s.base[e]+j]
		if rl >= 0 {
			s.cv[s.pat.dslot[rl]] += cl * fl
			if rr >= 0 {
				s.cv[sl[0]] += -cr * fr
			}
		}
		if rr >= 0 {
			if rl >= 0 {
				s.cv[sl[1]] += -cl * fl
			}
			s.cv[s.pat.dslot[rr]] += cr * fr
		}
	}
}

// load: forward transport has no sources.
func (s *fwdSystem) load(dst []float64, _ float64) { clear(dst) }

// initial sets q(0): a unit amount at the release point, or the network's
// initial field read as a concentration (at nodes: the value of a q/α).
func (s *fwdSystem) initial(u []float64) []float64 {
	net := s.net
	nodeVals := make([]float64, len(net.Nodes))
	if p := s.release; p != nil {
		row := -1
		if p.Edge < 0 {
			row = s.unk[p.Node]
		} else {
			n := s.cells[p.Edge]
			i := int(math.Round(p.X / net.Edges[p.Edge].Length * float64(n)))
			row, _ = s.vertex(p.Edge, i)
		}
		if row >= 0 && s.M[row] > 0 {
			u[row] = 1 / s.M[row]
		}
		for v := range net.Nodes {
			if i := s.unk[v]; i >= 0 {
				nodeVals[v] = u[i]
			}
		}
		return nodeVals
	}
	for v := range net.Nodes {
		if nd := &net.Nodes[v]; nd.Initial != nil && s.unk[v] >= 0 {
			nodeVals[v] = *nd.Initial
			u[s.unk[v]] = nodeVals[v]
		}
	}
	setInitialInterior(net, s.cells, s.off, s.end, nodeVals, u)
	return nodeVals
}

// at returns q at p: at a node the common value Q_v = a q/α (q itself
// where the weights are the diffusivities), on an edge q by linear
// interpolation.
func (s *fwdSystem) at(u []float64, p Point, _ float64) float64 {
	if p.Edge < 0 {
		if i := s.unk[p.Node]; i >= 0 {
			return u[i]
		}
		return 0
	}
	n := s.cells[p.Edge]
	h := s.net.Edges[p.Edge].Length / float64(n)
	j := min(max(int(math.Floor(p.X/h)), 0), n-1)
	w := p.X/h - float64(j)
	val := func(i int) float64 {
		row, f := s.vertex(p.Edge, i)
		if row < 0 {
			return 0
		}
		return f * u[row]
	}
	return (1-w)*val(j) + w*val(j+1)
}

func (s *fwdSystem) edgeField(u []float64, e int, _ float64) []float64 {
	n := s.cells[e]
	out := make([]float64, n+1)
	for i := range out {
		if row, f := s.vertex(e, i); row >= 0 {
			out[i] = f * u[row]
		}
	}
	return out
}

// ForwardOccupation returns, per edge, the expected time that walkers (a
// tracer) released at release spend on the edge before they are absorbed or
// killed: ∫₀^∞ ∫_e ρ q dx dt for the forward problem (Evolve with
// Forward). It is one steady solve: integrating M q̇ = −K q over all times
// gives K q̄ = M q(0) for q̄ = ∫₀^∞ q dt. The half cells at the ends count
// for their edge; time held at a node's own capacity counts for no edge.
// It fails when some walkers are never absorbed or killed (a component
// with no fixed node, decay or leak: the times are infinite).
func ForwardOccupation(net *Network, release Point, cells int) ([]float64, error) {
	if err := net.CheckPoint(release); err != nil {
		return nil, err
	}
	if needsNewton(net) {
		return nil, errors.New("forward occupation: laws of u are not supported")
	}
	if err := checkIsolated(net); err != nil {
		return nil, err
	}
	s, err := newForward(net, cells, DefaultMaxGridUnknowns, &release)
	if err != nil {
		return nil, err
	}
	q0 := make([]float64, s.n)
	s.initial(q0)
	for i := range q0 {
		q0[i] *= s.M[i]
	}
	m := nodesys.NewMatrixPattern[float64](s.n, s.rp, s.ci)
	copy(m.Values(), s.cv)
	f := nodesys.NewFactor[float64](nil)
	if err := f.Factorize(m); err != nil {
		return nil, fmt.Errorf("forward occupation: walkers that are never absorbed or killed: %w", err)
	}
	qbar := make([]float64, s.n)
	f.SolveTo(qbar, q0)
	occ := make([]float64, len(net.Edges))
	for e := range net.Edges {
		ed := &net.Edges[e]
		n := s.cells[e]
		h := ed.Length / float64(n)
		for i := 0; i <= n; i++ {
			row, fac := s.vertex(e, i)
			if row < 0 {
				continue
			}
			w := h
			if i == 0 || i == n {
				w = h / 2
			}
			_, _, _, _, rho := fvCoefs(ed, float64(i)*h, 0)
			occ[e] += w * rho * fac * qbar[row]
		}
	}
	return occ, nil
}

// ForwardAmount is where walkers released at a point are at one time T:
// per edge the amount per unit length ρq at the grid vertices
// x_i = i·Length/cells, and per node the point mass ρ_v·Q_v its capacity
// holds (0 at a node without one). What is neither on an edge nor held at
// a node has been absorbed or killed.
type ForwardAmount struct {
	T     float64
	Edges [][]float64
	Nodes []float64
}

// ForwardAmounts returns where walkers released at release are at each of
// the times (the forward solution, Evolve with Forward, tolerance tol, 0
// for 1e-6): the densities on the edges and the point masses at nodes with
// a capacity. Each time is its own transient run from 0. Edge capacities
// that vary along an edge are read at each vertex.
func ForwardAmounts(net *Network, release Point, times []float64, cells int, tol float64) ([]ForwardAmount, error) {
	if tol == 0 {
		tol = 1e-6
	}
	out := make([]ForwardAmount, len(times))
	for k, t := range times {
		if !(t >= 0) || math.IsInf(t, 0) {
			return nil, fmt.Errorf("forward density: time %g must be a finite number ≥ 0", t)
		}
		until := t
		if until == 0 {
			until = 1e-300
		}
		r, err := Evolve(net, &EvolveSettings{Until: until, Every: until, Forward: true, Release: &release, Fields: true, Cells: cells, Tol: tol})
		if err != nil {
			return nil, err
		}
		if r.Status != Converged {
			return nil, fmt.Errorf("forward density at t = %g: %v", t, r.Status)
		}
		sn := r.Snapshots[len(r.Snapshots)-1]
		if t == 0 {
			sn = r.Snapshots[0]
		}
		fa := ForwardAmount{T: t, Edges: make([][]float64, len(net.Edges)), Nodes: make([]float64, len(net.Nodes))}
		for v := range net.Nodes {
			if c := net.Nodes[v].Law.Capacity; c > 0 && net.Nodes[v].Law.Kind != vertex.Fixed {
				fa.Nodes[v] = c * sn.Nodes[v]
			}
		}
		for e, vals := range sn.Edges {
			ed := &net.Edges[e]
			n := len(vals) - 1
			h := ed.Length / float64(n)
			d := make([]float64, len(vals))
			for i, q := range vals {
				_, _, _, _, rho := fvCoefs(ed, float64(i)*h, 0)
				d[i] = rho * q
			}
			fa.Edges[e] = d
		}
		out[k] = fa
	}
	return out, nil
}

// ForwardDensity returns the edge densities of ForwardAmounts: per time,
// per edge, ρq at the grid vertices. Node capacities would hold point
// masses, which this per-edge form cannot carry: a network with one is
// refused (use ForwardAmounts).
func ForwardDensity(net *Network, release Point, times []float64, cells int, tol float64) ([][][]float64, error) {
	for _, nd := range net.Nodes {
		if nd.Law.Capacity != 0 {
			return nil, fmt.Errorf("forward density: node %q has a capacity (a point mass), not supported here (use ForwardAmounts)", nd.ID)
		}
	}
	fa, err := ForwardAmounts(net, release, times, cells, tol)
	if err != nil {
		return nil, err
	}
	out := make([][][]float64, len(fa))
	for k := range fa {
		out[k] = fa[k].Edges
	}
	return out, nil
}
