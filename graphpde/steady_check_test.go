package graphpde

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/ramify-dev/ramify/vertex"
)

// mmsEdge is a manufactured solution on one edge: with t = x/L,
//
//	u(x) = φ0 (1 − t) + φ1 t + A sin(πt) + B sin(2πt),
//
// coefficients a(x) = a0 (1 + 0.3 sin(x + k)), b(x) = b0 cos(x + k),
// c(x) = c0 (1 + 0.5 x), and the source f = −(a u_x)_x − b u_x + c u that makes
// u exact.
type mmsEdge struct {
	L, A, B, a0, b0, c0, k float64
	phi0, phi1             float64
}

func (m *mmsEdge) u(x float64) float64 {
	t := x / m.L
	return m.phi0*(1-t) + m.phi1*t + m.A*math.Sin(math.Pi*t) + m.B*math.Sin(2*math.Pi*t)
}

func (m *mmsEdge) du(x float64) float64 {
	t := x / m.L
	w := math.Pi / m.L
	return (m.phi1-m.phi0)/m.L + m.A*w*math.Cos(math.Pi*t) + 2*m.B*w*math.Cos(2*math.Pi*t)
}

func (m *mmsEdge) d2u(x float64) float64 {
	t := x / m.L
	w := math.Pi / m.L
	return -m.A*w*w*math.Sin(math.Pi*t) - 4*m.B*w*w*math.Sin(2*math.Pi*t)
}

func (m *mmsEdge) profile() *Profile {
	a := func(x float64) float64 { return m.a0 * (1 + 0.3*math.Sin(x+m.k)) }
	da := func(x float64) float64 { return m.a0 * 0.3 * math.Cos(x+m.k) }
	b := func(x float64) float64 { return m.b0 * math.Cos(x+m.k) }
	c := func(x float64) float64 { return m.c0 * (1 + 0.5*x) }
	f := func(x float64) float64 {
		return -(da(x)*m.du(x) + a(x)*m.d2u(x)) - b(x)*m.du(x) + c(x)*m.u(x)
	}
	return &Profile{A: a, B: b, C: c, F: f}
}

// mmsNetwork builds a network with a cycle, parallel edges, a self-loop,
// non-conservative weights, drift, decay and varying coefficients whose exact
// solution is known: node values phi, edge solutions from mmsEdge, and the
// injections γ chosen to satisfy every balance.
func mmsNetwork(t testing.TB) (*Network, []mmsEdge, []float64) {
	phi := []float64{1, 0.4, -0.3, 0.8, 0.2, -1}
	fixed := map[int]bool{0: true, 5: true}
	leak := map[int]float64{2: 0.5}
	type spec struct {
		from, to int
		L        float64
		w        [2]float64
	}
	specs := []spec{
		{0, 1, 1, [2]float64{}}, {1, 2, 1.3, [2]float64{}}, {2, 3, 0.8, [2]float64{}},
		{3, 1, 1.1, [2]float64{}}, {2, 4, 0.9, [2]float64{}}, {4, 5, 1.2, [2]float64{}},
		{1, 2, 0.7, [2]float64{}}, {3, 3, 1.5, [2]float64{}}, {4, 1, 1, [2]float64{0.6, 2.5}},
	}
	rnd := rand.New(rand.NewPCG(3, 0))
	edges := make([]mmsEdge, len(specs))
	b := newNetBuilder(t)
	for i, p := range phi {
		if fixed[i] {
			b.fixed(fmt.Sprintf("v%d", i), p)
		} else {
			b.node(fmt.Sprintf("v%d", i), vertex.Law{Leak: leak[i]})
		}
	}
	for e, s := range specs {
		m := mmsEdge{L: s.L, A: rnd.NormFloat64(), B: 0.5 * rnd.NormFloat64(),
			a0: 0.5 + rnd.Float64(), b0: 2 * rnd.NormFloat64(), c0: rnd.Float64(), k: 3 * rnd.Float64(),
			phi0: phi[s.from], phi1: phi[s.to]}
		edges[e] = m
		b.edge(Edge{ID: fmt.Sprintf("e%d", e), From: s.from, To: s.to, Length: s.L,
			A: 1, Profile: edges[e].profile(), Weight: s.w})
	}
	net := b.net
	for v := range net.Nodes {
		if fixed[v] {
			continue
		}
		g := leak[v] * phi[v]
		for _, end := range net.Incident(v) {
			m := &edges[end.Edge]
			alpha := net.Edges[end.Edge].EndWeight(end.Side)
			if end.Side == 0 {
				g += -alpha * m.du(0)
			} else {
				g += alpha * m.du(m.L)
			}
		}
		net.Nodes[v].Law.Inject = g
	}
	return net, edges, phi
}

