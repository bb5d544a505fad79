package graphpde

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// netBuilder assembles test networks and fails the test on a model error.
type netBuilder struct {
	t   testing.TB
	net *Network
}

func newNetBuilder(t testing.TB) *netBuilder { return &netBuilder{t: t, net: &Network{}} }

func (b *netBuilder) node(id string, law vertex.Law) int {
	b.t.Helper()
	i, err := b.net.AddNode(Node{ID: id, Law: law})
	if err != nil {
		b.t.Fatal(err)
	}
	return i
}

func (b *netBuilder) fixed(id string, g float64) int {
	return b.node(id, vertex.Law{Kind: vertex.Fixed, Value: g})
}

func (b *netBuilder) balance(id string) int { return b.node(id, vertex.Law{}) }

func (b *netBuilder) edge(e Edge) int {
	b.t.Helper()
	i, err := b.net.AddEdge(e)
	if err != nil {
		b.t.Fatal(err)
	}
	return i
}

func mustSolve(t testing.TB, net *Network, m Method, cells int) *Solution {
	t.Helper()
	sol, err := Solve(net, &Settings{Method: m, Cells: cells})
	if err != nil {
		t.Fatal(err)
	}
	if sol.Status != Converged {
		t.Fatalf("status %v", sol.Status)
	}
	return sol
}

func relErrS(got, want float64) float64 {
	return math.Abs(got-want) / math.Max(math.Abs(want), 1e-300)
}

// TestFinAdiabaticTip: a pin fin with a held base and an insulated tip.
// Source: Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass
// Transfer, 6th ed. (2007), §3.6.2, Table 3.4 case B (adiabatic tip; the
// case letter as docs/references.md row F2 gives it, whose table/case labels are
// from memory): q = sqrt(hPkA_c)·θ_b·tanh(mL), θ/θ_b = cosh(m(L−x))/cosh(mL).
// Cu pin values of docs/references.md F2 (computed there at 30 digits): q =
// 5.068618 W, θ(L/2)/θ_b = 0.8427193. Map: a = kA_c, c = hP, u = θ.
func TestFinAdiabaticTip(t *testing.T) {
	const (
		D, L, k, h, thb = 5e-3, 50e-3, 398.0, 100.0, 75.0
		tab             = 5e-7 // half a unit in the 7th significant digit of the table
		roundoff        = 1e-12
	)
	P, Ac := math.Pi*D, math.Pi*D*D/4
	m := math.Sqrt(h * P / (k * Ac))
	b := newNetBuilder(t)
	base := b.fixed("base", thb)
	tip := b.balance("tip")
	b.edge(Edge{ID: "pin", From: base, To: tip, Length: L, A: k * Ac, C: h * P})
	net := b.net
	for _, tc := range []struct {
		method Method
		tol    float64
	}{
		{MethodExact, roundoff},
		// grid: second-order error of the cosh profile, about (m h)²/12
		// relative with h = L/64; allow (m h)².
		{MethodGrid, math.Pow(m*L/64, 2)},
	} {
		sol := mustSolve(t, net, tc.method, 64)
		q := sol.Flux[0][0]
		qf := math.Sqrt(h*P*k*Ac) * thb * math.Tanh(m*L)
		if relErrS(q, qf) > tc.tol {
			t.Errorf("%v: q = %.10g W, formula %.10g", tc.method, q, qf)
		}
		if relErrS(q, 5.068618) > tab+tc.tol {
			t.Errorf("%v: q = %.10g W, table 5.068618", tc.method, q)
		}
		mid := atOK(t, sol, Point{Node: -1, Edge: 0, X: L / 2})
		if relErrS(mid/thb, 0.8427193) > tab+tc.tol {
			t.Errorf("%v: θ(L/2)/θ_b = %.10g, table 0.8427193", tc.method, mid/thb)
		}
		for _, x := range []float64{0.1 * L, 0.3 * L, 0.77 * L} {
			want := thb * math.Cosh(m*(L-x)) / math.Cosh(m*L)
			if got := atOK(t, sol, Point{Node: -1, Edge: 0, X: x}); relErrS(got, want) > tc.tol {
				t.Errorf("%v: θ(%g) = %.10g, profile %.10g", tc.method, x, got, want)
			}
		}
		// insulated tip: no flux there
		if math.Abs(sol.Flux[0][1]) > tc.tol*q {
			t.Errorf("%v: tip flux %g", tc.method, sol.Flux[0][1])
		}
	}
}

