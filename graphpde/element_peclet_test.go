package graphpde

import (
	"errors"
	"fmt"
	"math"
	"math/big"
	"math/cmplx"
	"testing"

	"github.com/ramify-dev/ramify/internal/testenv"
)

// Stability of the elements at any Péclet number Pe = |b|L/a: the end maps
// against the closed form evaluated in 1024-bit arithmetic (math/big), and
// whole networks whose answer is known exactly.

// bigPrec is the working precision of the references: 1024 bits leave
// about 300 digits after the worst cancellation below (row sums of size
// c·L against entries of size Pe/L, and e^{−2·10⁴}).
const bigPrec = 1024

func bf(x float64) *big.Float { return new(big.Float).SetPrec(bigPrec).SetFloat64(x) }

// bigExp returns e^x: x/2^k with |x/2^k| < 2^−20, 40 Taylor terms, then k
// squarings (common practice, no source; the squarings amplify the relative
// error by 2^k, still below 10^−250 here).
func bigExp(x *big.Float) *big.Float {
	r := new(big.Float).SetPrec(bigPrec).Set(x)
	k := 0
	lim := bf(math.Exp2(-20))
	for new(big.Float).Abs(r).Cmp(lim) > 0 {
		r.Quo(r, bf(2))
		k++
	}
	sum, term := bf(1), bf(1)
	for n := 1; n <= 40; n++ {
		term.Mul(term, r)
		term.Quo(term, bf(float64(n)))
		sum.Add(sum, term)
	}
	for ; k > 0; k-- {
		sum.Mul(sum, sum)
	}
	return sum
}

// bigElementMap returns the homogeneous end map of a u” + b u' − c u = 0 on
// [0, L] and its row sums, c ≥ 0, κ = sqrt(μ² + c/a) > 0, μ = b/(2a):
//
//	d00 = −μ − κ coth κL, d01 = 2κ e^{(μ−κ)L}/(1 − e^{−2κL}),
//	d10 = −2κ e^{−(μ+κ)L}/(1 − e^{−2κL}), d11 = −μ + κ coth κL
//
// (derived: the two exponential solutions e^{(−μ±κ)x} matched to the end
// values). The row sums are formed in 1024 bits, where their cancellation
// (at most a factor Pe/(cL²/a) here) costs nothing.
func bigElementMap(a, b, c, L float64) (d [2][2]float64, rs [2]float64) {
	A, B, C, LL := bf(a), bf(b), bf(c), bf(L)
	mu := new(big.Float).Quo(B, new(big.Float).Mul(bf(2), A))
	k2 := new(big.Float).Mul(mu, mu)
	k2.Add(k2, new(big.Float).Quo(C, A))
	kap := new(big.Float).Sqrt(k2)
	mul := func(x ...*big.Float) *big.Float {
		p := bf(1)
		for _, y := range x {
			p.Mul(p, y)
		}
		return p
	}
	neg := func(x *big.Float) *big.Float { return new(big.Float).Neg(x) }
	sub := func(x, y *big.Float) *big.Float { return new(big.Float).Sub(x, y) }
	add := func(x, y *big.Float) *big.Float { return new(big.Float).Add(x, y) }
	e2 := bigExp(neg(mul(bf(2), kap, LL)))
	q := sub(bf(1), e2)
	// κ ∓ μ and κ(coth κL − 1) = 2κ e^{−2κL}/q without cancellation (the
	// plain −μ ± κ coth κL would lose Pe·log₁₀e digits, more than 1024 bits
	// hold at Pe = 10⁴).
	lam := new(big.Float).Quo(C, A)
	kmm, kpm := sub(kap, mu), add(kap, mu)
	if mu.Sign() > 0 {
		kmm = new(big.Float).Quo(lam, kpm)
	} else if mu.Sign() < 0 {
		kpm = new(big.Float).Quo(lam, kmm)
	}
	cz := new(big.Float).Quo(mul(bf(2), kap, e2), q)
	D00 := neg(add(kpm, cz))
	D11 := add(kmm, cz)
	D01 := new(big.Float).Quo(mul(bf(2), kap, bigExp(mul(sub(mu, kap), LL))), q)
	D10 := neg(new(big.Float).Quo(mul(bf(2), kap, bigExp(neg(mul(add(mu, kap), LL)))), q))
	f := func(x *big.Float) float64 { v, _ := x.Float64(); return v }
	d = [2][2]float64{{f(D00), f(D01)}, {f(D10), f(D11)}}
	rs = [2]float64{f(add(D00, D01)), f(add(D10, D11))}
	return d, rs
}

