package graphpde

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strconv"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// Tolerances of this file.
const (
	// exitRoundoff: the steady statistics are one sparse solve of a
	// well-conditioned node system with exact elements.
	exitRoundoff = 1e-12
	// published7 is half a unit in the 7th significant digit, for values
	// quoted to 7 digits in docs/references.md.
	published7 = 5e-8
	// inversion is the error of a Talbot window contour with 32 nodes
	// measured in internal/laplace (at most 1e−11 of max|f| over its test
	// pairs) with a margin of a hundred.
	inversion = 1e-9
	// cauchyMoments: aliasing 2^{−32} of the Cauchy integral plus rounding
	// amplified by n!/(R·Eτ)^n for the n-th moment (measured ≲ 1e−10 up to
	// n = 4 on the interval).
	cauchyMoments = 1e-8
)

var (
	fixedAt = func(g float64) vertex.Law { return vertex.Law{Kind: vertex.Fixed, Value: g} }
	free    = vertex.Law{Kind: vertex.Balance}
)

// mustNet builds a network from nodes and edges (From/To by id) or fails.
func mustNet(tb testing.TB, nodes []Node, edges []struct {
	e        Edge
	from, to string
}) *Network {
	tb.Helper()
	var net Network
	for _, nd := range nodes {
		if _, err := net.AddNode(nd); err != nil {
			tb.Fatal(err)
		}
	}
	for _, x := range edges {
		e := x.e
		var ok1, ok2 bool
		e.From, ok1 = net.NodeIndex(x.from)
		e.To, ok2 = net.NodeIndex(x.to)
		if !ok1 || !ok2 {
			tb.Fatalf("edge %s: unknown node", e.ID)
		}
		if _, err := net.AddEdge(e); err != nil {
			tb.Fatal(err)
		}
	}
	return &net
}

type edgeSpec = struct {
	e        Edge
	from, to string
}

// interval is (0, L) with absorbing ends "lo" and "hi" and one edge "e".
func interval(tb testing.TB, L, a, b, c float64) *Network {
	return mustNet(tb, []Node{{ID: "lo", Law: fixedAt(0)}, {ID: "hi", Law: fixedAt(1)}},
		[]edgeSpec{{Edge{ID: "e", Length: L, A: a, B: b, C: c}, "lo", "hi"}})
}

// star has a centre "o" with the given law and absorbing arm ends "end0", …;
// arm i has length L[i], diffusivity a and weight w[i] at the centre.
func star(tb testing.TB, centre vertex.Law, L, w []float64, a float64) *Network {
	nodes := []Node{{ID: "o", Law: centre}}
	var edges []edgeSpec
	for i := range L {
		id := strconv.Itoa(i)
		nodes = append(nodes, Node{ID: "end" + id, Law: fixedAt(0)})
		edges = append(edges, edgeSpec{Edge{ID: "arm" + id, Length: L[i], A: a, Weight: [2]float64{w[i], 0}}, "o", "end" + id})
	}
	return mustNet(tb, nodes, edges)
}

func near(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

// TestExitIntervalB1: Brownian motion (generator ½d², so a = 1/2: trap 4 of
// docs/references.md) on (0, 1) from x = 0.3. docs/references.md B1: P(exit at L) = x/L
// = 0.3, E τ = x(L−x) = 0.21, Var τ = x(L−x)[x² + (L−x)²]/3 = 0.0406 (derived
// there from the backward equation), E e^{−τ} = cosh(√2(x−½))/cosh(√2/2) =
// 0.8252214 (Durrett, Probability: Theory and Examples, Exercise 7.5.3, as
// cited in docs/references.md).
func TestExitIntervalB1(t *testing.T) {
	net := interval(t, 1, 0.5, 0, 0)
	x, err := ExitStatistics(net, Point{Node: -1, Edge: 0, X: 0.3}, &ExitSettings{Moments: 4})
	if err != nil {
		t.Fatal(err)
	}
	lo, hi := 0, 1
	checks := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"P(hi)", x.Hit[hi], 0.3, exitRoundoff},
		{"P(lo)", x.Hit[lo], 0.7, exitRoundoff},
		{"killed", x.Killed, 0, exitRoundoff},
		{"mean", x.Mean, 0.21, exitRoundoff},
		{"variance", x.SD * x.SD, 0.0406, cauchyMoments},
		{"occupation", x.Occupation[0], 0.21, exitRoundoff},
	}
	// Moments 3 and 4 from the hierarchy ½T_n'' = −n T_{n−1}, T_n(0) = T_n(1) = 0
	// (docs/exit-statistics.md §2), solved exactly in polynomials here.
	Tn := exactIntervalMoments(4, 0.5)
	for n := 1; n <= 4; n++ {
		checks = append(checks, struct {
			name      string
			got, want float64
			tol       float64
		}{"E τ^" + strconv.Itoa(n), x.Moments[n-1], polyAt(Tn[n], 0.3), cauchyMoments * polyAt(Tn[n], 0.3)})
	}
	for _, c := range checks {
		if !near(c.got, c.want, c.tol) {
			t.Errorf("%s = %.12g, want %.12g (tol %g)", c.name, c.got, c.want, c.tol)
		}
	}
	if !x.HasDistribution {
		t.Fatal("no distribution on an exact network")
	}
	L1, err := x.law.tr.at(1)
	if err != nil {
		t.Fatal(err)
	}
	if !near(real(L1), 0.8252214, published7) || imag(L1) != 0 {
		t.Errorf("E e^{−τ} = %v, want 0.8252214", L1)
	}
	// The closed form at complex s, where the transform is evaluated on
	// the Talbot contours.
	for _, s := range []complex128{1, complex(-3, 5), complex(20, 40), complex(-200, 30)} {
		k := cmplx.Sqrt(2 * s)
		want := cmplx.Cosh(k*(0.3-0.5)) / cmplx.Cosh(k/2)
		got, err := x.law.tr.at(s)
		if err != nil {
			t.Fatal(err)
		}
		if cmplx.Abs(got-want) > 1e-12*math.Max(1, cmplx.Abs(want)) {
			t.Errorf("L(%v) = %v, want %v", s, got, want)
		}
	}
}