// TestCableSealedEnd: a passive cable clamped at x = 0 with a sealed end.
// docs/references.md C2: G_in = G∞ tanh(L/λ) and V(x)/V₀ = cosh((L−x)/λ)/cosh(L/λ)
// (cable theory: Johnston & Wu, Foundations of Cellular Neurophysiology,
// 1995, ch. 4, and Rall 1959, Exp. Neurol. 1:491–527 — both from memory),
// values for L/λ = 0.5, 1, 2.
// With a u_xx − c u = 0: λ = sqrt(a/c) and G∞ = sqrt(a c); C1's cable
// (λ = 0.1 cm, G∞ = π nS).
func TestCableSealedEnd(t *testing.T) {
	const (
		lambda = 0.1
		ginf   = math.Pi * 1e-9
		tab    = 5e-8 // half a unit in the 7th decimal of the table
	)
	a, c := ginf*lambda, ginf/lambda
	for _, tc := range []struct {
		X                float64
		gin, vEnd, vHalf float64
	}{
		{0.5, 0.4621172, 0.8868189, 0.9146766},
		{1, 0.7615942, 0.6480543, 0.7307628},
		{2, 0.9640276, 0.2658022, 0.4101543},
	} {
		for _, m := range []Method{MethodExact, MethodGrid} {
			b := newNetBuilder(t)
			clamp := b.fixed("soma", 1)
			end := b.balance("end")
			L := tc.X * lambda
			b.edge(Edge{ID: "dendrite", From: clamp, To: end, Length: L, A: a, C: c})
			sol := mustSolve(t, b.net, m, 256)
			tol := tab
			if m == MethodGrid {
				tol += (tc.X / 256) * (tc.X / 256) // second-order grid error, (h/λ)²
			}
			if g := sol.Flux[0][0] / ginf; math.Abs(g-tc.gin) > tol {
				t.Errorf("L/λ=%g %v: G_in/G∞ = %.9f, table %.7f", tc.X, m, g, tc.gin)
			}
			if v := sol.U[end]; math.Abs(v-tc.vEnd) > tol {
				t.Errorf("L/λ=%g %v: V(L) = %.9f, table %.7f", tc.X, m, v, tc.vEnd)
			}
			if v := atOK(t, sol, Point{Node: -1, Edge: 0, X: L / 2}); math.Abs(v-tc.vHalf) > tol {
				t.Errorf("L/λ=%g %v: V(L/2) = %.9f, table %.7f", tc.X, m, v, tc.vHalf)
			}
		}
	}
}

// cube returns the unit resistor cube: nodes 0…7 numbered by their bits
// (x, y, z), an edge between nodes differing in one bit.
func cubeNet(t testing.TB, fix map[int]float64) *Network {
	b := newNetBuilder(t)
	for i := range 8 {
		if g, ok := fix[i]; ok {
			b.fixed(fmt.Sprintf("c%d", i), g)
		} else {
			b.balance(fmt.Sprintf("c%d", i))
		}
	}
	for i := range 8 {
		for bit := 1; bit < 8; bit <<= 1 {
			if j := i ^ bit; j > i {
				b.edge(Edge{ID: fmt.Sprintf("e%d-%d", i, j), From: i, To: j, Length: 1, A: 1})
			}
		}
	}
	return b.net
}

