package graphpde

import (
	"fmt"
	"math"
	"reflect"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestQuasiPairSameAsOneAtATime: evaluating pairs of law edges with their
// loops interleaved (evalQuasiPair, backStepPair) gives the same Newton run
// bit for bit as evaluating the edges one at a time: residual history,
// steps, status, notes, errors, node values, grid values and fluxes. The
// networks make the pair path meet its irregular cases: an odd number of
// edges and edges with other cell counts (no partner), a law that is not
// monotone on both edges of a pair but first (in edge order) on the first
// edge at a later row than on the second (the note must name the first),
// and a law that fails (non-finite) beyond a value that the first full
// step crosses (errors, then shorter steps). Exact equality is the claim:
// the pair path does the same floating-point operations in the same order
// per edge (derived from the code; the running maximum of |r|/|b| may differ
// only in a rounding tie, which these runs do not meet).
func TestQuasiPairSameAsOneAtATime(t *testing.T) {
	comb := func(k, n int, law func(i int) *EdgeLaw, cells func(i int) int) *Network {
		net := &Network{}
		base, _ := net.AddNode(Node{ID: "base", Law: vertex.Law{Kind: vertex.Fixed, Value: 500}})
		for i := 0; i < k; i++ {
			tip, _ := net.AddNode(Node{ID: fmt.Sprintf("tip%d", i)})
			if _, err := net.AddEdge(Edge{ID: fmt.Sprintf("fin%d", i), From: base, To: tip,
				Length: 0.05 + 0.05*float64(i%7)/7, A: 7.8e-3, C: 0.157, Cells: cells(i), Law: law(i)}); err != nil {
				t.Fatal(err)
			}
		}
		return net
	}
	radiate := &EdgeLaw{F: &Coef{Fn: func(_, u, _ float64) (float64, float64) {
		u2 := u * u
		return -8.9e-10 * u2 * u2, -4 * 8.9e-10 * u2 * u
	}, UsesU: true}}
	// Not monotone where x lies in a window: a source growing in u.
	window := func(lo, hi float64) *EdgeLaw {
		return &EdgeLaw{F: &Coef{Fn: func(x, u, _ float64) (float64, float64) {
			if x > lo && x < hi {
				return 0.2 * u, 0.2
			}
			return 0, 0
		}, UsesU: true}}
	}
	// A strong sink growing like √u, undefined below 0: from a start at the
	// base temperature the full steps leave the domain on this edge, so the
	// line search shortens every step (and Newton runs out of iterations
	// in the dead zone; the claim here is only that both paths agree).
	fragile := &EdgeLaw{F: &Coef{Fn: func(_, u, _ float64) (float64, float64) {
		if u < 0 {
			return math.NaN(), 0
		}
		r := math.Sqrt(u)
		return -1000 * r, -1000 * 0.5 / r
	}, UsesU: true}}
	cases := []struct {
		name string
		net  *Network
		set  NonlinearSettings
	}{
		{"radiating comb, odd count, mixed cells", comb(11, 40, func(int) *EdgeLaw { return radiate },
			func(i int) int { return []int{40, 40, 40, 40, 30, 40, 40, 1, 40, 40, 40}[i] }), NonlinearSettings{}},
		{"non-monotone, first edge later", comb(4, 50, func(i int) *EdgeLaw {
			if i%2 == 0 {
				return window(0.04, 0.045)
			}
			return window(0.001, 0.05)
		}, func(int) int { return 50 }), NonlinearSettings{}},
		{"law failing beyond the first step", comb(6, 30, func(i int) *EdgeLaw {
			if i == 3 {
				return fragile
			}
			return radiate
		}, func(int) int { return 30 }), NonlinearSettings{Guess: func(Point) float64 { return 500 }}},
	}
	run := func(net *Network, set NonlinearSettings, one bool) (*NonlinearResult, error, *nlSystem) {
		if set.MaxIter == 0 {
			set.MaxIter = 50
		}
		if set.Tol == 0 {
			set.Tol = 1e-10
		}
		sys, err := newNLSystem(net, &set)
		if err != nil {
			t.Fatal(err)
		}
		sys.onePerEdge = one
		sys.start(set.Guess)
		res, err := sys.newton(&set)
		return res, err, sys
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			pr, perr, ps := run(c.net, c.set, false)
			or, oerr, _ := run(c.net, c.set, true)
			if !ps.pairNext(0) {
				t.Fatal("edges 0 and 1 are not evaluated as a pair: the test no longer covers the pair path")
			}
			if fmt.Sprint(perr) != fmt.Sprint(oerr) {
				t.Fatalf("error %v in pairs, %v one at a time", perr, oerr)
			}
			if pr == nil || or == nil {
				t.Fatalf("results %v, %v", pr, or)
			}
			t.Logf("status %v, iterations %d, steps %g, notes %q", pr.Status, pr.Iterations, pr.Steps, pr.Notes)
			if pr.Status != or.Status || pr.Iterations != or.Iterations || !reflect.DeepEqual(pr.Notes, or.Notes) {
				t.Errorf("status %v/%v, iterations %d/%d, notes %q/%q (pairs/one at a time)",
					pr.Status, or.Status, pr.Iterations, or.Iterations, pr.Notes, or.Notes)
			}
			same := func(what string, a, b []float64) {
				if len(a) != len(b) {
					t.Errorf("%s: %d values in pairs, %d one at a time", what, len(a), len(b))
					return
				}
				for i := range a {
					if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
						t.Errorf("%s[%d] = %.17g in pairs, %.17g one at a time", what, i, a[i], b[i])
						return
					}
				}
			}
			if c.name == "law failing beyond the first step" && (len(pr.Steps) == 0 || pr.Steps[0] >= 1) {
				t.Errorf("steps %g: the first step was not shortened, the test no longer covers errors in the pair path", pr.Steps)
			}
			same("history", pr.History, or.History)
			same("steps", pr.Steps, or.Steps)
			if pr.Solution == nil || or.Solution == nil {
				if (pr.Solution == nil) != (or.Solution == nil) {
					t.Errorf("a solution in one run only")
				}
				return
			}
			same("U", pr.Solution.U, or.Solution.U)
			for e := range c.net.Edges {
				same(fmt.Sprintf("flux %d", e), pr.Solution.Flux[e][:], or.Solution.Flux[e][:])
				var a, b []FieldPoint
				a, b = pr.Solution.Sample(a, e), or.Solution.Sample(b, e)
				ua, ub := make([]float64, len(a)), make([]float64, len(b))
				for i := range a {
					ua[i] = a[i].U
				}
				for i := range b {
					ub[i] = b[i].U
				}
				same(fmt.Sprintf("grid %d", e), ua, ub)
			}
		})
	}
}
