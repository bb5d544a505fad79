package graphpde

import (
	"context"
	"fmt"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// warmRod is the rod (0, 1), u_t = u_xx, both ends held at 1 from t = 0,
// initially 0.
func warmRod(t testing.TB) *Network {
	b := newNetBuilder(t)
	x, y := b.fixed("a", 1), b.fixed("b", 1)
	b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1})
	return b.net
}

// rodMid is u(1/2, t) of warmRod: 1 − (4/π) Σ_k (−1)^k e^{−(2k+1)²π² t}/(2k+1)
// (separation of variables; Carslaw & Jaeger, Conduction of Heat in Solids,
// 2nd ed. 1959, §3.3 — from memory).
func rodMid(t float64) float64 {
	s := 0.0
	for k := 0; k < 200; k++ {
		m := float64(2*k + 1)
		sg := 1.0
		if k%2 == 1 {
			sg = -1
		}
		s += sg * math.Exp(-m*m*math.Pi*math.Pi*t) / m
	}
	return 1 - 4/math.Pi*s
}

func TestEvolveWarmRod(t *testing.T) {
	mid := Point{Node: -1, Edge: 0, X: 0.5}
	for _, tol := range []float64{1e-3, 1e-4, 1e-5} {
		r, err := Evolve(warmRod(t), &EvolveSettings{Until: 0.1, Every: 0.02, Probes: []Point{mid}, Tol: tol, Cells: 200})
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i, tt := range r.Times {
			if tt == 0 {
				continue
			}
			worst = math.Max(worst, math.Abs(r.Probes[0][i]-rodMid(tt)))
		}
		t.Logf("tol %g: times %v, worst error %.2e, steps %d (+%d rejected), %d factorisations, max est %.2f", tol, r.Times, worst, r.Stats.Steps, r.Stats.Rejected, r.Stats.Factorizations, r.Stats.ErrEstimate)
	}
}

// sineRod is the rod (0, 1) with both ends held at 0 and u(x, 0) = sin(πx):
// u = e^{−π² t} sin(πx), smooth in time and space.
func sineRod(t testing.TB) *Network {
	b := newNetBuilder(t)
	x, y := b.fixed("a", 0), b.fixed("b", 0)
	b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1, Law: &EdgeLaw{Initial: &Coef{
		Fn:    func(x, _, _ float64) (float64, float64) { return math.Sin(math.Pi * x), 0 },
		UsesX: true, Src: "sin(pi*x)"}}})
	return b.net
}

// TestEvolveOrder measures the order of the time stepping on a fixed grid:
// the error at T = 0.1 against a run with a step 64 times smaller on the
// same grid (so the grid's own error cancels) must fall by 4 per halving of
// the step (second order; accept an observed order in [1.9, 2.1]).
func TestEvolveOrder(t *testing.T) {
	mid := Point{Node: -1, Edge: 0, X: 0.5}
	run := func(step float64) float64 {
		r, err := Evolve(sineRod(t), &EvolveSettings{Until: 0.1, Step: step, Probes: []Point{mid}, Cells: 50})
		if err != nil {
			t.Fatal(err)
		}
		return r.Probes[0][len(r.Times)-1]
	}
	ref := run(0.1 / 1280)
	var errs []float64
	for _, n := range []int{10, 20, 40} {
		errs = append(errs, math.Abs(run(0.1/float64(n))-ref))
	}
	for i := 1; i < len(errs); i++ {
		p := math.Log2(errs[i-1] / errs[i])
		t.Logf("steps %d→%d: error %.3e → %.3e, order %.3f", 10<<(i-1), 10<<i, errs[i-1], errs[i], p)
		if p < 1.9 || p > 2.1 {
			t.Errorf("observed order %.3f, want 2", p)
		}
	}
}