// TestGridSecondOrder: on the manufactured network (varying a, b, c, f, cycles,
// a self-loop, parallel edges, weights α ≠ a) the grid solution converges at
// second order in the max norm at nodes and at every grid point. The observed
// orders of four refinements must be within 0.1 of 2 (docs/discretisation.md §2:
// the half cells owned by the nodes keep second order).
func TestGridSecondOrder(t *testing.T) {
	net, edges, phi := mmsNetwork(t)
	var prevNode, prevEdge float64
	for k, n := range []int{8, 16, 32, 64, 128} {
		sol := mustSolve(t, net, MethodAuto, n)
		if sol.Stats.GridEdges != len(net.Edges) {
			t.Fatalf("auto used %d grid edges", sol.Stats.GridEdges)
		}
		var en, ee float64
		for v, p := range phi {
			en = math.Max(en, math.Abs(sol.U[v]-p))
		}
		for e := range edges {
			for _, pt := range sol.Sample(nil, e) {
				ee = math.Max(ee, math.Abs(pt.U-edges[e].u(pt.X)))
			}
		}
		if k > 0 {
			on, oe := math.Log2(prevNode/en), math.Log2(prevEdge/ee)
			t.Logf("cells %d: node error %.3g (order %.3f), edge error %.3g (order %.3f)", n, en, on, ee, oe)
			if math.Abs(on-2) > 0.1 || math.Abs(oe-2) > 0.1 {
				t.Errorf("cells %d: observed orders %.3f (nodes), %.3f (edges), want 2 ± 0.1", n, on, oe)
			}
		}
		prevNode, prevEdge = en, ee
	}
}

// TestExactNetworkClosedForm: a network with cycles, a self-loop, drift and
// decay on constant-coefficient edges, whose solution is known in closed form
// (naiveSolution on every edge with chosen node values, injections from its
// end derivatives). The exact elements reproduce it to round-off.
// Tolerance naive = 1e-12 on values of order 1 (the reference's own
// conditioning, |κL| ≤ 4, leaves it about 1e-14).
func TestExactNetworkClosedForm(t *testing.T) {
	const naive = 1e-12
	phi := []float64{1, 0.4, -0.3, 0.8, 0.2}
	type spec struct {
		from, to   int
		L, a, b, c float64
		f          float64
		w          [2]float64
	}
	specs := []spec{
		{0, 1, 1, 1, 0, 0, 0.5, [2]float64{}},
		{1, 2, 1.3, 0.7, 2, 0, -1, [2]float64{}},
		{2, 3, 0.8, 1.2, -1.5, 2, 0.3, [2]float64{0.4, 1.7}},
		{3, 1, 1.1, 0.5, 0, 3, 1, [2]float64{}},
		{2, 4, 0.9, 2, 1, 0.01, 0, [2]float64{}},
		{3, 3, 1.5, 1, 0.5, 1, 2, [2]float64{}},
		{1, 2, 0.7, 1, 0, 0, 0, [2]float64{}},
	}
	b := newNetBuilder(t)
	b.fixed("v0", phi[0])
	for i := 1; i < len(phi); i++ {
		b.balance(fmt.Sprintf("v%d", i))
	}
	type sol1 struct{ u, du func(float64) complex128 }
	ref := make([]sol1, len(specs))
	for e, s := range specs {
		b.edge(Edge{ID: fmt.Sprintf("e%d", e), From: s.from, To: s.to, Length: s.L, A: s.a, B: s.b, C: s.c, F: s.f, Weight: s.w})
		u, du := naiveSolution(s.a, s.b, complex(s.c, 0), complex(s.f, 0), s.L, complex(phi[s.from], 0), complex(phi[s.to], 0))
		ref[e] = sol1{u, du}
	}
	net := b.net
	for v := 1; v < len(phi); v++ {
		var g float64
		for _, end := range net.Incident(v) {
			alpha := net.Edges[end.Edge].EndWeight(end.Side)
			if end.Side == 0 {
				g += -alpha * real(ref[end.Edge].du(0))
			} else {
				g += alpha * real(ref[end.Edge].du(specs[end.Edge].L))
			}
		}
		net.Nodes[v].Law.Inject = g
	}
	sol := mustSolve(t, net, MethodExact, 0)
	for v, p := range phi {
		if math.Abs(sol.U[v]-p) > naive {
			t.Errorf("node v%d: %.15g, want %.15g", v, sol.U[v], p)
		}
	}
	for e, s := range specs {
		for _, x := range []float64{0.13 * s.L, 0.5 * s.L, 0.91 * s.L} {
			if got, want := atOK(t, sol, Point{Node: -1, Edge: e, X: x}), real(ref[e].u(x)); math.Abs(got-want) > naive {
				t.Errorf("e%d at %g: %.15g, want %.15g", e, x, got, want)
			}
		}
		for k, x := range []float64{0, s.L} {
			if got, want := sol.Flux[e][k], -s.a*real(ref[e].du(x)); math.Abs(got-want) > naive*(1+math.Abs(want)) {
				t.Errorf("e%d flux[%d]: %.15g, want %.15g", e, k, got, want)
			}
		}
	}
}

