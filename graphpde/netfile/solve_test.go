package netfile

import (
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
)

// These tests read files with expressions and solve them with
// graphpde.SolveNonlinear: they check the laws the reader builds (values,
// derivatives, parameters read at evaluation, node laws bound to the right
// ends) against closed forms, through the solver that uses them.

func solveFile(t *testing.T, src string) (*graphpde.Network, *graphpde.NonlinearResult) {
	t.Helper()
	net, err := Read(strings.NewReader(src), "case.toml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := graphpde.SolveNonlinear(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != graphpde.Converged {
		t.Fatalf("status %v", res.Status)
	}
	return net, res
}

func at(t *testing.T, net *graphpde.Network, sol *graphpde.Solution, point string) float64 {
	t.Helper()
	p, err := net.ParsePoint(point)
	if err != nil {
		t.Fatal(err)
	}
	u, err := sol.At(p)
	if err != nil {
		t.Fatal(err)
	}
	return u
}

// TestSolveKirchhoffRod: a rod with conductivity k0(1 + βθ) between 100 and
// 0. The Kirchhoff transform U = θ + βθ²/2 is linear in x, so
// θ(x) = [−1 + √(1 + 2βU(x))]/β (Çengel & Ghajar, Heat and Mass Transfer,
// 5th ed., §2-7, from memory; values derived: 80.27756, 58.11388, 32.28757
// at x = 0.25, 0.5, 0.75 for k0 = 1, β = 0.01).
func TestSolveKirchhoffRod(t *testing.T) {
	// disc: the grid's error at 400 cells, measured at 3e-8 of 100 here;
	// the bound leaves a factor of 30.
	const disc = 1e-6
	const beta = 0.01
	net, res := solveFile(t, `[parameters]
k0 = 1.0
beta = 0.01
[[node]]
id = "hot"
fixed = 100
[[node]]
id = "cold"
fixed = 0
[[edge]]
id = "rod"
from = "hot"
to = "cold"
length = 1
diffusivity = "k0*(1 + beta*u)"
cells = 400
`)
	U0 := 100 + beta*100*100/2 // U(θ = 100); U(θ = 0) = 0
	for _, c := range []struct {
		at   string
		x    float64
		want float64 // rounded, as published
	}{{"rod@0.25", 0.25, 80.27756}, {"rod@0.5", 0.5, 58.11388}, {"rod@0.75", 0.75, 32.28757}} {
		exact := (-1 + math.Sqrt(1+2*beta*U0*(1-c.x))) / beta
		if math.Abs(exact-c.want) > 5e-6 {
			t.Fatalf("reference: θ(%g) = %.8f, published %.5f", c.x, exact, c.want)
		}
		if got := at(t, net, res.Solution, c.at); math.Abs(got-exact) > disc {
			t.Errorf("θ(%s) = %.9f, want %.9f", c.at, got, exact)
		}
	}
}

// TestSolveBratuFromFile: u” + λeᵘ = 0 on (0, 1), u = 0 at both ends. The
// lower branch has u(½) = 2 ln cosh(θ/4) with θ = √(2λ) cosh(θ/4): 0.1405392144
// at λ = 1 and 0.3289524213 at λ = 2 (Boyd, Appl. Math. Comput. 143 (2003)
// 189–200, from memory; values derived). Changing the parameter after the
// file was read must change the equation the solver sees.
func TestSolveBratuFromFile(t *testing.T) {
	// disc: the grid's error at 400 cells, measured at 2.9e-8 for λ = 1;
	// the bound leaves a factor of 30.
	const disc = 1e-6
	net, res := solveFile(t, `[parameters]
lambda = 1.0
[[node]]
id = "left"
fixed = 0.0
[[node]]
id = "right"
fixed = 0.0
[[edge]]
id = "slab"
from = "left"
to = "right"
length = 1.0
equation = "uxx + lambda*exp(u)"
weight = 1.0
cells = 400
`)
	if got := at(t, net, res.Solution, "slab@0.5"); math.Abs(got-0.1405392144) > disc {
		t.Errorf("λ = 1: u(½) = %.9f, want 0.1405392144", got)
	}
	if err := net.Params.Set("lambda", 2); err != nil {
		t.Fatal(err)
	}
	res, err := graphpde.SolveNonlinear(net, nil)
	if err != nil || res.Status != graphpde.Converged {
		t.Fatalf("λ = 2: %v, %v", err, res)
	}
	if got := at(t, net, res.Solution, "slab@0.5"); math.Abs(got-0.3289524213) > disc {
		t.Errorf("λ = 2: u(½) = %.9f, want 0.3289524213", got)
	}
}

// TestSolveNodeLaws: a unit rod (a = 1) from u = 1 to a node that loses
// u³. The field is linear, u = 1 − s x, and the end balance is s = u(1)³,
// so v = u(1) solves v³ + v − 1 = 0: v = 0.6823278038280193 (derived; the
// real root of the cubic, by Cardano's formula). The same balance written
// as a general law in the rod's end derivative, −d.rod + u³ (d.rod = s),
// must give the same value.
func TestSolveNodeLaws(t *testing.T) {
	// A linear field is exact on any grid: only the solver's tolerance
	// remains.
	const tol = 1e-8
	const want = 0.6823278038280193
	for _, law := range []string{`loss = "u^3"`, `law = "-d.rod + u^3"`, `law = "-d[\"rod\"] + pow(u, 3)"`} {
		net, res := solveFile(t, `[[node]]
id = "base"
fixed = 1
[[node]]
id = "end"
`+law+`
[[edge]]
id = "rod"
from = "base"
to = "end"
length = 1
diffusivity = 1
cells = 16
`)
		if got := at(t, net, res.Solution, "end"); math.Abs(got-want) > tol {
			t.Errorf("%s: u(end) = %.12f, want %.12f", law, got, want)
		}
	}
}

// TestSolveDomainError: a law evaluated outside its domain (log of a
// negative number) is an error naming the edge and the place, not a NaN
// field.
func TestSolveDomainError(t *testing.T) {
	net, err := Read(strings.NewReader(`[[node]]
id = "a"
fixed = -1
[[node]]
id = "b"
fixed = 1
[[edge]]
id = "wire"
from = "a"
to = "b"
length = 1
equation = "uxx + log(u)"
weight = 1
cells = 8
`), "domain.toml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := graphpde.SolveNonlinear(net, nil)
	if err == nil {
		t.Fatalf("no error; status %v", res.Status)
	}
	for _, want := range []string{`edge "wire"`, "x = ", "u = ", "log(u) = NaN at u = "} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error %q does not name %q", err, want)
		}
	}
	if res != nil && res.Solution != nil {
		t.Errorf("a field was returned with the error")
	}
}

// TestSolveCoefficientDomainError: a diffusivity outside its domain names
// the subexpression that fails.
func TestSolveCoefficientDomainError(t *testing.T) {
	net, err := Read(strings.NewReader(twoNodes+`[[edge]]
id = "rod"
from = "a"
to = "b"
length = 1
diffusivity = "1 + log(u - 0.5)"
cells = 8
`), "domain.toml")
	if err != nil {
		t.Fatal(err)
	}
	_, err = graphpde.SolveNonlinear(net, nil)
	if err == nil || !strings.Contains(err.Error(), `edge "rod"`) || !strings.Contains(err.Error(), "log(u - 0.5) = NaN at u = ") {
		t.Errorf("error %v, want one naming the edge and log(u - 0.5)", err)
	}
}