// elementRel is the relative accuracy asked of every map entry and row sum
// against the 1024-bit reference: a few hundred ε for the closed forms;
// grid elements with c = 0 are exact too (exponential fitting) but sum 64
// cells, hence gridRel.
const (
	elementRel = 1e-13
	gridRel    = 1e-11
)

// closeRel reports |got − want| ≤ rel·|want|, with values below the
// smallest normal float64 (e^{−2·10⁴} underflows) counted as 0.
func closeRel(got, want, rel float64) bool {
	if math.Abs(want) < 0x1p-1000 {
		return math.Abs(got) < 0x1p-990
	}
	return math.Abs(got-want) <= rel*math.Abs(want)
}

// TestElementPeclet checks the exact element (real and complex types), its
// row sums, and the constant and varying grid elements (exact at nodes for
// c = 0) from Pe = 1e−3 to 1e4, both drift signs, with no, tiny and O(1)
// decay, against bigElementMap.
func TestElementPeclet(t *testing.T) {
	for _, geo := range [][2]float64{{1, 1}, {0.001, 0.1}} { // a, L
		a, L := geo[0], geo[1]
		for _, pe := range []float64{1e-3, 0.1, 1, 20, 35, 100, 700, 1e3, 1e4} {
			for _, sg := range []float64{1, -1} {
				b := sg * pe * a / L
				for _, cr := range []float64{0, 1e-8, 1} {
					c := cr * a / (L * L)
					name := fmt.Sprintf("a=%g L=%g Pe=%g c=%g", a, L, sg*pe, c)
					wd, wrs := bigElementMap(a, b, c, L)
					d, _ := exactElement(a, b, c, 0.0, L)
					rs := exactRowSums(a, b, c, L)
					dc, _ := exactElement(a, b, complex(c, 0), 0, L)
					rc := exactRowSums(a, b, complex(c, 0), L)
					xc, _ := exitElement(a, b, complex(c, 0), 0, L)
					for i := range 2 {
						if c == 0 && (rs[i] != 0 || rc[i] != 0) {
							t.Errorf("%s: row sum %d = %g, %g, want exactly 0", name, i, rs[i], rc[i])
						}
						if !closeRel(rs[i], wrs[i], elementRel) || !closeRel(real(rc[i]), wrs[i], elementRel) {
							t.Errorf("%s: row sum %d = %.16g (complex %.16g), want %.16g", name, i, rs[i], real(rc[i]), wrs[i])
						}
						for j := range 2 {
							if !closeRel(d[i][j], wd[i][j], elementRel) || !closeRel(real(dc[i][j]), wd[i][j], elementRel) ||
								!closeRel(real(xc[i][j]), wd[i][j], elementRel) {
								t.Errorf("%s: d%d%d = %.16g (complex %.16g, exit %.16g), want %.16g", name, i, j, d[i][j], real(dc[i][j]), real(xc[i][j]), wd[i][j])
							}
						}
					}
					if c != 0 {
						continue
					}
					// Grid elements, c = 0: Scharfetter–Gummel is exact at
					// the vertices, and so are the end derivatives.
					const n = 64
					k := newConstCell(n, L, a, b, 0, 0)
					gd, _ := condenseConst(make([]float64, n-1), &k)
					vd, _, ge := condenseVar(make([]float64, 3*(n-1)), n, L, func(float64) (float64, float64, float64, float64) { return a, b, 0, 0 })
					for i := range 2 {
						if k.ends.rs[i] != 0 || ge.rs[i] != 0 {
							t.Errorf("%s: grid row sum %d = %g, %g, want exactly 0", name, i, k.ends.rs[i], ge.rs[i])
						}
						for j := range 2 {
							if !closeRel(gd[i][j], wd[i][j], gridRel) || !closeRel(vd[i][j], wd[i][j], gridRel) {
								t.Errorf("%s: grid d%d%d = %.16g (varying %.16g), want %.16g", name, i, j, gd[i][j], vd[i][j], wd[i][j])
							}
						}
					}
				}
			}
		}
	}
}

