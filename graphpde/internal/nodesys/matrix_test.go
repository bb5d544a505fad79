package nodesys

import (
	"math/rand/v2"
	"testing"
)

// TestMatrixAssembly checks accumulation, the symmetric pattern, the
// diagonal added at freeze, ZeroValues and pending entries after a freeze.
func TestMatrixAssembly(t *testing.T) {
	t.Parallel()
	m := NewMatrix[float64](4)
	m.Add(0, 1, 2)
	m.Add(0, 1, 3)
	m.Add(2, 3, -1)
	m.Add(3, 3, 4)
	if got := m.At(0, 1); got != 5 {
		t.Errorf("At(0,1) = %g before freeze, want 5", got)
	}
	m.freeze()
	if m.find(1, 0) < 0 || m.find(3, 2) < 0 {
		t.Errorf("transposed positions missing from the pattern")
	}
	for i := 0; i < 4; i++ {
		if m.find(i, i) < 0 {
			t.Errorf("diagonal (%d,%d) missing from the pattern", i, i)
		}
	}
	if got := len(m.col); got != 4+4 {
		t.Errorf("nnz = %d, want 8 (4 diagonal, 2 couplings both ways)", got)
	}
	for s, c := range m.tr {
		if m.tr[c] != s {
			t.Errorf("transpose slot map is not an involution at %d", s)
		}
	}
	cases := []struct {
		i, j int
		want float64
	}{{0, 1, 5}, {1, 0, 0}, {2, 3, -1}, {3, 2, 0}, {3, 3, 4}, {1, 1, 0}, {0, 3, 0}}
	for _, c := range cases {
		if got := m.At(c.i, c.j); got != c.want {
			t.Errorf("At(%d,%d) = %g, want %g", c.i, c.j, got, c.want)
		}
	}
	// Outside the frozen pattern: pending, visible to At and MulVecTo.
	m.Add(0, 3, 7)
	if got := m.At(0, 3); got != 7 {
		t.Errorf("pending At(0,3) = %g, want 7", got)
	}
	y := make([]float64, 4)
	m.MulVecTo(y, []float64{1, 1, 1, 1})
	if want := []float64{12, 0, -1, 4}; y[0] != want[0] || y[1] != want[1] || y[2] != want[2] || y[3] != want[3] {
		t.Errorf("A·1 = %v, want %v", y, want)
	}
	v := m.version
	m.freeze()
	if m.version == v || m.At(0, 3) != 7 || m.At(3, 0) != 0 || m.At(0, 1) != 5 {
		t.Errorf("refreeze lost entries or kept the version")
	}
	m.ZeroValues()
	if m.At(0, 1) != 0 || m.At(0, 3) != 0 {
		t.Errorf("ZeroValues kept values")
	}
}

// TestAddFrozenNoAlloc checks that re-assembly into a frozen pattern
// allocates nothing (time stepping re-assembles every step).
func TestAddFrozenNoAlloc(t *testing.T) {
	rnd := rand.New(rand.NewPCG(20, 0))
	n := 300
	es := randomCyclic(n, 200, rnd)
	m := laplacian(n, es, 1+1i, rnd)
	m.freeze()
	allocs := testing.AllocsPerRun(3, func() {
		m.ZeroValues()
		for _, e := range es {
			m.Add(e.u, e.v, -1)
			m.Add(e.v, e.u, -1)
			m.Add(e.u, e.u, 1)
			m.Add(e.v, e.v, 1)
		}
	})
	if allocs != 0 {
		t.Errorf("%v allocations per re-assembly, want 0", allocs)
	}
}

