package graphpde

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
	"github.com/ramify-dev/ramify/vertex"
)

// Spectrum of a network.
//
// The eigenproblem is
//
//	(a u')' + b u' − c u = −λ ρ u   on every edge,
//	u = 0 at fixed nodes,   Σ_e J_e + β u = λ ρ_v u   at balance nodes,
//
// (docs/time-and-spectrum.md). Its eigenvalues are the decay rates of the
// transient problem: a disturbance of the steady field dies out like e^{−λ₁ t},
// so 1/λ₁ is the network's slowest relaxation time.
//
// For a self-adjoint network (no drift, the same weight at both ends of every
// edge, constant coefficients) the eigenvalues are real and are found with
// exact elements by the Wittrick–Williams count (Wittrick & Williams, Q. J.
// Mech. Appl. Math. 24 (1971) 263 — from memory): with K(λ) the node matrix
// of the exact elements at decay c − λρ and leak β − λρ_v, the number of
// eigenvalues below λ is
//
//	N(λ) = neg K(λ) + Σ_e #{clamped–clamped eigenvalues of edge e below λ},
//
// neg the number of negative pivots of the LDLᵀ factorisation of K(λ)
// (Sylvester's law of inertia). N is exact, so no eigenvalue is missed and
// multiplicities are the jumps of N — also where several edges' sin(kL)
// vanish together, where a secular Σ cot equation loses roots. Each
// eigenvalue is bracketed by N to a width of about 1e-13 of the scale.
// Below the least λ at which an edge nears a clamped eigenvalue the trial
// values come from shift-invert Lanczos on the linearised pencil and
// Halley steps on 1/(xᵀK(λ)⁻¹x) (spectrum_fast.go); above it from a
// secant on 1/(eᵀK(λ)⁻¹e), safeguarded by bisection either way.
//
// Other networks (coefficients varying along edges, drift, unequal end
// weights) are discretised on the finite-volume grid of the steady solver and
// solved by shift-invert Arnoldi with the node-system factorisation; with
// drift or unequal weights the eigenvalues may be complex and are reported
// as such.

// SpectrumSettings controls Spectrum. A nil *SpectrumSettings means the
// defaults.
type SpectrumSettings struct {
	// Count is the number of smallest eigenvalues wanted, multiplicities
	// counted; 0 means 10.
	Count int
	// Method: MethodAuto (the zero value) counts with exact elements where
	// the network allows it and uses the grid otherwise; MethodExact
	// refuses networks that need the grid; MethodGrid always uses it.
	Method Method
	// Cells is the number of grid cells of an edge whose Edge.Cells is 0
	// (grid method only); 0 means DefaultCells.
	Cells int
	// Modes asks for the mode shapes of the simple real eigenvalues
	// (SpectrumResult.Modes); not on the Arnoldi path.
	Modes bool
	// Context, when non-nil, stops the computation early; the eigenvalues
	// found so far are returned with Status IterationLimit.
	Context context.Context
}

// Eigenvalue is one eigenvalue of a network with its multiplicity.
type Eigenvalue struct {
	Value float64 // real part of λ (1/time)
	Imag  float64 // imaginary part (0 for self-adjoint networks)
	// Multiplicity is the number of independent modes (exact method); on
	// the grid, the number of computed eigenvalues that agree to the
	// accuracy of the computation.
	Multiplicity int
	// Err bounds |λ − Value| for the numerical solution of the problem
	// stated (the exact method's bracket width; on the grid the bracket or
	// the Arnoldi residual bound plus half the change from a grid of half
	// the cell width, an estimate of the discretisation error).
	Err float64
}

// SpectrumResult is the outcome of Spectrum.
type SpectrumResult struct {
	// Eigenvalues in ascending order of real part (then imaginary part),
	// multiplicities counted once each.
	Eigenvalues []Eigenvalue
	// Method used: "exact" (Wittrick–Williams count) or "grid" (shift-invert
	// Arnoldi on the finite-volume grid).
	Method string
	// SelfAdjoint reports whether the problem is self-adjoint (real
	// eigenvalues).
	SelfAdjoint bool
	Status      Status
	Stats       SpectrumStats
	// Modes, when asked for: the shapes of the simple real eigenvalues.
	Modes []Mode
}

// SpectrumStats describes the work of Spectrum.
type SpectrumStats struct {
	Factorizations int // factorisations of the node or grid matrix
	Unknowns       int // unknowns of that matrix
	Time           time.Duration
}