// TestNodeSystemAgainstDense solves random networks with cycles, self-loops
// and parallel edges with exact elements and compares the node values with
// gonum's dense LU solve (mat.Dense.Solve) of the same node system, assembled
// densely here from exactElement. Tolerance: 1e-10 relative to the solution
// size, a condition number of ~1e4 times ε with margin.
func TestNodeSystemAgainstDense(t *testing.T) {
	const dense = 1e-10
	rnd := rand.New(rand.NewPCG(11, 2))
	for trial := range 6 {
		net := randomCyclicNet(t, 20+10*trial, 15, rnd)
		sol := mustSolve(t, net, MethodExact, 0)
		idx := make([]int, len(net.Nodes))
		n := 0
		for v := range net.Nodes {
			if net.Nodes[v].Law.Kind == vertex.Fixed {
				idx[v] = -1
			} else {
				idx[v] = n
				n++
			}
		}
		A := mat.NewDense(n, n, nil)
		rhs := mat.NewVecDense(n, nil)
		put := func(r, col int, val float64) {
			if c := idx[col]; c >= 0 {
				A.Set(r, c, A.At(r, c)+val)
			} else {
				rhs.SetVec(r, rhs.AtVec(r)-val*net.Nodes[col].Law.Value)
			}
		}
		for e := range net.Edges {
			ed := &net.Edges[e]
			d, g := exactElement(ed.A, ed.B, ed.C, ed.F, ed.Length)
			if r := idx[ed.From]; r >= 0 {
				al := ed.EndWeight(0)
				put(r, ed.From, -al*d[0][0])
				put(r, ed.To, -al*d[0][1])
				rhs.SetVec(r, rhs.AtVec(r)+al*g[0])
			}
			if r := idx[ed.To]; r >= 0 {
				al := ed.EndWeight(1)
				put(r, ed.From, al*d[1][0])
				put(r, ed.To, al*d[1][1])
				rhs.SetVec(r, rhs.AtVec(r)-al*g[1])
			}
		}
		checkAgainstDense(t, net, idx, A, rhs, sol.U, dense, fmt.Sprintf("trial %d", trial), "sparse")
	}
}

