package nodesys_test

import (
	"fmt"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// A star network: node 0 in the middle joined to three leaves by
// conductances 1, 2 and 3; every node leaks 0.5 to ground, and a unit current
// is injected at leaf 1. The potentials solve the node system. By hand: each
// leaf gives u_v = (g_v·u_0 + b_v)/(g_v + 0.5), and the middle row then gives
// u_0 = (1/1.5)/(6.5 − 1/1.5 − 4/2.5 − 9/3.5) = 0.4011.
func ExampleFactor() {
	m := nodesys.NewMatrix[float64](4)
	for leaf, g := range []float64{1, 2, 3} {
		v := leaf + 1
		m.Add(0, 0, g)
		m.Add(v, v, g)
		m.Add(0, v, -g)
		m.Add(v, 0, -g)
	}
	for i := 0; i < 4; i++ {
		m.Add(i, i, 0.5)
	}
	f := nodesys.NewFactor[float64](nil)
	if err := f.Factorize(m); err != nil {
		fmt.Println(err)
		return
	}
	u := []float64{0, 1, 0, 0}
	f.SolveTo(u, u)
	fmt.Printf("potentials %.4f\n", u)
	st := f.Stats()
	fmt.Printf("fill %d (a tree: none)\n", st.Fill)
	// Output:
	// potentials [0.4011 0.9341 0.3209 0.3438]
	// fill 0 (a tree: none)
}

// Laplace-transform work solves the same kind of system at complex s. Here
// two nodes with a = 1 + s on the diagonal: x = (a, 1)/(a² − 1), which for
// s = 1+5i is (56 − 150i, −22 − 20i)/884 by hand.
func ExampleFactor_complex() {
	m := nodesys.NewMatrix[complex128](2)
	s := complex(1, 5)
	m.Add(0, 0, 1+s)
	m.Add(1, 1, 1+s)
	m.Add(0, 1, -1)
	m.Add(1, 0, -1)
	f := nodesys.NewFactor[complex128](nil)
	if err := f.Factorize(m); err != nil {
		fmt.Println(err)
		return
	}
	x := make([]complex128, 2)
	f.SolveTo(x, []complex128{1, 0})
	fmt.Printf("%.4f\n", x)
	// Output:
	// [(0.0633-0.1697i) (-0.0249-0.0226i)]
}
