package graphpde

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// Laws written as Go closures (the file reader compiles expressions into the
// same types).

func coefU(fn func(x, u float64) (float64, float64)) *Coef {
	return &Coef{Fn: func(x, u, _ float64) (float64, float64) { return fn(x, u) }, UsesX: true, UsesU: true}
}

func bratuEq(lambda *float64) *Equation {
	return &Equation{Fn: func(x, u, ux, uxx float64) (e, du, dux, duxx float64) {
		l := *lambda * math.Exp(u)
		return uxx + l, l, 0, 1
	}, Src: "uxx + lambda*exp(u)"}
}

func mustNonlinear(t *testing.T, net *Network, set *NonlinearSettings) *NonlinearResult {
	t.Helper()
	res, err := SolveNonlinear(net, set)
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != Converged || res.Solution == nil {
		t.Fatalf("status %v, notes %q, history %g", res.Status, res.Notes, res.History)
	}
	return res
}

// TestKirchhoffTransformRod: steady conduction with k = k₀(1 + βθ). The
// Kirchhoff transform U(θ) = θ + βθ²/2 is linear in x, so q″ =
// k₀[U(θ₁) − U(θ₂)]/L and θ(x) = (−1 + √(1 + 2βU(x)))/β. Source: Çengel &
// Ghajar, Heat and Mass Transfer, 5th ed., §2-7 "Variable thermal
// conductivity" (section from memory); values of docs/references.md K1,
// checked there by direct ODE integration. The face flux a(ū)Δu/h equals
// ∫a over the cell exactly when a is linear in u, so the scheme reproduces
// the transform to round-off on any grid: the tolerance is the table's
// rounding (half a unit in its last digit). The rod is cut in two at a
// balance node, whose default weights follow a(u) at the node.
func TestKirchhoffTransformRod(t *testing.T) {
	cases := []struct {
		name                  string
		k0, beta, th1, th2, L float64
		q                     float64
		at                    []float64
		want                  []float64
		tab                   float64
	}{
		{"a", 1, 0.01, 100, 0, 1, 150, []float64{0.25, 0.5, 0.75}, []float64{80.27756, 58.11388, 32.28757}, 5e-6},
		{"b", 20, 0.002, 300, 100, 0.1, 56000, []float64{0.05}, []float64{207.10678}, 5e-6},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			k := coefU(func(_, u float64) (float64, float64) { return c.k0 * (1 + c.beta*u), c.k0 * c.beta })
			b := newNetBuilder(t)
			hot := b.fixed("hot", c.th1)
			mid := b.balance("mid")
			cold := b.fixed("cold", c.th2)
			b.edge(Edge{ID: "left", From: hot, To: mid, Length: c.L / 2, A: 1, Cells: 7, Law: &EdgeLaw{A: k}})
			b.edge(Edge{ID: "right", From: mid, To: cold, Length: c.L / 2, A: 1, Cells: 9, Law: &EdgeLaw{A: k}})
			res := mustNonlinear(t, b.net, nil)
			sol := res.Solution
			if !res.Unique {
				t.Errorf("k(θ) law flagged as non-monotone: %q", res.Notes)
			}
			if got := sol.Flux[0][0]; math.Abs(got-c.q) > 1e-9*c.q {
				t.Errorf("q = %.10g, want %g", got, c.q)
			}
			if got := sol.Flux[1][1]; math.Abs(got-c.q) > 1e-9*c.q {
				t.Errorf("q at the cold end = %.10g, want %g", got, c.q)
			}
			for i, x := range c.at {
				var p Point
				if x < c.L/2 {
					p = Point{Node: -1, Edge: 0, X: x}
				} else if x == c.L/2 {
					p = Point{Node: mid, Edge: -1}
				} else {
					p = Point{Node: -1, Edge: 1, X: x - c.L/2}
				}
				// Probes between grid vertices interpolate linearly:
				// compare at vertices only (x on the grids above? no:
				// use the exact profile at the probe for the
				// interpolation error bound instead).
				got := atOK(t, sol, p)
				exact := c.want[i]
				tol := c.tab
				if p.Edge >= 0 {
					tol += interpBound(sol, p, c.k0, c.beta, c.th1, c.th2, c.L)
				}
				if math.Abs(got-exact) > tol {
					t.Errorf("θ(%g) = %.8g, want %.8g (tol %.2g)", x, got, exact, tol)
				}
			}
		})
	}
}

