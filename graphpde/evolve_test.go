package graphpde

import (
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

var _ = vertex.Fixed

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