// RelaxationTime returns 1/λ₁, the time constant of the slowest decaying
// mode, or +Inf when the smallest eigenvalue is 0 (a network that nothing
// anchors keeps its mean forever) and NaN when there are no eigenvalues.
func (r *SpectrumResult) RelaxationTime() float64 {
	if len(r.Eigenvalues) == 0 {
		return math.NaN()
	}
	l := r.Eigenvalues[0].Value
	if l <= 0 {
		return math.Inf(1)
	}
	return 1 / l
}

// Spectrum returns the smallest eigenvalues of the network (see the top of
// this file). It fails on a network with nonlinear laws or laws that depend
// on time, and when the grid is needed but MethodExact was asked for.
func Spectrum(net *Network, set *SpectrumSettings) (*SpectrumResult, error) {
	var s SpectrumSettings
	if set != nil {
		s = *set
	}
	if s.Count < 0 {
		return nil, fmt.Errorf("count = %d must be ≥ 0", s.Count)
	}
	if s.Count == 0 {
		s.Count = 10
	}
	if s.Context == nil {
		s.Context = context.Background()
	}
	if err := spectrumCheck(net); err != nil {
		return nil, err
	}
	if err := checkIsolated(net); err != nil {
		return nil, err
	}
	t0 := time.Now()
	exactOK, why := spectrumExactOK(net)
	var res *SpectrumResult
	var err error
	switch {
	case s.Method == MethodGrid || (s.Method == MethodAuto && !exactOK):
		res, err = spectrumGrid(net, &s)
	case !exactOK:
		return nil, errors.New(why + ": method exact needs a self-adjoint network with constant coefficients (use auto or grid)")
	default:
		res, err = spectrumExact(net, &s)
	}
	if res != nil {
		res.Stats.Time = time.Since(t0)
	}
	return res, err
}

// spectrumCheck rejects laws for which the eigenproblem is not defined.
func spectrumCheck(net *Network) error {
	for i := range net.Nodes {
		nd := &net.Nodes[i]
		if nd.Nonlinear != nil {
			return &ModelError{Object: "node", ID: nd.ID, Reason: "has a nonlinear law: the spectrum is that of a linear network"}
		}
	}
	for i := range net.Edges {
		ed := &net.Edges[i]
		if l := ed.Law; l != nil {
			if l.Equation != nil {
				return &ModelError{Object: "edge", ID: ed.ID, Reason: "has a nonlinear equation: the spectrum is that of a linear network"}
			}
			for _, c := range []*Coef{l.A, l.B, l.C, l.Rho} {
				if c != nil && (c.UsesU || c.UsesT) {
					return &ModelError{Object: "edge", ID: ed.ID, Reason: fmt.Sprintf("coefficient %q depends on u or t: the spectrum is that of a linear, time-invariant network", c.Src)}
				}
			}
		}
	}
	return nil
}

// varies reports whether a law depends on x, u or t (one that reads only
// parameters is a constant whose value the plain field holds).
func varies(c *Coef) bool { return c != nil && (c.UsesX || c.UsesU || c.UsesT) }

// spectrumExactOK reports whether every edge is drift-free with constant
// coefficients and equal end weights, and if not, why.
func spectrumExactOK(net *Network) (bool, string) {
	for i := range net.Edges {
		ed := &net.Edges[i]
		switch {
		case !ed.Constant() || (ed.Law != nil && (varies(ed.Law.A) || varies(ed.Law.B) || varies(ed.Law.C) || varies(ed.Law.Rho))):
			return false, fmt.Sprintf("edge %q has coefficients that vary along it", ed.ID)
		case ed.B != 0:
			return false, fmt.Sprintf("edge %q has drift", ed.ID)
		case ed.EndWeight(0) != ed.EndWeight(1) && net.Nodes[ed.From].Law.Kind != vertex.Fixed && net.Nodes[ed.To].Law.Kind != vertex.Fixed:
			// (the weight at a fixed end does not enter the problem)
			return false, fmt.Sprintf("edge %q has different weights at its ends", ed.ID)
		}
	}
	return true, ""
}