// driftLoopNet is the network of a balance node n1 joined to a fixed node n0
// by an edge whose drift pushes away from n0 (Péclet number pe), with a
// self-loop with drift at n1; n0 has value g, both edges get source f.
func driftLoopNet(t *testing.T, pe, g, f float64) *Network {
	t.Helper()
	return mustNet(t, []Node{{ID: "n0", Law: fixedAt(g)}, {ID: "n1", Law: free}},
		[]edgeSpec{
			{Edge{ID: "e1", Length: 0.1, A: 0.001, B: -pe * 0.001 / 0.1, F: f, Rho: 1}, "n1", "n0"},
			{Edge{ID: "loop", Length: 0.1, A: 1, B: 10, F: f, Rho: 1}, "n1", "n1"},
		})
}

// TestDriftAwayFromFixedNode: with drift pushing away from the only fixed
// node and a drifting self-loop at the balance node, the steady solution is
// u ≡ g at every Péclet number (the constant solves every edge and balances
// every node). Before the row sums of the self-loop were formed without
// cancellation, the loop's round-off (about 1e−15) swamped the e^{−Pe}
// coupling of n1 to n0 and u(n1) came out as 1.17 at Pe = 30.
func TestDriftAwayFromFixedNode(t *testing.T) {
	// exactness: the value is a quotient of e^{−Pe}-small terms, each with
	// a relative error of a few ε.
	const exactness = 1e-13
	for _, pe := range []float64{1, 20, 25, 35, 100, 300, 700, 1e4} {
		net := driftLoopNet(t, pe, 1, 0)
		for _, m := range []Method{MethodExact, MethodGrid} {
			sol, err := Solve(net, &Settings{Method: m})
			var se *SingularNodeError
			if pe > 1400 && errors.As(err, &se) {
				// e^{−Pe} underflows: n1 is decoupled in float64, and
				// the solve says so instead of inventing a value.
				continue
			}
			if err != nil {
				t.Errorf("Pe %g %v: %v", pe, m, err)
				continue
			}
			if math.Abs(sol.U[1]-1) > exactness {
				t.Errorf("Pe %g %v: u(n1) = %.16g, want 1", pe, m, sol.U[1])
			}
		}
	}
}

// TestDriftAwayExit: the exit statistics of the same network started at n1
// (edge e1 at Pe = 100): absorbed at n0 with probability 1, killed 0, and
// the mean exit time the closed form of the two-edge problem,
//
// evaluated in 60-digit arithmetic (derived: on each edge T = A + B e^{−bx/a}
// − x/b; the loop's two ends equal, so its net outflow is −L_loop·a_loop…
// exactly −0.1 here; e1's far end 0; flux balance at n1 gives e1's B and
// T(n1) = −L₁ − B₁(e^{100} − 1)): 2.714998313234296802896751807e42. Before the loop fix the mean came out
// negative and `exit --times 1` never ended.
func TestDriftAwayExit(t *testing.T) {
	const want = 2.714998313234296802896751807e42
	// meanRel: the mean is a quotient of terms of size e^{100} computed to a
	// few ε each.
	const meanRel = 1e-12
	net := driftLoopNet(t, 100, 0, 0)
	for _, m := range []Method{MethodExact, MethodGrid} {
		x, err := ExitStatistics(net, Point{Node: 1, Edge: -1}, &ExitSettings{Method: m, Times: []float64{1}})
		if err != nil {
			t.Fatalf("%v: %v", m, err)
		}
		if math.Abs(x.Hit[0]-1) > 1e-12 || x.Killed > 1e-12 {
			t.Errorf("%v: hit %g killed %g, want 1 and 0", m, x.Hit[0], x.Killed)
		}
		if math.Abs(x.Mean-want) > meanRel*want {
			t.Errorf("%v: mean %.16g, want %.16g", m, x.Mean, want)
		}
		if p := x.Survival[0].P; p != 1 {
			t.Errorf("%v: P(τ > 1) = %g, want 1 (the mean is 1e42)", m, p)
		}
	}
}