// TestEvolveAdaptive checks that the adaptive steps keep the error of the
// time stepping below the tolerance: against a fine fixed-step run on the
// same grid (the grid's own error cancels), the error at every output time
// must stay below 2·tol (scale 1 here; the step control aims at about tol
// in total — measured 0.43–0.52·tol — and 2 leaves room for the
// estimate's own error), and must shrink as tol does.
func TestEvolveAdaptive(t *testing.T) {
	mid := Point{Node: -1, Edge: 0, X: 0.5}
	set := func(tol, step float64) *EvolveSettings {
		return &EvolveSettings{Until: 0.2, Every: 0.02, Probes: []Point{mid}, Cells: 50, Tol: tol, Step: step}
	}
	ref, err := Evolve(sineRod(t), set(0, 0.2/4000))
	if err != nil {
		t.Fatal(err)
	}
	prev := math.Inf(1)
	for _, tol := range []float64{1e-3, 1e-4, 1e-5, 1e-6} {
		r, err := Evolve(sineRod(t), set(tol, 0))
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i := range r.Times {
			worst = math.Max(worst, math.Abs(r.Probes[0][i]-ref.Probes[0][i]))
		}
		t.Logf("tol %g: worst error %.2e (%.2f tol), %d steps, %d rejected, %d factorisations", tol, worst, worst/tol, r.Stats.Steps, r.Stats.Rejected, r.Stats.Factorizations)
		if worst > 2*tol {
			t.Errorf("tol %g: error %.2e", tol, worst)
		}
		if worst >= prev {
			t.Errorf("tol %g: error %.2e did not shrink (was %.2e)", tol, worst, prev)
		}
		prev = worst
	}
}

// rcLine is a distributed RC line of total resistance and capacitance 1
// (a = 1, ρ = 1, length 1, so RC = 1): the near end is driven by a unit step
// from t = 0, the far end is open (a balance node with nothing).
func rcLine(t testing.TB) *Network {
	b := newNetBuilder(t)
	x, y := b.fixed("drive", 1), b.balance("far")
	b.edge(Edge{ID: "line", From: x, To: y, Length: 1, A: 1})
	return b.net
}

// TestEvolveRCLine: the step response at the open end of a distributed RC
// line reaches 50% at 0.3787478·RC, 1 − 1/e ≈ 63.2% at 0.5031806·RC, 90% at
// 1.0311050·RC, and rises from 10% to 90% in 0.9009461·RC (Rabaey,
// Chandrakasan & Nikolić, Digital Integrated Circuits, 2nd ed. 2003, §4.4.4
// — values to 7 digits as derived from the series there). The exact method
// inverts the transform to about 1e-9 (roundoff of the contour and the
// bisection), so it must match to the 7 given digits; the grid (200 cells,
// tol 1e-6) to 2e-4·RC (its discretisation error, measured 3e-5).
func TestEvolveRCLine(t *testing.T) {
	const digits = 1e-6
	far := Point{Node: 1, Edge: -1}
	for _, tc := range []struct {
		frac, want float64
	}{{0.5, 0.3787478}, {1 - 1/math.E, 0.5031806}, {0.9, 1.0311050}, {0.1, 1.0311050 - 0.9009461}} {
		for _, m := range []Method{MethodExact, MethodGrid} {
			set := &EvolveSettings{Until: 1.5, Every: 0.05, Probes: []Point{far}, Crossing: tc.frac, Method: m}
			tol := digits
			if m == MethodGrid {
				set.Cells, set.Tol, tol = 200, 1e-6, 2e-4
			}
			r, err := Evolve(rcLine(t), set)
			if err != nil {
				t.Fatal(err)
			}
			if got := r.Crossing[0]; !(math.Abs(got-tc.want) <= tol) {
				t.Errorf("%v: %g crossing at %.7f RC, want %.7f", m, tc.frac, got, tc.want)
			}
		}
	}
}

// TestEvolveCrossingAtStart: a probe whose steady value is its initial one
// (the driven node of the RC line, held fixed from t = 0) has nothing to
// cover, so both methods report the crossing at the start time exactly; the
// exact method used to bisect down to its bracket width (1.5e-9) instead.
func TestEvolveCrossingAtStart(t *testing.T) {
	near := Point{Node: 0, Edge: -1}
	for _, m := range []Method{MethodExact, MethodGrid} {
		r, err := Evolve(rcLine(t), &EvolveSettings{Until: 1.5, Every: 0.05, Probes: []Point{near}, Crossing: 0.5, Method: m, Cells: 50})
		if err != nil {
			t.Fatal(err)
		}
		if got := r.Crossing[0]; got != 0 {
			t.Errorf("%v: crossing of the fixed node at %g, want 0", m, got)
		}
	}
}

