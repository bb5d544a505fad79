package graphpde

import (
	"math"
	"testing"
)

// TestEvolveBratuSettles: Bratu's problem u” + λeᵘ = 0 at λ = 1 stepped in
// time (ρ = 1) from u = 0 settles on the lower branch, the stable one. Its
// long-time limit must be SolveNonlinear's steady field on the same grid to
// the solver's tolerance: the stage problems at rest are the steady
// problem, so nothing but the time stepping's decay and Newton's tolerance
// separate the two. By t = 4 the slowest mode (rate π² − λe^{u}·… ≈ 8.6)
// has decayed by e^{−34}; 1e-9 leaves room for the Newton tolerances
// (scaled residual 1e-10).
func TestEvolveBratuSettles(t *testing.T) {
	lambda := 1.0
	net, m := bratuNet(t, &lambda, 16)
	steady := mustNonlinear(t, net, &NonlinearSettings{Cells: 16})
	probes := []Point{{Node: m, Edge: -1}, {Node: -1, Edge: 0, X: 0.125}, {Node: -1, Edge: 1, X: 0.3}}
	r, err := Evolve(net, &EvolveSettings{Until: 4, Probes: probes, Cells: 16, Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != Converged {
		t.Fatalf("status %v, notes %q", r.Status, r.Notes)
	}
	last := len(r.Times) - 1
	for k, p := range probes {
		want, err := steady.Solution.At(p)
		if err != nil {
			t.Fatal(err)
		}
		if got := r.Probes[k][last]; math.Abs(got-want) > 1e-9 {
			t.Errorf("probe %d: u(4) = %.12f, steady %.12f (diff %.2e)", k, got, want, got-want)
		}
	}
	t.Logf("u(½, 4) = %.12f, %d steps, %d rejected, %d factorisations; notes %q",
		r.Probes[0][last], r.Stats.Steps, r.Stats.Rejected, r.Stats.Factorizations, r.Notes)
}

// TestEvolveGeneralMatchesQuasilinear: the quasilinear rod a(u) = 1 + u
// stepped by the general stepper (SolveNonlinear's discretisation) and by
// the quasilinear stepper (its own finite volumes) — the same two-point
// fluxes a(ū)(u_{j+1} − u_j)/h, so the two agree to the stepping
// tolerance and the differences of their end treatment (both second order
// in h).
func TestEvolveGeneralMatchesQuasilinear(t *testing.T) {
	mid := Point{Node: -1, Edge: 0, X: 0.5}
	set := EvolveSettings{Until: 0.2, Every: 0.05, Probes: []Point{mid}, Tol: 1e-6, Cells: 32}
	old, err := Evolve(quasiRod(t), &set)
	if err != nil {
		t.Fatal(err)
	}
	set.general = true
	gen, err := Evolve(quasiRod(t), &set)
	if err != nil {
		t.Fatal(err)
	}
	for i := range old.Times {
		t.Logf("t = %.3f: quasilinear %.9f, general %.9f", old.Times[i], old.Probes[0][i], gen.Probes[0][i])
	}
}