// wwSystem is the node matrix K(λ) of the exact elements, for the
// Wittrick–Williams count.
//
// Unknowns: the balance nodes and one point inside every edge (see countAt).
// They are numbered in elimination order and factored with the Natural
// ordering: the nodes in minimum-degree order, and each edge's inner point
// right after the later of its ends. Eliminating an edge's inner point before
// its ends would, near a clamped eigenvalue of the edge, leave a pivot of
// the size of the distance to it and spread its inverse over the ends,
// where it cancels (no pivoting): counts would then be wrong within about
// √eps of such an eigenvalue. With the ends first, the small pivot comes
// last and the count is right to round-off.
//
// The matrix is a nodePattern over the network's nodes and the inner
// points (system node len(Nodes)+e for edge e) with three elements per
// edge: the whole edge (element 3e), its piece from the From end to the
// inner point (3e+1) and from the inner point to the To end (3e+2); the
// assembly writes into their slots.
type wwSystem struct {
	net   *Network
	unk   []int // node → unknown or −1
	mid   []int // edge → unknown of its inner point
	m     int   // balance nodes
	pat   *nodePattern
	mat   *nodesys.Matrix[float64]
	fac   *nodesys.Factor[float64]
	e, x  []float64
	facts int
	scale float64 // size of the smallest eigenvalues, for absolute nudges
}

func newWW(net *Network) *wwSystem {
	nn, ne := len(net.Nodes), len(net.Edges)
	w := &wwSystem{net: net, unk: make([]int, nn), mid: make([]int, ne)}
	// Minimum-degree order of the balance nodes, on the pattern of the
	// node system alone (parallel edges merged, loops on the diagonal).
	bal, balNodes := numberNodes(net)
	w.m = len(balNodes)
	ends := make([][2]int, ne)
	for e := range net.Edges {
		ends[e] = [2]int{net.Edges[e].From, net.Edges[e].To}
	}
	np := newNodePattern(bal, balNodes, ends)
	perm := nodesys.MinimumDegreeOrder(w.m, np.rowPtr, np.col)
	pos := make([]int, w.m) // balance index → place in perm
	for k, i := range perm {
		pos[i] = k
	}
	// Edges by the later of their balance ends (−1: none).
	byEnd := make([][]int, w.m)
	next := 0
	for e, ed := range net.Edges {
		last := -1
		for _, v := range []int{ed.From, ed.To} {
			if i := bal[v]; i >= 0 && (last < 0 || pos[i] > pos[last]) {
				last = i
			}
		}
		if last < 0 {
			w.mid[e] = next // an edge between fixed nodes: alone
			next++
			continue
		}
		byEnd[last] = append(byEnd[last], e)
	}
	for v := range w.unk {
		w.unk[v] = -1
	}
	for _, i := range perm {
		w.unk[balNodes[i]] = next
		next++
		for _, e := range byEnd[i] {
			w.mid[e] = next
			next++
		}
	}
	// System nodes: the network's nodes, then the inner points.
	unk := make([]int, nn+ne)
	copy(unk, w.unk)
	for e := range net.Edges {
		unk[nn+e] = w.mid[e]
	}
	nodes := make([]int, next)
	for s, i := range unk {
		if i >= 0 {
			nodes[i] = s
		}
	}
	sends := make([][2]int, 3*ne)
	for e, ed := range net.Edges {
		sends[3*e] = [2]int{ed.From, ed.To}
		sends[3*e+1] = [2]int{ed.From, nn + e}
		sends[3*e+2] = [2]int{nn + e, ed.To}
	}
	w.pat = newNodePattern(unk, nodes, sends)
	w.mat = nodesys.NewMatrixPattern[float64](next, w.pat.rowPtr, w.pat.col)
	sym := true
	// The pivots of an indefinite K(λ) may be small after cancellation
	// without K being nearly singular (no pivoting); only their signs are
	// used, so only pivots that vanish to round-off are refused.
	w.fac = nodesys.NewFactor[float64](&nodesys.Settings{Ordering: nodesys.Natural, Symmetric: &sym, PivotTol: 0x1p-60})
	w.e = make([]float64, next)
	w.x = make([]float64, next)
	for i := range w.e {
		// a fixed vector with no special structure, so that no
		// eigenvector is orthogonal to it except by accident
		w.e[i] = 1 + 0.5*math.Sin(1.7*float64(i)+0.3)
	}
	return w
}

// splitAt is about where an edge is split when λ is close to one of its
// clamped eigenvalues (2 − φ, so that the poles of the two pieces fall
// between those of the whole edge).
const splitAt = 0.3819660112501051

