// Package vertextest holds the analytic networks that both engines must
// reproduce: each case is a small network given as plain data, a start point
// and closed-form answers (the value u(start), where the walkers end, the
// probability of being killed and the mean exit time). The PDE side checks
// them to round-off, the walker side within a few standard errors, so the two
// readings of every node law in package vertex are tested against the same
// numbers.
//
// Both sides build their network (a graphpde.Network) from the same data.
package vertextest

import (
	"math"

	"github.com/ramify-dev/ramify/vertex"
)

// NodeSpec is one node of a case.
type NodeSpec struct {
	ID  string
	Law vertex.Law
}

// EdgeSpec is one edge of a case: constant coefficients, α at both ends
// (0 means the default, the diffusivity).
type EdgeSpec struct {
	ID           string
	From, To     int
	Length       float64
	A, C, F, Rho float64
	WFrom, WTo   float64
}

// Case is an analytic network with its answers.
type Case struct {
	Name     string
	Source   string // where the closed form comes from
	Nodes    []NodeSpec
	Edges    []EdgeSpec
	Start    vertex.Point       // where the walkers start
	Value    float64            // u(start)
	Hit      map[string]float64 // P(absorbed at node)
	Killed   float64            // P(killed by decay or leak)
	MeanExit float64            // E τ, τ the lifetime
}

// Cases returns the shared analytic cases. Each call returns fresh values.
func Cases() []Case {
	fixed := func(id string, g float64) NodeSpec {
		return NodeSpec{ID: id, Law: vertex.Law{Kind: vertex.Fixed, Value: g}}
	}
	var cs []Case

	// The biased star of docs/references.md S1 (derived there and in
	// docs/exit-statistics.md §5): arms L = (1, 2, 3), weights (0.5, 0.3, 0.2), generator ½d²
	// (a = ½): P(end j) = (α_j/L_j)/Σ(α/L) = 30/43, 9/43, 4/43 and
	// E τ = Σ α L/(2a) / Σ(α/L) = 102/43.
	cs = append(cs, Case{
		Name:   "biased star",
		Source: "docs/references.md S1 (derived); docs/exit-statistics.md §5",
		Nodes:  []NodeSpec{{ID: "c", Law: vertex.Law{Kind: vertex.Balance}}, fixed("e1", 1), fixed("e2", 0), fixed("e3", 0)},
		Edges: []EdgeSpec{
			{ID: "a1", From: 0, To: 1, Length: 1, A: 0.5, Rho: 1, WFrom: 0.5},
			{ID: "a2", From: 0, To: 2, Length: 2, A: 0.5, Rho: 1, WFrom: 0.3},
			{ID: "a3", From: 0, To: 3, Length: 3, A: 0.5, Rho: 1, WFrom: 0.2},
		},
		Start:    vertex.AtNode(0),
		Value:    30.0 / 43,
		Hit:      map[string]float64{"e1": 30.0 / 43, "e2": 9.0 / 43, "e3": 4.0 / 43},
		MeanExit: 102.0 / 43,
	})

	// A star with a sticky, leaky, injecting centre and arms of unequal
	// diffusivity and capacity. Derived from the balance law
	// Σ α_e(−u_e'(0)) + β u0 = γ with u linear on each arm (no decay or
	// source): u0 = (γ + Σ α_e g_e/L_e)/D with D = β + Σ α_e/L_e, P(end j) =
	// (α_j/L_j)/D, killed = β/D; and for T'' = −ρ/a with T(L) = 0 and source
	// ρ_v at the centre: E τ = (ρ_v + Σ α_e ρ_e L_e/(2a_e))/D.
	{
		beta, gamma, rhoV := 0.4, 0.3, 1.5
		type arm struct{ L, a, rho, alpha, g float64 }
		arms := []arm{{1, 1, 1, 1, 1}, {0.5, 4, 0.5, 2, 0}, {2, 0.25, 2, 0.5, 0}}
		c := Case{
			Name:   "sticky leaky star",
			Source: "derived from the balance law of docs/node-laws.md §2",
			Nodes: []NodeSpec{{ID: "c", Law: vertex.Law{Kind: vertex.Balance, Leak: beta, Inject: gamma, Capacity: rhoV}},
				fixed("e1", 1), fixed("e2", 0), fixed("e3", 0)},
			Start: vertex.AtNode(0),
			Hit:   map[string]float64{},
		}
		D, num, tnum := beta, gamma, rhoV
		for k, ar := range arms {
			c.Edges = append(c.Edges, EdgeSpec{ID: "a" + string(rune('1'+k)), From: 0, To: k + 1, Length: ar.L, A: ar.a, Rho: ar.rho, WFrom: ar.alpha})
			D += ar.alpha / ar.L
			num += ar.alpha * ar.g / ar.L
			tnum += ar.alpha * ar.rho * ar.L / (2 * ar.a)
		}
		c.Value = num / D
		for k, ar := range arms {
			c.Hit["e"+string(rune('1'+k))] = ar.alpha / ar.L / D
		}
		c.Killed = beta / D
		c.MeanExit = tnum / D
		cs = append(cs, c)
	}

	// A sealed cable: base fixed at 1, tip a balance node with no current,
	// decay c on the edge. From the tip, u = 1/cosh(κL), κ = sqrt(c/a)
	// (docs/references.md C2: V(L)/V0 = 0.6480543 at L/λ = 1), which is also the
	// probability of reaching the base alive; the rest are killed. The mean
	// lifetime solves a T'' − c T = −ρ with T(0) = 0, T'(L) = 0:
	// T(L) = (ρ/c)(1 − 1/cosh κL) (derived).
	{
		a, cc, L := 0.5, 2.0, 0.5 // κL = 1
		k := math.Sqrt(cc / a)
		cs = append(cs, Case{
			Name:     "sealed cable",
			Source:   "docs/references.md C2 (cable theory); mean lifetime derived",
			Nodes:    []NodeSpec{fixed("base", 1), {ID: "tip", Law: vertex.Law{Kind: vertex.Balance}}},
			Edges:    []EdgeSpec{{ID: "cable", From: 0, To: 1, Length: L, A: a, C: cc, Rho: 1}},
			Start:    vertex.AtNode(1),
			Value:    1 / math.Cosh(k*L),
			Hit:      map[string]float64{"base": 1 / math.Cosh(k*L)},
			Killed:   1 - 1/math.Cosh(k*L),
			MeanExit: 1 / cc * (1 - 1/math.Cosh(k*L)),
		})
	}

	// Brownian motion on (0, 1) from x = 0.3, generator ½d² (a = ½):
	// P(exit at 1) = x = 0.3, E τ = x(1 − x) = 0.21 (docs/references.md B1;
	// Karatzas & Shreve 2nd ed. §2.8, from memory). A source f = 1 adds
	// E ∫ f/ρ dt = E τ to the value: u = 0.3 + 0.21.
	cs = append(cs, Case{
		Name:     "interval with a source",
		Source:   "docs/references.md B1",
		Nodes:    []NodeSpec{fixed("left", 0), fixed("right", 1)},
		Edges:    []EdgeSpec{{ID: "i", From: 0, To: 1, Length: 1, A: 0.5, F: 1, Rho: 1}},
		Start:    vertex.OnEdge(0, 0.3),
		Value:    0.3 + 0.21,
		Hit:      map[string]float64{"left": 0.7, "right": 0.3},
		MeanExit: 0.21,
	})
	return cs
}
