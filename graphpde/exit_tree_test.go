package graphpde

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strconv"
	"testing"

	"github.com/ramify-dev/ramify/internal/laplace"
	"github.com/ramify-dev/ramify/vertex"
)

// driftTree returns a random tree of n edges like randomTree, with drift on
// a third of the edges, node capacities and leaks on some nodes, a fixed
// node inside the tree as well as at the leaves, and a self-loop and a
// parallel pair of edges when extras is set (still a tree of unknowns:
// parallel edges join the same two nodes).
func driftTree(tb testing.TB, n int, rnd *rand.Rand, extras bool) *Network {
	net := randomTree(tb, n, rnd)
	for k := range net.Edges {
		if rnd.IntN(3) == 0 {
			net.Edges[k].B = 4 * (rnd.Float64() - 0.5)
		}
	}
	for v := range net.Nodes {
		if net.Nodes[v].Law.Kind == vertex.Fixed {
			continue
		}
		switch rnd.IntN(6) {
		case 0:
			net.Nodes[v].Law.Capacity = rnd.Float64()
		case 1:
			net.Nodes[v].Law.Leak = 0.3 * rnd.Float64()
		case 2:
			if v > n/3 {
				net.Nodes[v].Law = fixedAt(0)
			}
		}
	}
	if extras {
		e := net.Edges[n/2]
		e.ID = "twin"
		e.Length *= 1.3
		if _, err := net.AddEdge(e); err != nil {
			tb.Fatal(err)
		}
		free := -1
		for v := range net.Nodes {
			if net.Nodes[v].Law.Kind != vertex.Fixed {
				free = v
			}
		}
		if _, err := net.AddEdge(Edge{ID: "loop", From: free, To: free, Length: 0.7, A: 1, C: 0.2, Rho: 1}); err != nil {
			tb.Fatal(err)
		}
	}
	return net
}

// TestExitTreePass: the tree pass (atTree) and the general node-system
// factorisation give the same transform values on random trees with
// drift, capacities, leaks, inner fixed nodes, a parallel pair and a
// self-loop, at points of the right and the left half plane like those of
// the contours. Both are eliminations without pivoting of the same
// entries in different orders; the agreement allowed, 1e−11 relative, is
// rounding (measured worst 2.4e−15) amplified by the
// condition of the shifted systems near the contours' left reach.
func TestExitTreePass(t *testing.T) {
	const agree = 1e-11
	ss := []complex128{0.3, 2, 40, complex(1, 3), complex(-0.5, 2), complex(-3, 9), complex(-20, 40), complex(5, -0.5)}
	var worst float64
	for seed := range uint64(8) {
		rnd := rand.New(rand.NewPCG(seed, 17))
		net := driftTree(t, 40+int(seed)*30, rnd, seed%2 == 1)
		for _, start := range []Point{{Node: -1, Edge: 3, X: 0.3}, {Node: -1, Edge: len(net.Edges) / 3, X: 0.05}} {
			if net.Nodes[net.Edges[start.Edge].From].Law.Kind == vertex.Fixed && net.Nodes[net.Edges[start.Edge].To].Law.Kind == vertex.Fixed {
				continue
			}
			sys, err := newExitSystem(net, start)
			if err != nil {
				t.Fatal(err)
			}
			if sys.tree == nil {
				t.Fatalf("seed %d: no tree arrangement for a tree", seed)
			}
			fast, slow := newTransformer(sys), newTransformer(sys)
			slow.useGeneral()
			for _, s := range ss {
				a, errA := fast.at(s)
				b, errB := slow.at(s)
				if (errA == nil) != (errB == nil) {
					t.Errorf("seed %d s=%v: tree %v, general %v", seed, s, errA, errB)
					continue
				}
				if errA != nil {
					continue
				}
				d := cmplx.Abs(a-b) / math.Max(cmplx.Abs(b), 1e-300)
				worst = math.Max(worst, d)
				if d > agree {
					t.Errorf("seed %d start %v s=%v: tree %v, general %v (relative %.2g)", seed, start, s, a, b, d)
				}
			}
		}
	}
	t.Logf("worst relative difference %.2g", worst)
}

