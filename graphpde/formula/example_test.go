package formula_test

import (
	"fmt"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/formula"
)

// A conductivity that rises with temperature, k(u) = k0 (1 + b u), compiled
// once and evaluated with its derivative in u; a sweep that changes k0 is
// seen by the compiled law at once.
func ExampleCompile() {
	p := &graphpde.Params{Names: []string{"k0", "b"}, Values: []float64{2, 0.5}}
	e, err := formula.Compile("k0*(1 + b*u)", formula.Spec{Vars: formula.X | formula.U | formula.T, Params: p})
	if err != nil {
		fmt.Println(err)
		return
	}
	k := e.Coef().Fn
	v, du := k(0, 3, 0)
	fmt.Printf("k(3) = %.3g, dk/du = %.3g\n", v, du)
	p.Set("k0", 4)
	v, du = k(0, 3, 0)
	fmt.Printf("with k0 = 4: k(3) = %.3g, dk/du = %.3g\n", v, du)
	// Output:
	// k(3) = 5, dk/du = 1
	// with k0 = 4: k(3) = 10, dk/du = 2
}

// An expression that uses a variable its key may not use is an error that
// names the variable and its column.
func ExampleCompile_error() {
	_, err := formula.Compile("1 + ux", formula.Spec{Vars: formula.X | formula.U | formula.T})
	fmt.Println(err)
	// Output:
	// column 5: variable ux is not allowed here (allowed: x, u, t)
}

// A node law G(u, d.in, d.out) = 0 gives its derivatives in every d.
func ExampleExpr_EvalLaw() {
	e, err := formula.Compile("-(d.in + 2*d.out) + u^3", formula.Spec{Vars: formula.U | formula.D, Ends: []string{"in", "out"}})
	if err != nil {
		fmt.Println(err)
		return
	}
	dd := make([]float64, 2)
	g, du := e.EvalLaw(1, []float64{0.5, 0.25}, dd)
	fmt.Printf("G = %.3g, dG/du = %.3g, dG/dd = %.3g\n", g, du, dd)
	// Output:
	// G = 0, dG/du = 3, dG/dd = [-1 -2]
}
