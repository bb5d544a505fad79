package graphpde

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// TestCondensed: the condensed solve (Thomas sweeps per edge around the
// node system) must give what the general sparse factorisation gives for
// M + dK on grids with drift, skewed weights, a self-loop, fixed nodes and
// node capacity, for the backward and the forward system: to round-off
// (1e-12 relative to the largest value).
func TestCondensed(t *testing.T) {
	net := fwdStar(t)
	v := net.Nodes[0]
	_ = v
	if _, err := net.AddEdge(Edge{ID: "loop", From: 0, To: 0, Length: 0.7, A: 0.3, B: 0.5}); err != nil {
		t.Fatal(err)
	}
	rel := Point{Node: 0, Edge: -1}
	fv, err := newFV(net, 7, 0)
	if err != nil {
		t.Fatal(err)
	}
	fw, err := newForward(net, 5, 0, &rel)
	if err != nil {
		t.Fatal(err)
	}
	for _, sys := range []odeSystem{fv, fw} {
		rs := sys.rows()
		lay := sys.(gridLayout)
		n, unk, off, cells := lay.layout()
		c := newCondensed(rs, n, unk, off, cells)
		for _, d := range []float64{1e-3, 0.1, 10} {
			a := make([]float64, len(rs.cv))
			for i := 0; i < rs.n; i++ {
				for p := rs.rp[i]; p < rs.rp[i+1]; p++ {
					a[p] = d * rs.cv[p]
					if rs.ci[p] == i {
						a[p] += rs.M[i]
					}
				}
			}
			if err := c.factor(a); err != nil {
				t.Fatal(err)
			}
			m := nodesys.NewMatrixPattern[float64](rs.n, rs.rp, rs.ci)
			copy(m.Values(), a)
			f := nodesys.NewFactor[float64](nil)
			if err := f.Factorize(m); err != nil {
				t.Fatal(err)
			}
			b := make([]float64, rs.n)
			for i := range b {
				b[i] = math.Sin(1.3*float64(i)) + 0.5
			}
			x1, x2 := make([]float64, rs.n), make([]float64, rs.n)
			c.solve(a, x1, b)
			f.SolveTo(x2, b)
			big, diff := 0.0, 0.0
			for i := range x1 {
				big = math.Max(big, math.Abs(x2[i]))
				diff = math.Max(diff, math.Abs(x1[i]-x2[i]))
			}
			if diff > 1e-12*big {
				t.Errorf("d = %g: condensed and general solves differ by %.2e (of %.2e)", d, diff, big)
			}
		}
	}
}