// TestGridCondensationAgainstDense assembles the whole grid scheme (every
// interior grid value an unknown, the node rows with their half cells, as
// documented in element_grid.go) densely for small random networks and solves
// it with gonum's mat.Dense.Solve; the condensed solve (Thomas sweeps, node
// system, back substitution) must give the same nodes and interiors.
// Tolerance 1e-9 relative: the dense system has condition ~n²·(network).
func TestGridCondensationAgainstDense(t *testing.T) {
	const dense = 1e-9
	rnd := rand.New(rand.NewPCG(5, 9))
	const cells = 6
	for trial := range 4 {
		net := randomCyclicNet(t, 8, 6, rnd)
		sol := mustSolve(t, net, MethodGrid, cells)
		// global numbering: balance nodes, then interiors edge by edge
		idx := make([]int, len(net.Nodes))
		n := 0
		for v := range net.Nodes {
			if net.Nodes[v].Law.Kind == vertex.Fixed {
				idx[v] = -1
			} else {
				idx[v] = n
				n++
			}
		}
		first := n
		n += len(net.Edges) * (cells - 1)
		A := mat.NewDense(n, n, nil)
		rhs := mat.NewVecDense(n, nil)
		// gidx returns the unknown of vertex i of edge e, or −1 with its value.
		gidx := func(e, i int) (int, float64) {
			ed := &net.Edges[e]
			switch i {
			case 0:
				return idx[ed.From], net.Nodes[ed.From].Law.Value
			case cells:
				return idx[ed.To], net.Nodes[ed.To].Law.Value
			}
			return first + e*(cells-1) + i - 1, 0
		}
		put := func(r int, e, i int, val float64) {
			if c, g := gidx(e, i); c >= 0 {
				A.Set(r, c, A.At(r, c)+val)
			} else {
				rhs.SetVec(r, rhs.AtVec(r)-val*g)
			}
		}
		for e := range net.Edges {
			ed := &net.Edges[e]
			h := ed.Length / cells
			p := ed.B * h / ed.A
			R, Lf := ed.A/h*sgB(-p), ed.A/h*sgB(p)
			for i := 1; i < cells; i++ {
				r, _ := gidx(e, i)
				put(r, e, i+1, R)
				put(r, e, i, -R-Lf-h*ed.C)
				put(r, e, i-1, Lf)
				rhs.SetVec(r, rhs.AtVec(r)-h*ed.F)
			}
			m0, mL := h/2*sgOmega(p), h/2*sgOmega(-p)
			if r := idx[ed.From]; r >= 0 { // J = −(α/a)[R(u1 − U0) + m0(f − c U0)]
				w := ed.EndWeight(0) / ed.A
				put(r, e, 1, -w*R)
				put(r, e, 0, w*(R+m0*ed.C))
				rhs.SetVec(r, rhs.AtVec(r)+w*m0*ed.F)
			}
			if r := idx[ed.To]; r >= 0 { // J = (α/a)[Lf(UL − u_{n−1}) − mL(f − c UL)]
				w := ed.EndWeight(1) / ed.A
				put(r, e, cells, w*(Lf+mL*ed.C))
				put(r, e, cells-1, -w*Lf)
				rhs.SetVec(r, rhs.AtVec(r)+w*mL*ed.F)
			}
		}
		x, scale := checkAgainstDense(t, net, idx, A, rhs, sol.U, dense, fmt.Sprintf("trial %d", trial), "condensed")
		for e := range net.Edges {
			pts := sol.Sample(nil, e)
			for i := 1; i < cells; i++ {
				c, _ := gidx(e, i)
				if math.Abs(pts[i].U-x.AtVec(c)) > dense*scale {
					t.Errorf("trial %d edge %d vertex %d: condensed %.15g, dense %.15g", trial, e, i, pts[i].U, x.AtVec(c))
				}
			}
		}
	}
}

// contractCase builds the networks of the public contract reference cases
// (cases/*.toml of the contract check that .ci/run runs when it is present
// beside the clone) in code, values copied from those files, and holds their
// expected values (expected/*.solve.json, copied; the contract's own
// tolerances are 1e-6 for auto and 1e-3 for grid).
type contractCase struct {
	name   string
	build  func(t testing.TB) *Network
	nodes  map[string]float64
	flux   map[string][2]float64
	probes map[string]float64
}

