package main

import (
	"strconv"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
)

// BenchmarkSummary measures the engineering summary of solve on a square
// mesh of unit conductors with decay and a source (an interior maximum on
// most edges, so most edges need the root finder), against the solve
// itself in the same run. Measured on the project machine while others
// worked: summary/solve ≈ 2.3 (30×30) and 2.7 (100×100).
func BenchmarkSummary(b *testing.B) {
	for _, n := range []int{30, 100} {
		net := gen.SquareMesh(n, n)
		for i := range net.Edges {
			net.Edges[i].C = 0.5 // an interior extremum on some edges
			net.Edges[i].F = 1
		}
		sol, err := graphpde.Solve(net, nil)
		if err != nil {
			b.Fatal(err)
		}
		b.Run("solve/"+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				graphpde.Solve(net, nil)
			}
		})
		b.Run("summary/"+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				summarize(net, sol)
			}
		})
	}
}