// TestGridRounding: one edge a = 1, f = 1 of length 1 from u = 0 to u = 1
// has u(x) = x + x(1 − x)/2, u(0.5) = 0.625, fluxes −a u' = −1.5 and −0.5
// (derived), and the exponentially fitted grid is exact at its vertices
// for constant a, f and c = 0, so every deviation is rounding. The plain
// sweep (pivot diag − lf·α, 1 − p0 formed by subtraction) lost log₁₀ n
// digits: 1.1e−8 at 10⁶ cells, 9.6e−7 at 10⁷ and 0.042 at 10⁸. The sweep in
// sums of one sign keeps u to 1e−12 at 10⁶ and 10⁷ cells and 7e−11 at 10⁸
// (measured); the end fluxes, differenced next to the ends, lose about
// log₁₀ n digits more. The 10⁷ and 10⁸ runs
// (1.6 GB, several seconds) need RAMIFY_LONG=1.
func TestGridRounding(t *testing.T) {
	cases := []struct {
		n       int
		tolU    float64
		tolFlux float64
	}{
		{1e6, 1e-11, 1e-10},
		{1e7, 1e-10, 1e-9},
		{1e8, 1e-9, 1e-7},
	}
	for _, tc := range cases {
		if tc.n > 1e6 && !testenv.Long() {
			continue
		}
		net := mustNet(t, []Node{{ID: "a", Law: fixedAt(0)}, {ID: "b", Law: fixedAt(1)}},
			[]edgeSpec{{Edge{ID: "w", Length: 1, A: 1, F: 1}, "a", "b"}})
		sol, err := Solve(net, &Settings{Method: MethodGrid, Cells: tc.n})
		if err != nil {
			t.Fatal(err)
		}
		u := atOK(t, sol, Point{Node: -1, Edge: 0, X: 0.5})
		if math.Abs(u-0.625) > tc.tolU {
			t.Errorf("%d cells: u(0.5) = %.16g, want 0.625", tc.n, u)
		}
		if f := sol.Flux[0]; math.Abs(f[0]+1.5) > tc.tolFlux || math.Abs(f[1]+0.5) > tc.tolFlux {
			t.Errorf("%d cells: fluxes %.16g, %.16g, want −1.5, −0.5", tc.n, f[0], f[1])
		}
	}
}

// TestDriftAwayChain: the drift-away link of TestDriftAwayFromFixedNode
// followed by a chain with its own drift and a self-loop. The answer is
// still u ≡ 1 (derived as there), but now the node system's elimination
// meets the weak link only after eliminating the chain: the plain pivot
// a_kk − l·a_ik cancels to nothing and the solve reported "singular at
// node n2" from Pe 30 on. With the row sums handed to the factor (the
// network is a tree) every pivot is a sum of non-negative terms.
func TestDriftAwayChain(t *testing.T) {
	const exactness = 1e-13 // as in TestDriftAwayFromFixedNode
	for _, pe := range []float64{1, 30, 100, 300, 700} {
		net := mustNet(t, []Node{{ID: "n0", Law: fixedAt(1)}, {ID: "n1", Law: free}, {ID: "n2", Law: free}, {ID: "n3", Law: free}},
			[]edgeSpec{
				{Edge{ID: "e1", Length: 0.1, A: 0.001, B: -pe * 0.001 / 0.1}, "n1", "n0"},
				{Edge{ID: "e2", Length: 1, A: 1, B: 0.5}, "n1", "n2"},
				{Edge{ID: "e3", Length: 1, A: 2, B: -40}, "n2", "n3"},
				{Edge{ID: "loop", Length: 0.3, A: 0.5, B: 7}, "n2", "n2"},
			})
		for _, m := range []Method{MethodExact, MethodGrid} {
			sol, err := Solve(net, &Settings{Method: m})
			if err != nil {
				t.Errorf("Pe %g %v: %v", pe, m, err)
				continue
			}
			for v, u := range sol.U {
				if math.Abs(u-1) > exactness {
					t.Errorf("Pe %g %v: u(%s) = %.16g, want 1", pe, m, net.Nodes[v].ID, u)
				}
			}
			if sol.Status != Converged {
				t.Errorf("Pe %g %v: status %v %q", pe, m, sol.Status, sol.Notes)
			}
		}
	}
}