var contractCases = []contractCase{
	{
		name: "rod",
		build: func(t testing.TB) *Network {
			b := newNetBuilder(t)
			base := b.fixed("base", 1)
			tip := b.balance("tip")
			b.edge(Edge{ID: "rod", From: base, To: tip, Length: 2, A: 0.5, C: 0.5})
			return b.net
		},
		nodes:  map[string]float64{"base": 1, "tip": 0.2658022288340797},
		flux:   map[string][2]float64{"rod": {0.48201379003790834, 0}},
		probes: map[string]float64{"rod@1.0": 0.41015427200459836},
	},
	{
		name: "loop",
		build: func(t testing.TB) *Network {
			b := newNetBuilder(t)
			p := b.node("p", vertex.Law{Inject: 2})
			q := b.balance("q")
			r := b.node("r", vertex.Law{Leak: 0.5})
			s := b.balance("s")
			g := b.fixed("ground", 0)
			b.edge(Edge{ID: "pq", From: p, To: q, Length: 1, A: 2})
			b.edge(Edge{ID: "qr", From: q, To: r, Length: 1.5, A: 1, F: 0.4})
			b.edge(Edge{ID: "rs", From: r, To: s, Length: 0.5, A: 1, C: 1})
			b.edge(Edge{ID: "sp", From: s, To: p, Length: 1, A: 0.5})
			b.edge(Edge{ID: "tail", From: q, To: g, Length: 2, A: 3})
			return b.net
		},
		nodes: map[string]float64{"p": 1.9018269536799992, "q": 1.127505239362994, "r": 0.8914268849787145,
			"s": 0.9991138109480192, "ground": 0},
		flux: map[string][2]float64{
			"pq": {1.5486434286340103, 1.5486434286340103}, "qr": {-0.14261443041048028, 0.4573855695895198},
			"rs": {0.0116721271001623, -0.45135657136599017}, "sp": {-0.45135657136599, -0.45135657136599},
			"tail": {1.691257859044491, 1.691257859044491}},
		probes: map[string]float64{"qr@0.75": 1.1219660621708543},
	},
	{
		name: "fork",
		build: func(t testing.TB) *Network {
			b := newNetBuilder(t)
			f := b.balance("fork")
			l := b.fixed("left", 0)
			r := b.fixed("right", 1)
			b.edge(Edge{ID: "l", From: f, To: l, Length: 1, A: 1, Weight: [2]float64{2, 1}})
			b.edge(Edge{ID: "r", From: f, To: r, Length: 1, A: 1, Weight: [2]float64{1, 1}})
			return b.net
		},
		nodes: map[string]float64{"fork": 1.0 / 3, "left": 0, "right": 1},
		flux:  map[string][2]float64{"l": {1.0 / 3, 1.0 / 3}, "r": {-2.0 / 3, -2.0 / 3}},
	},
}

// TestContractSolve checks node values, end fluxes and probes of the
// contract's reference cases. Exact elements must match to roundoff = 1e-12
// (the expected values are closed-form results printed to 16 digits); the
// grid (64 cells) within the contract's 1e-3.
func TestContractSolve(t *testing.T) {
	for _, cc := range contractCases {
		net := cc.build(t)
		for _, tc := range []struct {
			m   Method
			tol float64
		}{{MethodAuto, 1e-12}, {MethodGrid, 1e-3}} {
			sol := mustSolve(t, net, tc.m, 0)
			near := func(what string, got, want float64) {
				if math.Abs(got-want) > tc.tol*math.Max(1, math.Abs(want)) {
					t.Errorf("%s %v %s: got %.15g, want %.15g", cc.name, tc.m, what, got, want)
				}
			}
			for id, want := range cc.nodes {
				v, _ := net.NodeIndex(id)
				near("node "+id, sol.U[v], want)
			}
			for id, want := range cc.flux {
				e, _ := net.EdgeIndex(id)
				near("flux "+id+"[0]", sol.Flux[e][0], want[0])
				near("flux "+id+"[1]", sol.Flux[e][1], want[1])
			}
			for at, want := range cc.probes {
				p, err := net.ParsePoint(at)
				if err != nil {
					t.Fatal(err)
				}
				near("probe "+at, atOK(t, sol, p), want)
			}
		}
	}
}

