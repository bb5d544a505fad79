package graphpde

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/graph/path"
	"gonum.org/v1/gonum/graph/simple"

	"github.com/ramify-dev/ramify/vertex"
)

// ctlNet builds a network from nodes (id → fixed value, or NaN for a
// Kirchhoff balance node) and edges.
func ctlNet(t *testing.T, obj Objective, nodes []struct {
	id  string
	fix float64
}, edges []Edge) *Network {
	t.Helper()
	net := &Network{Objective: obj}
	for _, nd := range nodes {
		law := vertex.Law{Kind: vertex.Balance}
		if !math.IsNaN(nd.fix) {
			law = vertex.Law{Kind: vertex.Fixed, Value: nd.fix}
		}
		if _, err := net.AddNode(Node{ID: nd.id, Law: law}); err != nil {
			t.Fatal(err)
		}
	}
	for _, e := range edges {
		if _, err := net.AddEdge(e); err != nil {
			t.Fatal(err)
		}
	}
	return net
}

type nodeSpec = struct {
	id  string
	fix float64
}

// exitTimeValue is the least expected time to leave [0, 2] for
// dX = b dt + dW (generator ½u” + b u'), |b| ≤ 1, by either end: the
// optimal drift points to the nearer end (bang-bang), and on [0, 1]
// ½u” − u' + 1 = 0, u(0) = 0, u'(1) = 0 (symmetry) gives
// u(x) = x − (e^{2(x−1)} − e^{−2})/2 (derived; the optimality check:
// u' = 1 − e^{2(x−1)} ≥ 0 there, so b = −1 minimises b·u').
func exitTimeValue(x float64) float64 {
	if x > 1 {
		x = 2 - x
	}
	return x - (math.Exp(2*(x-1))-math.Exp(-2))/2
}

func corridor(t *testing.T, cells int) *Network {
	return ctlNet(t, Minimize, []nodeSpec{{"w", 0}, {"e", 0}}, []Edge{{
		ID: "c", From: 0, To: 1, Length: 2, A: 0.5, F: 1, Cells: cells,
		Controls: &EdgeControls{Alt: []EdgeControl{{A: 0.5, B: -1, F: 1}, {A: 0.5, B: 1, F: 1}}},
	}})
}

func TestControlBangBangClosedForm(t *testing.T) {
	for _, cells := range []int{16, 64, 256} {
		net := corridor(t, cells)
		res, err := SolveControl(net, nil)
		if err != nil {
			t.Fatal(err)
		}
		if res.Status != Converged {
			t.Fatalf("cells %d: status %v %v", cells, res.Status, res.Notes)
		}
		// The Scharfetter–Gummel rows are exact for constant a, b, f
		// without decay on either side of the switch (x = 1, a grid
		// vertex); the error comes from the vertex where the two rows
		// meet and is O(h²): measured 4.5e−3, 2.8e−4, 1.8e−5 at x = 1
		// for 16, 64, 256 cells (a factor 16 per factor 4). The
		// tolerance is 0.5 h² (common practice, no source).
		h := 2 / float64(cells)
		tol := 0.5 * h * h
		for _, x := range []float64{0.25, 0.5, 1, 1.5, 1.75} {
			got, _ := res.Solution.At(vertex.OnEdge(0, x))
			if want := exitTimeValue(x); math.Abs(got-want) > tol {
				t.Errorf("cells %d: u(%g) = %.10f, want %.10f (tol %.1e)", cells, x, got, want, tol)
			}
		}
		// Policy: drift −1 (control 0) left of the middle, +1 right.
		ps := res.Policy.Edges[0]
		if len(ps) != 2 || ps[0].Control != 0 || ps[1].Control != 1 || math.Abs(ps[0].To-1) > h {
			t.Errorf("cells %d: policy %+v, want control 0 on [0,1], 1 on [1,2]", cells, ps)
		}
		if res.Iterations > 10 {
			t.Errorf("cells %d: %d iterations, want ≤ 10", cells, res.Iterations)
		}
		if res.Backstep > 1e-12 {
			t.Errorf("cells %d: values moved against the objective by %.2g", cells, res.Backstep)
		}
	}
}

