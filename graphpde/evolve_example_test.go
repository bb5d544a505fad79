package graphpde_test

import (
	"fmt"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// A distributed RC line (total R = C = 1) driven by a unit step at one end
// and open at the other: when does the open end reach half the supply?
func ExampleEvolve() {
	net := &graphpde.Network{}
	drive, _ := net.AddNode(graphpde.Node{ID: "drive", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
	far, _ := net.AddNode(graphpde.Node{ID: "far"})
	net.AddEdge(graphpde.Edge{ID: "line", From: drive, To: far, Length: 1, A: 1})
	r, err := graphpde.Evolve(net, &graphpde.EvolveSettings{Until: 1, Every: 0.25,
		Probes: []graphpde.Point{vertex.AtNode(far)}, Crossing: 0.5, Method: graphpde.MethodExact})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, t := range r.Times {
		fmt.Printf("t = %.2f RC: %.4f\n", t, r.Probes[0][i])
	}
	fmt.Printf("50%% at %.4f RC\n", r.Crossing[0])
	// Output:
	// t = 0.00 RC: 0.0000
	// t = 0.25 RC: 0.3146
	// t = 0.50 RC: 0.6292
	// t = 0.75 RC: 0.7999
	// t = 1.00 RC: 0.8920
	// 50% at 0.3787 RC
}

// The smallest decay rates of a star of three unit arms with their ends
// held at 0: π²/4 once, then π² twice (the arms' own modes).
func ExampleSpectrum() {
	net := &graphpde.Network{}
	c, _ := net.AddNode(graphpde.Node{ID: "c"})
	for _, id := range []string{"a", "b", "d"} {
		end, _ := net.AddNode(graphpde.Node{ID: "end-" + id, Law: vertex.Law{Kind: vertex.Fixed}})
		net.AddEdge(graphpde.Edge{ID: id, From: c, To: end, Length: 1, A: 1})
	}
	r, err := graphpde.Spectrum(net, &graphpde.SpectrumSettings{Count: 4})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, e := range r.Eigenvalues {
		fmt.Printf("λ = %.4f ×%d\n", e.Value, e.Multiplicity)
	}
	fmt.Printf("relaxation time %.4f\n", r.RelaxationTime())
	// Output:
	// λ = 2.4674 ×1
	// λ = 9.8696 ×2
	// λ = 22.2066 ×1
	// relaxation time 0.4053
}
