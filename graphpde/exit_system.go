package graphpde

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
	"github.com/ramify-dev/ramify/vertex"
)

// exitSystem is the node system of the exit problems of one start point on
// an exact-element network: the start's connected component only, with the
// start made a node when it lies inside an edge. Splitting the edge there is
// exact: inside an edge u and the flux a·u' are continuous, which is the
// balance law of a node with weights α = a on both sides and no leak,
// injection or capacity. The walker starting at the split point is then a
// walker starting at a node, so every statistic is a value at one unknown.
type exitSystem struct {
	el    []exitEl
	law   []vertex.Law // per system node
	ids   []string     // per system node: node id or EDGE@X for the split point
	orig  []int        // system node → network node, −1 for the split point
	unk   []int        // system node → unknown, −1 for fixed nodes
	nUnk  int
	pat   *nodePattern // pattern and slots of the node system
	start int          // system node of the start point

	// anchored reports whether the component can absorb or kill: a fixed
	// node, a leak or a decay. Without one the node system is singular.
	anchored bool
	// reversible reports that the walker is reversible, so that the decay
	// rates (singularities of the transforms) are real: the component is a
	// tree, or it has neither drift nor skewed weights (α ≠ a). Otherwise
	// they may be complex.
	reversible bool

	// steady is the factor of the s = 0 system (steadyFactor), shared by
	// the adjoint and the forward mean.
	steady *nodesys.Factor[float64]
	// tree is the start's part of the system arranged for one elimination
	// pass per transform value (buildExitTree), nil when it has a cycle.
	tree *exitTree
}

// exitEl is one exact element of the system: a network edge or half of the
// edge that carries the start point.
type exitEl struct {
	from, to int // system nodes
	a, b, c  float64
	rho, L   float64
	w0, w1   float64 // α at the from and to ends
	orig     int     // network edge
	d        [2][2]float64
	g        [2]float64 // source terms of the element for f = 1 (s = 0)
}

// newExitSystem builds the system for start p on net, whose edges in the
// start's component must all have constant coefficients (it panics
// otherwise). The component comes from componentNetwork, the one component
// extraction of the package (the grid path uses it too). Cost O(nodes +
// edges).
func newExitSystem(net *Network, p Point) (*exitSystem, error) {
	var sub *Network
	var nodeOf, edgeOf []int
	var sp Point
	if _, count := net.Components(); count == 1 {
		// The whole network is the component: read it in place (the
		// copy costs about a steady solve on large networks).
		sub, sp = net, p
		nodeOf, edgeOf = identityMap(len(net.Nodes)), identityMap(len(net.Edges))
	} else {
		var err error
		if sub, nodeOf, edgeOf, sp, err = componentNetwork(net, p); err != nil {
			return nil, err
		}
	}
	sys := &exitSystem{}
	anchored := false
	for v := range sub.Nodes {
		sys.law = append(sys.law, sub.Nodes[v].Law)
		sys.ids = append(sys.ids, sub.Nodes[v].ID)
		sys.orig = append(sys.orig, nodeOf[v])
		anchored = anchored || sub.Nodes[v].Law.Anchors()
	}
	for k := range sub.Edges {
		e := &sub.Edges[k]
		if !e.Constant() {
			panic("graphpde: exit system on an edge with varying coefficients")
		}
		anchored = anchored || e.C > 0
		base := exitEl{from: e.From, to: e.To, a: e.A, b: e.B, c: e.C, rho: e.Rho,
			L: e.Length, w0: e.EndWeight(0), w1: e.EndWeight(1), orig: edgeOf[k]}
		if k != sp.Edge {
			sys.el = append(sys.el, base)
			continue
		}
		mid := len(sys.law)
		sys.law = append(sys.law, vertex.Law{Kind: vertex.Balance})
		sys.ids = append(sys.ids, net.PointString(p))
		sys.orig = append(sys.orig, -1)
		left, right := base, base
		left.to, left.L, left.w1 = mid, sp.X, e.A
		right.from, right.L, right.w0 = mid, e.Length-sp.X, e.A
		sys.el = append(sys.el, left, right)
	}
	if p.Edge >= 0 {
		sys.start = len(sys.law) - 1
	} else {
		sys.start = sp.Node
	}
	sys.anchored = anchored
	skew := false
	for k := range sys.el {
		el := &sys.el[k]
		skew = skew || el.b != 0 || el.w0 != el.a || el.w1 != el.a
	}
	sys.reversible = len(sys.el) < len(sys.law) || !skew
	sys.unk = make([]int, len(sys.law))
	for v, l := range sys.law {
		sys.unk[v] = -1
		if l.Kind != vertex.Fixed {
			sys.unk[v] = sys.nUnk
			sys.nUnk++
		}
	}
	nodes := make([]int, 0, sys.nUnk)
	for v, i := range sys.unk {
		if i >= 0 {
			nodes = append(nodes, v)
		}
	}
	ends := make([][2]int, len(sys.el))
	for k := range sys.el {
		el := &sys.el[k]
		el.d, el.g = exactElement(el.a, el.b, el.c, 1.0, el.L)
		ends[k] = [2]int{el.from, el.to}
	}
	sys.pat = newNodePattern(sys.unk, nodes, ends)
	sys.tree = buildExitTree(sys)
	return sys, nil
}

