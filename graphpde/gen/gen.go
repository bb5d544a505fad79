package gen

import (
	"fmt"
	"math/rand/v2"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// must panics on a model error: the generators only build admissible
// networks, so an error is a bug here.
func must(i int, err error) int {
	if err != nil {
		panic("gen: " + err.Error())
	}
	return i
}

// RandomTree returns a random recursive tree with the given number of edges:
// node k ≥ 1 hangs from a uniformly chosen node j < k by an edge j → k of
// length uniform in [0.5, 2], diffusivity uniform in [0.5, 2], decay uniform
// in [0, 0.2], source 1 and the given number of grid cells (0: the solver's
// default). The root "r0" is fixed at 0; every other node is a balance node
// (the tree is anchored by its root). Node ids are "r<k>", edge ids "t<k>".
// It is deterministic for a seed (rand.NewPCG(seed, 0)). It panics if
// edges < 0 or cells < 0. Cost O(edges).
func RandomTree(edges int, seed uint64, cells int) *graphpde.Network {
	if edges < 0 || cells < 0 {
		panic(fmt.Sprintf("gen: RandomTree(%d, _, %d)", edges, cells))
	}
	rnd := rand.New(rand.NewPCG(seed, 0))
	net := &graphpde.Network{Name: fmt.Sprintf("random tree, %d edges", edges)}
	net.Nodes = make([]graphpde.Node, 0, edges+1)
	net.Edges = make([]graphpde.Edge, 0, edges)
	must(net.AddNode(graphpde.Node{ID: "r0", Law: vertex.Law{Kind: vertex.Fixed}}))
	for k := 1; k <= edges; k++ {
		must(net.AddNode(graphpde.Node{ID: fmt.Sprintf("r%d", k)}))
		must(net.AddEdge(graphpde.Edge{ID: fmt.Sprintf("t%d", k), From: rnd.IntN(k), To: k,
			Length: 0.5 + 1.5*rnd.Float64(), A: 0.5 + 1.5*rnd.Float64(), C: 0.2 * rnd.Float64(),
			F: 1, Cells: cells}))
	}
	return net
}

// SquareMesh returns an nx × ny grid of nodes "m<i>_<j>" (i the column)
// joined by unit conductors (length 1, diffusivity 1) to their right and upper
// neighbours; the left column is fixed at 0 and the right column at 1. It
// panics if nx < 2 or ny < 1. Cost O(nx·ny).
func SquareMesh(nx, ny int) *graphpde.Network {
	if nx < 2 || ny < 1 {
		panic(fmt.Sprintf("gen: SquareMesh(%d, %d)", nx, ny))
	}
	net := &graphpde.Network{Name: fmt.Sprintf("%d×%d square mesh", nx, ny)}
	net.Nodes = make([]graphpde.Node, 0, nx*ny)
	net.Edges = make([]graphpde.Edge, 0, 2*nx*ny)
	id := func(i, j int) int { return j*nx + i }
	for j := range ny {
		for i := range nx {
			law := vertex.Law{}
			switch i {
			case 0:
				law = vertex.Law{Kind: vertex.Fixed, Value: 0}
			case nx - 1:
				law = vertex.Law{Kind: vertex.Fixed, Value: 1}
			}
			must(net.AddNode(graphpde.Node{ID: fmt.Sprintf("m%d_%d", i, j), Law: law, XY: &[2]float64{float64(i), float64(j)}}))
		}
	}
	for j := range ny {
		for i := range nx {
			if i+1 < nx {
				must(net.AddEdge(graphpde.Edge{ID: fmt.Sprintf("h%d_%d", i, j), From: id(i, j), To: id(i+1, j), Length: 1, A: 1}))
			}
			if j+1 < ny {
				must(net.AddEdge(graphpde.Edge{ID: fmt.Sprintf("v%d_%d", i, j), From: id(i, j), To: id(i, j+1), Length: 1, A: 1}))
			}
		}
	}
	return net
}

// Star returns a star: a balance centre "c" and arms "arm<k>" (k from 1) of
// the given lengths, diffusivity 1 and weight weights[k−1] at the centre end
// (0 means the default, the diffusivity), to ends "end<k>" fixed at 1 for
// k = 1 and 0 otherwise, so that the solution at the centre is the probability
// of leaving by end1. It panics if the slices differ in length or are empty.
func Star(lengths, weights []float64) *graphpde.Network {
	if len(lengths) == 0 || len(lengths) != len(weights) {
		panic("gen: Star needs equal, non-empty lengths and weights")
	}
	net := &graphpde.Network{Name: fmt.Sprintf("star with %d arms", len(lengths))}
	c := must(net.AddNode(graphpde.Node{ID: "c"}))
	for k, L := range lengths {
		g := 0.0
		if k == 0 {
			g = 1
		}
		end := must(net.AddNode(graphpde.Node{ID: fmt.Sprintf("end%d", k+1), Law: vertex.Law{Kind: vertex.Fixed, Value: g}}))
		must(net.AddEdge(graphpde.Edge{ID: fmt.Sprintf("arm%d", k+1), From: c, To: end, Length: L, A: 1,
			Weight: [2]float64{weights[k], 0}}))
	}
	return net
}

// Cube returns the unit resistor cube: nodes "q0"…"q7" numbered by the bits
// of their corner, 12 unit conductors between corners differing in one bit,
// q0 fixed at 1 and the opposite corner q7 at 0 (the current leaving q0 is
// then 1/R with R = 5/6).
func Cube() *graphpde.Network {
	net := &graphpde.Network{Name: "unit resistor cube"}
	for i := range 8 {
		law := vertex.Law{}
		switch i {
		case 0:
			law = vertex.Law{Kind: vertex.Fixed, Value: 1}
		case 7:
			law = vertex.Law{Kind: vertex.Fixed, Value: 0}
		}
		must(net.AddNode(graphpde.Node{ID: fmt.Sprintf("q%d", i), Law: law}))
	}
	for i := range 8 {
		for bit := 1; bit < 8; bit <<= 1 {
			if j := i ^ bit; j > i {
				must(net.AddEdge(graphpde.Edge{ID: fmt.Sprintf("q%d-q%d", i, j), From: i, To: j, Length: 1, A: 1}))
			}
		}
	}
	return net
}

// Chain returns n unit conductors in a row between nodes "k0" (fixed at 0)
// and "k<n>" (fixed at 1). It panics if n < 1.
func Chain(n int) *graphpde.Network {
	if n < 1 {
		panic(fmt.Sprintf("gen: Chain(%d)", n))
	}
	net := &graphpde.Network{Name: fmt.Sprintf("chain of %d", n)}
	for k := 0; k <= n; k++ {
		law := vertex.Law{}
		switch k {
		case 0:
			law = vertex.Law{Kind: vertex.Fixed, Value: 0}
		case n:
			law = vertex.Law{Kind: vertex.Fixed, Value: 1}
		}
		must(net.AddNode(graphpde.Node{ID: fmt.Sprintf("k%d", k), Law: law}))
		if k > 0 {
			must(net.AddEdge(graphpde.Edge{ID: fmt.Sprintf("l%d", k), From: k - 1, To: k, Length: 1, A: 1}))
		}
	}
	return net
}
