package graphpde

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// switchHubValue is the value at the hub of a junction with three unit arms
// (a = 1) to fixed ends 1, 0 and 0.5, where the first arm's drift is −3 on
// [0, 0.1] and +3 on [0.1, 1]: on that arm a u' = C e^{−∫b}, so
// 1 − u0 = C·I with I = (e^{0.3} − 1)/3 + e^{0.3}(1 − e^{−2.7})/3, and
// Kirchhoff at the hub, C − u0 + (0.5 − u0) = 0, gives
// u0 = (0.5 + 1/I)/(2 + 1/I) (derived).
func switchHubValue() float64 {
	I := (math.Exp(0.3)-1)/3 + math.Exp(0.3)*(1-math.Exp(-2.7))/3
	return (0.5 + 1/I) / (2 + 1/I)
}

// TestGridAcrossJumps: a policy network (Apply) whose arm switches control
// inside a cell is solved exactly by the grid at any cell count — its cells
// are fitted across the jump — for a drift jump against the closed form,
// and for jumps of drift, source and diffusivity together against the same
// network with the arm cut at the switch into two constant edges joined by
// a Kirchhoff node (exact elements; weights a on both sides carry a u'
// across, as the policy network does). Tolerance 1e−10: both are exact up
// to round-off. Before the fit, 64 cells moved the switch to the face at
// 6/64 and gave 0.6174 for 0.61185.
func TestGridAcrossJumps(t *testing.T) {
	cases := []struct {
		name     string
		lo, hi   EdgeControl
		closed   float64 // 0: compare with the cut network only
		switchAt float64
	}{
		{"drift", EdgeControl{A: 1, B: -3}, EdgeControl{A: 1, B: 3}, switchHubValue(), 0.1},
		{"drift+source", EdgeControl{A: 1, B: -3, F: 2}, EdgeControl{A: 1, B: 3, F: -0.5}, 0, 0.37},
		{"diffusivity", EdgeControl{A: 1, B: -1, F: 1}, EdgeControl{A: 2.5, B: 2, F: 0.3}, 0, 0.7431},
	}
	nodes := []nodeSpec{{"hub", math.NaN()}, {"good", 1}, {"bad", 0}, {"side", 0.5}}
	for _, tc := range cases {
		for _, cells := range []int{7, 64, 255} {
			net := ctlNet(t, Maximize, nodes, []Edge{
				{ID: "g", From: 0, To: 1, Length: 1, A: 1, Cells: cells, Controls: &EdgeControls{Alt: []EdgeControl{tc.lo, tc.hi}}},
				{ID: "b", From: 0, To: 2, Length: 1, A: 1},
				{ID: "s", From: 0, To: 3, Length: 1, A: 1},
			})
			pol := &Policy{Edges: [][]PolicyPiece{{{0, tc.switchAt, 0}, {tc.switchAt, 1, 1}}, nil, nil}, Nodes: []int{-1, -1, -1, -1}}
			pn, _, err := net.Apply(pol)
			if err != nil {
				t.Fatal(err)
			}
			sol, err := Solve(pn, nil)
			if err != nil {
				t.Fatal(err)
			}
			u, _ := sol.At(vertex.AtNode(0))
			// The cut network: g1 = [0, s], a Kirchhoff node "mid", g2.
			cut := ctlNet(t, NoObjective, append(nodes, nodeSpec{"mid", math.NaN()}), []Edge{
				{ID: "g1", From: 0, To: 4, Length: tc.switchAt, A: tc.lo.A, B: tc.lo.B, F: tc.lo.F, Weight: [2]float64{1, tc.lo.A}},
				{ID: "g2", From: 4, To: 1, Length: 1 - tc.switchAt, A: tc.hi.A, B: tc.hi.B, F: tc.hi.F, Weight: [2]float64{tc.hi.A, tc.hi.A}},
				{ID: "b", From: 0, To: 2, Length: 1, A: 1},
				{ID: "s", From: 0, To: 3, Length: 1, A: 1},
			})
			csol, err := Solve(cut, nil)
			if err != nil {
				t.Fatal(err)
			}
			want, _ := csol.At(vertex.AtNode(0))
			if tc.closed != 0 && math.Abs(want-tc.closed) > 1e-12 {
				t.Fatalf("%s: cut network %.12f, closed form %.12f", tc.name, want, tc.closed)
			}
			if math.Abs(u-want) > 1e-10 {
				t.Errorf("%s, %d cells: hub %.12f, exact %.12f", tc.name, cells, u, want)
			}
		}
	}
}