// TestControlJunctionSplit: a hub between a reward end (u = 1, length 1)
// and a loss end (u = 0, length 2), pure diffusion. With end weights α₁, α₂
// the Kirchhoff balance α₁(1 − U) − α₂ U/2 = 0 gives U = α₁/(α₁ + α₂/2)
// (derived by hand): weights (1, 3) → 0.4, (3, 1) → 6/7, (2, 2) → 2/3. The
// controller that maximises picks (3, 1), the one that minimises (1, 3).
// Both arms are exact elements, so U is exact to round-off.
func TestControlJunctionSplit(t *testing.T) {
	for _, tc := range []struct {
		obj  Objective
		k    int
		want float64
	}{{Maximize, 1, 6.0 / 7}, {Minimize, 0, 0.4}} {
		net := &Network{Objective: tc.obj}
		net.AddNode(Node{ID: "good", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
		net.AddNode(Node{ID: "bad", Law: vertex.Law{Kind: vertex.Fixed, Value: 0}})
		if _, err := net.AddNode(Node{ID: "hub", Law: vertex.Law{Kind: vertex.Balance}, Controls: []NodeControl{
			{Weights: map[string]float64{"g": 1, "b": 3}},
			{Weights: map[string]float64{"g": 3, "b": 1}},
			{Weights: map[string]float64{"g": 2, "b": 2}},
		}}); err != nil {
			t.Fatal(err)
		}
		net.AddEdge(Edge{ID: "g", From: 2, To: 0, Length: 1, A: 1})
		net.AddEdge(Edge{ID: "b", From: 2, To: 1, Length: 2, A: 1})
		res, err := SolveControl(net, nil)
		if err != nil {
			t.Fatal(err)
		}
		if got := res.Solution.U[2]; math.Abs(got-tc.want) > 1e-13 {
			t.Errorf("%v: U(hub) = %.15f, want %.15f", tc.obj, got, tc.want)
		}
		if res.Policy.Nodes[2] != tc.k {
			t.Errorf("%v: hub control %d, want %d", tc.obj, res.Policy.Nodes[2], tc.k)
		}
	}
}

// controlledGrid is a ladder of corridors with drift controls both ways,
// decays, sources and controlled junctions: a test of Howard's iteration on
// something without symmetry.
func controlledGrid(t *testing.T, obj Objective, rungs int) *Network {
	t.Helper()
	net := &Network{Objective: obj}
	add := func(nd Node) {
		if _, err := net.AddNode(nd); err != nil {
			t.Fatal(err)
		}
	}
	add(Node{ID: "out0", Law: vertex.Law{Kind: vertex.Fixed, Value: 0}})
	add(Node{ID: "out1", Law: vertex.Law{Kind: vertex.Fixed, Value: 0.5}})
	for i := 0; i < rungs; i++ {
		for _, s := range []string{"l", "r"} {
			add(Node{ID: s + string(rune('a'+i)), Law: vertex.Law{Kind: vertex.Balance}})
		}
	}
	id := func(s string) int { v, _ := net.NodeIndex(s); return v }
	ctl := func(a, f float64) []EdgeControl {
		return []EdgeControl{{A: a, B: -1.5, F: f}, {A: a, B: 0.7, F: f, C: 0.2}, {A: 2 * a, B: 0.1, F: 1.5 * f}}
	}
	ne := 0
	edge := func(from, to string, L, a, f float64) {
		ne++
		if _, err := net.AddEdge(Edge{ID: "e" + string(rune('a'+ne)), From: id(from), To: id(to), Length: L, A: a, F: f, Cells: 40, Controls: &EdgeControls{Alt: ctl(a, f)}}); err != nil {
			t.Fatal(err)
		}
	}
	for i := 0; i < rungs; i++ {
		l, r := "l"+string(rune('a'+i)), "r"+string(rune('a'+i))
		edge(l, r, 1+0.3*float64(i), 0.4, 1)
		if i+1 < rungs {
			edge(l, "l"+string(rune('a'+i+1)), 0.8, 0.3, 0.5)
			net.AddEdge(Edge{ID: "p" + string(rune('a'+i)), From: id(r), To: id("r" + string(rune('a'+i+1))), Length: 1.1, A: 0.5, F: 1})
		}
	}
	edge("la", "out0", 0.5, 0.5, 1)
	edge("r"+string(rune('a'+rungs-1)), "out1", 0.7, 0.5, 1)
	// A controlled junction.
	v := id("lb")
	nd := &net.Nodes[v]
	var names []string
	for _, end := range net.Incident(v) {
		names = append(names, net.Edges[end.Edge].ID)
	}
	w0, w1 := map[string]float64{}, map[string]float64{}
	for i, s := range names {
		w0[s], w1[s] = 1+float64(i), 3-float64(i)
	}
	nd.Controls = []NodeControl{{Weights: w0}, {Weights: w1}}
	return net
}

// TestPolicyIterationMonotoneFinite: Howard's iteration on a monotone
// scheme ends after finitely many steps with a value sequence monotone in
// the objective's direction (Howard 1960; Bokanowski, Maroso and Zidani
// 2009, from memory), and at the end no single control can do better at
// any point (the discrete Bellman equation holds).
func TestPolicyIterationMonotoneFinite(t *testing.T) {
	for _, obj := range []Objective{Minimize, Maximize} {
		net := controlledGrid(t, obj, 4)
		res, err := SolveControl(net, &ControlSettings{GridOnly: true})
		if err != nil {
			t.Fatal(err)
		}
		if res.Status != Converged || res.Switches[len(res.Switches)-1] != 0 {
			t.Fatalf("%v: status %v, switches %v", obj, res.Status, res.Switches)
		}
		if res.Iterations > 10 {
			t.Errorf("%v: %d iterations (switches %v), want ≤ 10", obj, res.Iterations, res.Switches)
		}
		// Round-off of the node solve: relative 1e−12 of the largest value.
		if res.Backstep > 1e-12 {
			t.Errorf("%v: values moved against the objective by %.2g (relative)", obj, res.Backstep)
		}
		// Each constant policy is a feasible policy: the optimum must be at
		// least as good at every node.
		for k := 0; k < 3; k++ {
			pn, _, err := net.Apply(ConstantPolicy(net, k))
			if err != nil {
				t.Fatal(err)
			}
			sol, err := Solve(pn, &Settings{Method: MethodGrid, Cells: 40})
			if err != nil {
				t.Fatal(err)
			}
			for v := range net.Nodes {
				opt, alt := res.Solution.U[v], sol.U[v]
				if obj == Maximize {
					opt, alt = -opt, -alt
				}
				if alt < opt-1e-12 {
					t.Errorf("%v: constant policy %d beats the optimum at %s: %.12g vs %.12g", obj, k, net.Nodes[v].ID, sol.U[v], res.Solution.U[v])
				}
			}
		}
	}
}

// TestControlExactMatchesGrid: where the optimal policy is constant along
// every edge (a reward that only grows with drift to the right), the exact
// re-solve agrees with the grid to the grid's accuracy and is exact: push
// right with drift 2, a = 1: P(x) = (1 − e^{−2x})/(1 − e^{−2}) (scale
// function of u” + 2u', Karlin & Taylor, A Second Course in Stochastic
// Processes, 1981, §15.3).
func TestControlExactMatchesGrid(t *testing.T) {
	net := ctlNet(t, Maximize, []nodeSpec{{"l", 0}, {"r", 1}}, []Edge{{ID: "t", From: 0, To: 1, Length: 1, A: 1, Cells: 50,
		Controls: &EdgeControls{Alt: []EdgeControl{{A: 1, B: -2}, {A: 1, B: 2}}}}})
	res, err := SolveControl(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !res.Exact[0] {
		t.Fatalf("edge not exact: %v", res.Notes)
	}
	for _, x := range []float64{0.1, 0.25, 0.77} {
		got, _ := res.Solution.At(vertex.OnEdge(0, x))
		want := -math.Expm1(-2*x) / -math.Expm1(-2)
		if math.Abs(got-want) > 1e-13 {
			t.Errorf("u(%g) = %.15f, want %.15f", x, got, want)
		}
	}
	if ps := res.Policy.Edges[0]; len(ps) != 1 || ps[0].Control != 1 {
		t.Errorf("policy %+v, want control 1 everywhere", ps)
	}
}

// TestControlErrors: missing objective, a node control naming a foreign
// edge, a control that breaks ellipticity, and a plain solve of a
// controlled network.
func TestControlErrors(t *testing.T) {
	net := corridor(t, 8)
	net.Objective = NoObjective
	if _, err := SolveControl(net, nil); err == nil {
		t.Error("no error without an objective")
	}
	net.Objective = Minimize
	if _, err := Solve(net, nil); err == nil {
		t.Error("Solve accepted a controlled network")
	}
	var n2 Network
	n2.AddNode(Node{ID: "a", Law: vertex.Law{Kind: vertex.Fixed}})
	n2.AddNode(Node{ID: "b", Law: vertex.Law{Kind: vertex.Fixed}})
	if _, err := n2.AddEdge(Edge{ID: "x", From: 0, To: 1, Length: 1, A: 1, Controls: &EdgeControls{Alt: []EdgeControl{{A: 1}, {A: 0}}}}); err == nil {
		t.Error("a control with a = 0 was accepted")
	}
	if _, err := n2.AddNode(Node{ID: "c", Law: vertex.Law{Kind: vertex.Fixed}, Controls: []NodeControl{{Weights: map[string]float64{"x": 1}}}}); err == nil {
		t.Error("controls on a fixed node were accepted")
	}
}

// TestVanishingViscosityShortestPath: the least expected time to reach an
// exit at drift speed ≤ 1, ε u” − |u'| + 1 = 0 written as the control
// problem min_{b = ±1} [ε u” + b u' + 1], tends as ε → 0 to the distance
// to the nearest exit along the network. The outside reference is gonum's
// Dijkstra (graph/path) on the same weighted graph, from every exit.
// The error at ε is O(ε log(1/ε)) away from the points where two
// shortest paths meet (derived from the boundary layer of width ε at the
// exits); the test asks for the gap to shrink with ε and to be below 3ε
// log(1/ε) + 2h at ε = 1e−3.
func TestVanishingViscosityShortestPath(t *testing.T) {
	type ed struct {
		id       string
		from, to int
		L        float64
	}
	// 0, 1 exits; 2..5 junctions (a network with a cycle).
	edges := []ed{{"a", 0, 2, 1.3}, {"b", 2, 3, 0.9}, {"c", 3, 4, 1.7}, {"d", 4, 1, 0.6}, {"e", 2, 5, 2.2}, {"f", 5, 4, 0.8}, {"g", 3, 5, 1.1}}
	build := func() *Network {
		net := &Network{Objective: Minimize}
		for i := 0; i < 6; i++ {
			law := vertex.Law{Kind: vertex.Balance}
			if i < 2 {
				law = vertex.Law{Kind: vertex.Fixed}
			}
			net.AddNode(Node{ID: string(rune('A' + i)), Law: law})
		}
		for _, e := range edges {
			if _, err := net.AddEdge(Edge{ID: e.id, From: e.from, To: e.to, Length: e.L, A: 1, F: 1, Cells: 400,
				Controls: &EdgeControls{Alt: []EdgeControl{{A: 1, B: -1, F: 1}, {A: 1, B: 1, F: 1}}}}); err != nil {
				t.Fatal(err)
			}
		}
		return net
	}
	g := simple.NewWeightedUndirectedGraph(0, math.Inf(1))
	for _, e := range edges {
		g.SetWeightedEdge(g.NewWeightedEdge(simple.Node(e.from), simple.Node(e.to), e.L))
	}
	dist := make([]float64, 6)
	for v := range dist {
		dist[v] = math.Inf(1)
	}
	for _, exit := range []int64{0, 1} {
		sp := path.DijkstraFrom(simple.Node(exit), g)
		for v := range dist {
			dist[v] = math.Min(dist[v], sp.WeightTo(int64(v)))
		}
	}
	net := build()
	prevGap := math.Inf(1)
	for _, eps := range []float64{0.1, 0.01, 0.001} {
		res, err := SolveControl(net, &ControlSettings{ViscosityScale: eps})
		if err != nil {
			t.Fatal(err)
		}
		if res.Status != Converged {
			t.Fatalf("ε = %g: %v %v", eps, res.Status, res.Notes)
		}
		gap := 0.0
		for v := 2; v < 6; v++ {
			gap = math.Max(gap, math.Abs(res.Solution.U[v]-dist[v]))
		}
		t.Logf("ε = %g: max |u − dist| at junctions = %.3g, %d iterations", eps, gap, res.Iterations)
		if gap >= prevGap {
			t.Errorf("ε = %g: gap %.3g did not shrink (was %.3g)", eps, gap, prevGap)
		}
		prevGap = gap
		if eps == 0.001 {
			if tol := 3*eps*math.Log(1/eps) + 2*2.2/400; gap > tol {
				t.Errorf("ε = %g: gap %.3g > %.3g", eps, gap, tol)
			}
		}
	}
}