// TestCubeResistance: effective resistance of the unit resistor cube between
// opposite corners 5/6, across a face 3/4, along an edge 7/12.
// Source: Halliday & Resnick, Physics, 3rd ed., Part 2, ch. 32, problem 35
// (docs/references.md N1, [S]). Linear profiles are reproduced by both elements,
// so the tolerance is roundoff = 1e-13.
func TestCubeResistance(t *testing.T) {
	const roundoff = 1e-13
	for _, tc := range []struct {
		name string
		to   int
		R    float64
	}{{"body diagonal", 7, 5.0 / 6}, {"face diagonal", 3, 3.0 / 4}, {"edge", 1, 7.0 / 12}} {
		net := cubeNet(t, map[int]float64{0: 1, tc.to: 0})
		for _, m := range []Method{MethodExact, MethodGrid} {
			sol := mustSolve(t, net, m, 5)
			var I float64 // current leaving node 0
			for _, end := range net.Incident(0) {
				I += sol.Flux[end.Edge][0]
			}
			if relErrS(1/I, tc.R) > roundoff {
				t.Errorf("%s %v: R = %.15g, want %.15g", tc.name, m, 1/I, tc.R)
			}
		}
	}
}

// star builds a star with centre "c" and arms to fixed ends; arm i has length
// L[i], diffusivity a and weight alpha[i] at the centre.
func starNet(t testing.TB, L, alpha []float64, a float64, g []float64, centre vertex.Law, f float64) *Network {
	b := newNetBuilder(t)
	c := b.node("c", centre)
	for i := range L {
		end := b.fixed(fmt.Sprintf("end%d", i+1), g[i])
		b.edge(Edge{ID: fmt.Sprintf("arm%d", i+1), From: c, To: end, Length: L[i], A: a, F: f, Weight: [2]float64{alpha[i], 0}})
	}
	return b.net
}

// TestStarHitAndExitTime: a star with unequal arms and non-conservative
// weights. From the centre, P(exit at end j) = (α_j/L_j)/Σ(α_i/L_i) and
// E τ = (ρ_v + Σ α_e L_e/(2a_e))/Σ(α_e/L_e) (derived in docs/exit-statistics.md §5), with
// the docs/references.md S1 values 30/43, 9/43, 4/43 and 102/43 for L = (1,2,3),
// α = (0.5,0.3,0.2), a = 1/2 (generator ½ d²); from x = 0.5 on arm 1:
// E τ = 1.4360465 ([D] there). Exact elements: roundoff = 1e-13; grid:
// exact too, since the exit-time profile is quadratic (constant source) and
// the hitting profile linear.
func TestStarHitAndExitTime(t *testing.T) {
	const roundoff = 1e-13
	L := []float64{1, 2, 3}
	al := []float64{0.5, 0.3, 0.2}
	want := []float64{30.0 / 43, 9.0 / 43, 4.0 / 43}
	for _, m := range []Method{MethodExact, MethodGrid} {
		for j := range 3 {
			g := make([]float64, 3)
			g[j] = 1
			sol := mustSolve(t, starNet(t, L, al, 0.5, g, vertex.Law{}, 0), m, 8)
			if relErrS(sol.U[0], want[j]) > roundoff {
				t.Errorf("%v: P(exit at end%d) = %.15g, want %.15g", m, j+1, sol.U[0], want[j])
			}
		}
		for _, rv := range []float64{0, 0.4} {
			net := starNet(t, L, al, 0.5, make([]float64, 3), vertex.Law{Inject: rv, Capacity: rv}, 1)
			sol := mustSolve(t, net, m, 8)
			var s, sl float64
			for i := range 3 {
				s += al[i] * L[i] / (2 * 0.5)
				sl += al[i] / L[i]
			}
			if et := (rv + s) / sl; relErrS(sol.U[0], et) > roundoff {
				t.Errorf("%v ρ_v=%g: E τ = %.15g, want %.15g", m, rv, sol.U[0], et)
			}
			if rv == 0 {
				if relErrS(sol.U[0], 102.0/43) > roundoff {
					t.Errorf("%v: E τ = %.15g, want 102/43", m, sol.U[0])
				}
				if got := atOK(t, sol, Point{Node: -1, Edge: 0, X: 0.5}); math.Abs(got-1.4360465) > 5e-8 {
					t.Errorf("%v: E τ from arm1@0.5 = %.10g, want 1.4360465", m, got)
				}
			}
		}
	}
}

