package netfile_test

import (
	"fmt"
	"os"
	"strings"

	"github.com/ramify-dev/ramify/graphpde/netfile"
)

// A Y-shaped drainage ditch: two fixed-level inlets feed a junction that
// drains into a leaky outlet.
func ExampleRead() {
	const src = `
[network]
name = "ditch"

[defaults]
diffusivity = 0.8
cells = 40

[[node]]
id = "inlet-a"
fixed = 1.0
[[node]]
id = "inlet-b"
fixed = 0.5
[[node]]
id = "fork"
[[node]]
id = "outlet"
leak = 2.0

[[edge]]
id = "a"
from = "inlet-a"
to = "fork"
length = 1.2
[[edge]]
id = "b"
from = "inlet-b"
to = "fork"
length = 0.9
[[edge]]
id = "main"
from = "fork"
to = "outlet"
length = 2.5
diffusivity = 1.6
`
	net, err := netfile.Read(strings.NewReader(src), "ditch.toml")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%s: %d nodes, %d edges\n", net.Name, len(net.Nodes), len(net.Edges))
	e := net.Edges[0]
	fmt.Printf("edge %s: a = %.3g (from [defaults]), cells = %d\n", e.ID, e.A, e.Cells)
	// Output:
	// ditch: 4 nodes, 3 edges
	// edge a: a = 0.8 (from [defaults]), cells = 40
}

// Errors carry the file, the line and the object.
func ExampleRead_error() {
	const src = `[[node]]
id = "hub"
lek = 0.5
`
	_, err := netfile.Read(strings.NewReader(src), "net.toml")
	fmt.Println(err)
	// Output:
	// net.toml:3: node "hub": unknown key "lek" (did you mean "leak"?)
}

// An edge list with node rows that fix one end and leak at the other.
func ExampleReadCSV() {
	const src = `kind,id,from,to,length,diffusivity,fixed,leak
node,src,,,,,1,
edge,p1,src,mid,0.5,1,,
edge,p2,mid,end,0.75,2,,
node,end,,,,,,0.25
`
	net, err := netfile.ReadCSV(strings.NewReader(src), "pipes.csv")
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, nd := range net.Nodes {
		fmt.Printf("%s: %v\n", nd.ID, nd.Law.Kind)
	}
	// Output:
	// src: fixed
	// mid: balance
	// end: balance
}

// Write prints a network file that Read reads back to the same network.
func ExampleWrite() {
	net, err := netfile.ReadCSV(strings.NewReader("id,from,to,length,diffusivity\nrod,left,right,2,0.5\n"), "rod.csv")
	if err != nil {
		fmt.Println(err)
		return
	}
	if err := netfile.Write(os.Stdout, net); err != nil {
		fmt.Println(err)
	}
	// Output:
	// [[node]]
	// id = "left"
	//
	// [[node]]
	// id = "right"
	//
	// [[edge]]
	// id = "rod"
	// from = "left"
	// to = "right"
	// length = 2.0
	// diffusivity = 0.5
}