// TestDriftAwayChainExit: exit statistics from the far end of the chain of
// TestDriftAwayChain at Pe 100: absorbed at n0 with probability 1, and the
// exact path's mean (adjoint and forward solves on the one-sign factor)
// equal to the grid path's (steady grid solves, exact at the vertices for
// constant coefficients without decay and a constant source, derived from
// the fitted fluxes). Before, the adjoint solve stopped at "singular".
func TestDriftAwayChainExit(t *testing.T) {
	const meanRel = 1e-9 // two solves of a quotient of e^{100}-size terms
	net := mustNet(t, []Node{{ID: "n0", Law: fixedAt(0)}, {ID: "n1", Law: free}, {ID: "n2", Law: free}, {ID: "n3", Law: free}},
		[]edgeSpec{
			{Edge{ID: "e1", Length: 0.1, A: 0.001, B: -100 * 0.001 / 0.1, Rho: 1}, "n1", "n0"},
			{Edge{ID: "e2", Length: 1, A: 1, B: 0.5, Rho: 1}, "n1", "n2"},
			{Edge{ID: "e3", Length: 1, A: 2, B: -40, Rho: 1}, "n2", "n3"},
			{Edge{ID: "loop", Length: 0.3, A: 0.5, B: 7, Rho: 1}, "n2", "n2"},
		})
	start := Point{Node: 3, Edge: -1}
	x, err := ExitStatistics(net, start, &ExitSettings{Quantiles: []float64{}})
	if err != nil {
		t.Fatal(err)
	}
	g, err := ExitStatistics(net, start, &ExitSettings{Method: MethodGrid, Quantiles: []float64{}})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(x.Hit[0]-1) > 1e-12 || x.Killed > 1e-12 {
		t.Errorf("hit %g killed %g, want 1 and 0", x.Hit[0], x.Killed)
	}
	if math.Abs(x.Mean-g.Mean) > meanRel*g.Mean || !(x.Mean > 1e40) {
		t.Errorf("mean %.12g exact, %.12g grid", x.Mean, g.Mean)
	}
}

// TestExitElementComplexPeclet: the Laplace-domain element at complex
// decay c (Re c ≥ 0, as on the Cauchy circle and the right part of the
// contours) from Pe = 1e−3 to 1e4 in both directions, by composition
// (derived): the maps of [0, x] and [x, L] joined at x, where u and a·u'
// are continuous, must give the map of [0, L]. The two sides are formed
// with different exponentials (e^{−κx}, e^{−κ(L−x)} against e^{−κL}), so
// cancellation or overflow in either shows. Real c is checked against the
// 1024-bit closed form in TestElementPeclet.
func TestExitElementComplexPeclet(t *testing.T) {
	// composeRel: each map entry to a few hundred ε, the join divides by
	// d1[1][1] − d2[0][0], a sum of terms with positive real parts.
	const composeRel = 1e-11
	a, L, x := 0.7, 1.3, 0.45
	for _, pe := range []float64{1e-3, 0.5, 10, 100, 1e3, 1e4} {
		for _, sg := range []float64{1, -1} {
			b := sg * pe * a / L
			for _, c := range []complex128{complex(0.3, 2), complex(1e-6, 1e-3), complex(5, -40), complex(1e3, 1e4), complex(0, 0.1)} {
				f := complex(0.8, -0.2)
				name := fmt.Sprintf("Pe=%g c=%v", sg*pe, c)
				d, g := exitElement(a, b, c, f, L)
				d1, g1 := exitElement(a, b, c, f, x)
				d2, g2 := exitElement(a, b, c, f, L-x)
				den := d1[1][1] - d2[0][0]
				// U_m = (d2[0][1] UL + g2[0] − d1[1][0] U0 − g1[1]) / den
				mU0, mUL, mg := -d1[1][0]/den, d2[0][1]/den, (g2[0]-g1[1])/den
				want := [2][2]complex128{
					{d1[0][0] + d1[0][1]*mU0, d1[0][1] * mUL},
					{d2[1][1] * mU0, d2[1][0] + d2[1][1]*mUL},
				}
				wantG := [2]complex128{g1[0] + d1[0][1]*mg, g2[1] + d2[1][1]*mg}
				// Without the join: d2's To row in terms of (U_m, UL).
				want[1][0] = d2[1][0] * mU0
				want[1][1] = d2[1][1] + d2[1][0]*mUL
				wantG[1] = g2[1] + d2[1][0]*mg
				close := func(got, w complex128) bool {
					return cmplx.Abs(got-w) <= composeRel*(cmplx.Abs(w)+1e-300) || (cmplx.Abs(w) < 1e-290 && cmplx.Abs(got) < 1e-280)
				}
				for i := range 2 {
					for j := range 2 {
						if cmplx.IsNaN(d[i][j]) || cmplx.IsInf(d[i][j]) || !close(d[i][j], want[i][j]) {
							t.Errorf("%s: d%d%d = %v, composed %v", name, i, j, d[i][j], want[i][j])
						}
					}
					if !close(g[i], wantG[i]) {
						t.Errorf("%s: g%d = %v, composed %v", name, i, g[i], wantG[i])
					}
				}
			}
		}
	}
}
