package graphpde

import (
	"math"
	"testing"
)

// diffusionEl is the worked example of DEVELOPERS.md ("How to add an edge
// element"): the element of a u” = 0 on [0, L], whose solution is linear,
// so u'(0) = u'(L) = (UL − U0)/L and nothing is kept inside.
type diffusionEl struct{ L float64 }

func (x *diffusionEl) unknowns() int { return 0 }

func (x *diffusionEl) linearize(_, _ float64) (edgeMap, float64) {
	k := 1 / x.L
	m := edgeMap{d: [2][2]float64{{-k, k}, {-k, k}}}
	m.rs = [2]float64{0, 0} // row sums: a constant is a solution
	return m, 0
}

func (x *diffusionEl) recover(_, _ float64) bool { return true }

func (x *diffusionEl) eval(at, U0, UL float64, _ []float64) (u, du float64) {
	t := at / x.L
	return (1-t)*U0 + t*UL, (UL - U0) / x.L
}

// TestElementWorkedExample checks the worked example against the exact
// element on an edge without drift, decay or source (where both are exact,
// so they agree to rounding), through the element interface alone.
func TestElementWorkedExample(t *testing.T) {
	const roundoff = 1e-14
	net := &Network{}
	a, _ := net.AddNode(Node{ID: "a"})
	b, _ := net.AddNode(Node{ID: "b"})
	net.AddEdge(Edge{ID: "ab", From: a, To: b, Length: 2.5, A: 1})
	sys := &system{net: net}
	var ex, ws element = &exactEl{s: sys, e: 0}, &diffusionEl{L: 2.5}
	m1, _ := ex.linearize(0, 0)
	m2, _ := ws.linearize(0, 0)
	for i := range 2 {
		for j := range 2 {
			if math.Abs(m1.d[i][j]-m2.d[i][j]) > roundoff {
				t.Errorf("d[%d][%d]: exact %g, example %g", i, j, m1.d[i][j], m2.d[i][j])
			}
		}
	}
	for _, x := range []float64{0, 0.7, 2.5} {
		u1, d1 := ex.eval(x, 1, 3, nil)
		u2, d2 := ws.eval(x, 1, 3, nil)
		if math.Abs(u1-u2) > roundoff || math.Abs(d1-d2) > roundoff {
			t.Errorf("x = %g: exact (%g, %g), example (%g, %g)", x, u1, d1, u2, d2)
		}
	}
}
