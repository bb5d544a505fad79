package graphpde_test

import (
	"slices"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
)

// TestSolveAnalysisReuse solves a 40×40 mesh three times with one
// NodeAnalysis: the first solve analyses the node system, the second (other
// edge sources and conductances, same nodes and edges) and the third (grid
// elements instead of exact ones) reuse the analysis (Stats.Reused), and
// each gives the same field bit for bit as a solve without it (the same
// order, so the same arithmetic). A network with another pattern is
// analysed anew.
func TestSolveAnalysisReuse(t *testing.T) {
	var ana graphpde.NodeAnalysis
	net := gen.SquareMesh(40, 40)
	net2 := gen.SquareMesh(40, 40)
	for e := range net2.Edges {
		net2.Edges[e].F = 0.3 * float64(e%7)
		net2.Edges[e].A = 1 + 0.1*float64(e%5)
	}
	cases := []struct {
		name  string
		net   *graphpde.Network
		set   graphpde.Settings
		reuse bool
	}{
		{"first", net, graphpde.Settings{}, false},
		{"other sources and conductances", net2, graphpde.Settings{}, true},
		{"grid elements", net2, graphpde.Settings{Method: graphpde.MethodGrid, Cells: 4}, true},
		{"another pattern", gen.SquareMesh(30, 40), graphpde.Settings{}, false},
		{"the new pattern again", gen.SquareMesh(30, 40), graphpde.Settings{}, true},
	}
	for _, c := range cases {
		set := c.set
		set.Analysis = &ana
		got, err := graphpde.Solve(c.net, &set)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		want, err := graphpde.Solve(c.net, &c.set)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if got.Stats.Reused != c.reuse || want.Stats.Reused {
			t.Errorf("%s: reused %v (without the analysis %v), want %v", c.name, got.Stats.Reused, want.Stats.Reused, c.reuse)
		}
		if !slices.Equal(got.U, want.U) {
			t.Errorf("%s: the field differs from a solve without the analysis", c.name)
		}
	}
}