// newMatrix returns a matrix of values over the system's pattern.
func newMatrix[T scalar](sys *exitSystem) *nodesys.Matrix[T] {
	return nodesys.NewMatrixPattern[T](sys.nUnk, sys.pat.rowPtr, sys.pat.col)
}

// exitLoad says which problem to assemble: the shift s (decay c + sρ on
// edges, leak β + sρ_v at nodes) and the data.
type exitLoad[T scalar] struct {
	s      T
	edgeF  func(el *exitEl) T // source f on the element
	nodeG  func(v int) T      // injection γ at a balance node
	fixedG func(v int) T      // value at a fixed node
}

// assemble fills m (zeroed first; made by newMatrix) and rhs with the
// node system of ld:
//
//	Σ_e J_e(v) + (β_v + sρ_v) u(v) = γ_v,   J_e(v) = −α_e ∂_e u(v),
//
// with the fixed values moved to the right-hand side (addMatrix, addRHS,
// the same assembly as the steady solve's; adjoint problems solve with the
// transpose of the same factor). Cost O(edges + nodes).
func assemble[T scalar](sys *exitSystem, m *nodesys.Matrix[T], rhs []T, ld exitLoad[T]) {
	m.ZeroValues()
	clear(rhs)
	val := m.Values()
	var zero T
	for k := range sys.el {
		el := &sys.el[k]
		c := fromF[T](el.c) + ld.s*fromF[T](el.rho)
		f := zero
		if ld.edgeF != nil {
			f = ld.edgeF(el)
		}
		d, g := exitElementT(el.a, el.b, c, f, el.L)
		w0, w1 := fromF[T](el.w0), fromF[T](el.w1)
		var rs [2]T
		var fix0, fix1 T
		if el.from == el.to {
			// A self-loop: only the row sums of its map enter, −g of the
			// element with source c (see exactRowSums).
			_, gc := exitElementT(el.a, el.b, c, c, el.L)
			rs = [2]T{-gc[0], -gc[1]}
		} else {
			if sys.unk[el.from] < 0 {
				fix0 = ld.fixedG(el.from)
			}
			if sys.unk[el.to] < 0 {
				fix1 = ld.fixedG(el.to)
			}
		}
		addMatrix(sys.pat, val, k, w0, w1, &d, &rs)
		addRHS(sys.pat, rhs, k, w0, w1, &d, &g, fix0, fix1)
	}
	for v, l := range sys.law {
		i := sys.unk[v]
		if i < 0 {
			continue
		}
		val[sys.pat.dslot[i]] += fromF[T](l.Leak) + ld.s*fromF[T](l.Capacity)
		if ld.nodeG != nil {
			rhs[i] += ld.nodeG(v)
		}
	}
}

