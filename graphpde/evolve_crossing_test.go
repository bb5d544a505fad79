package graphpde

import (
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestEvolveCrossingWithoutSteadyState: asking for crossing times of a
// field past its fold (Bratu's problem at λ = 4 > λc ≈ 3.51, as an edge
// equation and as a quasilinear source) still steps the transient, which
// runs away as in TestEvolveRunaway; the steady values and crossing
// times are NaN with a note. The whole run used to fail with "steady
// values for the crossing times: Newton's method found no steady state".
func TestEvolveCrossingWithoutSteadyState(t *testing.T) {
	lambda := 4.0
	bratu, m := bratuNet(t, &lambda, 16)
	b := newNetBuilder(t)
	l, r := b.fixed("l", 0), b.fixed("r", 0)
	mid := b.balance("m")
	src := &Coef{Fn: func(_, u, _ float64) (float64, float64) { e := 4 * math.Exp(u); return e, e }, UsesU: true, Src: "4*exp(u)"}
	b.edge(Edge{ID: "a", From: l, To: mid, Length: 0.5, A: 1, Rho: 1, Law: &EdgeLaw{F: src}})
	b.edge(Edge{ID: "b", From: mid, To: r, Length: 0.5, A: 1, Rho: 1, Law: &EdgeLaw{F: src}})
	for _, c := range []struct {
		name string
		net  *Network
		node int
	}{{"equation", bratu, m}, {"quasilinear", b.net, mid}} {
		res, err := Evolve(c.net, &EvolveSettings{Until: 5, Probes: []Point{{Node: c.node, Edge: -1}}, Cells: 16, Crossing: 0.5})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		notes := strings.Join(res.Notes, " | ")
		if res.Status != NotSolved || !strings.Contains(notes, "no steady state") || !strings.Contains(notes, "grows without bound") {
			t.Errorf("%s: status %v, notes %q", c.name, res.Status, notes)
		}
		if !math.IsNaN(res.Steady[0]) || !math.IsNaN(res.Crossing[0]) {
			t.Errorf("%s: steady %g, crossing %g: want NaN (not reported)", c.name, res.Steady[0], res.Crossing[0])
		}
	}
}

// TestEvolveFixedStepAccuracy: fixed steps (Step > 0) are not controlled.
// A rod driven by a slow smooth ramp, u(0, t) = 1 − e^(−t), stepped at
// 0.01 has no step whose local error estimate exceeds the whole tolerance
// (its values are within 6e-6 of a run at tol 1e-10): no note; the same
// rod with a unit step at one end stepped at 0.25 gets a note that the
// step is not controlled (nothing was said beside an estimate of
// 10⁴ × tol).
func TestEvolveFixedStepAccuracy(t *testing.T) {
	rod := func(ramp bool) (*Network, int) {
		b := newNetBuilder(t)
		g := b.fixed("g", 1)
		e := b.balance("e")
		b.edge(Edge{ID: "rod", From: g, To: e, Length: 1, A: 1, Rho: 1})
		if ramp {
			b.net.Nodes[g].Law.Value = 0
			b.net.Nodes[g].Time = &NodeTime{Fixed: func(t float64) float64 { return -math.Expm1(-t) }, UsesT: true, Src: "1 - exp(-t)"}
		}
		return b.net, e
	}
	for _, c := range []struct {
		name string
		ramp bool
		step float64
		note bool
	}{{"smooth ramp, step 0.01", true, 0.01, false}, {"unit step, step 0.25", false, 0.25, true}} {
		net, e := rod(c.ramp)
		res, err := Evolve(net, &EvolveSettings{Until: 2, Step: c.step, Probes: []Point{{Node: e, Edge: -1}}, Cells: 16})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if res.Status != Converged || c.note != strings.Contains(strings.Join(res.Notes, " "), "not controlled") {
			t.Errorf("%s: status %v (estimate %.3g × tol), notes %q; want a note: %v", c.name, res.Status, res.Stats.ErrEstimate, res.Notes, c.note)
		}
	}
}

// TestEvolveLongRun: a run to t = 1e9 of a rod (a = 1, L = 1, 256 cells) held at 1 at
// one end and leaking at the other (β = 0.5), from 0: its initial layer
// needs steps of about 1e-6, far below 1e9·1e-14, where the run was
// stopped at t = 0 as a blow-up ("the error control asks for steps
// shorter than 3.55e-06", status NotSolved). It must reach the end and
// the steady value u(1) = a/(a + βL) = 2/3 (derived: u linear, a u'(1) +
// β u(1) = 0), to the grid's accuracy (a linear field: round-off;
// 1e-9 allows for the time stepping's remainder of the layer).
func TestEvolveLongRun(t *testing.T) {
	b := newNetBuilder(t)
	g := b.fixed("g", 1)
	e := b.node("e", vertex.Law{Kind: vertex.Balance, Leak: 0.5})
	b.edge(Edge{ID: "rod", From: g, To: e, Length: 1, A: 1, Rho: 1})
	res, err := Evolve(b.net, &EvolveSettings{Until: 1e9, Every: 2.5e8, Probes: []Point{{Node: e, Edge: -1}}, Cells: 256})
	if err != nil {
		t.Fatal(err)
	}
	last := len(res.Times) - 1
	if res.Status != Converged || res.Times[last] != 1e9 || math.Abs(res.Probes[0][last]-2.0/3) > 1e-9 {
		t.Errorf("status %v, last time %g, u = %.12g (want 2/3), notes %q", res.Status, res.Times[last], res.Probes[0][last], res.Notes)
	}
}