// interpBound bounds the linear-interpolation error between the grid
// vertices around p for the K1 profile: (h²/8)·max|θ”| over the cell,
// with θ” from the closed form (derived: θ' = q/k(θ), θ” = −βk₀θ'²/k).
func interpBound(sol *Solution, p Point, k0, beta, th1, th2, L float64) float64 {
	ed := &sol.Net.Edges[p.Edge]
	h := ed.Length / float64(ed.Cells)
	U := func(th float64) float64 { return th + beta*th*th/2 }
	q := k0 * (U(th1) - U(th2)) / L
	worst := 0.0
	for _, th := range []float64{th1, th2} {
		k := k0 * (1 + beta*th)
		d1 := q / k
		worst = math.Max(worst, math.Abs(beta*k0*d1*d1/k))
	}
	return h * h / 8 * worst
}

// TestKirchhoffTransformStar: the transform on a network. Three rods with
// k = k₀(1 + βθ) meet at a balance node and end at held temperatures θ_i.
// With default weights the node balance conserves k(θ)θ', so U(θ) is
// harmonic on the network: linear on each arm, and the junction value of U is
// the mean of the U(θ_i) weighted by 1/L_i (derived from K1 of
// docs/references.md; Çengel & Ghajar §2-7, from memory).
func TestKirchhoffTransformStar(t *testing.T) {
	const k0, beta = 2.0, 0.05
	k := coefU(func(_, u float64) (float64, float64) { return k0 * (1 + beta*u), k0 * beta })
	U := func(th float64) float64 { return th + beta*th*th/2 }
	th := []float64{10, 40, -5}
	L := []float64{1, 0.5, 2}
	b := newNetBuilder(t)
	c := b.balance("c")
	num, den := 0.0, 0.0
	for i := range th {
		leaf := b.fixed("leaf"+string(rune('0'+i)), th[i])
		b.edge(Edge{ID: "arm" + string(rune('0'+i)), From: c, To: leaf, Length: L[i], A: 1, Cells: 5 + i, Law: &EdgeLaw{A: k}})
		num += U(th[i]) / L[i]
		den += 1 / L[i]
	}
	Uc := num / den
	want := (-1 + math.Sqrt(1+2*beta*Uc)) / beta
	res := mustNonlinear(t, b.net, nil)
	const roundoff = 1e-10
	if got := res.Solution.U[c]; math.Abs(got-want) > roundoff*math.Abs(want) {
		t.Errorf("junction θ = %.12g, want %.12g", got, want)
	}
	for i := range th {
		q := k0 * (Uc - U(th[i])) / L[i]
		if got := res.Solution.Flux[i][0]; math.Abs(got-q) > roundoff*math.Abs(q) {
			t.Errorf("arm %d flux = %.12g, want %.12g", i, got, q)
		}
	}
}

// bratuNet is Bratu's problem u” + λeᵘ = 0 on (0, 1), u(0) = u(1) = 0, as
// two edges joined at the midpoint by a balance node (weights 1), cells each.
func bratuNet(t *testing.T, lambda *float64, cells int) (*Network, int) {
	b := newNetBuilder(t)
	l := b.fixed("l", 0)
	m := b.balance("m")
	r := b.fixed("r", 0)
	eq := bratuEq(lambda)
	b.edge(Edge{ID: "a", From: l, To: m, Length: 0.5, A: 1, Weight: [2]float64{1, 1}, Cells: cells, Law: &EdgeLaw{Equation: eq}})
	b.edge(Edge{ID: "b", From: m, To: r, Length: 0.5, A: 1, Weight: [2]float64{1, 1}, Cells: cells, Law: &EdgeLaw{Equation: eq}})
	return b.net, m
}