// TestScharfetterGummel: the exponentially fitted flux is exact for a cell
// with constant coefficients and no source. docs/references.md D2 (Scharfetter &
// Gummel 1969, IEEE Trans. Electron Devices ED-16:64–77, from memory;
// exactness derived there): J = −Dc' + vc = 1.5819767, 25.8197671, 1.0000227
// for (D, v, h, c_i, c_{i+1}) = (1,1,1,1,0), (1,10,0.1,2,1), (0.01,1,0.1,1,0.5).
// Our equation a u_xx + b u_x = 0 is D c_xx − v c_x = 0 with a = D, b = −v, and
// J(0) = −a u'(0) + v c_i. Tolerance tab = 5e-8 relative (7 digits).
func TestScharfetterGummel(t *testing.T) {
	const tab = 5e-8
	for _, tc := range []struct{ D, v, h, ci, cj, J float64 }{
		{1, 1, 1, 1, 0, 1.5819767},
		{1, 10, 0.1, 2, 1, 25.8197671},
		{0.01, 1, 0.1, 1, 0.5, 1.0000227},
	} {
		// the bare flux formula
		pe := tc.v * tc.h / tc.D
		if J := tc.D / tc.h * (sgB(-pe)*tc.ci - sgB(pe)*tc.cj); relErrS(J, tc.J) > tab {
			t.Errorf("flux formula %v: J = %.10g, want %.10g", tc, J, tc.J)
		}
		for _, cells := range []int{1, 7} {
			b := newNetBuilder(t)
			i := b.fixed("i", tc.ci)
			j := b.fixed("j", tc.cj)
			b.edge(Edge{ID: "cell", From: i, To: j, Length: tc.h, A: tc.D, B: -tc.v})
			sol := mustSolve(t, b.net, MethodGrid, cells)
			if J := sol.Flux[0][0] + tc.v*tc.ci; relErrS(J, tc.J) > tab {
				t.Errorf("grid %d cells %v: J = %.10g, want %.10g", cells, tc, J, tc.J)
			}
		}
	}
}

// driftProfile is the exact solution of a u_xx + b u_x = −f (constant a, b > 0,
// f) with u(0) = U0, u(L) = UL, in a form without overflow:
// u = UL + f(L−x)/b + (U0 − UL − fL/b)·w(x), w = e^{−bx/a}(1 − e^{−b(L−x)/a})/(1 − e^{−bL/a}).
func driftProfile(a, b, f, L, U0, UL, x float64) float64 {
	w := math.Exp(-b*x/a) * math.Expm1(-b*(L-x)/a) / math.Expm1(-b*L/a)
	return UL + f*(L-x)/b + (U0-UL-f*L/b)*w
}

