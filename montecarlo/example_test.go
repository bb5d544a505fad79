package montecarlo_test

import (
	"context"
	"fmt"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// A dye drop released at the junction of three irrigation ditches of
// different lengths drains to one of three sluices, held at 0. Where does it
// leave, and after how long? The exact answers are (1/L_j)/Σ(1/L_i) =
// 0.545, 0.273, 0.182 and E τ = ΣL_i/(2 Σ 1/L_i) = 1.64 (docs/exit-statistics.md §5).
func ExampleRun() {
	var net graphpde.Network
	law := vertex.Law{Kind: vertex.Fixed}
	hub, _ := net.AddNode(graphpde.Node{ID: "hub", Law: vertex.Law{Kind: vertex.Balance}})
	for i, ditch := range []struct {
		sluice string
		length float64
	}{{"mill", 1}, {"orchard", 2}, {"pond", 3}} {
		end, _ := net.AddNode(graphpde.Node{ID: ditch.sluice, Law: law})
		net.AddEdge(graphpde.Edge{ID: fmt.Sprint("ditch", i), From: hub, To: end, Length: ditch.length, A: 1})
	}
	res, err := montecarlo.Run(context.Background(), &net, vertex.AtNode(hub),
		&montecarlo.Settings{Particles: 200000, Seed: 2026})
	if err != nil {
		fmt.Println(err)
		return
	}
	for v := 1; v < net.NumNodes(); v++ {
		h := res.Hit[v]
		fmt.Printf("%-7s %.3f ± %.3f\n", net.NodeID(v), h.Mean, h.StdErr)
	}
	fmt.Printf("mean time %.3g ± %.2g\n", res.ExitTime.Mean, res.ExitTime.StdErr)
	// Output:
	// mill    0.545 ± 0.001
	// orchard 0.274 ± 0.001
	// pond    0.182 ± 0.001
	// mean time 1.64 ± 0.0036
}
