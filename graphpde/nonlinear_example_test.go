package graphpde_test

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// A rod whose conductivity grows with temperature, k = 1 + u, held at 0
// and 1: the Kirchhoff transform gives u(x) = −1 + √(1 + 3x), so
// u(0.5) = 0.5811 and the heat flux is 1.5.
func ExampleSolveNonlinear() {
	net := &graphpde.Network{}
	cold, _ := net.AddNode(graphpde.Node{ID: "cold", Law: vertex.Law{Kind: vertex.Fixed, Value: 0}})
	hot, _ := net.AddNode(graphpde.Node{ID: "hot", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
	k := &graphpde.Coef{Fn: func(x, u, t float64) (float64, float64) { return 1 + u, 1 }, UsesU: true}
	net.AddEdge(graphpde.Edge{ID: "rod", From: cold, To: hot, Length: 1, A: 1, Cells: 100,
		Law: &graphpde.EdgeLaw{A: k}})
	res, err := graphpde.SolveNonlinear(net, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	mid, _ := res.Solution.At(vertex.OnEdge(0, 0.5))
	fmt.Printf("%v after %d iterations: u(0.5) = %.4f, flux %.4g\n", res.Status, res.Iterations, mid, -res.Solution.Flux[0][0])
	// Output: converged after 3 iterations: u(0.5) = 0.5811, flux 1.5
}

// Bratu's problem u” + λeᵘ = 0 with u = 0 at both ends has a steady
// solution only up to λ_c ≈ 3.5138: a sweep in λ finds that fold.
func ExampleSweep() {
	net := &graphpde.Network{Params: &graphpde.Params{Names: []string{"lambda"}, Values: []float64{1}}}
	l, _ := net.AddNode(graphpde.Node{ID: "l", Law: vertex.Law{Kind: vertex.Fixed}})
	r, _ := net.AddNode(graphpde.Node{ID: "r", Law: vertex.Law{Kind: vertex.Fixed}})
	eq := &graphpde.Equation{Fn: func(x, u, ux, uxx float64) (float64, float64, float64, float64) {
		g := net.Params.Values[0] * math.Exp(u)
		return uxx + g, g, 0, 1
	}}
	net.AddEdge(graphpde.Edge{ID: "slab", From: l, To: r, Length: 1, A: 1, Weight: [2]float64{1, 1}, Cells: 200,
		Law: &graphpde.EdgeLaw{Equation: eq}})
	res, err := graphpde.Sweep(net, "lambda", 4, &graphpde.SweepSettings{Probes: []graphpde.Point{vertex.OnEdge(0, 0.5)}})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%v: fold at λ = %.4f, u(0.5) = %.3f there, confirmed %v\n", res.Status, res.Fold.Value, res.Fold.Probes[0], res.FoldConfirmed)
	// Output: fold: fold at λ = 3.5138, u(0.5) = 1.187 there, confirmed true
}