// TestBratuBranches: both solutions of Bratu's problem at λ = 1.
// u(½) = 2 ln cosh(θ/4) with θ = √(2λ) cosh(θ/4): 0.1405392144 (lower) and
// 4.0914672462 (upper). Source: J. P. Boyd, Appl. Math. Comput. 143 (2003)
// 189–200 (from memory); values of docs/references.md NL1 (derived, ODE
// residual 1e−31). Newton from 0 finds the lower branch; from a large bump
// the upper one. The scheme is second order: the grid error, measured by
// halving h, falls by 4 (order within 0.1 of 2), and the Richardson
// extrapolation matches to 1e−7. Bratu is not monotone in u, so the result
// must say that other solutions may exist.
func TestBratuBranches(t *testing.T) {
	lambda := 1.0
	cases := []struct {
		name  string
		guess func(p Point) float64
		want  float64
	}{
		{"lower", nil, 0.1405392144},
		{"upper", func(p Point) float64 { return 4.5 * math.Sin(math.Pi*bratuX(p)) }, 4.0914672462},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var mids []float64
			for _, cells := range []int{16, 32, 64} {
				net, m := bratuNet(t, &lambda, cells)
				res := mustNonlinear(t, net, &NonlinearSettings{Guess: c.guess})
				if res.Unique || len(res.Notes) == 0 || !strings.Contains(res.Notes[len(res.Notes)-1], "other solutions may exist") {
					t.Errorf("Bratu must carry the non-uniqueness note: unique=%v notes=%q", res.Unique, res.Notes)
				}
				mids = append(mids, res.Solution.U[m])
			}
			e1, e2, e3 := mids[0]-c.want, mids[1]-c.want, mids[2]-c.want
			order := math.Log2(e2 / e3)
			t.Logf("%s: errors %.3g %.3g %.3g, order %.3f", c.name, e1, e2, e3, order)
			if math.Abs(order-2) > 0.1 || math.Abs(math.Log2(e1/e2)-2) > 0.1 {
				t.Errorf("order %.3f, %.3f, want 2", math.Log2(e1/e2), order)
			}
			rich := (4*mids[2] - mids[1]) / 3
			if math.Abs(rich-c.want) > 1e-7*math.Max(1, c.want) {
				t.Errorf("Richardson u(½) = %.10g, want %.10g", rich, c.want)
			}
		})
	}
}

func bratuX(p Point) float64 {
	if p.Edge < 0 {
		return []float64{0, 0.5, 1}[p.Node]
	}
	return 0.5*float64(p.Edge) + p.X
}

// TestNewtonQuadratic: Newton converges quadratically near the solution:
// once the scaled residual is below 1e−2, each one is at most 10× the
// square of the one before (a constant of the size of the second derivative
// of the law over the first; common practice, no source), and at most 8
// iterations are needed from u = 0 on Bratu at λ = 1 and the radiating fin.
func TestNewtonQuadratic(t *testing.T) {
	lambda := 1.0
	net, _ := bratuNet(t, &lambda, 100)
	res := mustNonlinear(t, net, nil)
	h := res.History
	t.Logf("history %.3g", h)
	if res.Iterations > 8 {
		t.Errorf("%d iterations", res.Iterations)
	}
	for k := 1; k < len(h); k++ {
		if h[k-1] < 1e-2 && h[k] > 10*h[k-1]*h[k-1] && h[k] > 1e-14 {
			t.Errorf("step %d: residual %.3g after %.3g: not quadratic", k, h[k], h[k-1])
		}
	}
}

