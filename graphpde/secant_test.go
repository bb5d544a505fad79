package graphpde

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestSecantIdentity: the linear network that SecantNetwork builds from a
// converged nonlinear field has that field as its solution (docs/nonlinear.md,
// the secant representation; derived: E(û) − E(0) = A û” + B û' − C û
// exactly by the fundamental theorem of calculus along θ). Solved by the
// linear grid solver on the same cells, it reproduces the field up to the
// two discretisations' difference, O(h²): the tolerance is 10·h² times the
// field's size (a constant from the measured error at two grids; common
// practice). A deliberately wrong field — the solution plus a bump of
// height 1e−2 that vanishes at the fixed nodes — is not reproduced: its
// secant problem's solution differs from it by more than a third of the
// bump (the response to the residual the bump leaves).
func TestSecantIdentity(t *testing.T) {
	lambda := 2.0
	cases := []struct {
		name  string
		build func(cells int) (*Network, []int)
		moved bool
	}{
		{"Bratu (equation edges, growth moved to the source)", func(cells int) (*Network, []int) {
			net, m := bratuNet(t, &lambda, cells)
			return net, []int{m}
		}, true},
		{"radiating rod with a general node law", func(cells int) (*Network, []int) {
			b := newNetBuilder(t)
			base := b.fixed("base", 2)
			mid := b.balance("mid")
			tip := b.node("tip", vertex.Law{})
			b.net.Nodes[tip].Nonlinear = &NodeNonlinear{General: func(u float64, d, dd []float64) (float64, float64) {
				dd[0] = -1 - d[0]*d[0]
				return u*u*u + u - d[0] - d[0]*d[0]*d[0]/3, 3*u*u + 1
			}}
			rad := &EdgeLaw{
				A: coefU(func(_, u float64) (float64, float64) { return 1 + 0.2*u, 0.2 }),
				F: coefU(func(_, u float64) (float64, float64) { return -0.5 * u * u * u * u, -2 * u * u * u }),
			}
			b.edge(Edge{ID: "a", From: base, To: mid, Length: 1, A: 1, Cells: cells, Law: rad})
			b.edge(Edge{ID: "b", From: mid, To: tip, Length: 0.7, A: 1, Cells: cells, Law: rad})
			return b.net, []int{mid, tip}
		}, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			const cells = 80
			net, probe := c.build(cells)
			res := mustNonlinear(t, net, nil)
			sec, info, err := SecantNetwork(net, res.Solution, nil)
			if err != nil {
				t.Fatal(err)
			}
			if info.Moved != c.moved {
				t.Errorf("Moved = %v, want %v", info.Moved, c.moved)
			}
			lin := mustSolve(t, sec, MethodGrid, cells)
			h := 1.0 / cells
			for _, v := range probe {
				u := res.Solution.U[v]
				d := math.Abs(lin.U[v] - u)
				t.Logf("node %s: identity error %.3g (h² = %.3g)", net.Nodes[v].ID, d, h*h)
				if d > 10*h*h*math.Max(1, math.Abs(u)) {
					t.Errorf("node %s: secant problem gives %.8g, field %.8g", net.Nodes[v].ID, lin.U[v], u)
				}
			}
			// A wrong field: the solution plus a bump.
			const eps = 1e-2
			bump := func(e int, x float64) float64 {
				L := net.Edges[e].Length
				return eps * math.Sin(math.Pi*x/L)
			}
			wrong := perturbed(res.Solution, bump, func(int) float64 { return 0 })
			secW, _, err := SecantNetwork(net, wrong, nil)
			if err != nil {
				t.Fatal(err)
			}
			linW := mustSolve(t, secW, MethodGrid, cells)
			worst := 0.0
			var got, want []FieldPoint
			for e := range net.Edges {
				got = linW.Sample(got, e)
				want = wrong.Sample(want, e)
				for i := range got {
					worst = math.Max(worst, math.Abs(got[i].U-want[i].U))
				}
			}
			t.Logf("wrong field: largest difference %.3g (bump %g)", worst, eps)
			if worst < eps/3 {
				t.Errorf("the secant problem reproduces a wrong field to %.3g", worst)
			}
		})
	}
}
