package graphpde_test

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// A copper pin fin 50 mm long and 5 mm thick, its base held 75 K above the
// air and its tip insulated: a = kA_c, c = hP, u the excess temperature.
func ExampleSolve() {
	const k, h, D, L = 398.0, 100.0, 5e-3, 50e-3
	net := &graphpde.Network{}
	base, _ := net.AddNode(graphpde.Node{ID: "base", Law: vertex.Law{Kind: vertex.Fixed, Value: 75}})
	tip, _ := net.AddNode(graphpde.Node{ID: "tip"})
	net.AddEdge(graphpde.Edge{ID: "pin", From: base, To: tip, Length: L,
		A: k * math.Pi * D * D / 4, C: h * math.Pi * D})
	sol, err := graphpde.Solve(net, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	mid, err := sol.At(vertex.OnEdge(0, L/2))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("heat loss %.4g W, tip %.4g K, middle %.4g K\n", sol.Flux[0][0], sol.U[tip], mid)
	// Output: heat loss 5.069 W, tip 59.43 K, middle 63.2 K
}

// Mean exit time from the centre of a three-armed star with biased weights:
// a source 1 on every edge (time accrues at rate ρ = 1) and the ends held at
// 0. The same network without the source gives the hitting probabilities.
func ExampleSolveVariant() {
	net := &graphpde.Network{}
	c, _ := net.AddNode(graphpde.Node{ID: "c"})
	for i, arm := range []struct{ L, w float64 }{{1, 0.5}, {2, 0.3}, {3, 0.2}} {
		end, _ := net.AddNode(graphpde.Node{ID: fmt.Sprintf("end%d", i+1), Law: vertex.Law{Kind: vertex.Fixed}})
		net.AddEdge(graphpde.Edge{ID: fmt.Sprintf("arm%d", i+1), From: c, To: end,
			Length: arm.L, A: 0.5, Weight: [2]float64{arm.w, 0}})
	}
	T, err := graphpde.SolveVariant(net, &graphpde.Variant{ConstSource: []float64{1, 1, 1}}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	g := make([]float64, len(net.Nodes))
	g[1] = 1 // end1
	P, err := graphpde.SolveVariant(net, &graphpde.Variant{FixedValue: g}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean exit time %.4g, P(leave by end1) %.4g\n", T.U[c], P.U[c])
	// Output: mean exit time 2.372, P(leave by end1) 0.6977
}

// The field along a drift-dominated edge, on a grid of 8 cells: the
// Scharfetter–Gummel flux keeps it monotone even at a cell Péclet number of 25.
func ExampleSolution_Sample() {
	net := &graphpde.Network{}
	in, _ := net.AddNode(graphpde.Node{ID: "in", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
	out, _ := net.AddNode(graphpde.Node{ID: "out", Law: vertex.Law{Kind: vertex.Fixed, Value: 0}})
	net.AddEdge(graphpde.Edge{ID: "duct", From: in, To: out, Length: 1, A: 0.01, B: -2})
	sol, err := graphpde.Solve(net, &graphpde.Settings{Method: graphpde.MethodGrid, Cells: 8})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, p := range sol.Sample(nil, 0) {
		fmt.Printf("%.3g:%.3g ", p.X, p.U)
	}
	fmt.Println()
	// Output: 0:1 0.125:1 0.25:1 0.375:1 0.5:1 0.625:1 0.75:1 0.875:1 1:0
}