// TestRadiatingFin: a pin fin that radiates to surroundings at 0 K,
// kA T” = σεP T⁴. The first integral gives, for the infinite fin,
// q = √(2kAσεP/5)·T_b^{5/2} and T(x)^{−3/2} = T_b^{−3/2} + (3/2)√(2σεP/(5kA))·x
// (Kraus, Aziz & Welty, Extended Surface Heat Transfer (2001), from memory;
// values of docs/references.md NL2, derived): Cu pin D = 5 mm, k = 398,
// ε = 1, T_b = 500 K: q = 9.327759 W, T(0.1 m) = 407.7107 K. The first metre
// of the infinite fin is solved with its far end held at the closed-form
// T(1 m) = 181.2757 K, which makes it the same problem. The grid error is
// O(h²); the tolerance, 2e−5 relative at 2000 cells, is from halving h
// (measured 4e-6 at 2000 cells) plus the table's 7 digits.
func TestRadiatingFin(t *testing.T) {
	const (
		D, k, eps, sigma, Tb = 5e-3, 398.0, 1.0, 5.670374419e-8, 500.0
	)
	P, A := math.Pi*D, math.Pi*D*D/4
	s := sigma * eps * P
	far := math.Pow(math.Pow(Tb, -1.5)+1.5*math.Sqrt(2*s/(5*k*A))*1, -2.0/3)
	b := newNetBuilder(t)
	base := b.fixed("base", Tb)
	end := b.fixed("far", far)
	b.edge(Edge{ID: "pin", From: base, To: end, Length: 1, A: k * A, Cells: 2000, Law: &EdgeLaw{
		F: coefU(func(_, u float64) (float64, float64) { return -s * u * u * u * u, -4 * s * u * u * u }),
	}})
	res := mustNonlinear(t, b.net, nil)
	t.Logf("iterations %d, history %.3g, steps %g", res.Iterations, res.History, res.Steps)
	if math.Abs(far-181.2757) > 1e-4 {
		t.Fatalf("closed form T(1) = %.7g, table 181.2757", far)
	}
	const tol = 2e-5
	if got := res.Solution.Flux[0][0]; math.Abs(got-9.327759)/9.327759 > tol {
		t.Errorf("q = %.7g W, want 9.327759", got)
	}
	if got := atOK(t, res.Solution, Point{Node: -1, Edge: 0, X: 0.1}); math.Abs(got-407.7107)/407.7107 > tol {
		t.Errorf("T(0.1) = %.7g K, want 407.7107", got)
	}
	if !res.Unique {
		t.Errorf("radiation loss is monotone: %q", res.Notes)
	}
}

