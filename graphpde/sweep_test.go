package graphpde

import (
	"context"
	"math"
	"testing"
)

// bratuParamNet is bratuNet with λ read from the network's parameters, as
// laws compiled from a file read them.
func bratuParamNet(t *testing.T, lambda float64, cells int) (*Network, int) {
	var net *Network
	net, m := bratuNet(t, &lambda, cells)
	net.Params = &Params{Names: []string{"lambda"}, Values: []float64{lambda}}
	eq := &Equation{Fn: func(x, u, ux, uxx float64) (e, du, dux, duxx float64) {
		l := net.Params.Values[0] * math.Exp(u)
		return uxx + l, l, 0, 1
	}}
	for e := range net.Edges {
		net.Edges[e].Law.Equation = eq
	}
	return net, m
}

// TestSweepBratuFold: continuation in λ from 1 towards 4 passes the fold of
// Bratu's problem at λ_c = 3.513830719125 (y tanh y = 1, λ_c = 8(y² − 1),
// y = θ/4; u(½) = 1.186842169 there), docs/references.md NL1: J. P. Boyd,
// Appl. Math. Comput. 143 (2003) 189–200, from memory; values derived at
// 30 digits. The fold is confirmed by the determinant's sign, the branch
// turns back (no solution reaches 4), and the grid error of λ_c is O(h²):
// the Richardson extrapolation of two grids matches λ_c and u(½) to 1e−6
// (measured: 7e−9 and 5e−8).
func TestSweepBratuFold(t *testing.T) {
	var folds, mids []float64
	for _, cells := range []int{32, 64} {
		net, m := bratuParamNet(t, 1, cells)
		res, err := Sweep(net, "lambda", 4, &SweepSettings{Probes: []Point{{Node: m, Edge: -1}}})
		if err != nil {
			t.Fatal(err)
		}
		if res.Fold == nil {
			t.Fatalf("no fold; status %v, %d points, notes %q", res.Status, len(res.Points), res.Notes)
		}
		t.Logf("cells %d: fold λ = %.10f, u(½) = %.8f, confirmed %v, status %v, %d points, notes %q",
			cells, res.Fold.Value, res.Fold.Probes[0], res.FoldConfirmed, res.Status, len(res.Points), res.Notes)
		if !res.FoldConfirmed {
			t.Errorf("fold not confirmed by the determinant's sign")
		}
		if res.Status != SweepTurned {
			t.Errorf("status %v, want %v", res.Status, SweepTurned)
		}
		if net.Params.Values[0] != 1 {
			t.Errorf("parameter not restored: %g", net.Params.Values[0])
		}
		folds = append(folds, res.Fold.Value)
		mids = append(mids, res.Fold.Probes[0])
		// Points before the fold lie on the lower branch, after it on
		// the upper one: u(½) increases along the branch.
		for k := 1; k < len(res.Points); k++ {
			if res.Points[k].Probes[0] <= res.Points[k-1].Probes[0] {
				t.Errorf("u(½) not increasing along the branch at point %d", k)
				break
			}
		}
	}
	rich := (4*folds[1] - folds[0]) / 3
	if math.Abs(rich-3.513830719125) > 1e-6 {
		t.Errorf("extrapolated λ_c = %.10f, want 3.513830719125 (grids: %.10f, %.10f)", rich, folds[0], folds[1])
	}
	if math.Abs(folds[1]-3.513830719125) > 1e-3 {
		t.Errorf("λ_c = %.10f at 64 cells per half", folds[1])
	}
	if mr := (4*mids[1] - mids[0]) / 3; math.Abs(mr-1.186842169) > 1e-6 {
		t.Errorf("extrapolated u(½) at the fold = %.8f, want 1.186842169", mr)
	}
}

// TestSweepReaches: a sweep that meets no fold lands on the target exactly,
// with the value of a direct solve there (Bratu from λ = 0.5 to 2: u(½) =
// 0.3289524213 on the lower branch, docs/references.md NL1, within the
// grid error measured in TestBratuBranches).
func TestSweepReaches(t *testing.T) {
	net, m := bratuParamNet(t, 0.5, 64)
	res, err := Sweep(net, "lambda", 2, &SweepSettings{Probes: []Point{{Node: m, Edge: -1}}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != SweepReached || res.Fold != nil {
		t.Fatalf("status %v, fold %v", res.Status, res.Fold)
	}
	last := res.Points[len(res.Points)-1]
	if last.Value != 2 {
		t.Errorf("last value %g, want 2", last.Value)
	}
	if math.Abs(last.Probes[0]-0.3289524213) > 1e-5 {
		t.Errorf("u(½) at λ = 2: %.10f, want 0.3289524213", last.Probes[0])
	}
}

// TestSweepInterrupted: a cancelled context stops the sweep between points,
// keeping the points computed (here the first, solved before the loop).
func TestSweepInterrupted(t *testing.T) {
	net, m := bratuParamNet(t, 1, 32)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	res, err := Sweep(net, "lambda", 4, &SweepSettings{Probes: []Point{{Node: m, Edge: -1}}, Context: ctx})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != SweepInterrupted || len(res.Points) != 1 || res.Points[0].Value != 1 {
		t.Errorf("status %v, %d points", res.Status, len(res.Points))
	}
}

// TestSweepThroughTwoFolds: u” + λ·exp(u/(1 + εu)) = 0 on (0, 1), u = 0 at
// both ends, with ε = 0.2 below the critical 1/4 has an S-shaped branch: it
// turns back at a first fold, turns forward again at a second one, and then
// exists for every larger λ (the Frank-Kamenetskii problem with Arrhenius
// heating; D. A. Frank-Kamenetskii, Diffusion and Heat Transfer in Chemical
// Kinetics, 1969, from memory; the shape, not the numbers, is what this
// test uses). A sweep from λ = 1 to 10 must go through both folds, report
// the first (λ above the Bratu value 3.5138, since the Arrhenius heating is
// weaker than eᵘ), and reach λ = 10 on the upper branch.
func TestSweepThroughTwoFolds(t *testing.T) {
	const eps = 0.2
	net, m := bratuParamNet(t, 1, 32)
	eq := &Equation{Fn: func(x, u, ux, uxx float64) (e, du, dux, duxx float64) {
		d := 1 + eps*u
		g := net.Params.Values[0] * math.Exp(u/d)
		return uxx + g, g / (d * d), 0, 1
	}}
	for e := range net.Edges {
		net.Edges[e].Law.Equation = eq
	}
	res, err := Sweep(net, "lambda", 10, &SweepSettings{Probes: []Point{{Node: m, Edge: -1}}, MaxPoints: 2000})
	if err != nil {
		t.Fatal(err)
	}
	turns := 0
	for k := 1; k < len(res.Points); k++ {
		if res.Points[k].Slope*res.Points[k-1].Slope < 0 {
			turns++
		}
	}
	last := res.Points[len(res.Points)-1]
	t.Logf("status %v, %d points, %d turns, first fold λ = %.6g, u(½) at λ = 10: %.4g", res.Status, len(res.Points), turns, res.Fold.Value, last.Probes[0])
	if res.Status != SweepReached || turns != 2 || last.Value != 10 {
		t.Errorf("status %v, %d turns, last λ %g", res.Status, turns, last.Value)
	}
	if res.Fold == nil || !res.FoldConfirmed || res.Fold.Value <= 3.5138 || res.Fold.Value > 10 {
		t.Errorf("fold %+v confirmed %v", res.Fold, res.FoldConfirmed)
	}
}