// TestGridExactForDrift: the Scharfetter–Gummel grid reproduces the exact
// solution of constant-coefficient advection–diffusion (here with a constant
// source too, which the node-owned half-cell weights also make exact) at
// every grid point, for cell Péclet numbers from 0.01 to 1000, in both
// directions. Tolerance roundoff = 1e-12 relative to the data.
func TestGridExactForDrift(t *testing.T) {
	const roundoff = 1e-12
	const n = 10
	for _, pe := range []float64{0.01, 0.3, 1, 10, 100, 1000} {
		for _, dir := range []float64{1, -1} {
			a, L, f := 0.7, 2.0, 0.3
			h := L / n
			bb := dir * pe * a / h
			b := newNetBuilder(t)
			i := b.fixed("i", 1)
			j := b.fixed("j", -0.5)
			b.edge(Edge{ID: "e", From: i, To: j, Length: L, A: a, B: bb, F: f})
			sol := mustSolve(t, b.net, MethodGrid, n)
			pts := sol.Sample(nil, 0)
			scale := 1 + f*L/math.Abs(bb)
			for _, p := range pts {
				var want float64
				if dir > 0 {
					want = driftProfile(a, bb, f, L, 1, -0.5, p.X)
				} else { // mirror x → L − x
					want = driftProfile(a, -bb, f, L, -0.5, 1, L-p.X)
				}
				if math.Abs(p.U-want) > roundoff*scale {
					t.Errorf("Pe %g dir %g: u(%g) = %.15g, exact %.15g", pe, dir, p.X, p.U, want)
				}
			}
			// end fluxes too
			ex := mustSolve(t, b.net, MethodExact, 0)
			for k := range 2 {
				if math.Abs(sol.Flux[0][k]-ex.Flux[0][k]) > roundoff*(math.Abs(ex.Flux[0][k])+a/L+f*L) {
					t.Errorf("Pe %g dir %g: flux[%d] grid %.15g exact %.15g", pe, dir, k, sol.Flux[0][k], ex.Flux[0][k])
				}
			}
		}
	}
}

// TestExtremeEdges: a junction between a very long strongly decaying edge
// (κL = 1e4) and an edge with strong drift (Péclet bL/a = 1e3) toward a
// held end. Asymptotically exact balance (neglected terms < e^{−700}):
// b(U − 1) + aκ U = 0, so U = b/(b + aκ). Exact elements: roundoff; grid
// (cells far too coarse for the decay layer): finite, within [0, 1] by the
// discrete maximum principle, and balanced.
func TestExtremeEdges(t *testing.T) {
	const roundoff = 1e-12
	a := 0.5
	L := 1.0
	bd := 1e3 * a / L
	kappa := 1e4 / L
	b := newNetBuilder(t)
	hub := b.balance("hub")
	src := b.fixed("src", 1)
	sink := b.fixed("sink", 0)
	b.edge(Edge{ID: "drift", From: hub, To: src, Length: L, A: a, B: bd})
	b.edge(Edge{ID: "decay", From: hub, To: sink, Length: L, A: a, C: a * kappa * kappa})
	for _, m := range []Method{MethodExact, MethodGrid} {
		sol := mustSolve(t, b.net, m, 64)
		u := sol.U[hub]
		if math.IsNaN(u) || u < 0 || u > 1 {
			t.Fatalf("%v: U = %v", m, u)
		}
		if m == MethodExact {
			if want := bd / (bd + a*kappa); relErrS(u, want) > roundoff {
				t.Errorf("exact: U = %.15g, want %.15g", u, want)
			}
		}
		if r := sol.Residual[hub]; math.Abs(r) > roundoff*(math.Abs(sol.Flux[0][0])+math.Abs(sol.Flux[1][0])) {
			t.Errorf("%v: residual %g", m, r)
		}
		for e := range 2 {
			for _, p := range sol.Sample(nil, e) {
				if math.IsNaN(p.U) || p.U < -roundoff || p.U > 1+roundoff {
					t.Errorf("%v: edge %d u(%g) = %v", m, e, p.X, p.U)
				}
			}
		}
	}
}