// exactIntervalMoments returns the polynomial coefficients of T_0 … T_nmax
// on (0, 1) for a T_n″ = −n T_{n−1}, T_0 = 1, T_n(0) = T_n(1) = 0.
func exactIntervalMoments(nmax int, a float64) [][]float64 {
	T := [][]float64{{1}}
	for n := 1; n <= nmax; n++ {
		prev := T[n-1]
		p := make([]float64, len(prev)+2)
		for k, c := range prev { // integrate −n c x^k / a twice
			p[k+2] = -float64(n) * c / a / float64((k+1)*(k+2))
		}
		p[1] = -polyAt(p, 1) // T_n(1) = 0; T_n(0) = p[0] = 0
		T = append(T, p)
	}
	return T
}

func polyAt(p []float64, x float64) float64 {
	var s float64
	for k := len(p) - 1; k >= 0; k-- {
		s = s*x + p[k]
	}
	return s
}

// TestExitSurvivalB2: survival of Brownian motion from the centre of
// (−1, 1): docs/references.md B2 (two series agreeing to 15 digits; 7 digits
// quoted), and the eigen series itself to the inversion accuracy.
func TestExitSurvivalB2(t *testing.T) {
	net := interval(t, 2, 0.5, 0, 0)
	times := []float64{0.25, 0.5, 1, 2}
	x, err := ExitStatistics(net, Point{Node: -1, Edge: 0, X: 1}, &ExitSettings{Times: times})
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{0.9089995, 0.6854458, 0.3707774, 0.1079770}
	var worst float64
	for i, sp := range x.Survival {
		if sp.T != times[i] || !near(sp.P, want[i], published7) {
			t.Errorf("P(τ > %g) = %.9f, want %.7f", sp.T, sp.P, want[i])
		}
		ser := seriesB2(sp.T, 1)
		worst = math.Max(worst, math.Abs(sp.P-ser))
		if !near(sp.P, ser, inversion) {
			t.Errorf("P(τ > %g) = %.15g, eigen series %.15g", sp.T, sp.P, ser)
		}
	}
	t.Logf("B2 inversion error: max %.2g over t = %v", worst, times)
	// E τ = r² = 1, Var τ = 2r⁴/3 (docs/references.md B2).
	if !near(x.Mean, 1, exitRoundoff) || !near(x.SD*x.SD, 2.0/3, cauchyMoments) {
		t.Errorf("mean %.12g, var %.12g; want 1, 2/3", x.Mean, x.SD*x.SD)
	}
	// Quantiles invert the survival function.
	for _, q := range x.Quantiles {
		if s := seriesB2(q.T, 1); !near(1-s, q.P, inversion) {
			t.Errorf("quantile %g at T = %.10g where P(τ ≤ T) = %.10g", q.P, q.T, 1-s)
		}
	}
	// SurvivalAt agrees with the reported values and is 1 at t ≤ 0.
	if survivalAt(t, x, 0.5) != x.Survival[1].P || survivalAt(t, x, 0) != 1 || survivalAt(t, x, -1) != 1 {
		t.Errorf("SurvivalAt: %g at 0.5 (want %g), %g at 0", survivalAt(t, x, 0.5), x.Survival[1].P, survivalAt(t, x, 0))
	}
}

// seriesB2 is P(τ > t) for Brownian motion from the centre of (−r, r):
// (4/π) Σ (−1)^n/(2n+1) exp(−(2n+1)²π²t/(8r²)) (docs/references.md B2).
func seriesB2(t, r float64) float64 {
	var s float64
	for n := 0; n < 100000; n++ {
		k := float64(2*n + 1)
		term := math.Exp(-k*k*math.Pi*math.Pi*t/(8*r*r)) / k
		if n%2 == 1 {
			term = -term
		}
		s += term
		if term == 0 || math.Abs(term) < 1e-18 {
			break
		}
	}
	return 4 / math.Pi * s
}