// TestEvolveExactReference: the exact transient of the warm rod matches its
// Fourier series to 1e-9, and the grid stepper matches the exact transient
// within its tolerance plus the grid's error (200 cells: h²-small, measured
// below 4e-5).
func TestEvolveExactReference(t *testing.T) {
	mid := Point{Node: -1, Edge: 0, X: 0.5}
	ex, err := Evolve(warmRod(t), &EvolveSettings{Until: 0.2, Every: 0.02, Probes: []Point{mid}, Method: MethodExact})
	if err != nil {
		t.Fatal(err)
	}
	gr, err := Evolve(warmRod(t), &EvolveSettings{Until: 0.2, Every: 0.02, Probes: []Point{mid}, Cells: 200, Tol: 1e-5})
	if err != nil {
		t.Fatal(err)
	}
	for i, tt := range ex.Times {
		if tt == 0 {
			continue
		}
		if d := math.Abs(ex.Probes[0][i] - rodMid(tt)); d > 1e-9 {
			t.Errorf("exact at t = %g: %.12f, series %.12f", tt, ex.Probes[0][i], rodMid(tt))
		}
		if d := math.Abs(gr.Probes[0][i] - ex.Probes[0][i]); d > 1e-5+4e-5 {
			t.Errorf("grid at t = %g: %.7f, exact %.7f", tt, gr.Probes[0][i], ex.Probes[0][i])
		}
	}
}

// TestEvolveCable: a current step into a semi-infinite passive cable
// (a = c = ρ = 1: unit length and time constants, input resistance 1) gives
// V(0, T) = erf(√T) (Hodgkin & Rushton, Proc. R. Soc. B 133 (1946) 444 —
// from memory): 0.6826895, 0.8427008, 0.9544997 at T = 0.5, 1, 2. A cable
// of length 30 is semi-infinite to e^{−30}; the exact method gives 7
// digits.
func TestEvolveCable(t *testing.T) {
	b := newNetBuilder(t)
	x := b.node("inject", vertex.Law{Kind: vertex.Balance, Inject: 1})
	y := b.balance("end")
	b.edge(Edge{ID: "cable", From: x, To: y, Length: 30, A: 1, C: 1})
	r, err := Evolve(b.net, &EvolveSettings{Until: 2, Every: 0.5, Probes: []Point{{Node: x, Edge: -1}}, Method: MethodExact})
	if err != nil {
		t.Fatal(err)
	}
	want := map[float64]float64{0.5: 0.6826895, 1: 0.8427008, 2: 0.9544997}
	for i, tt := range r.Times {
		if w, ok := want[tt]; ok && math.Abs(r.Probes[0][i]-w) > 1e-7 {
			t.Errorf("V(0, %g) = %.8f, want %.7f", tt, r.Probes[0][i], w)
		}
	}
}

// TestEvolveElmore: the Elmore delay (the first moment of the impulse
// response, ∫₀^∞ (1 − v(t)) dt for a step) at the end of an N-section RC
// ladder of total R and C is RC(N+1)/(2N) (Rabaey, Chandrakasan & Nikolić,
// Digital Integrated Circuits, 2nd ed. 2003, §4.4.4). The ladder is built of
// edges of diffusivity 1 and length R/N (resistors; capacity 1e-9 per
// length, negligible) and nodes of capacity C/N. The integral is taken by
// the trapezoid rule on the exact transient up to 30·RC, where 1 − v is
// below e^{−30/(RC·0.6)}: accurate to the trapezoid's (Δt)²/12·|v”|,
// about 1e-5 with Δt = 0.01.
func TestEvolveElmore(t *testing.T) {
	const N = 4
	b := newNetBuilder(t)
	prev := b.fixed("drive", 1)
	for i := 1; i <= N; i++ {
		v := b.node(fmt.Sprintf("n%d", i), vertex.Law{Kind: vertex.Balance, Capacity: 1.0 / N})
		b.edge(Edge{ID: fmt.Sprintf("r%d", i), From: prev, To: v, Length: 1.0 / N, A: 1, Rho: 1e-9})
		prev = v
	}
	dt := 0.01
	r, err := Evolve(b.net, &EvolveSettings{Until: 30, Every: dt, Probes: []Point{{Node: prev, Edge: -1}}, Method: MethodExact})
	if err != nil {
		t.Fatal(err)
	}
	sum := 0.0
	u := r.Probes[0]
	for i := 1; i < len(u); i++ {
		sum += 0.5 * (r.Times[i] - r.Times[i-1]) * ((1 - u[i-1]) + (1 - u[i]))
	}
	want := float64(N+1) / (2 * N)
	if math.Abs(sum-want) > 1e-4 {
		t.Errorf("Elmore delay %.6f, want %.6f", sum, want)
	}
}