// TestUnanchored: a component with no fixed node, leak or decay is reported
// with its node ids; decay or a leak anchors it.
func TestUnanchored(t *testing.T) {
	b := newNetBuilder(t)
	g := b.fixed("ground", 0)
	p := b.balance("p")
	b.edge(Edge{ID: "gp", From: g, To: p, Length: 1, A: 1})
	hub := b.node("hub", vertex.Law{Inject: 1})
	t1 := b.balance("tip1")
	t2 := b.balance("tip2")
	t3 := b.balance("tip3")
	b.edge(Edge{ID: "a1", From: hub, To: t1, Length: 1, A: 1})
	b.edge(Edge{ID: "a2", From: hub, To: t2, Length: 1, A: 1, B: 2})
	b.edge(Edge{ID: "a3", From: t3, To: hub, Length: 1, A: 1})
	_, err := Solve(b.net, nil)
	var ue *UnanchoredError
	if !errors.As(err, &ue) {
		t.Fatalf("error %v, want *UnanchoredError", err)
	}
	if len(ue.Nodes) != 4 || ue.Nodes[0] != "hub" || ue.Components != 1 {
		t.Errorf("nodes %v components %d", ue.Nodes, ue.Components)
	}
	msg := err.Error()
	if !strings.Contains(msg, "hub, tip1, tip2 and 1 more") || strings.Contains(msg, "\n") {
		t.Errorf("message %q", msg)
	}
	// decay on one arm anchors the component
	b.net.Edges[1].C = 0.1
	if _, err := Solve(b.net, nil); err != nil {
		t.Errorf("with decay: %v", err)
	}
	b.net.Edges[1].C = 0
	// so does a shift (every ρ > 0)
	if _, err := SolveVariant(b.net, &Variant{Shift: 0.5}, nil); err != nil {
		t.Errorf("with shift: %v", err)
	}
}

