package graphpde

import (
	"errors"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestNetworkCondition checks that every kind of node law reaches the
// residual form with the right weights and derivatives: a linear balance
// node against its row written by hand, a loss law and a general law
// against their definitions, and the monotonicity verdicts of each.
func TestNetworkCondition(t *testing.T) {
	net := &Network{}
	add := func(nd Node) int {
		v, err := net.AddNode(nd)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	a := add(Node{ID: "a", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
	b := add(Node{ID: "b", Law: vertex.Law{Kind: vertex.Balance, Leak: 0.25, Inject: 1}})
	c := add(Node{ID: "c", Law: vertex.Law{Kind: vertex.Balance}, Nonlinear: &NodeNonlinear{
		Loss: func(u float64) (float64, float64) { return u * u * u, 3 * u * u },
	}})
	d := add(Node{ID: "d", Law: vertex.Law{Kind: vertex.Balance}, Nonlinear: &NodeNonlinear{
		// G = u − d_1·|d_1|: decreasing in d_1, increasing in u.
		General: func(u float64, dv, dd []float64) (float64, float64) {
			dd[0] = -2 * math.Abs(dv[0])
			return u - dv[0]*math.Abs(dv[0]), 1
		},
	}})
	e := add(Node{ID: "e", Law: vertex.Law{Kind: vertex.Balance}, Nonlinear: &NodeNonlinear{
		Loss: func(u float64) (float64, float64) { return -u, -1 }, // decreasing: inadmissible
	}})
	for _, ed := range []Edge{
		{ID: "ab", From: a, To: b, Length: 1, A: 2},
		{ID: "bc", From: b, To: c, Length: 1, A: 1, Weight: [2]float64{3, 0}},
		{ID: "cd", From: c, To: d, Length: 1, A: 1},
		{ID: "ce", From: c, To: e, Length: 1, A: 1},
	} {
		if _, err := net.AddEdge(ed); err != nil {
			t.Fatal(err)
		}
	}
	dd := make([]float64, 3)

	// b: ends (ab To side, α = a = 2) and (bc From side, α = 3).
	g, du := net.Condition(b).Residual(2, []float64{0.5, -1}, dd)
	// −(2·0.5 + 3·(−1)) + 0.25·2 − 1 = 2 + 0.5 − 1 = 1.5.
	if g != 1.5 || du != 0.25 || dd[0] != -2 || dd[1] != -3 {
		t.Errorf("b: G = %g, ∂u = %g, ∂d = %v; want 1.5, 0.25, [-2 -3]", g, du, dd[:2])
	}
	// c: ends bc To (α = a = 1), cd From, ce From; G = −Σ d + u³.
	g, du = net.Condition(c).Residual(2, []float64{1, 1, 1}, dd)
	if g != 5 || du != 12 || dd[0] != -1 || dd[2] != -1 {
		t.Errorf("c: G = %g, ∂u = %g, ∂d = %v; want 5, 12, [-1 -1 -1]", g, du, dd)
	}
	g, du = net.Condition(d).Residual(1, []float64{-2}, dd)
	if g != 5 || du != 1 || dd[0] != -4 {
		t.Errorf("d: G = %g, ∂u = %g, ∂d = %v; want 5, 1, -4", g, du, dd[0])
	}
	for _, v := range []int{a, b, c, d} {
		cond := net.Condition(v)
		ends := len(net.Incident(v))
		if err := cond.Monotone(0.5, make([]float64, ends)); err != nil {
			t.Errorf("node %s: %v", net.Nodes[v].ID, err)
		}
	}
	var me *vertex.MonotoneError
	if err := net.Condition(e).Monotone(0.5, []float64{0}); !errors.As(err, &me) || me.End != -1 {
		t.Errorf("node e: %v, want a MonotoneError on u", err)
	}
}