// splitFrac is where edge e is split: near splitAt, but different for
// every edge (by ±0.01, the fractional parts of e·φ). At a clamped
// eigenvalue of the whole edge its short piece adds k·cot(s·kL) > 0 to
// the diagonal of one end and its long piece k·cot((1 − s)·kL) < 0, the
// same in size for the same s: a node between equal edges at their
// clamped eigenvalues (a ring of equal edges, an equilateral mesh) then
// had a diagonal of round-off, the first pivot of the elimination
// without pivoting, and counts wrong within about √eps of the
// eigenvalue (double eigenvalues of a ring of 4 edges reported as two
// simple ones 1e-9 apart, each with a bracket of 1e-12).
func splitFrac(e int) float64 {
	const phi = 0.6180339887498949
	f := float64(e)*phi + 0.5 // edge 0 at splitAt itself
	return splitAt + 0.02*(f-math.Floor(f)-0.5)
}

// edgeDyn returns the diagonal and off-diagonal entries of the exact
// element of a piece of length L of edge ed in K(λ), per unit weight α, and
// the number of its clamped–clamped eigenvalues below λ:
//
//	q = (λρ − c)/a > 0, k = √q:  diag = k cot kL,  off = −k / sin kL,
//	q < 0, κ = √−q:              diag = κ coth κL, off = −κ / sinh κL,
//
// both written with z = kL (or κL) as (1/L)·z cot z and (1/L)·z/sin z so that
// q → 0 is smooth, and in exponentially scaled form for large κL. It also
// returns |sin z| (1 when q ≤ 0), the distance from a pole.
func edgeDyn(ed *Edge, L, lam float64) (diag, off float64, clamped int, dist float64) {
	a, c, rho := ed.A, ed.C, ed.Rho
	q := (lam*rho - c) / a
	dist = 1
	switch {
	case q > 0:
		z := math.Sqrt(q) * L
		clamped = int(math.Ceil(z/math.Pi)) - 1
		if z < 1e-4 {
			z2 := z * z
			diag = 1 - z2/3
			off = -(1 + z2/6)
		} else {
			s, co := math.Sincos(z)
			diag = z * co / s
			off = -z / s
			dist = math.Abs(s)
		}
	case q < 0:
		z := math.Sqrt(-q) * L
		if z < 1e-4 {
			z2 := z * z
			diag = 1 + z2/3
			off = -(1 - z2/6)
		} else {
			e2 := math.Exp(-2 * z)
			den := -math.Expm1(-2 * z)
			diag = z * (1 + e2) / den
			off = -2 * z * math.Exp(-z) / den
		}
	default:
		diag, off = 1, -1
	}
	return diag / L, off / L, clamped, dist
}

// countNudged returns N(λ) and g(λ) of w. A pivot too small to be trusted
// means λ is (nearly) an eigenvalue: λ is then moved by a few units of
// round-off and the count repeated; the value used is returned as lamUsed.
func countNudged(w eigenCounter, lam, scale float64) (n int, g, lamUsed float64, err error) {
	for try := 0; ; try++ {
		n, g, err = w.countAt(lam)
		if err == nil {
			return n, g, lam, nil
		}
		var se *nodesys.SingularError
		if !errors.As(err, &se) || try == 8 {
			return 0, 0, lam, err
		}
		lam += math.Max(math.Abs(lam), scale) * 0x1p-46 * float64(int(1)<<try)
	}
}