// TestMethodExactVarying: MethodExact refuses an edge with varying
// coefficients, naming it; auto uses a grid element there.
func TestMethodExactVarying(t *testing.T) {
	b := newNetBuilder(t)
	x := b.fixed("x", 0)
	y := b.fixed("y", 1)
	b.edge(Edge{ID: "plain", From: x, To: y, Length: 1, A: 1})
	b.edge(Edge{ID: "tapered", From: x, To: y, Length: 1, A: 1, Profile: &Profile{A: func(s float64) float64 { return 1 + s }}})
	_, err := Solve(b.net, &Settings{Method: MethodExact})
	var me *ModelError
	if !errors.As(err, &me) || me.ID != "tapered" {
		t.Fatalf("error %v, want a *ModelError naming edge tapered", err)
	}
	sol, err := Solve(b.net, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !sol.ExactEdge(0) || sol.ExactEdge(1) || sol.Stats.ExactEdges != 1 || sol.Stats.GridEdges != 1 {
		t.Errorf("auto: exact %v %v, stats %+v", sol.ExactEdge(0), sol.ExactEdge(1), sol.Stats)
	}
	// a = 1 + x: flux −a u' is constant = 1/∫dx/a = 1/ln 2 (to second order on the grid)
	if got, want := sol.Flux[1][0], -1/math.Ln2; relErrS(got, want) > 1.0/(64*64) {
		t.Errorf("tapered flux %g, want %g", got, want)
	}
}

func TestParseMethod(t *testing.T) {
	for _, m := range []Method{MethodAuto, MethodExact, MethodGrid} {
		got, err := ParseMethod(m.String())
		if err != nil || got != m {
			t.Errorf("ParseMethod(%q) = %v, %v", m.String(), got, err)
		}
	}
	if _, err := ParseMethod("fem"); err == nil {
		t.Error("ParseMethod(fem) succeeded")
	}
}

// randomNetwork returns a connected network with cycles, parallel edges and a
// self-loop: nodes fixed with probability 0.2 (node 0 always), balance nodes
// with random leaks and injections, edges with random a, b, c, f and weights.
func randomCyclicNet(t testing.TB, nodes, extra int, rnd *rand.Rand) *Network {
	b := newNetBuilder(t)
	for i := range nodes {
		if i == 0 || rnd.Float64() < 0.2 {
			b.fixed(fmt.Sprintf("n%d", i), rnd.NormFloat64())
		} else {
			law := vertex.Law{Inject: rnd.NormFloat64()}
			if rnd.Float64() < 0.3 {
				law.Leak = rnd.Float64()
			}
			b.node(fmt.Sprintf("n%d", i), law)
		}
	}
	edge := func(k, u, v int) {
		e := Edge{ID: fmt.Sprintf("e%d", k), From: u, To: v,
			Length: 0.2 + rnd.Float64(), A: 0.3 + rnd.Float64(), F: rnd.NormFloat64()}
		if rnd.Float64() < 0.5 {
			e.B = 3 * rnd.NormFloat64()
		}
		if rnd.Float64() < 0.5 {
			e.C = 2 * rnd.Float64()
		}
		if rnd.Float64() < 0.3 {
			e.Weight = [2]float64{0.2 + rnd.Float64(), 0.2 + rnd.Float64()}
		}
		b.edge(e)
	}
	k := 0
	for i := 1; i < nodes; i++ {
		edge(k, rnd.IntN(i), i)
		k++
	}
	for range extra {
		u, v := rnd.IntN(nodes), rnd.IntN(nodes)
		edge(k, u, v) // self-loops and parallel edges included
		k++
	}
	edge(k, 1, 1)
	return b.net
}

// TestResiduals: the node residuals Σ J + β u − γ, reconstructed from the
// elements (grid edges: from the recovered interior and the half cells), are
// at round-off level for both methods on random networks with cycles,
// self-loops, drift, decay and weights. Tolerance roundoff = 1e-11 relative
// to the sum of the absolute fluxes at the node (grid reconstruction loses up
// to n·ε in differences of neighbouring values).
func TestResiduals(t *testing.T) {
	const roundoff = 1e-11
	rnd := rand.New(rand.NewPCG(7, 1))
	for trial := range 5 {
		net := randomCyclicNet(t, 30, 20, rnd)
		for _, m := range []Method{MethodExact, MethodGrid} {
			sol := mustSolve(t, net, m, 40)
			for v := range net.Nodes {
				scale := math.Abs(net.Nodes[v].Law.Inject) + net.Nodes[v].Law.Leak*math.Abs(sol.U[v])
				for _, end := range net.Incident(v) {
					scale += math.Abs(sol.Flux[end.Edge][end.Side]) * net.Edges[end.Edge].EndWeight(end.Side) / net.Edges[end.Edge].A
				}
				if r := sol.Residual[v]; math.Abs(r) > roundoff*(scale+1) {
					t.Errorf("trial %d %v: node %s residual %g (scale %g)", trial, m, net.Nodes[v].ID, r, scale)
				}
			}
		}
	}
}

// atOK is Solution.At for tests: an error fails the test.
func atOK(t *testing.T, sol *Solution, p Point) float64 {
	t.Helper()
	u, err := sol.At(p)
	if err != nil {
		t.Fatal(err)
	}
	return u
}

// TestPointZeroValueRejected checks the point convention on the chain
// a–b–c where it used to go wrong: Point{Node: b} (edge left at 0) named a
// point on edge 0 and returned u(a). Now a point must name exactly one of a
// node and an edge, so that literal, the zero Point and points off the
// network are errors, while AtNode and OnEdge give the node and edge values.
func TestPointZeroValueRejected(t *testing.T) {
	net := &Network{}
	a, _ := net.AddNode(Node{ID: "a", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
	b, _ := net.AddNode(Node{ID: "b"})
	c, _ := net.AddNode(Node{ID: "c", Law: vertex.Law{Kind: vertex.Fixed, Value: 3}})
	net.AddEdge(Edge{ID: "ab", From: a, To: b, Length: 1, A: 1})
	net.AddEdge(Edge{ID: "bc", From: b, To: c, Length: 1, A: 1})
	sol, err := Solve(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Linear profile from 1 to 3: u(b) = 2, u(ab@0.5) = 1.5, exact.
	if u, err := sol.At(vertex.AtNode(b)); err != nil || u != 2 {
		t.Errorf("At(AtNode(b)) = %g, %v; want 2", u, err)
	}
	if u, err := sol.At(vertex.OnEdge(0, 0.5)); err != nil || math.Abs(u-1.5) > 1e-15 {
		t.Errorf("At(OnEdge(0, 0.5)) = %g, %v; want 1.5", u, err)
	}
	var pe *vertex.PointError
	for _, p := range []Point{{Node: b}, {}, vertex.AtNode(3), vertex.OnEdge(2, 0.1), vertex.OnEdge(0, 1.5), {Node: -1, Edge: -1}} {
		if _, err := sol.At(p); !errors.As(err, &pe) {
			t.Errorf("At(%+v): %v, want a *vertex.PointError", p, err)
		}
		if _, err := ExitStatistics(net, p, nil); !errors.As(err, &pe) {
			t.Errorf("ExitStatistics(%+v): %v, want a *vertex.PointError", p, err)
		}
	}
}

// TestAssembleRHSReusesFactor checks the right-hand side assembled alone:
// after a solve, new fixed values and injections are solved with the same
// matrix and factorisation (assembleRHS, solve), and the result must equal a
// fresh solve of the changed problem bit for bit (the same operations in the
// same order), on exact, constant-grid and varying-grid edges.
func TestAssembleRHSReusesFactor(t *testing.T) {
	net := &Network{}
	a, _ := net.AddNode(Node{ID: "a", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
	b, _ := net.AddNode(Node{ID: "b", Law: vertex.Law{Kind: vertex.Balance, Leak: 0.2, Inject: 0.5}})
	c, _ := net.AddNode(Node{ID: "c", Law: vertex.Law{Kind: vertex.Fixed, Value: -1}})
	d, _ := net.AddNode(Node{ID: "d"})
	for _, e := range []Edge{
		{ID: "ab", From: a, To: b, Length: 1, A: 1, B: 0.5, C: 0.3, F: 1},
		{ID: "bc", From: b, To: c, Length: 2, A: 0.7, C: 0.1, Cells: 16,
			Profile: &Profile{A: func(x float64) float64 { return 0.7 + 0.1*x }}},
		{ID: "bd", From: b, To: d, Length: 1.5, A: 2, F: -0.5},
		{ID: "dd", From: d, To: d, Length: 0.8, A: 1, C: 0.4},
	} {
		if _, err := net.AddEdge(e); err != nil {
			t.Fatal(err)
		}
	}
	for _, m := range []Method{MethodAuto, MethodGrid} {
		v := &Variant{FixedValue: []float64{1, 0, -1, 0}, NodeInject: []float64{0, 0.5, 0, 0}}
		sys, err := newSystem(net, v, &Settings{Method: m, Cells: 12})
		if err != nil {
			t.Fatal(err)
		}
		sys.assemble(0)
		if err := sys.factor(); err != nil {
			t.Fatal(err)
		}
		sys.solve()
		sys.v.FixedValue[a], sys.v.FixedValue[c] = 0.25, 3
		sys.v.NodeInject[b], sys.v.NodeInject[d] = -1, 2
		sys.assembleRHS()
		sys.solve()
		got, err := sys.solution()
		if err != nil {
			t.Fatal(err)
		}
		want, err := SolveVariant(net, &Variant{FixedValue: []float64{0.25, 0, 3, 0}, NodeInject: []float64{0, -1, 0, 2}}, &Settings{Method: m, Cells: 12})
		if err != nil {
			t.Fatal(err)
		}
		for i := range want.U {
			if got.U[i] != want.U[i] {
				t.Errorf("%v: u(%s) = %.17g, fresh solve %.17g", m, net.Nodes[i].ID, got.U[i], want.U[i])
			}
		}
		for e := range net.Edges {
			p := vertex.OnEdge(e, 0.37*net.Edges[e].Length)
			if g, w := got.at(p), want.at(p); g != w {
				t.Errorf("%v: u(%s) = %.17g, fresh solve %.17g", m, net.PointString(p), g, w)
			}
		}
	}
}