// factor factors m and turns a singular pivot into a *SingularNodeError
// naming the node.
func factor[T scalar](sys *exitSystem, f *nodesys.Factor[T], m *nodesys.Matrix[T]) error {
	err := f.Factorize(m)
	var se *nodesys.SingularError
	if errors.As(err, &se) {
		for v, i := range sys.unk {
			if i == se.Index {
				return &SingularNodeError{Node: sys.ids[v], Pivot: se.Pivot, Scale: se.Scale}
			}
		}
	}
	return err
}

// adjoint holds the solution w of Kᵀw = e_start at s = 0: w_v is the
// derivative of u(start) with respect to the right-hand side of row v, so any
// steady statistic of the walker is w·(its right-hand side). In walker terms
// w_v is the expected local time at v (per unit injection).
type adjoint struct {
	w []float64 // per unknown
}

// steadyAdjoint factors the transposed s = 0 system and solves for w.
func (sys *exitSystem) steadyAdjoint() (*adjoint, error) {
	f, err := sys.steadyFactor()
	if err != nil {
		return nil, err
	}
	e := make([]float64, sys.nUnk)
	e[sys.unk[sys.start]] = 1
	w := make([]float64, sys.nUnk)
	f.SolveTransTo(w, e)
	return &adjoint{w: w}, nil
}

// steadyFactor factors the s = 0 node system K (forward; the adjoint uses
// its transpose through SolveTransTo), handing the factor K's row sums
// formed from the elements' without cancellation (addExcess; the element
// maps of newExitSystem have f = 1, so their row sums are −c·g), so that on
// a tree every pivot is a sum of non-negative terms (nodesys
// SetRowExcess). The factor is kept for steadyMean. Cost O(edges + nodes)
// plus the factorisation.
func (sys *exitSystem) steadyFactor() (*nodesys.Factor[float64], error) {
	if sys.steady != nil {
		return sys.steady, nil
	}
	m := newMatrix[float64](sys)
	rhs := make([]float64, sys.nUnk)
	assemble(sys, m, rhs, exitLoad[float64]{fixedG: func(int) float64 { return 0 }})
	ex := make([]float64, sys.nUnk)
	for k := range sys.el {
		el := &sys.el[k]
		rs := [2]float64{-el.c * el.g[0], -el.c * el.g[1]}
		addExcess(sys.pat, ex, k, el.w0, el.w1, &el.d, &rs)
	}
	for v, l := range sys.law {
		if i := sys.unk[v]; i >= 0 {
			ex[i] += l.Leak
		}
	}
	f := nodesys.NewFactor[float64](nil)
	f.SetRowExcess(ex)
	if err := factor(sys, f, m); err != nil {
		return nil, err
	}
	sys.steady = f
	return f, nil
}

// at returns w at system node v, 0 for a fixed node.
func (ad *adjoint) at(sys *exitSystem, v int) float64 {
	if i := sys.unk[v]; i >= 0 {
		return ad.w[i]
	}
	return 0
}

// load returns w·r for the source f = 1 on el alone (s = 0): the expected
// reward collected on el before death when f = 1 there, i.e. the expected
// occupation time of el divided by its ρ.
func (ad *adjoint) load(sys *exitSystem, el *exitEl) float64 {
	return ad.at(sys, el.from)*el.w0*el.g[0] - ad.at(sys, el.to)*el.w1*el.g[1]
}

// hitInto returns w·r for unit value at the fixed end(s) of el and zero
// elsewhere: the contribution of el to the absorption probability at its
// fixed end(s). It returns the from-end and to-end contributions.
func (ad *adjoint) hitInto(sys *exitSystem, el *exitEl) (atFrom, atTo float64) {
	i, j := sys.unk[el.from], sys.unk[el.to]
	if i >= 0 && j < 0 {
		atTo = ad.w[i] * el.w0 * el.d[0][1]
	}
	if j >= 0 && i < 0 {
		atFrom = -ad.w[j] * el.w1 * el.d[1][0]
	}
	return atFrom, atTo
}