// countAt assembles K(λ) and factors it. Unknowns: the balance nodes, then
// one per edge for a point inside it (at splitFrac of its length). An edge
// whose λ is closer to one of its own clamped eigenvalues (where its entries
// are huge and cancel in the pivots) than those of its two pieces is split
// there; otherwise the point's unknown is decoupled (row of the identity,
// one positive pivot). Splitting does not change N(λ) (the count holds for
// any subdivision), only the conditioning.
func (w *wwSystem) countAt(lam float64) (int, float64, error) {
	net := w.net
	p := w.pat
	val := w.mat.Values()
	clear(val)
	clamped := 0
	for v := range net.Nodes {
		if i := w.unk[v]; i >= 0 {
			l := net.Nodes[v].Law
			val[p.dslot[i]] += l.Leak - lam*l.Capacity
		}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		i, j := w.unk[ed.From], w.unk[ed.To]
		mid := w.mid[e]
		a0, a1 := ed.EndWeight(0), ed.EndWeight(1)
		if i < 0 {
			a0 = a1 // (the weight at a fixed end does not enter)
		} else if j < 0 {
			a1 = a0
		}
		L := ed.Length
		diag, off, cl, dist := edgeDyn(ed, L, lam)
		sf := splitFrac(e)
		d1, o1, c1, dist1 := edgeDyn(ed, sf*L, lam)
		d2, o2, c2, dist2 := edgeDyn(ed, (1-sf)*L, lam)
		split := dist < 0.1 && dist < math.Min(dist1, dist2)
		if !split {
			d1, o1, d2, o2 = 0, 0, 0, 0
			val[p.dslot[mid]] += 1
			clamped += cl
		} else {
			diag, off = 0, 0
			val[p.dslot[mid]] += a0 * (d1 + d2)
			clamped += c1 + c2
		}
		// slots: whole edge (i,j), (j,i); first piece (i,mid), (mid,i);
		// second piece (mid,j), (j,mid)
		s0, s1, s2 := p.eslot[3*e], p.eslot[3*e+1], p.eslot[3*e+2]
		if ed.From == ed.To {
			if i >= 0 {
				if split {
					// both pieces join i and mid: their slots are shared
					val[p.dslot[i]] += a0 * (d1 + d2)
					val[s1[0]] += a0 * (o1 + o2)
					val[s1[1]] += a0 * (o1 + o2)
				} else {
					// diag + off on both ends: −2k tan(kL/2) without
					// the cancellation of cot and 1/sin
					val[p.dslot[i]] += 2 * a0 * loopDyn(ed, lam)
				}
			}
			continue
		}
		if i >= 0 {
			val[p.dslot[i]] += a0 * (diag + d1)
			val[s1[0]] += a0 * o1
			val[s1[1]] += a0 * o1
		}
		if j >= 0 {
			val[p.dslot[j]] += a1 * (diag + d2)
			val[s2[0]] += a1 * o2
			val[s2[1]] += a1 * o2
		}
		if i >= 0 && j >= 0 {
			// a0 = a1 here (spectrumExactOK)
			val[s0[0]] += a0 * off
			val[s0[1]] += a0 * off
		}
	}
	w.facts++
	neg, g, err := inertiaSecant(w.fac, w.mat, w.e, w.x, "node")
	if err != nil {
		return 0, 0, err
	}
	return clamped + neg, g, nil
}

// inertiaSecant factors the symmetric matrix A(λ) in mat with fac and
// returns the number of its negative pivots and g(λ) = 1/(eᵀA(λ)⁻¹e) (see
// eigenCounter), with x as scratch for A(λ)⁻¹e; what names the matrix in
// the error of an unsymmetric factorisation.
func inertiaSecant(fac *nodesys.Factor[float64], mat *nodesys.Matrix[float64], e, x []float64, what string) (int, float64, error) {
	if err := fac.Factorize(mat); err != nil {
		return 0, 0, err
	}
	neg, ok := fac.Inertia()
	if !ok {
		return 0, 0, errors.New("graphpde: " + what + " matrix not factored symmetrically")
	}
	fac.SolveTo(x, e)
	h := 0.0
	for i, v := range x {
		h += e[i] * v
	}
	return neg, 1 / h, nil
}

// loopDyn returns (diag + off) per unit weight for a self-loop of length L:
// −k tan(kL/2) for q = (λρ − c)/a = k² > 0, κ tanh(κL/2) for q = −κ² < 0.
func loopDyn(ed *Edge, lam float64) float64 {
	q := (lam*ed.Rho - ed.C) / ed.A
	switch {
	case q > 0:
		k := math.Sqrt(q)
		return -k * math.Tan(k*ed.Length/2)
	case q < 0:
		k := math.Sqrt(-q)
		return k * math.Tanh(k*ed.Length/2)
	}
	return 0
}

// eigenCounter counts eigenvalues below λ: N(λ), g(λ) = 1/(eᵀA(λ)⁻¹e)
// for the secant (NaN if none), and a *nodesys.SingularError when A(λ) is
// singular to working precision.
type eigenCounter interface {
	countAt(lam float64) (int, float64, error)
	factorizations() int
}

func (w *wwSystem) factorizations() int { return w.facts }

// eigenScale returns the size of the smallest eigenvalues: the smallest
// clamped eigenvalue of an edge (with the largest a/ρ along it), or a
// node's own rate β/ρ_v.
func eigenScale(net *Network) float64 {
	scale := math.Inf(1)
	for e := range net.Edges {
		ed := &net.Edges[e]
		a, _, c, _, rho := fvCoefs(ed, 0.5*ed.Length, 0)
		scale = math.Min(scale, (c+a*(math.Pi/ed.Length)*(math.Pi/ed.Length))/rho)
	}
	for v := range net.Nodes {
		if l := net.Nodes[v].Law; l.Kind == vertex.Balance && l.Capacity > 0 && l.Leak > 0 {
			scale = math.Min(scale, l.Leak/l.Capacity)
		}
	}
	if math.IsInf(scale, 1) || !(scale > 0) {
		scale = 1
	}
	return scale
}

