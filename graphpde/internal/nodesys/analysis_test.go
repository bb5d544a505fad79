package nodesys

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// TestAnalysisReuse: a Factor made by NewFactorFrom from another's Analysis
// factors a matrix of the same pattern (other values) without ordering it
// again (Stats.Reused), with the same order, so with the same arithmetic:
// the solution equals a fresh Factor's bit for bit. The Analysis outlives a
// re-analysis of the Factor it came from; another Ordering, and a pattern
// that differs, are analysed anew.
func TestAnalysisReuse(t *testing.T) {
	rnd := rand.New(rand.NewPCG(43, 0))
	es := mesh(30)
	m1 := laplacian(900, es, 0.1, rnd)
	m2 := laplacian(900, es, 0.7, rnd) // same pattern, other values
	other := laplacian(400, mesh(20), 0.1, rnd)
	b := make([]float64, 900)
	for i := range b {
		b[i] = rnd.NormFloat64()
	}
	f := NewFactor[float64](nil)
	if f.Analysis() != nil {
		t.Fatal("analysis before any Factorize")
	}
	if err := f.Analyze(m1); err != nil {
		t.Fatal(err)
	}
	a := f.Analysis()
	if err := f.Factorize(m1); err != nil || !f.Stats().Reused {
		t.Fatalf("Factorize after Analyze: err %v, reused %v", err, f.Stats().Reused)
	}
	if err := f.Factorize(other); err != nil || f.Stats().Reused {
		t.Fatalf("another pattern: err %v, reused %v", err, f.Stats().Reused)
	}
	for _, set := range []*Settings{nil, {Workers: 1}, {Workers: 2, PivotTol: 1e-10}} {
		g := NewFactorFrom(a, set)
		if err := g.Factorize(m2); err != nil {
			t.Fatal(err)
		}
		if !g.Stats().Reused {
			t.Errorf("settings %+v: the analysis was not reused", set)
		}
		fresh := NewFactor[float64](set)
		if err := fresh.Factorize(m2); err != nil {
			t.Fatal(err)
		}
		x, y := make([]float64, 900), make([]float64, 900)
		g.SolveTo(x, b)
		fresh.SolveTo(y, b)
		if !slices.Equal(x, y) {
			t.Errorf("settings %+v: solution differs from a fresh factor's", set)
		}
		if r := residual(m2, x, b); r > backward {
			t.Errorf("backward error %.3g > %.3g", r, backward)
		}
	}
	g := NewFactorFrom(a, &Settings{Ordering: NestedDissection})
	if err := g.Factorize(m2); err != nil || g.Stats().Reused || g.Stats().Ordering != NestedDissection.String() {
		t.Errorf("another ordering: err %v, reused %v, ordering %q", err, g.Stats().Reused, g.Stats().Ordering)
	}
	g = NewFactorFrom(a, nil)
	if err := g.Factorize(other); err != nil || g.Stats().Reused {
		t.Errorf("another pattern from an analysis: err %v, reused %v", err, g.Stats().Reused)
	}
	if NewFactorFrom[float64](nil, nil).Analysis() != nil {
		t.Error("a Factor from no analysis has one")
	}
}