// TestExitTreeCycle: a network whose unknowns contain a cycle has no tree
// arrangement (the general path serves), and a cycle cut by a fixed node
// has one.
func TestExitTreeCycle(t *testing.T) {
	ring := func(fixed bool) *Network {
		var nodes []Node
		for i := range 4 {
			law := free
			if fixed && i == 2 {
				law = fixedAt(0)
			}
			nodes = append(nodes, Node{ID: "v" + strconv.Itoa(i), Law: law})
		}
		nodes = append(nodes, Node{ID: "out", Law: fixedAt(0)})
		var edges []edgeSpec
		for i := range 4 {
			edges = append(edges, edgeSpec{Edge{ID: "r" + strconv.Itoa(i), Length: 1, A: 1, Rho: 1}, "v" + strconv.Itoa(i), "v" + strconv.Itoa((i+1)%4)})
		}
		edges = append(edges, edgeSpec{Edge{ID: "leg", Length: 1, A: 1, Rho: 1}, "v0", "out"})
		return mustNet(t, nodes, edges)
	}
	for _, fixed := range []bool{false, true} {
		sys, err := newExitSystem(ring(fixed), Point{Node: 0, Edge: -1})
		if err != nil {
			t.Fatal(err)
		}
		if (sys.tree != nil) != fixed {
			t.Errorf("cut by a fixed node %v: tree arrangement %v", fixed, sys.tree != nil)
		}
	}
}

// TestExitFastEqualsGeneral: the exit statistics by the tree pass and wide
// windows equal those of the general factorisation and octave windows (the
// path before them) on random trees, to the accuracy each states: moments
// to the Cauchy integral's 1e−8 relative (momentAgreement), P(τ > t) to
// twice the windows' inversion error (1e−11 each, with a margin: 1e−9),
// quantiles to their search tolerance (1e−9 in probability; 1e−6 relative
// in t for these laws), hits and occupations to rounding.
func TestExitFastEqualsGeneral(t *testing.T) {
	const (
		steadyRel   = 1e-12
		momentRel   = 1e-8
		survivalAbs = 1e-9
		quantileRel = 1e-6
	)
	for seed := range uint64(6) {
		rnd := rand.New(rand.NewPCG(seed, 5))
		net := driftTree(t, 60+int(seed)*40, rnd, seed%3 == 2)
		if seed%2 == 0 { // reversible: no drift, wide windows apply
			for k := range net.Edges {
				net.Edges[k].B = 0
				net.Edges[k].Weight = [2]float64{}
			}
		}
		start := Point{Node: -1, Edge: 5, X: 0.4}
		set := ExitSettings{Times: []float64{0.01, 0.1, 0.3, 1, 3}, Moments: 3}
		old := set
		old.general = true
		a, err := ExitStatistics(net, start, &set)
		if err != nil {
			t.Fatal(err)
		}
		b, err := ExitStatistics(net, start, &old)
		if err != nil {
			t.Fatal(err)
		}
		if seed%2 == 0 && !a.law.wide {
			t.Errorf("seed %d: a reversible tree with CV %.2g was not inverted on wide windows", seed, a.SD/a.Mean)
		}
		close := func(what string, x, y, tol float64) {
			if math.IsNaN(x) && math.IsNaN(y) {
				return
			}
			if !(math.Abs(x-y) <= tol) {
				t.Errorf("seed %d: %s %.15g (fast) vs %.15g (general)", seed, what, x, y)
			}
		}
		for v := range a.Hit {
			close("hit "+net.Nodes[v].ID, a.Hit[v], b.Hit[v], steadyRel)
		}
		for e := range a.Occupation {
			close("occupation "+net.Edges[e].ID, a.Occupation[e], b.Occupation[e], steadyRel*b.Mean)
		}
		for k := range a.Moments {
			close("moment "+strconv.Itoa(k+1), a.Moments[k], b.Moments[k], momentRel*math.Abs(b.Moments[k]))
		}
		for i := range a.Survival {
			close("P(τ > "+strconv.FormatFloat(a.Survival[i].T, 'g', -1, 64)+")", a.Survival[i].P, b.Survival[i].P, survivalAbs)
		}
		for i := range a.Quantiles {
			close("quantile "+strconv.FormatFloat(a.Quantiles[i].P, 'g', -1, 64), a.Quantiles[i].T, b.Quantiles[i].T, quantileRel*b.Quantiles[i].T)
		}
		if a.Transforms >= b.Transforms {
			t.Logf("seed %d: %d transform values, general path %d", seed, a.Transforms, b.Transforms)
		}
	}
}

// TestCsqrtCdiv: the fast square root and division of the element agree
// with cmplx.Sqrt and Go's division to a few ε (4ε relative allowed: the
// formulas round a handful of times) on arguments in every quadrant and
// on both axes, over forty orders of magnitude, and hand the extreme ones
// over unchanged.
func TestCsqrtCdiv(t *testing.T) {
	const rel = 4 * 0x1p-52
	var ws []complex128
	for _, m := range []float64{1e-20, 1e-5, 0.3, 1, 7, 1e6, 1e20} {
		for _, a := range []float64{0, 0.4, 1.6, 2.9, math.Pi, -2.2, -0.7, -math.Pi / 2, math.Pi / 2} {
			ws = append(ws, cmplx.Rect(m, a))
		}
	}
	ws = append(ws, complex(-4, 0), complex(-4, math.Copysign(0, -1)), complex(3, 0), complex(1e200, 1e200), complex(1e-200, 0))
	for _, w := range ws {
		if got, want := csqrt(w), cmplx.Sqrt(w); cmplx.Abs(got-want) > rel*cmplx.Abs(want) {
			t.Errorf("csqrt(%v) = %v, cmplx.Sqrt %v", w, got, want)
		}
		for _, v := range ws[:20] {
			if got, want := cdiv(v, w), v/w; cmplx.Abs(got-want) > rel*cmplx.Abs(want) {
				t.Errorf("cdiv(%v, %v) = %v, Go %v", v, w, got, want)
			}
		}
	}
}