// TestNodeLawClosedForm: nonlinear node laws with closed-form balances. A
// unit edge (a = 1, exact element) from a node held at 1 to node n:
// u is linear, the derivative leaving n is d = 1 − U.
//   - loss(u) = u³: the balance (U − 1) + U³ = 0, whose real root is
//     Cardano's ∛(½ + √(¼ + 1/27)) + ∛(½ − √(¼ + 1/27)) = 0.6823278…
//   - general G(u, d) = u − d − d³ (non-increasing in d): with t = 1 − U,
//     t³ + 2t − 1 = 0, t = ∛(½ + √(¼ + 8/27)) + ∛(½ − √(¼ + 8/27)).
//
// Cardano's formula (any algebra text; common practice). Newton stops at a
// scaled residual of 1e−13 here; the tolerance 1e−11 allows the error that
// residual leaves through the balance's derivative (a few times larger).
func TestNodeLawClosedForm(t *testing.T) {
	cardano := func(p, q float64) float64 { // real root of t³ + p t + q = 0
		r := math.Sqrt(q*q/4 + p*p*p/27)
		return math.Cbrt(-q/2+r) + math.Cbrt(-q/2-r)
	}
	cases := []struct {
		name string
		law  *NodeNonlinear
		want float64
	}{
		{"loss u³", &NodeNonlinear{Loss: func(u float64) (float64, float64) { return u * u * u, 3 * u * u }}, cardano(1, -1)},
		{"general u − d − d³", &NodeNonlinear{General: func(u float64, d, dd []float64) (float64, float64) {
			dd[0] = -1 - 3*d[0]*d[0]
			return u - d[0] - d[0]*d[0]*d[0], 1
		}}, 1 - cardano(2, -1)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			net := &Network{}
			a, _ := net.AddNode(Node{ID: "a", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
			n, _ := net.AddNode(Node{ID: "n", Nonlinear: c.law})
			if _, err := net.AddEdge(Edge{ID: "e", From: a, To: n, Length: 1, A: 1}); err != nil {
				t.Fatal(err)
			}
			res := mustNonlinear(t, net, &NonlinearSettings{Tol: 1e-13})
			if got := res.Solution.U[n]; math.Abs(got-c.want) > 1e-11 {
				t.Errorf("U = %.15g, want %.15g", got, c.want)
			}
			if res.Solution.ExactEdge(0) != true {
				t.Errorf("a linear edge must keep its exact element")
			}
		})
	}
}

// TestManufacturedOrder: a manufactured solution u*(x) = 1 + sin(2x) + x²/2
// on a path of a quasilinear edge (a = 1 + u², drift 0.3u, decay 1 + x,
// source chosen so that u* solves it), a balance node, and a fully
// nonlinear edge E = (1 + u²/4)uxx − 0.2 ux|ux| − u³ + g(x) with g chosen
// likewise, ending at a node with loss u³ + κ (κ chosen so that u* balances).
// The method of manufactured solutions (P. J. Roache, Verification and
// Validation in Computational Science and Engineering, 1998, from memory).
// The measured order of the max error at the vertices must be within 0.15 of 2.
func TestManufacturedOrder(t *testing.T) {
	us := func(x float64) (u, d1, d2 float64) {
		return 1 + math.Sin(2*x) + x*x/2, 2*math.Cos(2*x) + x, -4*math.Sin(2*x) + 1
	}
	// Edge 1 on [0, 1]: (a u')' + b u' − c u + f = 0 with a = 1+u², b = 0.3u, c = 1+x.
	f1 := func(x float64) float64 {
		u, d1, d2 := us(x)
		a, da := 1+u*u, 2*u
		return -((da*d1*d1 + a*d2) + 0.3*u*d1 - (1+x)*u)
	}
	// Edge 2 on [1, 2] (local x' = x − 1): E = (1+u²/4)u'' − 0.2 u'|u'| − u³ + g.
	g2 := func(x float64) float64 {
		u, d1, d2 := us(x)
		return -((1+u*u/4)*d2 - 0.2*d1*math.Abs(d1) - u*u*u)
	}
	uEnd, dEnd, _ := us(2)
	kappa := -dEnd - uEnd*uEnd*uEnd // balance at the end: +α u'(L) + loss = 0, α = 1
	build := func(cells int) (*Network, []int) {
		b := newNetBuilder(t)
		u0, _, _ := us(0)
		a := b.fixed("a", u0)
		m := b.balance("m")
		z := b.node("z", vertex.Law{})
		b.net.Nodes[z].Nonlinear = &NodeNonlinear{Loss: func(u float64) (float64, float64) { return u*u*u + kappa, 3 * u * u }}
		b.edge(Edge{ID: "q", From: a, To: m, Length: 1, A: 1, Cells: cells, Law: &EdgeLaw{
			A: coefU(func(_, u float64) (float64, float64) { return 1 + u*u, 2 * u }),
			B: coefU(func(_, u float64) (float64, float64) { return 0.3 * u, 0.3 }),
			C: coefU(func(x, _ float64) (float64, float64) { return 1 + x, 0 }),
			F: coefU(func(x, _ float64) (float64, float64) { return f1(x), 0 }),
		}})
		b.edge(Edge{ID: "e", From: m, To: z, Length: 1, A: 1, Weight: [2]float64{1 + 1, 1}, Cells: cells, Law: &EdgeLaw{
			Equation: &Equation{Fn: func(x, u, p, X float64) (e, du, dp, dX float64) {
				k := 1 + u*u/4
				return k*X - 0.2*p*math.Abs(p) - u*u*u + g2(x+1), u/2*X - 3*u*u, -0.4 * math.Abs(p), k
			}},
		}})
		return b.net, []int{m, z}
	}
	// The junction m: edge q's default weight there is a(u*(1)) = 1 + u*(1)²,
	// and the equation edge's From weight must match it for u* to balance.
	um, _, _ := us(1)
	var errs []float64
	for _, cells := range []int{20, 40, 80} {
		net, _ := build(cells)
		net.Edges[1].Weight[0] = 1 + um*um
		res := mustNonlinear(t, net, nil)
		sol := res.Solution
		worst := 0.0
		var buf []FieldPoint
		for e := range net.Edges {
			buf = sol.Sample(buf, e)
			for _, fp := range buf {
				u, _, _ := us(float64(e) + fp.X)
				worst = math.Max(worst, math.Abs(fp.U-u))
			}
		}
		errs = append(errs, worst)
	}
	for k := 1; k < len(errs); k++ {
		order := math.Log2(errs[k-1] / errs[k])
		t.Logf("cells %d→%d: max error %.3g → %.3g, order %.3f", 20<<(k-1), 20<<k, errs[k-1], errs[k], order)
		if math.Abs(order-2) > 0.15 {
			t.Errorf("order %.3f, want 2", order)
		}
	}
}

// TestLawErrors: every class of law the solver must refuse names the object,
// the place and the derivative (or the missing data), and the status says why.
func TestLawErrors(t *testing.T) {
	one := &Equation{Fn: func(x, u, p, X float64) (float64, float64, float64, float64) { return -X + 1, 0, 0, -1 }}
	negA := coefU(func(_, u float64) (float64, float64) { return u - 5, 1 })
	logU := &Equation{Fn: func(x, u, p, X float64) (float64, float64, float64, float64) {
		return X + math.Log(u), 1 / u, 0, 1
	}}
	badG := &NodeNonlinear{General: func(u float64, d, dd []float64) (float64, float64) {
		dd[0] = 1
		return u + d[0], 1
	}}
	cases := []struct {
		name   string
		edge   EdgeLaw
		weight [2]float64
		node   *NodeNonlinear
		status Status
		want   []string
	}{
		{"not elliptic", EdgeLaw{Equation: one}, [2]float64{1, 1}, nil, NotElliptic, []string{`edge "e"`, "∂E/∂uxx = -1", "not elliptic", "x = "}},
		{"diffusivity not positive", EdgeLaw{A: negA}, [2]float64{}, nil, NotElliptic, []string{`edge "e"`, "diffusivity = ", "> 0"}},
		{"law not finite", EdgeLaw{Equation: logU}, [2]float64{1, 1}, nil, NotSolved, []string{`edge "e"`, "E = ", "finite"}},
		{"node law increasing in d", EdgeLaw{}, [2]float64{}, badG, NotElliptic, []string{`node "n"`, "∂G/∂d[e] = 1", "≤ 0"}},
		{"equation without weights", EdgeLaw{Equation: one}, [2]float64{}, nil, NotSolved, []string{`edge "e"`, "weights"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			net := &Network{}
			a, _ := net.AddNode(Node{ID: "a", Law: vertex.Law{Kind: vertex.Fixed, Value: -1}})
			n, _ := net.AddNode(Node{ID: "n", Nonlinear: c.node, Law: vertex.Law{Leak: 1}})
			law := c.edge
			var lp *EdgeLaw
			if law.A != nil || law.Equation != nil {
				lp = &law
			}
			if _, err := net.AddEdge(Edge{ID: "e", From: a, To: n, Length: 1, A: 1, Weight: c.weight, Law: lp}); err != nil {
				t.Fatal(err)
			}
			res, err := SolveNonlinear(net, nil)
			if err == nil {
				t.Fatalf("no error; result %+v", res)
			}
			for _, w := range c.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not contain %q", err, w)
				}
			}
			if res != nil && (res.Status != c.status || res.Solution != nil) {
				t.Errorf("status %v (want %v), solution %v", res.Status, c.status, res.Solution != nil)
			}
			var le *LawError
			var me *ModelError
			if !errors.As(err, &le) && !errors.As(err, &me) {
				t.Errorf("error %T is neither a *LawError nor a *ModelError", err)
			}
		})
	}
}

