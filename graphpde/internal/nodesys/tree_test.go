package nodesys

import (
	"errors"
	"math/rand/v2"
	"slices"
	"testing"
)

// forest returns the edges of k random trees on consecutive blocks of the n
// nodes (labels shuffled by randomTree within each block, then globally).
func forest(n, k int, rnd *rand.Rand) []edge {
	var es []edge
	lab := rnd.Perm(n)
	for b := 0; b < k; b++ {
		lo, hi := b*n/k, (b+1)*n/k
		for _, e := range randomTree(hi-lo, rnd) {
			es = append(es, edge{lab[lo+e.u], lab[lo+e.v]})
		}
	}
	return es
}

// TestTreeAnalysisAgreesWithGeneral: on forests the leaf-peeling analysis
// (taken by default) must give a factor without fill (nnz(L) = n + edges) and
// the same solution as the general analysis (postordered elimination tree,
// forced here by the up-looking kernel setting), up to roundoff: both are
// backward-stable eliminations of the same diagonally dominant matrix in
// different orders, so their solutions differ by at most cond·backward error
// (roundoff(2/leak) with leak ≥ 0.2 bounds cond for these Laplacians plus a
// diagonal leak).
func TestTreeAnalysisAgreesWithGeneral(t *testing.T) {
	rnd := rand.New(rand.NewPCG(41, 0))
	cases := []struct {
		name  string
		n, k  int
		drift bool
	}{
		{"one tree spd", 500, 1, false},
		{"one tree drift", 500, 1, true},
		{"forest of 7 spd", 700, 7, false},
		{"forest of 7 drift", 700, 7, true},
		{"isolated nodes", 5, 5, false},
	}
	const leak = 0.2
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			es := forest(c.n, c.k, rnd)
			var m *Matrix[float64]
			if c.drift {
				m = driftSystem(c.n, es, leak, rnd)
			} else {
				m = laplacian(c.n, es, leak, rnd)
			}
			tree := NewFactor[float64](nil)
			gen := NewFactor[float64](nil)
			gen.kernel = kernelUp
			for _, f := range []*Factor[float64]{tree, gen} {
				if err := f.Factorize(m); err != nil {
					t.Fatal(err)
				}
			}
			probe := NewFactor[float64](nil)
			if ok, err := probe.analyzeTree(m); !ok || err != nil {
				t.Fatalf("forest not recognised: %v %v", ok, err)
			}
			if !slices.Equal(probe.perm, tree.perm) {
				t.Fatalf("Factorize did not take the forest analysis")
			}
			st := tree.Stats()
			if st.NNZL != c.n+len(es) || st.Fill != 0 {
				t.Errorf("nnz(L) %d fill %d, want %d and 0", st.NNZL, st.Fill, c.n+len(es))
			}
			b := make([]float64, c.n)
			for i := range b {
				b[i] = rnd.NormFloat64()
			}
			x, y := make([]float64, c.n), make([]float64, c.n)
			tree.SolveTo(x, b)
			gen.SolveTo(y, b)
			if r := residual(m, x, b); r > backward {
				t.Errorf("backward error %.3g > %.3g", r, backward)
			}
			d := 0.0
			for i := range x {
				d = max(d, abs(x[i]-y[i]))
			}
			if tol := roundoff(2/leak) * maxAbs(y); d > tol {
				t.Errorf("solutions differ by %.3g > %.3g", d, tol)
			}
		})
	}
}

// TestTreeAnalysisDeclinesCycles: a graph with a cycle is left to the general
// analysis, and a forest larger than MaxNNZL gets the *SizeError of the
// general path.
func TestTreeAnalysisDeclinesCycles(t *testing.T) {
	rnd := rand.New(rand.NewPCG(42, 0))
	m := laplacian(200, randomCyclic(200, 3, rnd), 0.5, rnd)
	m.freeze()
	f := NewFactor[float64](nil)
	if ok, _ := f.analyzeTree(m); ok {
		t.Errorf("a cyclic graph was taken for a forest")
	}
	if f.perm != nil {
		t.Errorf("declined analysis changed the factor")
	}
	tr := laplacian(100, randomTree(100, rnd), 0.5, rnd)
	small := NewFactor[float64](&Settings{MaxNNZL: 150})
	var se *SizeError
	if err := small.Factorize(tr); !errors.As(err, &se) || se.NNZL != 199 {
		t.Errorf("got %v, want a *SizeError with 199 entries", err)
	}
}

// TestNewMatrixPattern: a matrix built on a given pattern equals the one
// Add and freeze build (same rows, transpose slots and values), and malformed
// patterns panic.
func TestNewMatrixPattern(t *testing.T) {
	rnd := rand.New(rand.NewPCG(43, 0))
	const n = 60
	ref := laplacian(n, randomCyclic(n, 40, rnd), 0.3, rnd)
	ref.freeze()
	m := NewMatrixPattern[float64](n, slices.Clone(ref.rowPtr), slices.Clone(ref.col))
	if !slices.Equal(m.tr, ref.tr) {
		t.Errorf("transpose slots differ")
	}
	for i := 0; i < n; i++ {
		for p := ref.rowPtr[i]; p < ref.rowPtr[i+1]; p++ {
			m.Add(i, ref.col[p], ref.val[p])
		}
	}
	if len(m.pi) != 0 || !slices.Equal(m.Values(), ref.val) {
		t.Errorf("adds left the pattern or values differ")
	}
	f := NewFactor[float64](nil)
	if err := f.Factorize(m); err != nil {
		t.Fatal(err)
	}

	bad := []struct {
		name        string
		rowPtr, col []int
	}{
		{"not symmetric", []int{0, 2, 3}, []int{0, 1, 1}},
		{"no diagonal", []int{0, 1, 2}, []int{1, 0}},
		{"unsorted", []int{0, 2, 4}, []int{1, 0, 0, 1}},
		{"repeated", []int{0, 3, 5}, []int{0, 1, 1, 0, 1}},
		{"bad offsets", []int{0, 2}, []int{0, 1}},
	}
	for _, c := range bad {
		t.Run(c.name, func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Errorf("no panic")
				}
			}()
			NewMatrixPattern[float64](2, c.rowPtr, c.col)
		})
	}
}