// TestExitBiasedStar: Walsh Brownian motion on the star S1 of docs/references.md
// (arms L = (1, 2, 3), centre weights α = p = (0.5, 0.3, 0.2), a = ½, so the
// walker leaves the centre along arm i with probability p_i; docs/walkers.md §2).
// Hit probabilities 30/43, 9/43, 4/43 and E τ = 102/43 are S1 [D and MC];
// from x = 0.5 on arm 1: E τ = 1.4360465, P(end 1) = 0.8488372. The survival
// function is checked against the eigen series derived below.
func TestExitBiasedStar(t *testing.T) {
	L := []float64{1, 2, 3}
	p := []float64{0.5, 0.3, 0.2}
	net := star(t, free, L, p, 0.5)
	times := []float64{0.25, 0.5, 1, 2, 5, 10}
	x, err := ExitStatistics(net, Point{Node: 0, Edge: -1}, &ExitSettings{Times: times, Moments: 3})
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []float64{30.0 / 43, 9.0 / 43, 4.0 / 43} {
		if !near(x.Hit[i+1], want, exitRoundoff) {
			t.Errorf("P(end%d) = %.15g, want %.15g", i, x.Hit[i+1], want)
		}
	}
	if !math.IsNaN(x.Hit[0]) {
		t.Errorf("Hit at the balance node = %g, want NaN", x.Hit[0])
	}
	if !near(x.Mean, 102.0/43, exitRoundoff) {
		t.Errorf("E τ = %.15g, want 102/43", x.Mean)
	}
	var occ float64
	for _, o := range x.Occupation {
		occ += o
	}
	if !near(occ, x.Mean, exitRoundoff) {
		t.Errorf("Σ occupation %.15g != mean %.15g (no node capacity)", occ, x.Mean)
	}

	ser := starSeries(L, p)
	var worst float64
	for _, sp := range x.Survival {
		want := ser.survival(sp.T)
		worst = math.Max(worst, math.Abs(sp.P-want))
		if !near(sp.P, want, inversion) {
			t.Errorf("P(τ > %g) = %.12g, eigen series %.12g", sp.T, sp.P, want)
		}
	}
	t.Logf("S1 inversion error: max %.2g over t = %v (%d eigenvalues)", worst, times, len(ser.lambda))
	// Moments from the eigen series: E τⁿ = n! Σ A_k/λ_kⁿ. The series for
	// n = 1 converges like κ_max^{−2} (it was checked against 102/43 above);
	// for n ≥ 2 the tail beyond κ_max = 200 is below 1e−9 relative.
	for n := 2; n <= 3; n++ {
		want := ser.moment(n)
		if !near(x.Moments[n-1], want, cauchyMoments*want) {
			t.Errorf("E τ^%d = %.12g, eigen series %.12g", n, x.Moments[n-1], want)
		}
	}

	// From x = 0.5 on arm 1 (docs/references.md S1).
	y, err := ExitStatistics(net, Point{Node: -1, Edge: 0, X: 0.5}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !near(y.Mean, 1.4360465, published7) || !near(y.Hit[1], 0.8488372, published7) {
		t.Errorf("from arm0@0.5: E τ = %.9f (want 1.4360465), P(end0) = %.9f (want 0.8488372)", y.Mean, y.Hit[1])
	}
}

// TestExitEqualArms: docs/references.md S1 (i): with equal arms the distance from
// the centre is reflected Brownian motion whatever the weights, so τ from
// the centre has the law of B2: P(τ > 1) = 0.3707774 for L = 1.
func TestExitEqualArms(t *testing.T) {
	for _, w := range [][]float64{{0.5, 0.3, 0.2}, {1, 1, 1, 1}, {0.9, 0.1}} {
		L := make([]float64, len(w))
		for i := range L {
			L[i] = 1
		}
		x, err := ExitStatistics(star(t, free, L, w, 0.5), Point{Node: 0, Edge: -1}, &ExitSettings{Times: []float64{1}})
		if err != nil {
			t.Fatal(err)
		}
		if !near(x.Survival[0].P, 0.3707774, published7) || !near(x.Survival[0].P, seriesB2(1, 1), inversion) {
			t.Errorf("weights %v: P(τ > 1) = %.12g, want %.12g", w, x.Survival[0].P, seriesB2(1, 1))
		}
		for i, wi := range w { // the exit arm is distributed as the weights
			var sum float64
			for _, v := range w {
				sum += v
			}
			if !near(x.Hit[i+1], wi/sum, exitRoundoff) {
				t.Errorf("weights %v: P(arm %d) = %g", w, i, x.Hit[i+1])
			}
		}
	}
}

// starEigen is the eigen expansion P(τ > t) = Σ A_k e^{−λ_k t} from the centre
// of a star with arms L_i, centre weights p_i, generator ½d², absorbing ends.
//
// Derivation: on arm i, ½u” = s u, u(L_i) = 1, u(0) = U gives with k = √(2s)
// u_i'(0) = k(1 − U cosh kL_i)/sinh kL_i, and Σ p_i u_i'(0) = 0 gives
//
//	L(s) = E e^{−sτ} = Σ p_i csch(kL_i) / Σ p_i coth(kL_i) = G/F
//
// after multiplying by Π sinh(kL_j). At s = −κ²/2 (k = iκ), up to the common
// factor i^{n−1}: F(κ) = Σ p_i cos(κL_i) Π_{j≠i} sin(κL_j) (the multiplied-out
// secular function of docs/references.md trap 7) and G(κ) = Σ p_i Π_{j≠i} sin(κL_j).
// The poles of (1 − L(s))/s are at λ_k = κ_k²/2 with residues
// A_k = Res L / λ_k = −2 G(κ_k)/(κ_k F'(κ_k)). Roots where several sines vanish
// together are either double roots of F shared with G (no pole: no sign
// change, and not found) or simple roots shared with G (A_k = 0).
type starEigen struct{ lambda, A []float64 }

func starSeries(L, p []float64) starEigen {
	F := func(k float64) (f, df, g float64) {
		for i := range L {
			pr, dpr := 1.0, 0.0
			for j := range L {
				if j == i {
					continue
				}
				s, c := math.Sin(k*L[j]), math.Cos(k*L[j])
				dpr = dpr*s + pr*L[j]*c
				pr *= s
			}
			ci, si := math.Cos(k*L[i]), math.Sin(k*L[i])
			f += p[i] * ci * pr
			df += p[i] * (-L[i]*si*pr + ci*dpr)
			g += p[i] * pr
		}
		return f, df, g
	}
	var out starEigen
	const kmax, dk = 200.0, 1e-3
	prev, _, _ := F(dk)
	for k := 2 * dk; k < kmax; k += dk {
		cur, _, _ := F(k)
		if prev*cur < 0 {
			lo, hi := k-dk, k
			for it := 0; it < 100; it++ { // bisection to full precision
				mid := 0.5 * (lo + hi)
				fm, _, _ := F(mid)
				if fm*prev > 0 {
					lo = mid
				} else {
					hi = mid
				}
			}
			kk := 0.5 * (lo + hi)
			_, df, g := F(kk)
			out.lambda = append(out.lambda, kk*kk/2)
			out.A = append(out.A, -2*g/(kk*df))
		}
		prev = cur
	}
	return out
}

func (se starEigen) survival(t float64) float64 {
	var s float64
	for k, l := range se.lambda {
		s += se.A[k] * math.Exp(-l*t)
	}
	return s
}

func (se starEigen) moment(n int) float64 {
	var s float64
	fact := 1.0
	for k := 2; k <= n; k++ {
		fact *= float64(k)
	}
	for k, l := range se.lambda {
		s += se.A[k] / math.Pow(l, float64(n))
	}
	return fact * s
}

// TestExitForkContract: the contract case testdata fork.toml (two unit
// edges, a = 1, centre weights 2 (to the left end) and 1, the right end
// paying 1) built in code. Hit right = (1/1)/(2/1 + 1/1) = 1/3 and
// E τ = Σα L/(2a)/Σ α/L = 0.5 (docs/exit-statistics.md §5); equal arms with a = 1 run
// twice as fast as Brownian motion, so P(τ > t) is B2 at 2t:
// P(τ > 0.25) = 0.6854458, P(τ > 0.5) = 0.3707774 (docs/references.md B2, trap 4).
func TestExitForkContract(t *testing.T) {
	net := mustNet(t, []Node{{ID: "fork", Law: free}, {ID: "left", Law: fixedAt(0)}, {ID: "right", Law: fixedAt(1)}},
		[]edgeSpec{
			{Edge{ID: "l", Length: 1, A: 1, Weight: [2]float64{2, 1}}, "fork", "left"},
			{Edge{ID: "r", Length: 1, A: 1, Weight: [2]float64{1, 1}}, "fork", "right"},
		})
	x, err := ExitStatistics(net, Point{Node: 0, Edge: -1}, &ExitSettings{Times: []float64{0.25, 0.5}})
	if err != nil {
		t.Fatal(err)
	}
	const contract = 1e-5 // the contract's tolerance
	if !near(x.Hit[2], 1.0/3, contract) || !near(x.Mean, 0.5, contract) ||
		!near(x.Survival[0].P, 0.6854458, contract) || !near(x.Survival[1].P, 0.3707774, contract) {
		t.Errorf("fork: hit right %.8f, mean %.8f, P(τ>0.25) %.8f, P(τ>0.5) %.8f", x.Hit[2], x.Mean, x.Survival[0].P, x.Survival[1].P)
	}
}

// TestExitCapacityLeak: a star with centre capacity ρ_v and leak β.
// docs/exit-statistics.md §5: E τ = (ρ_v + Σ α L/(2a)) / Σ α/L with no leak. With a leak β
// and zero capacity (derived here): the killed fraction from the centre
// solves the steady problem with γ = β, g = 0; u is linear on each arm,
// u_i = U(1 − x/L_i), and the balance Σ α_i U/L_i + βU = β gives
// Killed = β/(β + Σ α_i/L_i) and P(end j) = (α_j/L_j)/(β + Σ α_i/L_i).
// With both, the mean is (ρ_v + Σ α L/(2a))/(β + Σ α/L) by the same
// computation with γ = ρ_v and the quadratic arm profiles.
func TestExitCapacityLeak(t *testing.T) {
	L := []float64{1, 2, 0.5}
	w := []float64{1.5, 0.7, 0.4}
	a := 0.8
	var sumAL, sumLA float64
	for i := range L {
		sumAL += w[i] / L[i]
		sumLA += w[i] * L[i] / (2 * a)
	}
	for _, c := range []struct{ rhoV, beta float64 }{{0.9, 0}, {0, 0.6}, {1.3, 2.1}} {
		law := vertex.Law{Kind: vertex.Balance, Capacity: c.rhoV, Leak: c.beta}
		x, err := ExitStatistics(star(t, law, L, w, a), Point{Node: 0, Edge: -1}, &ExitSettings{Quantiles: []float64{}})
		if err != nil {
			t.Fatal(err)
		}
		den := c.beta + sumAL
		if want := (c.rhoV + sumLA) / den; !near(x.Mean, want, exitRoundoff*want) {
			t.Errorf("ρ_v=%g β=%g: E τ = %.15g, want %.15g", c.rhoV, c.beta, x.Mean, want)
		}
		if want := c.beta / den; !near(x.Killed, want, exitRoundoff) {
			t.Errorf("ρ_v=%g β=%g: killed %.15g, want %.15g", c.rhoV, c.beta, x.Killed, want)
		}
		for j := range L {
			if want := w[j] / L[j] / den; !near(x.Hit[j+1], want, exitRoundoff) {
				t.Errorf("ρ_v=%g β=%g: P(end%d) = %.15g, want %.15g", c.rhoV, c.beta, j, x.Hit[j+1], want)
			}
		}
		// The transform at complex s against the closed form (derived): on
		// arm i, a u'' = s u with u(L_i) = 1, u(0) = U gives, with
		// k_i = √(s/a), −α_i u_i'(0) = α_i k_i (U cosh k_iL_i − 1)/sinh k_iL_i;
		// the balance Σ J + (β + sρ_v) U = β (killing at the leak pays 1)
		// gives U = (β + Σ α_i k_i csch k_iL_i)/(β + sρ_v + Σ α_i k_i coth k_iL_i).
		for _, s := range []complex128{0.7, complex(2, 3), complex(-1.5, 0.8), complex(-40, 60)} {
			num, den := complex(c.beta, 0), complex(c.beta, 0)+s*complex(c.rhoV, 0)
			for i := range L {
				k := cmplx.Sqrt(s / complex(a, 0))
				z := k * complex(L[i], 0)
				num += complex(w[i], 0) * k / cmplx.Sinh(z)
				den += complex(w[i], 0) * k * cmplx.Cosh(z) / cmplx.Sinh(z)
			}
			got, err := x.law.tr.at(s)
			if err != nil {
				t.Fatal(err)
			}
			if want := num / den; cmplx.Abs(got-want) > 1e-12*math.Max(1, cmplx.Abs(want)) {
				t.Errorf("ρ_v=%g β=%g: L(%v) = %v, want %v", c.rhoV, c.beta, s, got, want)
			}
		}
	}
}

// TestExitDecayDrift: an interval with decay c and drift b (derived): with
// μ = b/(2a), κ = √(μ² + c/a), the exit probabilities solve a u” + b u' − c u
// = 0, i.e. u = e^{−μx}(A cosh κx + B sinh κx):
//
//	P(hi) = e^{μ(L−x)} sinh κx / sinh κL,   P(lo) = e^{−μx} sinh κ(L−x)/sinh κL,
//
// and since killing happens at the constant rate c/ρ, P(killed) = (c/ρ) E τ.
// Without decay P(hi) = (1 − e^{−2μx})/(1 − e^{−2μL}) (scale function) and
// E τ = (ρ/b)[L P(hi) − x].
func TestExitDecayDrift(t *testing.T) {
	const L, x0, a, rho = 1.5, 0.4, 0.7, 2.0
	for _, c := range []struct{ b, c float64 }{{0, 0.8}, {1.1, 0}, {-2.3, 0}, {1.7, 0.5}, {-0.6, 3}} {
		net := interval(t, L, a, c.b, c.c)
		net.Edges[0].Rho = rho
		x, err := ExitStatistics(net, Point{Node: -1, Edge: 0, X: x0}, &ExitSettings{Quantiles: []float64{0.5}})
		if err != nil {
			t.Fatal(err)
		}
		mu := c.b / (2 * a)
		k := math.Sqrt(mu*mu + c.c/a)
		hi := math.Exp(mu*(L-x0)) * math.Sinh(k*x0) / math.Sinh(k*L)
		lo := math.Exp(-mu*x0) * math.Sinh(k*(L-x0)) / math.Sinh(k*L)
		if !near(x.Hit[1], hi, exitRoundoff) || !near(x.Hit[0], lo, exitRoundoff) {
			t.Errorf("b=%g c=%g: hits (%.15g, %.15g), want (%.15g, %.15g)", c.b, c.c, x.Hit[0], x.Hit[1], lo, hi)
		}
		if c.c > 0 {
			if want := c.c / rho * x.Mean; !near(x.Killed, want, exitRoundoff) {
				t.Errorf("b=%g c=%g: killed %.15g, (c/ρ)E τ = %.15g", c.b, c.c, x.Killed, want)
			}
		} else if want := rho / c.b * (L*hi - x0); !near(x.Mean, want, exitRoundoff) {
			t.Errorf("b=%g: E τ = %.15g, want %.15g", c.b, x.Mean, want)
		}
		// The median solves S(T) = ½ of the inverted survival function.
		if q := x.Quantiles[0]; !near(survivalAt(t, x, q.T), 0.5, inversion) {
			t.Errorf("b=%g c=%g: S(median %g) = %.12g", c.b, c.c, q.T, survivalAt(t, x, q.T))
		}
	}
}

// TestExitRCLine: the step response of a uniform distributed RC line with
// an open far end (docs/references.md R2). Mapping (derived): the line voltage
// obeys C v_t = v_xx/R per unit length with v = 1 at the driven end x = 0
// and v_x = 0 at the open end. 1 − v is the survival probability of a
// walker with generator (1/RC) d²/dx² that is absorbed at x = 0 and
// reflected at the open end, so the open-end voltage v(L, t) = P(τ ≤ t) for
// a walker started at the open end: an edge with a = 1/R, ρ = C, a fixed node
// at 0 and a free node (Kirchhoff law with one edge: reflection) at L. The
// 50 %, 63.2 %, 90 % and 10 % times are quantiles of τ, the Elmore delay
// RC/2 is E τ. R = C = 1 here, values to 7 digits [D] in R2.
func TestExitRCLine(t *testing.T) {
	net := mustNet(t, []Node{{ID: "driver", Law: fixedAt(1)}, {ID: "open", Law: free}},
		[]edgeSpec{{Edge{ID: "line", Length: 1, A: 1, Rho: 1}, "driver", "open"}})
	ps := []float64{0.5, 1 - math.Exp(-1), 0.9, 0.1}
	x, err := ExitStatistics(net, Point{Node: 1, Edge: -1}, &ExitSettings{Quantiles: ps})
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{0.3787478, 0.5031806, 1.0311050, 0.1301589}
	for i, q := range x.Quantiles {
		if !near(q.T, want[i], published7) {
			t.Errorf("v(L,t) = %.4f at t = %.9f RC, want %.7f RC", q.P, q.T, want[i])
		}
	}
	if !near(x.Mean, 0.5, exitRoundoff) {
		t.Errorf("Elmore delay %.15g, want RC/2", x.Mean)
	}
	// 10→90 % rise time 0.9009461 RC.
	if d := x.Quantiles[2].T - x.Quantiles[3].T; !near(d, 0.9009461, 2*published7) {
		t.Errorf("10-90%% time %.9f RC, want 0.9009461", d)
	}
}

// TestExitOccupation: Brownian motion on (0, 1) cut at m = 0.6 into two
// edges by a free node. The expected time spent in (l, r) from x is
// ∫_l^r G(x, y) dy with G(x, y) = 2 min(x, y)(1 − max(x, y)) (the interval's
// Green's function for ½d², docs/walkers.md §4). Starts on both sides of the cut.
func TestExitOccupation(t *testing.T) {
	net := mustNet(t, []Node{{ID: "lo", Law: fixedAt(0)}, {ID: "cut", Law: free}, {ID: "hi", Law: fixedAt(0)}},
		[]edgeSpec{
			{Edge{ID: "left", Length: 0.6, A: 0.5}, "lo", "cut"},
			{Edge{ID: "right", Length: 0.4, A: 0.5}, "cut", "hi"},
		})
	// ∫_l^r G(x,y) dy in closed form.
	occ := func(x, l, r float64) float64 {
		// y < x: 2y(1−x); y > x: 2x(1−y).
		var s float64
		if a, b := l, math.Min(r, x); b > a {
			s += (1 - x) * (b*b - a*a)
		}
		if a, b := math.Max(l, x), r; b > a {
			s += x * (2*(b-a) - (b*b - a*a))
		}
		return s
	}
	for _, st := range []struct {
		p Point
		x float64
	}{{Point{Node: -1, Edge: 0, X: 0.25}, 0.25}, {Point{Node: 1, Edge: -1}, 0.6}, {Point{Node: -1, Edge: 1, X: 0.1}, 0.7}} {
		x, err := ExitStatistics(net, st.p, &ExitSettings{Quantiles: []float64{}})
		if err != nil {
			t.Fatal(err)
		}
		if l, r := x.Occupation[0], x.Occupation[1]; !near(l, occ(st.x, 0, 0.6), exitRoundoff) || !near(r, occ(st.x, 0.6, 1), exitRoundoff) {
			t.Errorf("from %g: occupations (%.15g, %.15g), want (%.15g, %.15g)", st.x, l, r, occ(st.x, 0, 0.6), occ(st.x, 0.6, 1))
		}
	}
}

// TestExitStartAtFixed: a walker that starts on an absorbing node dies at
// once.
func TestExitStartAtFixed(t *testing.T) {
	x, err := ExitStatistics(interval(t, 1, 0.5, 0, 0), Point{Node: 1, Edge: -1}, &ExitSettings{Times: []float64{0, 1}})
	if err != nil {
		t.Fatal(err)
	}
	if x.Hit[1] != 1 || x.Hit[0] != 0 || x.Mean != 0 || x.Survival[1].P != 0 || x.Quantiles[2].T != 0 {
		t.Errorf("start at a fixed node: %+v", x)
	}
}

func TestExitErrors(t *testing.T) {
	iv := interval(t, 1, 0.5, 0, 0)
	closed := mustNet(t, []Node{{ID: "a", Law: free}, {ID: "b", Law: free}},
		[]edgeSpec{{Edge{ID: "e", Length: 1, A: 1}, "a", "b"}})
	varying := interval(t, 1, 0.5, 0, 0)
	varying.Edges[0].Profile = &Profile{A: func(x float64) float64 { return 1 + x }}
	for _, c := range []struct {
		name string
		net  *Network
		p    Point
		set  *ExitSettings
	}{
		{"off edge", iv, Point{Node: -1, Edge: 0, X: 2}, nil},
		{"no edge", iv, Point{Node: -1, Edge: 3, X: 0.5}, nil},
		{"no node", iv, Point{Node: 7, Edge: -1}, nil},
		{"negative time", iv, Point{Node: -1, Edge: 0, X: 0.5}, &ExitSettings{Times: []float64{-1}}},
		{"quantile 1", iv, Point{Node: -1, Edge: 0, X: 0.5}, &ExitSettings{Quantiles: []float64{1}}},
		{"never dies", closed, Point{Node: 0, Edge: -1}, nil},
		{"varying with method exact", varying, Point{Node: -1, Edge: 0, X: 0.5}, &ExitSettings{Method: MethodExact}},
		{"negative cells", varying, Point{Node: -1, Edge: 0, X: 0.5}, &ExitSettings{Cells: -1}},
	} {
		if _, err := ExitStatistics(c.net, c.p, c.set); err == nil {
			t.Errorf("%s: no error", c.name)
		} else {
			t.Logf("%s: %v", c.name, err)
		}
	}
	var xe *ExitError
	if _, err := ExitStatistics(closed, Point{Node: 0, Edge: -1}, nil); !errors.As(err, &xe) {
		t.Errorf("never dies: error %v is not an *ExitError", err)
	}
}

// randomTree returns a random tree of n edges: node i+1 hangs from a
// uniformly chosen earlier node; leaves and the root absorb; lengths,
// diffusivities, capacities and weights vary. A tenth of the edges decay.
func randomTree(tb testing.TB, n int, rnd *rand.Rand) *Network {
	parent := make([]int, n+1)
	deg := make([]int, n+1)
	for i := 1; i <= n; i++ {
		parent[i] = rnd.IntN(i)
		deg[i]++
		deg[parent[i]]++
	}
	var net Network
	for v := 0; v <= n; v++ {
		law := free
		if deg[v] == 1 || v == 0 {
			law = fixedAt(0)
		}
		if _, err := net.AddNode(Node{ID: "n" + strconv.Itoa(v), Law: law}); err != nil {
			tb.Fatal(err)
		}
	}
	for i := 1; i <= n; i++ {
		e := Edge{ID: "e" + strconv.Itoa(i), From: parent[i], To: i,
			Length: 0.2 + rnd.Float64(), A: 0.5 + rnd.Float64(), Rho: 0.5 + rnd.Float64(),
			Weight: [2]float64{0.5 + rnd.Float64(), 0.5 + rnd.Float64()}}
		if rnd.IntN(10) == 0 {
			e.C = rnd.Float64()
		}
		if _, err := net.AddEdge(e); err != nil {
			tb.Fatal(err)
		}
	}
	return &net
}

// TestExitRandomTreeConsistency: on a random tree the statistics must agree
// among themselves: Σ hits + killed = 1 with killed also solved directly, the
// occupations sum to the mean (no node capacity), the first Cauchy moment
// equals the mean (checked inside: no note), S is non-increasing, and ∫S
// equals the mean.
func TestExitRandomTreeConsistency(t *testing.T) {
	net := randomTree(t, 60, rand.New(rand.NewPCG(7, 1)))
	start := Point{Node: -1, Edge: 30, X: 0.1}
	x, err := ExitStatistics(net, start, &ExitSettings{Times: []float64{0.05, 0.2, 1, 3}})
	if err != nil {
		t.Fatal(err)
	}
	if len(x.Notes) > 0 {
		t.Errorf("notes: %v", x.Notes)
	}
	var hits, occ float64
	for v, h := range x.Hit {
		if net.Nodes[v].Law.Kind == vertex.Fixed {
			hits += h
		}
	}
	for _, o := range x.Occupation {
		occ += o
	}
	// Killed directly: the lifetime transform at s = 0 minus the absorbed
	// part is the killed part; here from the steady problem f = c, γ = β.
	sys, err := newExitSystem(net, start)
	if err != nil {
		t.Fatal(err)
	}
	ad, err := sys.steadyAdjoint()
	if err != nil {
		t.Fatal(err)
	}
	var killed float64
	for k := range sys.el {
		killed += sys.el[k].c * ad.load(sys, &sys.el[k])
	}
	if !near(hits+killed, 1, exitRoundoff) || !near(x.Killed, killed, exitRoundoff) {
		t.Errorf("Σ hits %.15g + killed %.15g != 1 (reported killed %.15g)", hits, killed, x.Killed)
	}
	if !near(occ, x.Mean, exitRoundoff*x.Mean) {
		t.Errorf("Σ occupation %.15g != mean %.15g", occ, x.Mean)
	}
	for i := 1; i < len(x.Survival); i++ {
		if x.Survival[i].P > x.Survival[i-1].P {
			t.Errorf("survival increases: %v", x.Survival)
		}
	}
	for i := 1; i < len(x.Quantiles); i++ {
		if x.Quantiles[i].T <= x.Quantiles[i-1].T {
			t.Errorf("quantiles not increasing: %v", x.Quantiles)
		}
	}
}

// BenchmarkExitStatistics times the full statistics (5 quantiles, 4 times,
// 2 moments) on random trees against one steady solve of the same network
// (Solve: classification, assembly, ordering, factorisation, solve), one
// complex transform value, and the grid path (64 cells per edge).
func BenchmarkExitStatistics(b *testing.B) {
	for _, n := range []int{200, 2000} {
		net := randomTree(b, n, rand.New(rand.NewPCG(1, uint64(n))))
		start := Point{Node: n / 2, Edge: -1}
		if net.Nodes[start.Node].Law.Kind == vertex.Fixed {
			start = Point{Node: -1, Edge: n / 2, X: 0.1}
		}
		set := &ExitSettings{Times: []float64{0.1, 0.5, 1, 2}}
		b.Run("exit/edges="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := ExitStatistics(net, start, set); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run("solve/edges="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Solve(net, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run("transform/edges="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			sys, err := newExitSystem(net, start)
			if err != nil {
				b.Fatal(err)
			}
			tr := newTransformer(sys)
			for b.Loop() {
				if _, err := tr.at(complex(3, 4)); err != nil {
					b.Fatal(err)
				}
			}
		})
		if n > 200 {
			continue
		}
		gset := &ExitSettings{Method: MethodGrid, Times: []float64{0.1, 0.5, 1, 2}}
		b.Run("grid-exit/edges="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := ExitStatistics(net, start, gset); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run("grid-solve/edges="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Solve(net, &Settings{Method: MethodGrid}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// TestExitElement compares the fast complex element with exactElement (the
// package's reference element, itself tested against a direct solution) at
// the kinds of shift the exit statistics use: Cauchy circles around 0,
// Talbot nodes far in the left half plane, and real decays, with and
// without drift. The two share formulas only for |κL| ≥ 1 with drift; for
// b = 0 and for |κL| < 1 they are independent evaluations.
func TestExitElement(t *testing.T) {
	rnd := rand.New(rand.NewPCG(3, 4))
	// roundoff: both maps are O(1/L + |κ|) and computed to about 1e−15
	// relative; the worst case, e^{±μL} factors of size up to e^5, loses
	// a few digits more.
	const tol = 1e-11
	var worst float64
	for it := 0; it < 4000; it++ {
		a := 0.1 + 2*rnd.Float64()
		L := 0.05 + 3*rnd.Float64()
		var b float64
		if it%2 == 1 {
			b = (2*rnd.Float64() - 1) * 3 * a / L
		}
		var s complex128
		switch it % 5 {
		case 0: // small circle
			s = cmplx.Rect(1e-4*rnd.Float64(), 2*math.Pi*rnd.Float64())
		case 1: // moderate
			s = complex(4*rnd.Float64()-2, 4*rnd.Float64()-2)
		case 2: // Talbot-like: far left, moderate imaginary part
			s = complex(-300*rnd.Float64(), 100*rnd.Float64())
		case 3: // large
			s = complex(1000*rnd.Float64(), 3000*rnd.Float64())
		default:
			s = 0
		}
		c := complex(rnd.Float64(), 0) + s*complex(0.5+rnd.Float64(), 0)
		f := complex(rnd.Float64(), rnd.Float64())
		d1, g1 := exitElement(a, b, c, f, L)
		d2, g2 := exactElement(a, b, c, f, L)
		scale := 1/L + cmplx.Abs(cmplx.Sqrt(c/complex(a, 0))) + math.Abs(b/a)
		for i := range 2 {
			for j := range 2 {
				e := cmplx.Abs(d1[i][j]-d2[i][j]) / (scale * math.Max(1, cmplx.Abs(d2[i][j])*L))
				worst = math.Max(worst, e)
				if e > tol {
					t.Fatalf("a=%g b=%g c=%v L=%g: d[%d][%d] = %v, exactElement %v", a, b, c, L, i, j, d1[i][j], d2[i][j])
				}
			}
			gs := cmplx.Abs(f) * L / a
			e := cmplx.Abs(g1[i]-g2[i]) / math.Max(gs, cmplx.Abs(g2[i]))
			worst = math.Max(worst, e)
			if e > tol {
				t.Fatalf("a=%g b=%g c=%v f=%v L=%g: g[%d] = %v, exactElement %v", a, b, c, f, L, i, g1[i], g2[i])
			}
		}
	}
	t.Logf("worst relative difference %.2g", worst)
}

// TestExitDriftCycle: a ring of three edges with strong drift (Péclet
// bL/a = 4 and 16) around it and one absorbing node: the walker is not
// reversible, the decay rates of the problem are complex (rotation modes
// about −2 ± 17i for b = 8), and the Talbot contours must still enclose
// them. Two independent checks:
//
//   - the density of τ against the Bromwich integral on the vertical line
//     Re s = σ to the right of every singularity,
//     g(t) = (e^{σt}/π) ∫_0^∞ Re[L(σ + iω) e^{iωt}] dω, by the trapezoidal rule
//     (step 2π/T aliases g(t + T)e^{−σT}, negligible for T = 200, σ = ½;
//     truncated where |L| < 1e−16); no contour deformation is involved;
//   - ∫S dt = E τ (Simpson's rule on [0, 200], S(200) ≈ 1e−21).
//
// The Gaver–Stehfest formula is no check here: it cannot follow the
// oscillating modes (it is off by 3e−3 at t = 1 for b = 8).
func TestExitDriftCycle(t *testing.T) {
	for _, b := range []float64{2, 8} {
		net := mustNet(t, []Node{{ID: "p", Law: free}, {ID: "q", Law: vertex.Law{Kind: vertex.Balance, Capacity: 0.3}}, {ID: "r", Law: free}, {ID: "out", Law: fixedAt(0)}},
			[]edgeSpec{
				{Edge{ID: "pq", Length: 1, A: 0.5, B: b}, "p", "q"},
				{Edge{ID: "qr", Length: 1, A: 0.5, B: b}, "q", "r"},
				{Edge{ID: "rp", Length: 1, A: 0.5, B: b}, "r", "p"},
				{Edge{ID: "drain", Length: 0.5, A: 0.5, C: 0.2}, "p", "out"},
			})
		x, err := ExitStatistics(net, Point{Node: -1, Edge: 1, X: 0.5}, &ExitSettings{Times: []float64{0.1, 0.5, 1, 3}})
		if err != nil {
			t.Fatal(err)
		}
		if len(x.Notes) > 0 {
			t.Errorf("b=%g: notes %v", b, x.Notes)
		}
		if !x.law.check {
			t.Errorf("b=%g: a drifting ring not recognised as non-reversible", b)
		}
		ts := []float64{0.3, 0.5, 1, 3}
		ref := bromwichDensity(t, x.law.tr.at, ts, 0.5, 200)
		// The Bromwich sum is accurate to about 1e−9 here (trapezoidal
		// rule on an analytic integrand, truncation at |L| < 1e−16); the
		// window contours to 1e−11 of max|S|.
		const bromwich = 1e-8
		for i, tt := range ts {
			_, dens, err := x.law.survival(tt)
			if err != nil {
				t.Fatal(err)
			}
			if !near(dens, ref[i], bromwich) {
				t.Errorf("b=%g: density at %g: Talbot %.12g, Bromwich %.12g", b, tt, dens, ref[i])
			}
		}
		const tmax, n = 200.0, 20000
		h := tmax / n
		integral := 1 + survivalAt(t, x, tmax)
		for i := 1; i < n; i++ {
			w := 2.0
			if i%2 == 1 {
				w = 4
			}
			integral += w * survivalAt(t, x, float64(i)*h)
		}
		integral *= h / 3
		// Simpson on a smooth S (S'(0) = 0 from an interior start): error
		// about h⁴·max|S⁗| ≈ 1e−8 here; the inversion adds 1e−11·200.
		const simpson = 1e-7
		if !near(integral, x.Mean, simpson*math.Max(1, x.Mean)) {
			t.Errorf("b=%g: ∫S dt = %.10g, E τ = %.10g", b, integral, x.Mean)
		}
	}
}

// bromwichDensity returns the inverse transform of L at the times ts by the
// trapezoidal rule on the line Re s = sigma with step 2π/period, summed
// until |L| stays below 1e−16 for a stretch of 1000 steps.
func bromwichDensity(t *testing.T, L func(complex128) (complex128, error), ts []float64, sigma, period float64) []float64 {
	dw := 2 * math.Pi / period
	sums := make([]float64, len(ts))
	small := 0
	for k := 0; k < 5_000_000 && small < 1000; k++ {
		w := float64(k) * dw
		v, err := L(complex(sigma, w))
		if err != nil {
			t.Fatal(err)
		}
		wt := 1.0
		if k == 0 {
			wt = 0.5
		}
		for i, tt := range ts {
			sums[i] += wt * real(v*cmplx.Exp(complex(0, w*tt)))
		}
		if cmplx.Abs(v) < 1e-16 {
			small++
		} else {
			small = 0
		}
	}
	for i, tt := range ts {
		sums[i] *= math.Exp(sigma*tt) * dw / math.Pi
	}
	return sums
}

// TestExitIsolatedNode: a node with no edges, capacity ρ_v and leak β holds
// the walker for an exponential time of rate β/ρ_v (the balance law
// ρ_v u' = −β u): S(t) = e^{−βt/ρ_v}, E τⁿ = n!(ρ_v/β)ⁿ, killed with
// probability 1. With no capacity the walker dies at once.
func TestExitIsolatedNode(t *testing.T) {
	const rhoV, beta = 2.0, 0.5
	net := mustNet(t, []Node{{ID: "cell", Law: vertex.Law{Kind: vertex.Balance, Capacity: rhoV, Leak: beta}}, {ID: "gone", Law: vertex.Law{Kind: vertex.Balance, Leak: 1}}}, nil)
	x, err := ExitStatistics(net, Point{Node: 0, Edge: -1}, &ExitSettings{Times: []float64{0.5, 4, 20}, Moments: 3, Quantiles: []float64{0.5}})
	if err != nil {
		t.Fatal(err)
	}
	m := rhoV / beta
	if !near(x.Killed, 1, exitRoundoff) || !near(x.Mean, m, exitRoundoff) || !near(x.Moments[2], 6*m*m*m, cauchyMoments*6*m*m*m) {
		t.Errorf("killed %g, moments %v; want 1, %g, %g, %g", x.Killed, x.Moments, m, 2*m*m, 6*m*m*m)
	}
	for _, sp := range x.Survival {
		if want := math.Exp(-sp.T / m); !near(sp.P, want, inversion) {
			t.Errorf("P(τ > %g) = %.12g, want %.12g", sp.T, sp.P, want)
		}
	}
	if q := x.Quantiles[0].T; !near(q, m*math.Ln2, 1e-8) {
		t.Errorf("median %.12g, want %.12g", q, m*math.Ln2)
	}
	y, err := ExitStatistics(net, Point{Node: 1, Edge: -1}, &ExitSettings{Times: []float64{1}})
	if err != nil {
		t.Fatal(err)
	}
	if y.Mean != 0 || y.Killed != 1 || y.Survival[0].P != 0 {
		t.Errorf("zero capacity: mean %g killed %g S(1) %g", y.Mean, y.Killed, y.Survival[0].P)
	}
}

// TestExitSelfLoop: a loop of length 2ℓ at the centre of a star is, by
// symmetry about its midpoint, two reflecting arms of length ℓ (derived: the
// solution is even about the midpoint, so its derivative vanishes there,
// which is the balance law of a free leaf). Both networks must give the same
// statistics, from the centre and from a point on the loop.
func TestExitSelfLoop(t *testing.T) {
	const ell = 0.7
	loop := mustNet(t, []Node{{ID: "o", Law: vertex.Law{Kind: vertex.Balance, Capacity: 0.2}}, {ID: "end", Law: fixedAt(0)}},
		[]edgeSpec{
			{Edge{ID: "arm", Length: 1.3, A: 0.5, Weight: [2]float64{0.8, 0}}, "o", "end"},
			{Edge{ID: "loop", Length: 2 * ell, A: 0.5, C: 0.3, Weight: [2]float64{0.6, 0.6}}, "o", "o"},
		})
	arms := mustNet(t, []Node{{ID: "o", Law: vertex.Law{Kind: vertex.Balance, Capacity: 0.2}}, {ID: "end", Law: fixedAt(0)}, {ID: "l1", Law: free}, {ID: "l2", Law: free}},
		[]edgeSpec{
			{Edge{ID: "arm", Length: 1.3, A: 0.5, Weight: [2]float64{0.8, 0}}, "o", "end"},
			{Edge{ID: "h1", Length: ell, A: 0.5, C: 0.3, Weight: [2]float64{0.6, 0}}, "o", "l1"},
			{Edge{ID: "h2", Length: ell, A: 0.5, C: 0.3, Weight: [2]float64{0.6, 0}}, "o", "l2"},
		})
	set := &ExitSettings{Times: []float64{0.3, 1, 4}, Moments: 3}
	for _, st := range []struct{ a, b Point }{
		{Point{Node: 0, Edge: -1}, Point{Node: 0, Edge: -1}},
		{Point{Node: -1, Edge: 1, X: 0.4}, Point{Node: -1, Edge: 1, X: 0.4}},
	} {
		x, err := ExitStatistics(loop, st.a, set)
		if err != nil {
			t.Fatal(err)
		}
		y, err := ExitStatistics(arms, st.b, set)
		if err != nil {
			t.Fatal(err)
		}
		if !near(x.Hit[1], y.Hit[1], exitRoundoff) || !near(x.Killed, y.Killed, exitRoundoff) ||
			!near(x.Occupation[1], y.Occupation[1]+y.Occupation[2], exitRoundoff) {
			t.Errorf("%v: hit %g/%g killed %g/%g loop occupation %g/%g", st.a, x.Hit[1], y.Hit[1], x.Killed, y.Killed, x.Occupation[1], y.Occupation[1]+y.Occupation[2])
		}
		for n := range x.Moments {
			if !near(x.Moments[n], y.Moments[n], cauchyMoments*y.Moments[n]) {
				t.Errorf("%v: E τ^%d %.12g vs %.12g", st.a, n+1, x.Moments[n], y.Moments[n])
			}
		}
		for i := range x.Survival {
			if !near(x.Survival[i].P, y.Survival[i].P, inversion) {
				t.Errorf("%v: S(%g) %.12g vs %.12g", st.a, x.Survival[i].T, x.Survival[i].P, y.Survival[i].P)
			}
		}
	}
}

// survivalAt is ExitStats.SurvivalAt for tests: an error fails the test.
func survivalAt(t *testing.T, x *ExitStats, at float64) float64 {
	t.Helper()
	s, err := x.SurvivalAt(at)
	if err != nil {
		t.Fatalf("SurvivalAt(%g): %v", at, err)
	}
	return s
}