// spectrumExact finds the s.Count smallest eigenvalues by the count: below
// fastLimit with the node system alone, trial values from shift-invert
// Lanczos and Halley steps (spectrum_fast.go), above it with the split
// system and the secant.
func spectrumExact(net *Network, s *SpectrumSettings) (*SpectrumResult, error) {
	scale := eigenScale(net)
	res := &SpectrumResult{Method: "exact", SelfAdjoint: true, Status: Converged}
	c := newExactCounter(net, scale)
	seeds := lanczosSeeds(c, scale, s.Count, func() bool { return s.Context.Err() != nil })
	if err := byCount(c, scale, s, res, seeds); err != nil {
		return nil, err
	}
	if s.Modes {
		if err := exactModes(net, c.split(), res); err != nil {
			return nil, err
		}
	}
	_, nodes := numberNodes(net)
	res.Stats.Unknowns = len(nodes)
	return res, nil
}

// slopeCounter is an eigenCounter that also gives g'(λ) and g″(λ) of its
// last count (NaN when it has none), for Newton and Halley steps.
type slopeCounter interface {
	lastSlope() float64
	lastCurvature() float64
}

// probeCounter is an eigenCounter whose vector x of g(λ) = 1/(xᵀA(λ)⁻¹x)
// can be reset (setProbe(nil)) and advanced by one step of inverse
// iteration at its last count.
type probeCounter interface {
	setProbe(x []float64)
	advanceProbe() bool
}

func (c *exactCounter) lastSlope() float64 { return c.slope }

func (c *exactCounter) lastCurvature() float64 { return c.curv }

// mergeRel is the relative distance below which byCount reports two
// eigenvalues as one multiple eigenvalue (see the merge there).
const mergeRel = 1e-8

