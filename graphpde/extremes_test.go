package graphpde

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestExtremes checks the place and size of the interior extremum on exact
// edges against closed forms (derived: solve u' = 0 for the explicit
// solution), and on a grid edge against the same closed form to the grid's
// accuracy.
func TestExtremes(t *testing.T) {
	// u'' − u + 5 = 0, u(0) = 1, u(1) = 0: u = 5 + A eˣ + B e⁻ˣ with
	// A + B = −4, A e + B/e = −5, so the maximum sits at x* = ½ ln(B/A).
	e1 := math.E
	A := (-5 + 4/e1) / (e1 - 1/e1)
	B := -4 - A
	xs := 0.5 * math.Log(B/A)
	us := 5 + A*math.Exp(xs) + B*math.Exp(-xs)
	for _, c := range []struct {
		name      string
		a, c, f   float64
		u0, uL    float64
		max, at   float64
		method    Method
		tolX, tol float64
	}{
		// u = x(1−x): maximum 1/4 at 1/2.
		{"parabola", 1, 0, 2, 0, 0, 0.25, 0.5, MethodExact, 1e-12, 1e-15},
		{"decay and source", 1, 1, 5, 1, 0, us, xs, MethodExact, 1e-12, 1e-14},
		// Grid: second order in h = 1/200 (a parabola is exact on vertices;
		// the exponential case has error about h²·max|u''| ≈ 1e-4).
		{"grid", 1, 1, 5, 1, 0, us, xs, MethodGrid, 1e-3, 1e-4},
	} {
		net := &Network{}
		net.AddNode(Node{ID: "l", Law: vertex.Law{Kind: vertex.Fixed, Value: c.u0}})
		net.AddNode(Node{ID: "r", Law: vertex.Law{Kind: vertex.Fixed, Value: c.uL}})
		if _, err := net.AddEdge(Edge{ID: "e", From: 0, To: 1, Length: 1, A: c.a, C: c.c, F: c.f, Cells: 200}); err != nil {
			t.Fatal(err)
		}
		sol, err := Solve(net, &Settings{Method: c.method})
		if err != nil {
			t.Fatal(err)
		}
		x := sol.Extremes(0)
		if x.Exact != (c.method == MethodExact) || math.Abs(x.AtMax-c.at) > c.tolX || math.Abs(x.Max-c.max) > c.tol {
			t.Errorf("%s: max %.15g at %.15g (exact %v), want %.15g at %.15g", c.name, x.Max, x.AtMax, x.Exact, c.max, c.at)
		}
		if x.Min != math.Min(c.u0, c.uL) {
			t.Errorf("%s: min %g, want the smaller end value", c.name, x.Min)
		}
	}
}