// TestOrderingIsPermutation checks the minimum-degree order on graphs that
// exercise its special paths: isolated nodes, a clique (one supervariable,
// mass elimination), dense hubs ordered last, disconnected pieces, n = 0, 1.
func TestOrderingIsPermutation(t *testing.T) {
	t.Parallel()
	clique := func(n int) []edge {
		var es []edge
		for u := 0; u < n; u++ {
			for v := u + 1; v < n; v++ {
				es = append(es, edge{u, v})
			}
		}
		return es
	}
	twoHubs := func(n int) []edge { // nodes 0 and 1 are joined to everyone
		var es []edge
		for v := 2; v < n; v++ {
			es = append(es, edge{0, v}, edge{1, v})
			if v+1 < n {
				es = append(es, edge{v, v + 1})
			}
		}
		return es
	}
	rnd := rand.New(rand.NewPCG(21, 0))
	cases := []struct {
		name      string
		n         int
		es        []edge
		lastNodes []int // nodes that must come last (dense)
		wantNNZL  int   // exact nnz(L) if known, else 0
	}{
		{"empty", 0, nil, nil, 0},
		{"single", 1, nil, nil, 1},
		{"isolated nodes", 5, nil, nil, 5},
		// A clique of 30 fills nothing new: nnz(L) = 30·31/2.
		{"clique 30", 30, clique(30), nil, 30 * 31 / 2},
		{"two hubs and a path", 500, twoHubs(500), []int{0, 1}, 0},
		{"random cyclic", 400, randomCyclic(400, 400, rnd), nil, 0},
		{"mesh 20", 400, mesh(20), nil, 0},
		{"mesh 40 plus isolated", 1700, mesh(40), nil, 0},
		{"forest", 2000, randomTree(700, rnd), nil, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m := NewMatrix[float64](c.n)
			for i := 0; i < c.n; i++ {
				m.Add(i, i, 1)
			}
			for _, e := range c.es {
				m.Add(e.u, e.v, 0)
			}
			m.freeze()
			checkPerm(t, "nested dissection", nestedDissection(c.n, m.rowPtr, m.col), c.n)
			perm := minimumDegree(c.n, m.rowPtr, m.col)
			checkPerm(t, "minimum degree", perm, c.n)
			checkPerm(t, "amd", amd(c.n, m.rowPtr, m.col), c.n)
			for k, v := range c.lastNodes {
				found := false
				for _, p := range perm[c.n-len(c.lastNodes):] {
					found = found || p == v
				}
				if !found {
					t.Errorf("dense node %d (#%d) not ordered last", v, k)
				}
			}
			if c.wantNNZL > 0 {
				f := NewFactor[float64](nil)
				_ = f.analyze(m)
				if got := f.Stats().NNZL; got != c.wantNNZL {
					t.Errorf("nnz(L) = %d, want %d", got, c.wantNNZL)
				}
			}
		})
	}
}

func checkPerm(t *testing.T, name string, perm []int, n int) {
	t.Helper()
	if len(perm) != n {
		t.Fatalf("%s: len(perm) = %d, want %d", name, len(perm), n)
	}
	seen := make([]bool, len(perm))
	for _, v := range perm {
		if v < 0 || v >= len(perm) || seen[v] {
			t.Fatalf("%s: not a permutation: %v repeated or out of range", name, v)
		}
		seen[v] = true
	}
}

// TestAMDAloneOnTrees checks the quotient-graph ordering itself (without the
// leaf peeling in front of it) on trees: it too must find a zero-fill order,
// i.e. nnz(strict lower L) = number of edges.
func TestAMDAloneOnTrees(t *testing.T) {
	t.Parallel()
	for seed := uint64(0); seed < 4; seed++ {
		rnd := rand.New(rand.NewPCG(22, seed))
		n := 3000
		m := NewMatrix[float64](n)
		for _, e := range randomTree(n, rnd) {
			m.Add(e.u, e.v, 1)
		}
		m.freeze()
		perm := amd(n, m.rowPtr, m.col)
		checkPerm(t, "amd", perm, n)
		if got := countL(n, m.rowPtr, m.col, perm); got != n-1 {
			t.Errorf("seed %d: nnz(strict L) = %d, want %d (no fill)", seed, got, n-1)
		}
	}
}
