package vertex_test

import (
	"fmt"

	"github.com/ramify-dev/ramify/vertex"
)

// radiating is the worked example of DEVELOPERS.md ("How to add a node
// law"): a junction that loses heat by radiation, σ(u⁴ − u_a⁴), besides
// what its edges carry away (weights α, derivatives d leaving the node):
//
//	G(u, d) = −Σ α_j d_j + σ(u⁴ − u_a⁴).
type radiating struct {
	sigma, ambient float64
	alpha          []float64
}

func (c radiating) Residual(u float64, d, dd []float64) (g, du float64) {
	g = c.sigma * (u*u*u*u - c.ambient*c.ambient*c.ambient*c.ambient)
	for j, x := range d {
		g -= c.alpha[j] * x
		dd[j] = -c.alpha[j]
	}
	return g, 4 * c.sigma * u * u * u
}

// Monotone: G decreases in every d_j (α > 0); it increases in u only where
// u³ ≥ 0 (absolute temperatures), which CheckMonotone tests at the state.
func (c radiating) Monotone(u float64, d []float64) error {
	return vertex.CheckMonotone(c, u, d, make([]float64, len(d)))
}

// A node law in residual form: the residual, its derivatives, and the
// monotonicity check that a Newton solver calls at each iterate.
func ExampleCondition() {
	var law vertex.Condition = radiating{sigma: 1e-3, ambient: 2, alpha: []float64{1, 0.5}}
	d := []float64{-0.1, 0.2}
	dd := make([]float64, 2)
	g, du := law.Residual(3, d, dd)
	fmt.Printf("G = %.4f, ∂G/∂u = %.3f, ∂G/∂d = %v\n", g, du, dd)
	fmt.Println("monotone at u = 3:", law.Monotone(3, d))
	fmt.Println("at u = −1:", law.Monotone(-1, d))
	// Output:
	// G = 0.0650, ∂G/∂u = 0.108, ∂G/∂d = [-1 -0.5]
	// monotone at u = 3: <nil>
	// at u = −1: the node law decreases in u at u = -1 (∂G/∂u = -0.004 < 0)
}