// TestNonMonotoneLoss: a loss that decreases with u is solved (when a
// solution is found) and carries the note that other solutions may exist.
func TestNonMonotoneLoss(t *testing.T) {
	net := &Network{}
	a, _ := net.AddNode(Node{ID: "a", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
	n, _ := net.AddNode(Node{ID: "n", Nonlinear: &NodeNonlinear{Loss: func(u float64) (float64, float64) { return -0.1 * u * u, -0.2 * u }}})
	net.AddEdge(Edge{ID: "e", From: a, To: n, Length: 1, A: 1})
	res := mustNonlinear(t, net, nil)
	// (U − 1) − 0.1U² = 0: U = (1 − √(1 − 0.4))/0.2 (the root near 1).
	want := (1 - math.Sqrt(0.6)) / 0.2
	if math.Abs(res.Solution.U[n]-want) > 1e-10 {
		t.Errorf("U = %.12g, want %.12g", res.Solution.U[n], want)
	}
	if res.Unique || !strings.Contains(strings.Join(res.Notes, " "), "other solutions may exist") {
		t.Errorf("no non-uniqueness note: %q", res.Notes)
	}
}

// TestNewtonLimits: past the fold of Bratu's problem (λ = 4 > λ_c) there is
// no solution; Newton must stop with a status and no field.
func TestNewtonLimits(t *testing.T) {
	lambda := 4.0
	net, _ := bratuNet(t, &lambda, 32)
	res, err := SolveNonlinear(net, &NonlinearSettings{MaxIter: 30})
	if res == nil {
		t.Fatalf("no result, error %v", err)
	}
	if res.Status == Converged || res.Solution != nil {
		t.Fatalf("status %v with a solution past the fold", res.Status)
	}
	t.Logf("status %v, err %v, notes %q", res.Status, err, res.Notes)
}

// TestNonlinearElementInterface drives the grid element of a Law edge
// through the element interface alone (linearize, node values, recover),
// as a system with fixed end values would: the interior Newton iteration must
// converge quadratically to SolveNonlinear's field, and the returned end
// map must give the solve's end derivatives (K1 rod, case a: the map's
// u'(0) at the solution is −q/k(θ₁)).
func TestNonlinearElementInterface(t *testing.T) {
	k := coefU(func(_, u float64) (float64, float64) { return 1 + 0.01*u, 0.01 })
	b := newNetBuilder(t)
	hot := b.fixed("hot", 100)
	cold := b.fixed("cold", 0)
	b.edge(Edge{ID: "rod", From: hot, To: cold, Length: 1, A: 1, Cells: 10, Law: &EdgeLaw{A: k}})
	set := &NonlinearSettings{}
	sys, err := newNLSystem(b.net, set)
	if err != nil {
		t.Fatal(err)
	}
	sys.start(nil)
	el := &nlGridEl{s: sys, e: 0, n: 10, L: 1}
	var m edgeMap
	var res float64
	for it := 0; it < 8; it++ {
		m, res = el.linearize(100, 0)
		if res < 1e-11 {
			break
		}
		if !el.recover(100, 0) {
			t.Fatal("non-finite interior")
		}
	}
	if res > 1e-11 {
		t.Fatalf("interior residual %.3g after 8 steps", res)
	}
	ref := mustNonlinear(t, b.net, nil).Solution
	for i := 0; i < 9; i++ {
		// Both stop at the Newton tolerance, 1e−10 relative to 1 + max|u|.
		if d := math.Abs(sys.w[i] - ref.gval[i]); d > 1e-10*101 {
			t.Errorf("vertex %d: %.12g vs %.12g", i+1, sys.w[i], ref.gval[i])
		}
	}
	d0 := m.d[0][0]*100 + m.g[0]
	if want := -150 / (1 + 0.01*100); math.Abs(d0-want) > 1e-9 {
		t.Errorf("u'(0) from the end map = %.12g, want %.12g", d0, want)
	}
}

// TestNewtonDampedStep: the line search's shorter steps (formed from the
// full step that evalStep evaluated edge by edge, after a trial that failed
// or did not lower the residual) reach the same discrete solution as an
// undamped run. Conduction with a = √u (defined for u ≥ 0 only) across a
// balance node, from u ≡ 0.01, where the full first step leaves the domain
// of the law, and from u ≡ 0.5, where every step is full. The discrete
// solution is unique (a > 0, no reaction), so the two runs must agree to
// what their stopping tolerance leaves: both stop at a scaled residual of
// 1e−13, and 1e−11 allows the hundredfold amplification that the small
// diffusivity next to the cold end gives it (at the default 1e−10 the runs
// differ by 2e−11 there; common practice, no source).
func TestNewtonDampedStep(t *testing.T) {
	solve := func(g float64) *NonlinearResult {
		b := newNetBuilder(t)
		hot := b.fixed("hot", 1)
		mid := b.balance("mid")
		cold := b.fixed("cold", 1e-4)
		k := coefU(func(_, u float64) (float64, float64) { return math.Sqrt(u), 0.5 / math.Sqrt(u) })
		b.edge(Edge{ID: "l", From: hot, To: mid, Length: 1, A: 1, Cells: 50, Law: &EdgeLaw{A: k}})
		b.edge(Edge{ID: "r", From: mid, To: cold, Length: 1, A: 1, Cells: 50, Law: &EdgeLaw{A: k}})
		return mustNonlinear(t, b.net, &NonlinearSettings{Tol: 1e-13, Guess: func(Point) float64 { return g }})
	}
	damped, full := solve(0.01), solve(0.5)
	t.Logf("steps from 0.01: %g; from 0.5: %g", damped.Steps, full.Steps)
	if len(damped.Steps) == 0 || damped.Steps[0] >= 1 {
		t.Fatalf("the first step from 0.01 was not damped (%g): the test no longer covers shorter steps", damped.Steps)
	}
	const tol = 1e-11
	if d, f := damped.Solution.Flux[0][0], full.Solution.Flux[0][0]; math.Abs(d-f) > tol*math.Abs(f) {
		t.Errorf("flux %.15g after damped steps, %.15g after full ones", d, f)
	}
	for v, u := range full.Solution.U {
		if d := damped.Solution.U[v]; math.Abs(d-u) > tol {
			t.Errorf("node %d: %.15g after damped steps, %.15g after full ones", v, d, u)
		}
	}
	var gd, gf []FieldPoint
	for e := range 2 {
		gd = damped.Solution.Sample(gd, e)
		gf = full.Solution.Sample(gf, e)
		for i := range gf {
			if math.Abs(gd[i].U-gf[i].U) > tol {
				t.Errorf("edge %d at x = %g: %.15g after damped steps, %.15g after full ones", e, gf[i].X, gd[i].U, gf[i].U)
			}
		}
	}
}

// TestNewtonFold: past the fold of Bratu's problem (λ_c = 3.513830719 for
// u” + λeᵘ = 0 on (0, 1), u(0) = u(1) = 0; Boyd, Appl. Math. Comput. 143
// (2003) 189–200, from memory; docs/references.md NL1) there is no
// solution: Newton must end with Status Fold, the evidence in its notes,
// and no field. Below the fold it converges from 0, and from a start far
// from both solutions (a bump of height 20 at λ = 3.4), where it runs out
// of iterations with negative-pivot counts that wander by more than one,
// the failure stays an iteration limit: a solution exists there.
func TestNewtonFold(t *testing.T) {
	bump := func(g float64) func(Point) float64 {
		return func(p Point) float64 {
			switch p.Edge {
			case -1:
				return g
			case 0:
				return 2 * g * p.X
			}
			return g * (1 - 2*p.X)
		}
	}
	cases := []struct {
		lambda float64
		guess  func(Point) float64
		want   Status
	}{
		{3.4, nil, Converged},
		{3.6, nil, Fold},
		{4, nil, Fold},
		{8, nil, Fold},
		{3.6, bump(3), Fold},
		{3.4, bump(20), IterationLimit},
	}
	for _, c := range cases {
		lambda := c.lambda
		net, _ := bratuNet(t, &lambda, 64)
		res, err := SolveNonlinear(net, &NonlinearSettings{Guess: c.guess})
		if err != nil {
			t.Fatalf("λ = %g: %v", lambda, err)
		}
		t.Logf("λ = %g: %v after %d iterations; %q", lambda, res.Status, res.Iterations, res.Notes)
		if res.Status != c.want {
			t.Errorf("λ = %g: status %v, want %v", lambda, res.Status, c.want)
		}
		if (res.Solution != nil) != (c.want == Converged) {
			t.Errorf("λ = %g: status %v with a field: %v", lambda, res.Status, res.Solution != nil)
		}
		if c.want == Fold && !strings.Contains(strings.Join(res.Notes, "; "), "singular Jacobian") {
			t.Errorf("λ = %g: the notes do not give the evidence of the fold: %q", lambda, res.Notes)
		}
	}
}
