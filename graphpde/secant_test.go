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

// TestSecantSchemeDifferences: on an equation edge the secant coefficients
// are taken at the scheme's own differences, so the discrete identity
// A_i X_i + B_i p_i − C_i u_i + f_i = E(x_i, u_i, p_i, X_i) (= 0 up to
// Newton's tolerance) holds at every interior vertex to round-off — also where the scheme was one-sided
// (cell Péclet number |∂E/∂ux|·h/∂E/∂uxx above 2), where the central
// difference would leave an O(h) error in B, which depends on ux here
// (derived from the secant identity of docs/nonlinear.md §4).
// E = uxx + 160x·(ux − 2x) + (ux³ − 8x³)/100 − 2 − u³ + x⁶ (solved by
// u = x², so the field has slope and curvature everywhere) on 40 cells:
// central differences for x below about 1/2, upwind beyond. The coefficients are read back from the
// profile at the vertices: b = B − A' with A' by the same differences as
// SecantNetwork, and a negative C moved into f leaves the sum unchanged.
// Tolerance: 1e−11 of the sum of the terms' magnitudes (round-off of
// 8-point quadrature sums and divided differences; common practice).
func TestSecantSchemeDifferences(t *testing.T) {
	const cells = 40
	eq := &Equation{Fn: func(x, u, ux, uxx float64) (e, du, dux, duxx float64) {
		e = uxx + 160*x*(ux-2*x) + 0.01*(ux*ux*ux-8*x*x*x) - 2 - u*u*u + x*x*x*x*x*x
		return e, -3 * u * u, 160*x + 0.03*ux*ux, 1
	}}
	b := newNetBuilder(t)
	l := b.fixed("l", 0)
	r := b.fixed("r", 1)
	b.edge(Edge{ID: "drift", From: l, To: r, Length: 1, A: 1, Weight: [2]float64{1, 1}, Cells: cells, Law: &EdgeLaw{Equation: eq}})
	res := mustNonlinear(t, b.net, nil)
	sol := res.Solution
	sec, _, err := SecantNetwork(b.net, sol, nil)
	if err != nil {
		t.Fatal(err)
	}
	prof := sec.Edges[0].Profile
	h := 1.0 / cells
	u := make([]float64, cells+1)
	A := make([]float64, cells+1)
	for i := range u {
		u[i] = atOK(t, sol, Point{Node: -1, Edge: 0, X: float64(i) * h})
		A[i] = prof.A(float64(i) * h)
	}
	upwind := 0
	for i := 1; i < cells; i++ {
		x := float64(i) * h
		X := (u[i+1] - 2*u[i] + u[i-1]) / (h * h)
		p := (u[i+1] - u[i-1]) / (2 * h)
		if (160*x+0.03*p*p)*h > 2 {
			p = (u[i+1] - u[i]) / h // ∂E/∂ux > 0: forward
			upwind++
		}
		B := prof.B(x) + (A[i+1]-A[i-1])/(2*h)
		E, _, _, _ := eq.Fn(x, u[i], p, X) // the scheme's residual: 0 up to Newton's tolerance
		terms := [5]float64{A[i] * X, B * p, -prof.C(x) * u[i], prof.F(x), -E}
		sum, mag := 0.0, 0.0
		for _, v := range terms {
			sum += v
			mag += math.Abs(v)
		}
		if math.Abs(sum) > 1e-11*mag {
			t.Errorf("x = %g: A X + B p − C u + f − E = %.3g (terms %.4g)", x, sum, terms)
		}
	}
	t.Logf("%d of %d interior vertices one-sided", upwind, cells-1)
	if upwind == 0 || upwind == cells-1 {
		t.Fatalf("%d one-sided vertices: the test must cover both differences", upwind)
	}
}

// perturbed returns a copy of sol with fn(e, x, u) added to the
// field at every grid vertex and delta(v) to every balance node's value: a
// deliberately wrong field, for testing that a check catches it. It panics
// if sol has no grid values for an edge that fn changes (exact edges are
// left as they are).
func perturbed(sol *Solution, fn func(e int, x float64) float64, delta func(v int) float64) *Solution {
	c := *sol
	c.U = append([]float64(nil), sol.U...)
	c.gval = append([]float64(nil), sol.gval...)
	for v := range c.U {
		if sol.Net.Nodes[v].Law.Kind == vertex.Balance {
			c.U[v] += delta(v)
		}
	}
	for e := range sol.Net.Edges {
		g, ok := sol.els[e].(gridCells)
		if !ok {
			continue
		}
		n := g.cells()
		h := sol.Net.Edges[e].Length / float64(n)
		for i := 1; i < n; i++ {
			c.gval[sol.off[e]+i-1] += fn(e, float64(i)*h)
		}
	}
	return &c
}
