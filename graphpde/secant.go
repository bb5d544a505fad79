package graphpde

import (
	"math"

	"github.com/ramify-dev/ramify/vertex"
)

// The secant representation (docs/nonlinear.md): a field û that solves a
// nonlinear problem also solves a linear one, exactly, whose coefficients
// are integrals of the law's derivatives along the segment from a reference
// state to û. Walkers of that linear problem then check û: they reproduce it
// if and only if û solves the nonlinear problem (a residual r in û changes
// the linear problem's solution by the response to r).

// gauss8 are the 8-point Gauss–Legendre nodes and weights on [0, 1]
// (Abramowitz & Stegun, Handbook of Mathematical Functions, Table 25.4,
// mapped from [−1, 1]); exact for polynomials of degree 15 in θ.
var gauss8 = [8][2]float64{
	{0.019855071751231856, 0.05061426814518813},
	{0.10166676129318664, 0.11119051722668724},
	{0.2372337950418355, 0.15685332293894363},
	{0.4082826787521751, 0.18134189168918100},
	{0.5917173212478249, 0.18134189168918100},
	{0.7627662049581645, 0.15685332293894363},
	{0.8983332387068134, 0.11119051722668724},
	{0.9801449282487681, 0.05061426814518813},
}

// SecantSettings controls SecantNetwork. A nil *SecantSettings means the
// defaults.
type SecantSettings struct {
	// Growth keeps a negative secant decay C on edges as it is (walkers
	// then need growth weights: montecarlo.Settings.Growth). false (the
	// default) carries its negative part C⁻ as the source C⁻·û.
	Growth bool
}

// SecantInfo describes a secant network.
type SecantInfo struct {
	// Moved is true when a negative part of the secant decay C (or of a
	// node's secant leak) was carried as the source C⁻·û instead of as a
	// growth rate, so that walkers are killed at rate C⁺ ≥ 0 and collect
	// bounded rewards. The identity stays exact; the check then tests û
	// against the linear problem with that part frozen on û. Node leaks
	// are always treated so.
	Moved bool
	// Growth is true when an edge keeps a negative decay (walkers need
	// growth weights).
	Growth bool
	// Note says in words what the linear problem is.
	Note string
}