// TestExitWideFallback: wide windows that disagree where they meet hand
// the law back to octave windows. On one edge with drift b = 100 (an
// inverse Gaussian law with CV 0.2, too sharp for the wide contour: 1e−6
// wrong there, measured) forced onto wide windows, the gap between two
// neighbouring windows exceeds wideAgreement, and the values are then
// those of octave windows bit for bit; without drift (CV 0.8) the windows
// agree within 1e−12 (measured 1e−13) and stay wide.
func TestExitWideFallback(t *testing.T) {
	for _, c := range []struct {
		b    float64
		wide bool
	}{{100, false}, {0, true}} {
		net := mustNet(t, []Node{{ID: "l", Law: fixedAt(0)}, {ID: "r", Law: fixedAt(0)}},
			[]edgeSpec{{Edge{ID: "pipe", Length: 1, A: 1, B: c.b, Rho: 1}, "l", "r"}})
		start := Point{Node: -1, Edge: 0, X: 0.5}
		x0, err := ExitStatistics(net, start, &ExitSettings{Quantiles: []float64{}})
		if err != nil {
			t.Fatal(err)
		}
		var times []float64
		for f := 0.05; f < 8; f *= 1.3 {
			times = append(times, f*x0.Mean)
		}
		w, err := ExitStatistics(net, start, &ExitSettings{Times: times, wideAnyCV: true})
		if err != nil {
			t.Fatal(err)
		}
		o, err := ExitStatistics(net, start, &ExitSettings{Times: times, InversionNodes: laplace.DefaultWindowM})
		if err != nil {
			t.Fatal(err)
		}
		if w.law.wide != c.wide {
			t.Errorf("b = %g: wide %v after the check (gap %.2g), want %v", c.b, w.law.wide, w.law.wideGap, c.wide)
		}
		for i := range times {
			d := math.Abs(w.Survival[i].P - o.Survival[i].P)
			if (!c.wide && d != 0) || d > 1e-11 {
				t.Errorf("b = %g: P(τ > %g) %.15g on the windows used, %.15g on octave windows", c.b, times[i], w.Survival[i].P, o.Survival[i].P)
			}
		}
		if c.wide && w.law.wideGap > 1e-12 {
			t.Errorf("b = %g: wide windows differ by %.2g where they meet", c.b, w.law.wideGap)
		}
		if len(w.Notes) != len(o.Notes) {
			t.Errorf("b = %g: notes %q, octave windows %q", c.b, w.Notes, o.Notes)
		}
	}
}

// TestExitPointContours: with wide windows, a requested time far from the
// body of the law, alone in its window, is inverted on a contour of its
// own (24 values, not 40), to the same accuracy: on the interval of B2
// (Brownian motion from the centre of (−1, 1), eigen series) P(τ > t) at
// t = 0.004 and at t = 40 agree with the series within the inversion's
// 1e−11 (measured 1e−13), as does SurvivalAt, which takes the same
// contour (bit for bit).
func TestExitPointContours(t *testing.T) {
	net := mustNet(t, []Node{{ID: "lo", Law: fixedAt(0)}, {ID: "hi", Law: fixedAt(0)}},
		[]edgeSpec{{Edge{ID: "e", Length: 2, A: 0.5, Rho: 1}, "lo", "hi"}})
	times := []float64{0.004, 40}
	x, err := ExitStatistics(net, Point{Node: -1, Edge: 0, X: 1}, &ExitSettings{Times: times})
	if err != nil {
		t.Fatal(err)
	}
	if !x.law.wide || len(x.law.points) != 2 {
		t.Fatalf("wide %v, %d single-time contours; want wide and 2", x.law.wide, len(x.law.points))
	}
	for i, tt := range times {
		want := seriesB2(tt, 1)
		if math.Abs(x.Survival[i].P-want) > 1e-11 {
			t.Errorf("P(τ > %g) = %.15g, series %.15g", tt, x.Survival[i].P, want)
		}
		if survivalAt(t, x, tt) != x.Survival[i].P {
			t.Errorf("SurvivalAt(%g) = %.15g, reported %.15g", tt, survivalAt(t, x, tt), x.Survival[i].P)
		}
	}
}