// steadyMean solves the forward mean-lifetime problem (f = ρ, γ = ρ_v, g = 0)
// at every node and returns the values per system node (0 at fixed nodes).
func (sys *exitSystem) steadyMean() ([]float64, error) {
	m := newMatrix[float64](sys)
	rhs := make([]float64, sys.nUnk)
	assemble(sys, m, rhs, exitLoad[float64]{
		edgeF:  func(el *exitEl) float64 { return el.rho },
		nodeG:  func(v int) float64 { return sys.law[v].Capacity },
		fixedG: func(int) float64 { return 0 },
	})
	f, err := sys.steadyFactor() // the same matrix
	if err != nil {
		return nil, err
	}
	u := make([]float64, sys.nUnk)
	f.SolveTo(u, rhs)
	out := make([]float64, len(sys.law))
	for v, i := range sys.unk {
		if i >= 0 {
			out[v] = u[i]
		}
	}
	return out, nil
}

// supMean returns an upper bound of the mean lifetime over the whole
// component, edge interiors included: by the maximum principle the interior
// of an edge exceeds the larger end value by at most the mean time of an
// isolated edge with absorbing ends, ρL²/(8a) without drift and decay (decay
// lowers it; drift lowers the maximum too, and the caller checks the
// resulting contour radius anyway).
func (sys *exitSystem) supMean(T1 []float64) float64 {
	var sup float64
	for _, t := range T1 {
		sup = math.Max(sup, t)
	}
	for k := range sys.el {
		el := &sys.el[k]
		bump := el.rho * el.L * el.L / (8 * el.a)
		sup = math.Max(sup, math.Max(T1[el.from], T1[el.to])+bump)
	}
	return sup
}

// transform evaluates the Laplace transform of the lifetime,
// L(s) = E[e^{−sτ}], at the start for each s in ss, writing dst. The
// problem: decay c + sρ on edges and leak β + sρ_v at nodes discount by
// e^{−sτ}; the value 1 at fixed nodes pays for absorption; a walker killed
// by decay or leak at time ζ must also pay e^{−sζ}, and since killing happens
// at rate κ = c/ρ on edges (and through the leak β at nodes), the expected
// payment is E∫_0^{τ} e^{−st} κ(X_t) e^{−∫_0^t κ} dt, a Feynman–Kac reward
// with rate κ: source f = c on edges and injection γ = β at nodes.
//
// When the start's part of the system is a tree (sys.tree) each s costs
// one pass of atTree, assembly and elimination towards the start fused,
// O(edges + nodes) with no matrix; otherwise the complex pattern is
// factored symbolically once and each s costs one numeric
// re-factorisation and solve.
type transformer struct {
	sys *exitSystem
	m   *nodesys.Matrix[complex128]
	f   *nodesys.Factor[complex128]
	rhs []complex128
	u   []complex128
	ld  exitLoad[complex128]
	n   int             // evaluations so far
	ctx context.Context // checked before each evaluation; nil: never stops
	// helpers are clones (own matrix, factor and vectors on the same
	// system) that evaluate other points of a batch in parallel (atMany).
	helpers []*transformer
	// tree is sys.tree unless general is set; tw is atTree's workspace.
	tree *exitTree
	tw   []treeNode
	// general forces the general node-system path (tests compare the
	// two).
	general bool
}

func newTransformer(sys *exitSystem) *transformer {
	tr := &transformer{sys: sys, tree: sys.tree}
	if tr.tree == nil {
		tr.allocGeneral()
	}
	tr.ld = exitLoad[complex128]{
		edgeF:  func(el *exitEl) complex128 { return complex(el.c, 0) },
		nodeG:  func(v int) complex128 { return complex(sys.law[v].Leak, 0) },
		fixedG: func(int) complex128 { return 1 },
	}
	return tr
}