// TestEvolveRamp: both ends of the rod (0, 1) follow u = t from t = 0
// (NodeTime), u_t = u_xx, initially 0. Then u = t − x(1−x)/2 + transients
// that decay like e^{−π²t} (derived: u − t solves w_t = w_xx − 1 with
// w = 0 at the ends), so at t = 2 (transients below 3e-9) u(1/2) = 1.875.
// The three-point grid is exact for the quadratic, so the tolerance is the
// time stepping's, 2·Tol.
func TestEvolveRamp(t *testing.T) {
	b := newNetBuilder(t)
	x, y := b.fixed("a", 0), b.fixed("b", 0)
	b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1})
	for v := range b.net.Nodes {
		b.net.Nodes[v].Time = &NodeTime{Fixed: func(t float64) float64 { return t }, Src: "t"}
	}
	const tol = 1e-5
	r, err := Evolve(b.net, &EvolveSettings{Until: 2, Probes: []Point{{Node: -1, Edge: 0, X: 0.5}}, Tol: tol, Cells: 20})
	if err != nil {
		t.Fatal(err)
	}
	got := r.Probes[0][len(r.Times)-1]
	if math.Abs(got-1.875) > 2*tol*2 { // scale: the largest fixed value, 2
		t.Errorf("u(0.5, 2) = %.8f, want 1.875", got)
	}
}

// TestEvolveExactAgainstGrid: on a junction with drift, decay, skewed
// weights, a node capacity and an injection (fwdStar with a source at
// the centre, started from 0), the grid stepper and the exact transient
// must agree to the grid's error: 400 cells per edge and tol 1e-6 give
// 2e-6 (measured); tolerance 1e-4.
func TestEvolveExactAgainstGrid(t *testing.T) {
	net := func() *Network {
		n := fwdStar(t)
		n.Nodes[0].Law.Inject = 1
		n.Nodes[2].Law = vertex.Law{Kind: vertex.Fixed, Value: 0.5}
		return n
	}
	probes := []Point{{Node: 0, Edge: -1}, {Node: -1, Edge: 0, X: 0.4}, {Node: -1, Edge: 1, X: 1.1}, {Node: 1, Edge: -1}}
	ex, err := Evolve(net(), &EvolveSettings{Until: 2, Every: 0.25, Probes: probes, Method: MethodExact})
	if err != nil {
		t.Fatal(err)
	}
	gr, err := Evolve(net(), &EvolveSettings{Until: 2, Every: 0.25, Probes: probes, Cells: 400, Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	worst := 0.0
	for k := range probes {
		for i := range ex.Times {
			worst = math.Max(worst, math.Abs(ex.Probes[k][i]-gr.Probes[k][i]))
		}
	}
	t.Logf("largest difference %.2e", worst)
	if worst > 1e-4 {
		t.Errorf("grid and exact transients differ by %.2e", worst)
	}
}

// TestEvolveLumpedRC: one section of the ladder (a resistor R = 1 into a
// capacitance C = 1) charges as 1 − e^{−t/RC}, so it crosses 50% at
// ln 2·RC and 90% at ln 10·RC; its Elmore delay RC(N+1)/(2N) = RC at N = 1
// (Rabaey, Chandrakasan & Nikolić, Digital Integrated Circuits, 2nd ed.
// 2003, §4.4.4). The resistor's own capacity (1e-9 per length) shifts the
// times by about 1e-9; the exact method is within 1e-9, the grid stepper
// (tol 1e-8) within 3e-7 (measured): tolerance 1e-6.
func TestEvolveLumpedRC(t *testing.T) {
	b := newNetBuilder(t)
	d := b.fixed("drive", 1)
	c := b.node("cap", vertex.Law{Kind: vertex.Balance, Capacity: 1})
	b.edge(Edge{ID: "r", From: d, To: c, Length: 1, A: 1, Rho: 1e-9, Cells: 4})
	for _, tc := range []struct{ frac, want float64 }{{0.5, math.Ln2}, {0.9, math.Log(10)}} {
		for _, m := range []Method{MethodExact, MethodGrid} {
			r, err := Evolve(b.net, &EvolveSettings{Until: 3, Every: 0.1, Probes: []Point{{Node: c, Edge: -1}}, Crossing: tc.frac, Method: m, Tol: 1e-8})
			if err != nil {
				t.Fatal(err)
			}
			if got := r.Crossing[0]; math.Abs(got-tc.want) > 1e-6 {
				t.Errorf("%v: %g crossing at %.9f, want %.9f", m, tc.frac, got, tc.want)
			}
		}
	}
}

// TestEvolveCancelled: a cancelled context stops the run with Status
// IterationLimit and keeps what was reached (here the initial state).
func TestEvolveCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	r, err := Evolve(warmRod(t), &EvolveSettings{Until: 1, Probes: []Point{{Node: -1, Edge: 0, X: 0.5}}, Context: ctx})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != IterationLimit || len(r.Times) != 1 || r.Times[0] != 0 {
		t.Errorf("status %v, times %v", r.Status, r.Times)
	}
}