// SecantNetwork returns the linear network whose solution is the field of
// sol, a converged solution of SolveNonlinear on net, exactly up to the
// discretisation of sol (O(h²)), with reference state u₀ = 0:
//
//   - an edge with an equation E(x, u, ux, uxx) = 0 gets, at every grid
//     vertex, A = ∫₀¹ ∂E/∂uxx, B = ∫₀¹ ∂E/∂ux, C = −∫₀¹ ∂E/∂u along
//     θ ↦ (θû, θû', θû”), and f = E(x, 0, 0, 0): A û” + B û' − C û + f = 0,
//     written in divergence form a = A, b = B − A', c = C; û' and û” at a
//     vertex are the scheme's differences (one-sided where the scheme took
//     them so, by the cell Péclet number), so that the identity holds at
//     every vertex with the values the field solves its equation with;
//   - a quasilinear edge keeps a(x, û) and b(x, û) (they multiply only
//     derivatives of u: an exact identity) and gets the reaction
//     R(x, u) = f(x, u) − c(x, u)·u by the secant, c = −∫₀¹ ∂R/∂u(x, θû),
//     f = R(x, 0);
//   - a node with a loss gets the leak β = ∫₀¹ loss'(θû) and the injection
//     −loss(0); a node with a general law G(u, d) gets the end weights
//     α_e = −∫₀¹ ∂G/∂d_e, the leak β = ∫₀¹ ∂G/∂u and the injection
//     −G(0, 0), along θ ↦ (θû, θd̂);
//   - linear edges and nodes are copied.
//
// Negative parts of β, and of C unless set.Growth, are moved into the
// source (SecantInfo.Moved).
// Coefficients between grid vertices are interpolated linearly. The ∫dθ are
// 8-point Gauss–Legendre sums. net's parameters are read as they are now.
// Errors: a secant diffusivity A ≤ 0 or a non-finite coefficient, naming the
// edge and place (*LawError).
func SecantNetwork(net *Network, sol *Solution, set *SecantSettings) (*Network, *SecantInfo, error) {
	info := &SecantInfo{}
	growth := set != nil && set.Growth
	out := &Network{Name: net.Name + " (secant)", Description: "the linear problem that the computed nonlinear field solves"}
	weights := make([][2]float64, len(net.Edges))
	for e := range net.Edges {
		weights[e] = net.Edges[e].Weight
	}
	// End derivatives leaving each node along each end.
	endD := func(end vertex.End) float64 {
		ed := &net.Edges[end.Edge]
		if end.Side == 0 {
			_, d := sol.eval(end.Edge, 0)
			return d
		}
		_, d := sol.eval(end.Edge, ed.Length)
		return -d
	}
	for v := range net.Nodes {
		nd := net.Nodes[v]
		nd.Nonlinear = nil
		nd.Time = nil
		nl := net.Nodes[v].Nonlinear
		if nl != nil && nd.Law.Kind == vertex.Balance {
			u := sol.U[v]
			var beta, gamma float64
			if nl.Loss != nil {
				for _, g := range gauss8 {
					_, dl := nl.Loss(g[0] * u)
					beta += g[1] * dl
				}
				l0, _ := nl.Loss(0)
				gamma = -l0
			} else {
				inc := net.Incident(v)
				d := make([]float64, len(inc))
				dt := make([]float64, len(inc))
				dd := make([]float64, len(inc))
				alpha := make([]float64, len(inc))
				for k, end := range inc {
					d[k] = endD(end)
				}
				for _, g := range gauss8 {
					for k := range d {
						dt[k] = g[0] * d[k]
					}
					_, gu := nl.General(g[0]*u, dt, dd)
					beta += g[1] * gu
					for k := range dd {
						alpha[k] -= g[1] * dd[k]
					}
				}
				clear(dt)
				g0, _ := nl.General(0, dt, dd)
				gamma = -g0
				for k, end := range inc {
					if !(alpha[k] > 0) || !finite(alpha[k]) {
						return nil, nil, &LawError{Object: "node", ID: nd.ID, U: u, Quantity: "secant weight of " + net.Edges[end.Edge].ID, Value: alpha[k], Want: "> 0"}
					}
					weights[end.Edge][end.Side] = alpha[k]
				}
			}
			if !finite(beta) || !finite(gamma) {
				return nil, nil, &LawError{Object: "node", ID: nd.ID, U: u, Quantity: "secant leak", Value: beta, Want: "finite"}
			}
			if beta < 0 {
				gamma += -beta * u
				beta = 0
				info.Moved = true
			}
			nd.Law = vertex.Law{Kind: vertex.Balance, Leak: nd.Law.Leak + beta, Inject: nd.Law.Inject + gamma, Capacity: nd.Law.Capacity}
		}
		if _, err := out.AddNode(Node{ID: nd.ID, XY: nd.XY, Law: nd.Law, Split: nd.Split}); err != nil {
			return nil, nil, err
		}
	}
	for e := range net.Edges {
		ed := net.Edges[e]
		ed.Weight = weights[e]
		quasi, eq := lawEdge(&net.Edges[e])
		if quasi || eq {
			prof, err := secantProfile(&net.Edges[e], sol, e, quasi, growth, info)
			if err != nil {
				return nil, nil, err
			}
			ed.Profile = prof
			ed.A, ed.B, ed.C, ed.F = prof.A(0), 0, 0, 0
			ed.Cells = sol.els[e].(gridCells).cells()
		}
		ed.Law = nil
		if _, err := out.AddEdge(ed); err != nil {
			return nil, nil, err
		}
	}
	out.Params = net.Params
	info.Note = "the linear problem the computed field solves (secant representation, reference u = 0): edge equations by A = ∫∂E/∂uxx, B = ∫∂E/∂ux, C = −∫∂E/∂u; quasilinear edges keep a(x,û), b(x,û), reactions by the secant; node laws by secant weights and leaks"
	if info.Growth {
		info.Note += "; where the law grows with u (C < 0) the walkers carry growth weights exp(∫|C|dt)"
	}
	if info.Moved {
		info.Note += "; where the law grows with u, the negative part of the secant decay or leak is carried as the source C⁻·û"
	}
	return out, info, nil
}