// TestVariant checks SolveVariant against problems built by hand: a shift
// equals added decay and leak; ConstSource, NodeInject and FixedValue equal
// editing the network; EdgeSource equal to a constant gives the same answer
// on the grid as ConstSource.
func TestVariant(t *testing.T) {
	const roundoff = 1e-12
	rnd := rand.New(rand.NewPCG(21, 4))
	net := randomCyclicNet(t, 15, 10, rnd)
	for i := range net.Nodes {
		net.Nodes[i].Law.Capacity = 0.3 * float64(i%3)
	}
	for e := range net.Edges {
		net.Edges[e].Rho = 0.5 + 0.1*float64(e%4)
	}
	ne, nn := len(net.Edges), len(net.Nodes)
	src := make([]float64, ne)
	for e := range src {
		src[e] = rnd.NormFloat64()
	}
	inj := make([]float64, nn)
	val := make([]float64, nn)
	for v := range inj {
		inj[v], val[v] = rnd.NormFloat64(), rnd.NormFloat64()
	}
	const s = 0.7
	v := &Variant{Shift: s, ConstSource: src, NodeInject: inj, FixedValue: val}
	// the same problem edited by hand
	ed := &Network{}
	for i, nd := range net.Nodes {
		l := nd.Law
		if l.Kind == vertex.Fixed {
			l.Value = val[i]
		} else {
			l.Leak += s * l.Capacity
			l.Inject = inj[i]
		}
		if _, err := ed.AddNode(Node{ID: nd.ID, Law: l}); err != nil {
			t.Fatal(err)
		}
	}
	for e, x := range net.Edges {
		x.C += s * x.Rho
		x.F = src[e]
		if _, err := ed.AddEdge(x); err != nil {
			t.Fatal(err)
		}
	}
	for _, m := range []Method{MethodExact, MethodGrid} {
		got, err := SolveVariant(net, v, &Settings{Method: m, Cells: 16})
		if err != nil {
			t.Fatal(err)
		}
		want := mustSolve(t, ed, m, 16)
		for i := range got.U {
			if math.Abs(got.U[i]-want.U[i]) > roundoff*(1+math.Abs(want.U[i])) {
				t.Errorf("%v node %d: variant %.15g, edited %.15g", m, i, got.U[i], want.U[i])
			}
			if math.Abs(got.Residual[i]) > 1e-10 {
				t.Errorf("%v node %d: residual %g", m, i, got.Residual[i])
			}
		}
	}
	// EdgeSource constant per edge = ConstSource, on the grid
	ev := &Variant{EdgeSource: func(e int, x float64) float64 { return src[e] }}
	cv := &Variant{ConstSource: src}
	a, err := SolveVariant(net, ev, &Settings{Cells: 16})
	if err != nil {
		t.Fatal(err)
	}
	b, err := SolveVariant(net, cv, &Settings{Method: MethodGrid, Cells: 16})
	if err != nil {
		t.Fatal(err)
	}
	if a.Stats.GridEdges != ne {
		t.Errorf("EdgeSource: %d grid edges, want all %d", a.Stats.GridEdges, ne)
	}
	for i := range a.U {
		if math.Abs(a.U[i]-b.U[i]) > roundoff*(1+math.Abs(b.U[i])) {
			t.Errorf("node %d: EdgeSource %.15g, ConstSource %.15g", i, a.U[i], b.U[i])
		}
	}
	if _, err := SolveVariant(net, ev, &Settings{Method: MethodExact}); err == nil {
		t.Error("EdgeSource with MethodExact: no error")
	}
}