// allocGeneral allocates the matrix, factor and vectors of the general
// path.
func (tr *transformer) allocGeneral() {
	tr.m = newMatrix[complex128](tr.sys)
	tr.f = nodesys.NewFactor[complex128](nil)
	tr.rhs = make([]complex128, tr.sys.nUnk)
	tr.u = make([]complex128, tr.sys.nUnk)
}

// useGeneral switches tr (and its future helpers) to the general path.
func (tr *transformer) useGeneral() {
	tr.general, tr.tree = true, nil
	if tr.m == nil {
		tr.allocGeneral()
	}
}

// atMany evaluates L at every point of ss into out (errs[j] the error of
// point j, nil when it succeeded), spread over up to GOMAXPROCS goroutines,
// each with its own copy of the matrix and factor (the system is shared,
// read only). Every point's value is the one at would return: each is an
// independent assembly, factorisation and solve.
func (tr *transformer) atMany(ss []complex128, out []complex128, errs []error) {
	workers := min(runtime.GOMAXPROCS(0), len(ss))
	size := tr.sys.nUnk
	if tr.tree != nil {
		size = len(tr.tree.par)
	}
	if workers <= 1 || size < parallelTransformUnknowns {
		for j, s := range ss {
			out[j], errs[j] = tr.at(s)
		}
		return
	}
	for len(tr.helpers) < workers-1 {
		h := newTransformer(tr.sys)
		h.ctx = tr.ctx
		if tr.general {
			h.useGeneral()
		}
		tr.helpers = append(tr.helpers, h)
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := range workers {
		t := tr
		if w > 0 {
			t = tr.helpers[w-1]
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				j := int(next.Add(1) - 1)
				if j >= len(ss) {
					return
				}
				out[j], errs[j] = t.at(ss[j])
			}
		}()
	}
	wg.Wait()
	for _, h := range tr.helpers {
		tr.n += h.n
		h.n = 0
	}
}

// parallelTransformUnknowns is the smallest node system whose transform
// values are spread over several goroutines: below it a factorisation takes
// microseconds and starting goroutines would cost more than it saves
// (common practice, no source).
const parallelTransformUnknowns = 2000

// at returns L(s) at the start.
func (tr *transformer) at(s complex128) (complex128, error) {
	if tr.ctx != nil {
		if err := tr.ctx.Err(); err != nil {
			return 0, fmt.Errorf("Laplace transform of the lifetime: stopped: %w", err)
		}
	}
	tr.n++
	if tr.tree != nil {
		v, err := tr.atTree(s)
		if err != nil {
			return 0, fmt.Errorf("Laplace transform of the lifetime at s = %v: %w", s, err)
		}
		if math.IsNaN(real(v)) || math.IsNaN(imag(v)) || math.IsInf(real(v), 0) || math.IsInf(imag(v), 0) {
			return 0, fmt.Errorf("Laplace transform of the lifetime at s = %v is not finite", s)
		}
		return v, nil
	}
	tr.ld.s = s
	assemble(tr.sys, tr.m, tr.rhs, tr.ld)
	if err := factor(tr.sys, tr.f, tr.m); err != nil {
		return 0, fmt.Errorf("Laplace transform of the lifetime at s = %v: %w", s, err)
	}
	tr.f.SolveTo(tr.u, tr.rhs)
	v := tr.u[tr.sys.unk[tr.sys.start]]
	if math.IsNaN(real(v)) || math.IsNaN(imag(v)) || math.IsInf(real(v), 0) || math.IsInf(imag(v), 0) {
		return 0, fmt.Errorf("Laplace transform of the lifetime at s = %v is not finite", s)
	}
	return v, nil
}

// pointComponent returns the component, in the labelling comp of
// Network.Components, of the point p.
func pointComponent(net *Network, comp []int, p Point) int {
	if p.Edge >= 0 {
		return comp[net.Edges[p.Edge].From]
	}
	return comp[p.Node]
}

// identityMap returns 0, 1, …, n−1.
func identityMap(n int) []int {
	m := make([]int, n)
	for i := range m {
		m[i] = i
	}
	return m
}