// secantProfile builds the coefficient profile of law edge e from the grid
// vertices of sol.
func secantProfile(ed *Edge, sol *Solution, e int, quasi, growth bool, info *SecantInfo) (*Profile, error) {
	n := sol.els[e].(gridCells).cells()
	L := ed.Length
	h := L / float64(n)
	U0, UL := sol.U[ed.From], sol.U[ed.To]
	in := sol.gval[sol.off[e] : sol.off[e]+n-1]
	val := gridVertex(n, U0, UL, in)
	A := make([]float64, n+1)
	B := make([]float64, n+1)
	C := make([]float64, n+1)
	F := make([]float64, n+1)
	bad := func(x, u float64, q string, v float64, want string) error {
		return &LawError{Object: "edge", ID: ed.ID, X: x, U: u, Quantity: q, Value: v, Want: want, Why: "in the secant representation"}
	}
	for i := 0; i <= n; i++ {
		x := float64(i) * h
		u := val(i)
		var c float64
		if quasi {
			a, _, b, _, _, _, _, _ := quasiCoefs(ed, x, u)
			var f0 float64
			for _, g := range gauss8 {
				ut := g[0] * u
				_, _, _, _, cc, dc, _, df := quasiCoefs(ed, x, ut)
				c -= g[1] * (df - cc - ut*dc)
			}
			_, _, _, _, _, _, f0, _ = quasiCoefs(ed, x, 0)
			A[i], B[i], F[i] = a, b, f0
		} else {
			var p, X float64
			switch i {
			case 0:
				_, d0 := sol.eval(e, 0)
				p = d0
				X = 2 * ((val(1)-U0)/h - d0) / h
			case n:
				_, dL := sol.eval(e, L)
				p = dL
				X = 2 * (dL - (UL-val(n-1))/h) / h
			default:
				// The differences of the scheme that computed the field:
				// one-sided where it was (schemeSide), so that the
				// identity holds at every vertex with the derivatives
				// the field satisfies its equation with.
				um, up := val(i-1), val(i+1)
				X = (up - 2*u + um) / (h * h)
				p = (up - um) / (2 * h)
				_, _, Ep, EX := ed.Law.Equation.Fn(x, u, p, X)
				switch schemeSide(Ep, EX, h) {
				case 1:
					p = (up - u) / h
				case -1:
					p = (u - um) / h
				}
			}
			var a, bb float64
			for _, g := range gauss8 {
				_, Eu, Ep, EX := ed.Law.Equation.Fn(x, g[0]*u, g[0]*p, g[0]*X)
				a += g[1] * EX
				bb += g[1] * Ep
				c -= g[1] * Eu
			}
			E0, _, _, _ := ed.Law.Equation.Fn(x, 0, 0, 0)
			A[i], B[i], F[i] = a, bb, E0
		}
		if !(A[i] > 0) || !finite(A[i]) {
			return nil, bad(x, u, "secant diffusivity A", A[i], "> 0 and finite")
		}
		if !finite(B[i]) || !finite(c) || !finite(F[i]) {
			return nil, bad(x, u, "secant coefficient", B[i]+c+F[i], "finite")
		}
		switch {
		case c < 0 && growth:
			info.Growth = true
		case c < 0:
			F[i] += -c * u
			c = 0
			info.Moved = true
		}
		C[i] = c
	}
	if !quasi {
		// Divergence form: b = B − A'.
		dA := make([]float64, n+1)
		for i := 0; i <= n; i++ {
			switch i {
			case 0:
				dA[i] = (A[1] - A[0]) / h
			case n:
				dA[i] = (A[n] - A[n-1]) / h
			default:
				dA[i] = (A[i+1] - A[i-1]) / (2 * h)
			}
		}
		for i := range B {
			B[i] -= dA[i]
		}
	}
	interp := func(v []float64) func(x float64) float64 {
		return func(x float64) float64 {
			t := x / h
			i := int(math.Floor(t))
			if i < 0 {
				return v[0]
			}
			if i >= n {
				return v[n]
			}
			t -= float64(i)
			return (1-t)*v[i] + t*v[i+1]
		}
	}
	return &Profile{A: interp(A), B: interp(B), C: interp(C), F: interp(F)}, nil
}