// TestSystemReuse: the unexported system re-assembled with another shift and
// other injections, re-factored on the same pattern and solved, agrees with a
// fresh SolveVariant, and that cycle allocates nothing (no re-ordering, no
// per-edge allocation). Tolerance roundoff = 1e-12.
func TestSystemReuse(t *testing.T) {
	const roundoff = 1e-12
	rnd := rand.New(rand.NewPCG(31, 5))
	net := randomCyclicNet(t, 25, 15, rnd)
	for v := range net.Nodes {
		net.Nodes[v].Law.Capacity = 0.5
	}
	for _, m := range []Method{MethodExact, MethodGrid} {
		set := &Settings{Method: m, Cells: 12}
		sys, err := newSystem(net, nil, set)
		if err != nil {
			t.Fatal(err)
		}
		sys.assemble(0)
		if err := sys.factor(); err != nil {
			t.Fatal(err)
		}
		sys.solve()
		inj := make([]float64, len(net.Nodes))
		for v := range inj {
			inj[v] = rnd.NormFloat64()
		}
		sys.v.NodeInject = inj
		const s = 0.25
		allocs := testing.AllocsPerRun(3, func() {
			sys.assemble(s)
			if err := sys.factor(); err != nil {
				t.Fatal(err)
			}
			sys.solve()
		})
		if allocs != 0 {
			t.Errorf("%v: %g allocations per re-assemble, factor, solve", m, allocs)
		}
		got, err := sys.solution()
		if err != nil {
			t.Fatal(err)
		}
		want, err := SolveVariant(net, &Variant{Shift: s, NodeInject: inj}, set)
		if err != nil {
			t.Fatal(err)
		}
		for v := range got.U {
			if math.Abs(got.U[v]-want.U[v]) > roundoff*(1+math.Abs(want.U[v])) {
				t.Errorf("%v node %d: reused %.15g, fresh %.15g", m, v, got.U[v], want.U[v])
			}
		}
	}
}

// TestGridSizeRefused: a grid beyond Settings.MaxGridUnknowns is refused
// before allocation with a *GridSizeError.
func TestGridSizeRefused(t *testing.T) {
	b := newNetBuilder(t)
	x := b.fixed("x", 0)
	y := b.fixed("y", 1)
	b.edge(Edge{ID: "long", From: x, To: y, Length: 1, A: 1, Cells: 1 << 40})
	_, err := Solve(b.net, &Settings{Method: MethodGrid})
	var ge *GridSizeError
	if !errors.As(err, &ge) || ge.Unknowns != 1<<40-1 {
		t.Fatalf("error %v, want *GridSizeError", err)
	}
	// Edge.Cells wins over Settings.Cells
	if _, err := Solve(b.net, &Settings{Method: MethodGrid, Cells: 3, MaxGridUnknowns: 5}); !errors.As(err, &ge) {
		t.Errorf("error %v, want *GridSizeError", err)
	}
	b.net.Edges[0].Cells = 0
	if _, err := Solve(b.net, &Settings{Method: MethodGrid, Cells: 10, MaxGridUnknowns: 5}); !errors.As(err, &ge) || ge.Unknowns != 9 {
		t.Errorf("error %v, want 9 unknowns refused", err)
	}
	if _, err := Solve(b.net, &Settings{Method: MethodGrid, Cells: 6, MaxGridUnknowns: 5}); err != nil {
		t.Errorf("5 unknowns: %v", err)
	}
}

// checkAgainstDense adds the node laws' own terms (leak on the diagonal,
// injection on the right) to the dense node system A·x = rhs, whose row of
// node v is idx[v] (−1 for fixed nodes), solves it with gonum and compares
// with the values u of the method under test within tol·‖x‖∞. It returns
// the dense solution and ‖x‖∞.
func checkAgainstDense(t *testing.T, net *Network, idx []int, A *mat.Dense, rhs *mat.VecDense, u []float64, tol float64, what, method string) (*mat.VecDense, float64) {
	t.Helper()
	for v := range net.Nodes {
		if r := idx[v]; r >= 0 {
			l := net.Nodes[v].Law
			A.Set(r, r, A.At(r, r)+l.Leak)
			rhs.SetVec(r, rhs.AtVec(r)+l.Inject)
		}
	}
	var x mat.VecDense
	if err := x.SolveVec(A, rhs); err != nil {
		t.Fatal(err)
	}
	scale := mat.Norm(&x, math.Inf(1))
	for v := range net.Nodes {
		if r := idx[v]; r >= 0 && math.Abs(u[v]-x.AtVec(r)) > tol*scale {
			t.Errorf("%s node %s: %s %.15g, dense %.15g", what, net.Nodes[v].ID, method, u[v], x.AtVec(r))
		}
	}
	return &x, scale
}