// byCount finds the s.Count smallest eigenvalues of a self-adjoint problem
// by bracketing with the counter c and refining each by Halley (or
// Newton) steps on g where the counter gives g″ and g' (slopeCounter), by
// a secant on g otherwise, safeguarded by bisection; scale is the size of
// the smallest eigenvalues.
// seeds (nil: none) add counts already taken and estimates of eigenvalues,
// tried as trial values before bisection.
func byCount(w eigenCounter, scale float64, s *SpectrumSettings, res *SpectrumResult, seeds *countSeeds) error {
	absTol := 1e-13 * scale
	type eval struct {
		lam, g, slope, curv float64
		n                   int
	}
	sc, _ := w.(slopeCounter)
	pc, _ := w.(probeCounter)
	count := func(lam float64) (eval, error) {
		n, g, err := w.countAt(lam)
		ev := eval{lam: lam, g: g, n: n, slope: math.NaN(), curv: math.NaN()}
		if sc != nil {
			ev.slope, ev.curv = sc.lastSlope(), sc.lastCurvature()
		}

		return ev, err
	}
	// Bracket: N(lo) = 0 (every eigenvalue is ≥ 0), N(hi) ≥ Count.
	// Every evaluation narrows the bracket of every later eigenvalue.
	evals := []eval{{lam: -0.7 * scale, g: math.NaN(), slope: math.NaN()}}
	var est []float64
	if seeds != nil {
		for _, c := range seeds.counts {
			evals = append(evals, eval{lam: c.lam, n: c.n, g: math.NaN(), slope: math.NaN()})
		}
		est = seeds.est
	}
	hi := eval{lam: 1.3 * scale}
	top := math.Inf(1) // least λ counted with N ≥ Count so far
	base := evals[0]   // greatest λ counted with N < Count so far
	for _, ev := range evals {
		if ev.n >= s.Count {
			top = math.Min(top, ev.lam)
		} else if ev.lam > base.lam {
			base = ev
		}
	}
	grow := false // grow the trial value from base while it is below fastLimit
	if len(est) > 0 && math.IsInf(top, 1) {
		// just above the estimate of the last wanted eigenvalue
		j := min(len(est), s.Count) - 1
		e := est[j]
		if j+1 < len(est) {
			hi.lam = 0.5 * (e + est[j+1])
		} else {
			hi.lam = e + 0.05*math.Max(e-base.lam, 0) + absTol
		}
		grow = true
	}
	for math.IsInf(top, 1) {
		var err error
		hi.n, hi.g, hi.lam, err = countNudged(w, hi.lam, scale)
		if err != nil {
			return err
		}
		hi.slope = math.NaN()
		evals = append(evals, hi)
		if hi.n >= s.Count || hi.lam > 1e300 {
			break // (fewer eigenvalues than asked: a network of nodes only)
		}
		next := math.Max(2*hi.lam, 1.3*scale)
		if grow {
			// twice as far from the last count below the wanted ones,
			// which on a dense spectrum is about twice as many
			if d := base.lam + 2*(hi.lam-base.lam); d > hi.lam && d < next {
				next = d
			}
		}
		hi = eval{lam: next}
	}
	bracket := func(k int) (eval, eval) {
		l, h := eval{lam: math.Inf(-1)}, eval{lam: math.Inf(1)}
		for _, ev := range evals {
			if ev.n < k && ev.lam > l.lam {
				l = ev
			}
			if ev.n >= k && ev.lam < h.lam {
				h = ev
			}
		}
		return l, h
	}
	found := 0
	for found < s.Count {
		if s.Context.Err() != nil {
			res.Status = IterationLimit
			break
		}
		k := found + 1
		l, h := bracket(k)

		if math.IsInf(h.lam, 1) {
			break
		}
		if pc != nil {
			pc.setProbe(nil)
		}
		tried := map[float64]bool{} // estimates evaluated for this k
		var prev, last *eval
		shrink, width2 := math.Inf(1), math.Inf(1) // bracket widths one and two steps back
		lastStep := math.Inf(1)                    // size of the last Newton step
		var lam float64
		done := false
		// add records an evaluation and narrows the bracket with it.
		add := func(ev eval) {
			evals = append(evals, ev)
			if ev.n < k && ev.lam > l.lam {
				l = ev
			} else if ev.n >= k && ev.lam < h.lam {
				h = ev
			}
		}
		// probe counts on both sides of an estimate c, at distance d and,
		// where K is singular to working precision there too (or nothing
		// narrows), at 4d, 16d, … within the bracket. It reports whether
		// the bracket narrowed.
		probe := func(c, d float64) (bool, error) {
			w0 := h.lam - l.lam
			for ; d < w0; d *= 4 {
				for _, x := range []float64{c - d, c + d} {
					if x <= l.lam || x >= h.lam {
						continue
					}
					ev, err := count(x)
					var se *nodesys.SingularError
					if errors.As(err, &se) {
						continue
					}
					if err != nil {
						return false, err
					}
					ev.g, ev.slope = math.NaN(), math.NaN()
					add(ev)
				}
				if h.lam-l.lam < w0 {
					return true, nil
				}
			}
			return false, nil
		}
		for it := 0; it < 400 && !done; it++ {
			if s.Context != nil && s.Context.Err() != nil {
				break // not done: Status IterationLimit, the eigenvalues found so far kept
			}
			tol := 64*0x1p-52*math.Max(math.Abs(l.lam), math.Abs(h.lam)) + absTol
			if h.lam-l.lam <= 2*tol {
				lam = 0.5 * (l.lam + h.lam)
				done = true
				break
			}
			// A Halley or Newton step on g from the last evaluation where
			// the counter gives g', if it falls inside the bracket and is
			// less than half the step before; else a secant on g through
			// the last two evaluations, if it falls inside the bracket
			// and the bracket has at least halved over the last two
			// steps; else an estimate inside the bracket not tried yet;
			// otherwise bisection.
			cand := 0.5 * (l.lam + h.lam)
			secant := false
			width := h.lam - l.lam
			if last != nil && !math.IsNaN(last.slope) && !math.IsNaN(last.g) && last.slope != 0 {
				step := -last.g / last.slope
				// Halley's step where g″ is known and the step is no
				// more than twice Newton's (cubic convergence, Householder,
				// The Numerical Treatment of a Single Nonlinear Equation,
				// McGraw-Hill 1970, §4.3 — from memory)
				if den := 2*last.slope*last.slope - last.g*last.curv; !math.IsNaN(last.curv) && den != 0 {
					if hs := -2 * last.g * last.slope / den; math.Abs(hs) <= 2*math.Abs(step) && hs*step > 0 {
						step = hs
					}
				}
				c := last.lam + step
				switch {
				case math.Abs(step) < tol && last.lam >= l.lam && last.lam <= h.lam:
					cand, secant = c, true // converged (c may round to last.lam)
				case c > l.lam && c < h.lam && math.Abs(step) <= 0.5*lastStep:
					cand, secant = c, true
					lastStep = math.Abs(step)
				case pc != nil && (c <= l.lam || c >= h.lam):
					// The probe is locked onto a mode outside the
					// bracket: start it afresh.
					pc.setProbe(nil)
				}
			} else if prev != nil && last != nil && math.IsNaN(prev.slope) && last.g != prev.g && !math.IsNaN(last.g) && !math.IsNaN(prev.g) && width <= 0.5*shrink {
				c := last.lam - last.g*(last.lam-prev.lam)/(last.g-prev.g)
				if c > l.lam && c < h.lam {
					cand, secant = c, true
				}
			}
			if !secant {
				lastStep = math.Inf(1)
				for _, e := range est {
					if e > l.lam+tol && e < h.lam-tol && !tried[e] {
						cand = e
						tried[e] = true
						break
					}
				}
			}
			shrink, width2 = width2, width
			if !secant {
				shrink = math.Inf(1) // a bisection restarts the safeguard
			}
			if secant && math.Abs(cand-last.lam) < tol {
				// The iteration has converged next to the last
				// evaluation: one count on the other side of it finishes,
				// or else a bracket of width 2·tol around it.
				x := cand + tol
				if last.n >= k {
					x = cand - tol
				}
				if x > l.lam && x < h.lam {
					if ev, err := count(x); err == nil {
						ev.g, ev.slope = math.NaN(), math.NaN()
						add(ev)
						if h.lam-l.lam <= 2*tol {
							continue
						}
					}
				}
				if _, err := probe(cand, tol); err != nil {
					return err
				}
				prev, last = nil, nil
				continue
			}
			ev, err := count(cand)
			var se *nodesys.SingularError
			switch {
			case errors.As(err, &se):
				// K(cand) is singular to working precision: cand is an
				// eigenvalue to about that precision; bracket it.
				narrowed, err := probe(cand, tol)
				if err != nil {
					return err
				}
				if !narrowed {
					// singular all across the bracket: this is the
					// precision the factorisation allows
					lam = cand
					done = true
				}
				prev, last = nil, nil
				continue
			case err != nil:
				return err
			}
			add(ev)
			prev, last = last, &evals[len(evals)-1]
			if pc != nil {
				pc.advanceProbe()
			}
		}
		if !done {
			res.Status = IterationLimit
			break
		}
		mult := h.n - (k - 1)
		if mult < 1 {
			mult = 1
		}
		val := lam
		if math.Abs(val) <= absTol {
			val = 0
		}
		ev := Eigenvalue{Value: val, Multiplicity: mult, Err: 0.5*(h.lam-l.lam) + math.Abs(val-lam)}
		found += mult
		if n := len(res.Eigenvalues); n > 0 {
			// A multiple eigenvalue whose count jumped in two steps a
			// little apart: one eigenvalue, multiplicities added, its
			// error spanning both. The count is exact only up to
			// round-off right at λ, and where a pivot before the last
			// vanishes at λ too (a part of the network held at the rest
			// has the same eigenvalue: a path of three edges of a ring of
			// six equal edges) the elimination without pivoting gets the
			// count wrong within about 1e-9 of λ: eigenvalues closer than
			// mergeRel are not told apart.
			p := &res.Eigenvalues[n-1]
			if ev.Value-p.Value <= 2*(p.Err+ev.Err)+mergeRel*math.Abs(ev.Value)+2*absTol {
				lo, hi := math.Min(p.Value-p.Err, ev.Value-ev.Err), math.Max(p.Value+p.Err, ev.Value+ev.Err)
				p.Multiplicity += ev.Multiplicity
				p.Value = 0.5 * (lo + hi)
				p.Err = 0.5 * (hi - lo)
				if math.Abs(p.Value) <= absTol {
					p.Value = 0
				}
				continue
			}
		}
		res.Eigenvalues = append(res.Eigenvalues, ev)
	}
	if n := len(res.Eigenvalues); n > 0 && res.Status != IterationLimit {
		// The last eigenvalue's multiplicity: its bracket may end at a
		// count taken within round-off of it, where only part of its
		// jump shows (the loop above stops at Count). A count just past
		// the window in which brackets are merged gives the rest.
		p := &res.Eigenvalues[n-1]
		x := p.Value + 2*p.Err + mergeRel*math.Abs(p.Value) + 2*absTol
		if ev, err := count(x); err == nil && ev.n > found {
			lo := p.Value - p.Err
			p.Multiplicity += ev.n - found
			p.Value, p.Err = 0.5*(lo+x), 0.5*(x-lo)
		}
	}
	res.Stats.Factorizations = w.factorizations()
	return nil
}
