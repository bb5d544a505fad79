package graphpde

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestForwardPulse: a unit release at x0 on a long edge with dispersion a
// and velocity b spreads as the advection–dispersion pulse
//
//	q(x, t) = exp(−(x − x0 − bt)²/(4at)) / √(4πat)
//
// (the Gaussian solution of q_t = a q_xx − b q_x; e.g. Fischer et al.,
// Mixing in Inland and Coastal Waters, 1979, §2.2 — from memory). The edge
// is long enough that the ends carry e^{−60} of it. The grid (h = 0.02)
// and the point release smoothed over one cell give an error of order
// h²/(at) of the peak: tolerance 2e-3 of the peak, measured 4e-4.
func TestForwardPulse(t *testing.T) {
	const a, b, x0, T, L = 0.5, 1.0, 8.0, 2.0, 24.0
	bld := newNetBuilder(t)
	u, v := bld.balance("up"), bld.balance("down")
	bld.edge(Edge{ID: "pipe", From: u, To: v, Length: L, A: a, B: b, Cells: 1200})
	rel := Point{Node: -1, Edge: 0, X: x0}
	var probes []Point
	for x := 6.0; x <= 14; x += 0.5 {
		probes = append(probes, Point{Node: -1, Edge: 0, X: x})
	}
	r, err := Evolve(bld.net, &EvolveSettings{Until: T, Probes: probes, Forward: true, Release: &rel, Tol: 1e-5})
	if err != nil {
		t.Fatal(err)
	}
	peak := 1 / math.Sqrt(4*math.Pi*a*T)
	worst := 0.0
	for k, p := range probes {
		want := peak * math.Exp(-(p.X-x0-b*T)*(p.X-x0-b*T)/(4*a*T))
		got := r.Probes[k][len(r.Times)-1]
		worst = math.Max(worst, math.Abs(got-want)/peak)
	}
	t.Logf("worst error %.2e of the peak; %d steps", worst, r.Stats.Steps)
	if worst > 2e-3 {
		t.Errorf("pulse off by %.2e of its peak", worst)
	}
}

// fwdStar is a junction where the forward and backward problems differ: a
// centre with capacity 0.3 and skewed weights (α/a = 2, 0.5, 1.5 on the
// arms), drift on two arms, decay on one, one arm ending at an absorbing
// node and two at sealed ones.
func fwdStar(t testing.TB) *Network {
	b := newNetBuilder(t)
	c := b.node("c", vertex.Law{Kind: vertex.Balance, Capacity: 0.3})
	e1 := b.balance("e1")
	e2 := b.balance("e2")
	e3 := b.fixed("e3", 0)
	b.edge(Edge{ID: "a1", From: c, To: e1, Length: 1, A: 1, B: 0.8, Weight: [2]float64{2, 1}})
	b.edge(Edge{ID: "a2", From: e2, To: c, Length: 1.5, A: 0.5, B: -0.4, C: 0.2, Weight: [2]float64{0.5, 0.25}})
	b.edge(Edge{ID: "a3", From: c, To: e3, Length: 0.8, A: 1, Weight: [2]float64{1.5, 1}})
	return b.net
}

