package graphpde_test

import (
	"fmt"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// A tracer particle released at the junction of three drainage pipes of
// lengths 1, 2 and 3 m (diffusivity 0.5 m²/s, junction weights 0.5, 0.3 and
// 0.2) leaves through one of the open ends. Which end, and how long does it
// take?
func ExampleExitStatistics() {
	var net graphpde.Network
	net.AddNode(graphpde.Node{ID: "junction", Law: vertex.Law{Kind: vertex.Balance}})
	for i, L := range []float64{1, 2, 3} {
		end, _ := net.AddNode(graphpde.Node{ID: fmt.Sprintf("outlet%d", i+1), Law: vertex.Law{Kind: vertex.Fixed}})
		net.AddEdge(graphpde.Edge{ID: fmt.Sprintf("pipe%d", i+1), From: 0, To: end, Length: L, A: 0.5,
			Weight: [2]float64{[]float64{0.5, 0.3, 0.2}[i], 0}})
	}
	x, err := graphpde.ExitStatistics(&net, graphpde.Point{Node: 0, Edge: -1},
		&graphpde.ExitSettings{Times: []float64{1}, Quantiles: []float64{0.5}})
	if err != nil {
		fmt.Println(err)
		return
	}
	for v := 1; v < net.NumNodes(); v++ {
		fmt.Printf("P(leaves at %s) = %.4f\n", net.NodeID(v), x.Hit[v])
	}
	fmt.Printf("mean time %.4f s, SD %.4f s, median %.4f s\n", x.Mean, x.SD, x.Quantiles[0].T)
	fmt.Printf("P(still inside after 1 s) = %.4f\n", x.Survival[0].P)
	// Output:
	// P(leaves at outlet1) = 0.6977
	// P(leaves at outlet2) = 0.2093
	// P(leaves at outlet3) = 0.0930
	// mean time 2.3721 s, SD 2.3950 s, median 1.5840 s
	// P(still inside after 1 s) = 0.6543
}
