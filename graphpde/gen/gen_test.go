package gen

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
)

// TestRandomTreeDeterministic: the same seed gives the same tree, another
// seed another one; the tree has edges+1 nodes, is connected and solvable.
func TestRandomTreeDeterministic(t *testing.T) {
	a, b, c := RandomTree(200, 7, 10), RandomTree(200, 7, 10), RandomTree(200, 8, 10)
	if len(a.Nodes) != 201 || len(a.Edges) != 200 {
		t.Fatalf("%d nodes, %d edges", len(a.Nodes), len(a.Edges))
	}
	same, differ := true, false
	for i := range a.Edges {
		ea, eb, ec := a.Edges[i], b.Edges[i], c.Edges[i]
		if ea.From != eb.From || ea.Length != eb.Length || ea.A != eb.A || ea.C != eb.C {
			same = false
		}
		if ea.From != ec.From || ea.Length != ec.Length {
			differ = true
		}
		if ea.To != i+1 || ea.From > i || ea.Cells != 10 {
			t.Fatalf("edge %d: %+v", i, ea)
		}
	}
	if !same || !differ {
		t.Errorf("same seed equal: %v, other seed different: %v", same, differ)
	}
	if _, count := a.Components(); count != 1 {
		t.Errorf("%d components", count)
	}
	for _, m := range []graphpde.Method{graphpde.MethodExact, graphpde.MethodGrid} {
		sol, err := graphpde.Solve(a, &graphpde.Settings{Method: m})
		if err != nil {
			t.Fatal(err)
		}
		for v, u := range sol.U {
			if v > 0 && u <= 0 { // positive source, decay, root held at 0
				t.Errorf("%v: u(%s) = %g, want > 0", m, a.Nodes[v].ID, u)
			}
		}
	}
}

// TestGeneratorsSolve checks each small generator against its closed form:
// the cube's body-diagonal resistance 5/6 (Halliday & Resnick, Physics, 3rd
// ed., Part 2, ch. 32, problem 35, docs/references.md N1), the star's hitting
// probability (α_1/L_1)/Σ(α_i/L_i) (derived in docs/exit-statistics.md §5), linear profiles
// on the chain and across the mesh (unit conductors, opposite sides held).
// Tolerance roundoff = 1e-12.
func TestGeneratorsSolve(t *testing.T) {
	const roundoff = 1e-12
	solve := func(net *graphpde.Network) *graphpde.Solution {
		t.Helper()
		sol, err := graphpde.Solve(net, nil)
		if err != nil {
			t.Fatal(err)
		}
		return sol
	}
	cube := Cube()
	if len(cube.Edges) != 12 || len(cube.Nodes) != 8 {
		t.Fatalf("cube: %d nodes, %d edges", len(cube.Nodes), len(cube.Edges))
	}
	sol := solve(cube)
	var I float64
	for _, end := range cube.Incident(0) {
		I += sol.Flux[end.Edge][0]
	}
	if math.Abs(1/I-5.0/6) > roundoff {
		t.Errorf("cube: R = %.15g, want 5/6", 1/I)
	}

	L, w := []float64{1, 2, 3}, []float64{0.5, 0.3, 0.2}
	sol = solve(Star(L, w))
	if want := 30.0 / 43; math.Abs(sol.U[0]-want) > roundoff {
		t.Errorf("star: P(end1) = %.15g, want 30/43", sol.U[0])
	}

	sol = solve(Chain(5))
	for k, u := range sol.U {
		if math.Abs(u-float64(k)/5) > roundoff {
			t.Errorf("chain: u(k%d) = %g", k, u)
		}
	}

	mesh := SquareMesh(6, 4)
	if len(mesh.Nodes) != 24 || len(mesh.Edges) != 5*4+6*3 {
		t.Fatalf("mesh: %d nodes, %d edges", len(mesh.Nodes), len(mesh.Edges))
	}
	sol = solve(mesh)
	for v, u := range sol.U {
		if i := v % 6; math.Abs(u-float64(i)/5) > roundoff {
			t.Errorf("mesh: u(%s) = %g, want %g", mesh.Nodes[v].ID, u, float64(i)/5)
		}
	}
}

func TestMeasureSize(t *testing.T) {
	if _, err := Measure("huge"); err == nil {
		t.Error("Measure(huge): no error")
	}
}

func TestThomas(t *testing.T) {
	// x = (1, 2, 3, 4) for the matrix tridiag(−1, 3, −1)
	sub := []float64{0, -1, -1, -1}
	diag := []float64{3, 3, 3, 3}
	sup := []float64{-1, -1, -1, 0}
	rhs := []float64{3*1 - 2, -1 + 3*2 - 3, -2 + 3*3 - 4, -3 + 3*4}
	x, sc := make([]float64, 4), make([]float64, 4)
	Thomas(x, sub, diag, sup, rhs, sc)
	for i, v := range x {
		if math.Abs(v-float64(i+1)) > 1e-14 {
			t.Errorf("x[%d] = %g", i, v)
		}
	}
}