// TestForwardDuality checks the forward problem's junction conditions
// through the duality of the two problems: for walkers released at x0 and
// any φ,
//
//	Σ_e ∫ ρ_e q_e(x, T) φ(x) dx + Σ_v ρ_v Q_v(T) φ(v) = u(x0, T),
//
// u the backward field with initial value φ, no sources and absorbing
// nodes at 0 (the pairing in which the forward operator is the adjoint;
// docs/time-and-spectrum.md §3). φ is continuous, linear on each edge
// between node values 1, 0.2, 2 at c, e1, e2 (0 at the absorbing node).
// Both sides are computed on grids of 400 cells per edge; their
// discretisation errors are of order h²: tolerance 1e-3 (measured 1e-5).
// Imposing continuity of q at the centre instead of a q/α changes the
// left side by about 0.1 here.
func TestForwardDuality(t *testing.T) {
	nodeVal := map[string]float64{"c": 1, "e1": 0.2, "e2": 2, "e3": 0}
	phi := func(net *Network, e int, x float64) float64 {
		ed := &net.Edges[e]
		w := x / ed.Length
		return (1-w)*nodeVal[net.Nodes[ed.From].ID] + w*nodeVal[net.Nodes[ed.To].ID]
	}
	const T = 0.4
	for _, x0 := range []Point{{Node: -1, Edge: 0, X: 0.3}, {Node: -1, Edge: 1, X: 1.2}, {Node: 0, Edge: -1}} {
		fw := fwdStar(t)
		r, err := Evolve(fw, &EvolveSettings{Until: T, Every: T, Forward: true, Release: &x0, Fields: true, Cells: 400, Tol: 1e-6})
		if err != nil {
			t.Fatal(err)
		}
		sn := r.Snapshots[len(r.Snapshots)-1]
		lhs := 0.0
		for e, vals := range sn.Edges {
			ed := &fw.Edges[e]
			n := len(vals) - 1
			h := ed.Length / float64(n)
			for i, q := range vals {
				w := h
				if i == 0 || i == n {
					w = h / 2
				}
				lhs += w * ed.Rho * q * phi(fw, e, float64(i)*h)
			}
		}
		for v, nd := range fw.Nodes {
			lhs += nd.Law.Capacity * sn.Nodes[v] * nodeVal[nd.ID]
		}
		bw := fwdStar(t)
		for v := range bw.Nodes {
			val := nodeVal[bw.Nodes[v].ID]
			bw.Nodes[v].Initial = &val
		}
		rb, err := Evolve(bw, &EvolveSettings{Until: T, Every: T, Probes: []Point{x0}, Cells: 400, Tol: 1e-6})
		if err != nil {
			t.Fatal(err)
		}
		rhs := rb.Probes[0][len(rb.Times)-1]
		t.Logf("from %v: forward %.7f, backward %.7f", x0, lhs, rhs)
		if math.Abs(lhs-rhs) > 1e-3 {
			t.Errorf("from %v: forward gives %.6f, backward %.6f", x0, lhs, rhs)
		}
	}
}

// TestForwardConserves: with no absorbing node, decay or leak, the amount of
// tracer stays 1 (every flux leaves one cell and enters another, and
// TR-BDF2 keeps linear invariants): to round-off.
func TestForwardConserves(t *testing.T) {
	net := fwdStar(t)
	net.Nodes[3].Law = vertex.Law{Kind: vertex.Balance}
	net.Edges[1].C = 0
	rel := Point{Node: -1, Edge: 2, X: 0.5}
	sys, err := newForward(net, 50, 0, &rel)
	if err != nil {
		t.Fatal(err)
	}
	u := make([]float64, sys.n)
	sys.initial(u)
	if m := sys.amount(u); math.Abs(m-1) > 1e-12 {
		t.Fatalf("released amount %.15g", m)
	}
	r, err := Evolve(net, &EvolveSettings{Until: 1, Every: 0.25, Forward: true, Release: &rel, Fields: true, Cells: 50})
	if err != nil {
		t.Fatal(err)
	}
	for _, sn := range r.Snapshots {
		tot := 0.0
		for e, vals := range sn.Edges {
			ed := &net.Edges[e]
			n := len(vals) - 1
			h := ed.Length / float64(n)
			for i := 1; i < n; i++ {
				tot += h * ed.Rho * vals[i]
			}
			// the end half cells belong to the nodes: q there is (α/a)·Q
			tot += 0.5 * h * ed.Rho * (vals[0] + vals[n])
		}
		for v, nd := range net.Nodes {
			tot += nd.Law.Capacity * sn.Nodes[v]
		}
		if math.Abs(tot-1) > 1e-10 {
			t.Errorf("t = %g: amount %.15g", sn.T, tot)
		}
	}
}

// amount returns the total amount Σ M_i u_i of tracer in the network.
func (s *fwdSystem) amount(u []float64) float64 {
	t := 0.0
	for i, v := range u {
		t += s.M[i] * v
	}
	return t
}
