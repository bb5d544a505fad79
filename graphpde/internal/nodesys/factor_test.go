package nodesys

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Forward-error tolerance against a dense reference: for a backward-stable
// solve the relative forward error is at most cond(A)·(backward error). LU
// without pivoting on SPD or diagonally dominant matrices has growth factor at
// most 2 (for diagonal dominance; 1 for SPD in LDLᵀ form) and a backward error
// of a small multiple of (max column count of L)·eps; the test systems have at
// most a few dozen entries per column of L, so 1e3·eps·cond covers both the
// sparse and the dense (partially pivoted) solve with room to spare while
// still catching a wrong entry, which gives errors of order one.
func roundoff(cond float64) float64 { return 1e3 * eps * cond }

// backward is the tolerance of the normwise backward error
// ‖Ax−b‖/(‖A‖‖x‖+‖b‖) of a stable solve: a modest multiple of eps (the
// factor 100 allows for sums over rows with tens of entries).
const backward = 100 * eps

func TestFactorRealAgainstDense(t *testing.T) {
	t.Parallel()
	yes, no := true, false
	cases := []struct {
		name  string
		n     int
		extra int
		drift bool
		leak  float64
		set   Settings
	}{
		{"spd laplacian+leak, md", 80, 60, false, 0.3, Settings{}},
		{"spd laplacian+leak, natural", 80, 60, false, 0.3, Settings{Ordering: Natural}},
		{"spd tiny leak, md", 150, 200, false, 1e-4, Settings{}},
		{"spd dense-ish, md", 60, 600, false, 1, Settings{}},
		{"spd forced ldu path", 80, 60, false, 0.3, Settings{Symmetric: &no}},
		{"nonsymmetric drift, md", 120, 100, true, 0.2, Settings{}},
		{"nonsymmetric drift, natural", 120, 100, true, 0.2, Settings{Ordering: Natural}},
		{"nonsymmetric drift weak leak, md", 200, 150, true, 1e-3, Settings{}},
		{"spd forced ldlt path", 50, 40, false, 1, Settings{Symmetric: &yes}},
		{"spd, nested dissection", 400, 300, false, 0.3, Settings{Ordering: NestedDissection}},
		{"nonsymmetric drift, best", 300, 300, true, 0.2, Settings{Ordering: Best}},
	}
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rnd := rand.New(rand.NewPCG(1, uint64(ci)))
			es := randomCyclic(c.n, c.extra, rnd)
			var m *Matrix[float64]
			if c.drift {
				m = driftSystem(c.n, es, c.leak, rnd)
			} else {
				m = laplacian(c.n, es, c.leak, rnd)
			}
			b := make([]float64, c.n)
			for i := range b {
				b[i] = rnd.NormFloat64()
			}
			f := NewFactor[float64](&c.set)
			if err := f.Factorize(m); err != nil {
				t.Fatal(err)
			}
			x := make([]float64, c.n)
			f.SolveTo(x, b)

			a := realDense(m)
			var ref mat.VecDense
			if err := ref.SolveVec(a, mat.NewVecDense(c.n, b)); err != nil {
				t.Fatal(err)
			}
			var lu mat.LU
			lu.Factorize(a)
			tol := roundoff(lu.Cond())
			rel := 0.0
			for i := range x {
				rel = math.Max(rel, math.Abs(x[i]-ref.AtVec(i)))
			}
			rel /= mat.Norm(&ref, math.Inf(1))
			if rel > tol {
				t.Errorf("relative error vs gonum %.3g > %.3g", rel, tol)
			}
			if r := residual(m, x, b); r > backward {
				t.Errorf("backward error %.3g > %.3g", r, backward)
			}
			wantSym := !c.drift
			if c.set.Symmetric != nil {
				wantSym = *c.set.Symmetric
			}
			if got := f.Stats().Symmetric; got != wantSym {
				t.Errorf("symmetric path %v, want %v", got, wantSym)
			}
		})
	}
}

func TestFactorComplexAgainstDense(t *testing.T) {
	t.Parallel()
	// Shifted Laplacians L + s·D at points of a Talbot-like contour in the
	// right half plane and on its left arms (Re s < 0 but |Im s| large), as
	// Laplace inversion uses them; and a complex nonsymmetric system.
	cases := []struct {
		name   string
		s      complex128
		nonsym bool
	}{
		{"s=1+5i", 1 + 5i, false},
		{"s=3", 3, false},
		{"s=-2+20i", -2 + 20i, false},
		{"s=0.1-40i", 0.1 - 40i, false},
		{"s=2+3i nonsymmetric", 2 + 3i, true},
	}
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rnd := rand.New(rand.NewPCG(2, uint64(ci)))
			n := 90
			es := randomCyclic(n, 70, rnd)
			m := laplacian(n, es, c.s, rnd)
			if c.nonsym {
				for _, e := range es[:20] {
					m.Add(e.u, e.v, complex(0.3*rnd.Float64(), 0.2))
				}
			}
			b := make([]complex128, n)
			for i := range b {
				b[i] = complex(rnd.NormFloat64(), rnd.NormFloat64())
			}
			f := NewFactor[complex128](nil)
			if err := f.Factorize(m); err != nil {
				t.Fatal(err)
			}
			x := make([]complex128, n)
			f.SolveTo(x, b)

			a := complexAsReal(m)
			rb := mat.NewVecDense(2*n, nil)
			for i, v := range b {
				rb.SetVec(i, real(v))
				rb.SetVec(i+n, imag(v))
			}
			var rx mat.VecDense
			if err := rx.SolveVec(a, rb); err != nil {
				t.Fatal(err)
			}
			ref := make([]complex128, n)
			for i := range ref {
				ref[i] = complex(rx.AtVec(i), rx.AtVec(i+n))
			}
			var lu mat.LU
			lu.Factorize(a)
			tol := roundoff(lu.Cond())
			if rel := maxDiff(x, ref) / maxAbs(ref); rel > tol {
				t.Errorf("relative error vs gonum (real 2n form) %.3g > %.3g", rel, tol)
			}
			if r := residual(m, x, b); r > backward {
				t.Errorf("backward error %.3g > %.3g", r, backward)
			}
			if got := f.Stats().Symmetric; got == c.nonsym {
				t.Errorf("symmetric path %v for nonsymmetric=%v", got, c.nonsym)
			}
		})
	}
}

// TestZeroFillTrees checks the defining property of a minimum-degree order on
// a tree: leaves first, so nnz(L) equals nnz(lower(A)) exactly.
func TestZeroFillTrees(t *testing.T) {
	t.Parallel()
	star := func(n int) []edge {
		es := make([]edge, n-1)
		for v := 1; v < n; v++ {
			es[v-1] = edge{0, v}
		}
		return es
	}
	caterpillar := func(n int) []edge { // a spine with one leaf on each spine node
		var es []edge
		for v := 0; v+2 < n; v += 2 {
			es = append(es, edge{v, v + 2}, edge{v, v + 1})
		}
		return es
	}
	cases := []struct {
		name string
		n    int
		es   func(n int, rnd *rand.Rand) []edge
	}{
		{"random tree 10", 10, randomTree},
		{"random tree 2000", 2000, randomTree},
		{"random tree 30000", 30000, randomTree},
		{"chain 100000", 100000, chain},
		{"star 5000", 5000, func(n int, _ *rand.Rand) []edge { return star(n) }},
		{"caterpillar 4001", 4001, func(n int, _ *rand.Rand) []edge { return caterpillar(n) }},
		// A hub of degree 1000 (over the dense threshold 10·√n of the
		// quotient-graph ordering) carrying paths of five nodes.
		{"hub with paths", 5001, func(n int, _ *rand.Rand) []edge {
			var es []edge
			for v := 1; v < n; v++ {
				if (v-1)%5 == 0 {
					es = append(es, edge{0, v})
				} else {
					es = append(es, edge{v - 1, v})
				}
			}
			return es
		}},
		{"forest of two trees", 3000, func(n int, rnd *rand.Rand) []edge {
			a := randomTree(n/2, rnd)
			for _, e := range randomTree(n-n/2, rnd) {
				a = append(a, edge{e.u + n/2, e.v + n/2})
			}
			return a
		}},
	}
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if testing.Short() && c.n > 10000 {
				t.Skip("large tree")
			}
			rnd := rand.New(rand.NewPCG(3, uint64(ci)))
			m := laplacian(c.n, c.es(c.n, rnd), 0.5, rnd)
			f := NewFactor[float64](nil)
			if err := f.Factorize(m); err != nil {
				t.Fatal(err)
			}
			st := f.Stats()
			if st.Fill != 0 || st.NNZL != lowerNNZ(m) {
				t.Errorf("fill %d, nnz(L) %d, nnz(lower A) %d; want no fill", st.Fill, st.NNZL, lowerNNZ(m))
			}
			if c.n <= 5000 {
				// Best must keep the zero-fill order too.
				fb := NewFactor[float64](&Settings{Ordering: Best})
				if err := fb.analyze(m); err != nil {
					t.Fatal(err)
				}
				if fb.Stats().Fill != 0 {
					t.Errorf("best ordering (%s): fill %d, want 0", fb.Stats().Ordering, fb.Stats().Fill)
				}
			}
			b := make([]float64, c.n)
			for i := range b {
				b[i] = rnd.NormFloat64()
			}
			x := make([]float64, c.n)
			f.SolveTo(x, b)
			if r := residual(m, x, b); r > backward {
				t.Errorf("backward error %.3g > %.3g", r, backward)
			}
		})
	}
}

// TestMeshFill compares minimum degree with the natural (banded) order on a
// k×k grid: the band order gives nnz(L) ≈ n·k, minimum degree O(n log n).
func TestMeshFill(t *testing.T) {
	t.Parallel()
	k := 40
	n := k * k
	rnd := rand.New(rand.NewPCG(4, 0))
	m := laplacian(n, mesh(k), 0.1, rnd)
	md := NewFactor[float64](nil)
	nat := NewFactor[float64](&Settings{Ordering: Natural})
	nd := NewFactor[float64](&Settings{Ordering: NestedDissection})
	best := NewFactor[float64](&Settings{Ordering: Best})
	for _, f := range []*Factor[float64]{md, nat, nd, best} {
		if err := f.Factorize(m); err != nil {
			t.Fatal(err)
		}
	}
	// Natural order: row i ≥ k of L fills its whole envelope, columns i−k to
	// i−1 (k entries); a node of the first grid row has only its left
	// neighbour; plus the n diagonal entries.
	if got, want := nat.Stats().NNZL, (n-k)*k+(k-1)+n; got != want {
		t.Errorf("natural order nnz(L) = %d, want %d", got, want)
	}
	// Nested-dissection leading term 31/8·n·log2 n (George 1973, from
	// memory); at k = 40 minimum degree is well below it and below half the
	// band fill.
	ndTerm := 31.0 / 8 * float64(n) * math.Log2(float64(n))
	for _, f := range []*Factor[float64]{md, nd} {
		if got := float64(f.Stats().NNZL); got > ndTerm || got > 0.5*float64(nat.Stats().NNZL) {
			t.Errorf("%s nnz(L) = %g, nested-dissection term %g, band %d", f.Stats().Ordering, got, ndTerm, nat.Stats().NNZL)
		}
	}
	if got, want := best.Stats().NNZL, min(md.Stats().NNZL, nd.Stats().NNZL); got != want {
		t.Errorf("best nnz(L) = %d, want the smaller of md and nd, %d", got, want)
	}
	b := make([]float64, n)
	for i := range b {
		b[i] = rnd.NormFloat64()
	}
	x := make([]float64, n)
	md.SolveTo(x, b)
	if r := residual(m, x, b); r > backward {
		t.Errorf("backward error %.3g > %.3g", r, backward)
	}
}

// TestSingular builds two components: one anchored by a leak, one pure
// Laplacian with zero row sums (nothing anchors it). The error must name an
// unknown of the unanchored component in the caller's numbering.
func TestSingular(t *testing.T) {
	t.Parallel()
	type variant struct {
		o      Ordering
		kernel int
	}
	for _, vr := range []variant{{MinimumDegree, kernelUp}, {Natural, kernelUp}, {MinimumDegree, kernelSuper}, {Natural, kernelSuper}} {
		o := vr.o
		t.Run(fmt.Sprintf("%v, %s", o, map[int]string{kernelUp: "up-looking", kernelSuper: "supernodal"}[vr.kernel]), func(t *testing.T) {
			rnd := rand.New(rand.NewPCG(5, uint64(o)))
			n := 60
			m := NewMatrix[float64](n)
			lab := rnd.Perm(n) // unanchored component: lab[:20]
			inFree := map[int]bool{}
			for _, v := range lab[:20] {
				inFree[v] = true
			}
			add := func(u, v int) {
				g := 0.5 + rnd.Float64()
				m.Add(u, u, g)
				m.Add(v, v, g)
				m.Add(u, v, -g)
				m.Add(v, u, -g)
			}
			for _, e := range randomCyclic(20, 10, rnd) {
				add(lab[e.u], lab[e.v])
			}
			for _, e := range randomCyclic(40, 10, rnd) {
				add(lab[20+e.u], lab[20+e.v])
			}
			for _, v := range lab[20:] {
				m.Add(v, v, 0.1)
			}
			f := NewFactor[float64](&Settings{Ordering: o})
			f.kernel = vr.kernel
			err := f.Factorize(m)
			var se *SingularError
			if !errors.As(err, &se) {
				t.Fatalf("got %v, want *SingularError", err)
			}
			if !inFree[se.Index] {
				t.Errorf("singular index %d is not in the unanchored component", se.Index)
			}
			if se.Pivot > DefaultPivotTol*se.Scale {
				t.Errorf("reported pivot %g above tolerance", se.Pivot)
			}
			// Anchoring the component makes it regular again.
			m.Add(lab[0], lab[0], 1)
			if err := f.Factorize(m); err != nil {
				t.Errorf("after anchoring: %v", err)
			}
		})
	}
	t.Run("empty row", func(t *testing.T) {
		m := NewMatrix[complex128](3)
		m.Add(0, 0, 1)
		m.Add(2, 2, 1i)
		var se *SingularError
		if err := NewFactor[complex128](nil).Factorize(m); !errors.As(err, &se) || se.Index != 1 {
			t.Errorf("got %v, want *SingularError at 1", err)
		}
	})
	t.Run("NaN entry", func(t *testing.T) {
		m := NewMatrix[float64](2)
		m.Add(0, 0, 1)
		m.Add(1, 1, math.NaN())
		var se *SingularError
		if err := NewFactor[float64](nil).Factorize(m); !errors.As(err, &se) || se.Index != 1 {
			t.Errorf("got %v, want *SingularError at 1", err)
		}
	})
}

// TestRefactorize re-assembles new values into the same pattern (as time
// stepping does), then adds an entry outside it (new pattern).
func TestRefactorize(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(6, 0))
	n := 100
	es := randomCyclic(n, 80, rnd)
	m := laplacian(n, es, 1.0, rnd)
	f := NewFactor[float64](nil)
	if err := f.Factorize(m); err != nil {
		t.Fatal(err)
	}
	v0 := m.version
	b := make([]float64, n)
	x := make([]float64, n)
	for i := range b {
		b[i] = rnd.NormFloat64()
	}
	for step := 0; step < 3; step++ {
		m.ZeroValues()
		re := laplacian(n, es, float64(step+1)*0.7, rnd)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if v := re.At(i, j); v != 0 {
					m.Add(i, j, v)
				}
			}
		}
		if step == 2 {
			m.Add(es[0].u, es[0].v, 0.05) // nonsymmetric values, same pattern
		}
		if err := f.Factorize(m); err != nil {
			t.Fatal(err)
		}
		if m.version != v0 {
			t.Fatalf("re-assembly changed the pattern")
		}
		// The numeric phase must fill exactly the columns the symbolic
		// phase laid out.
		for j := 0; j < n; j++ {
			if f.lnz[j] != f.lp[j+1]-f.lp[j] {
				t.Fatalf("column %d: numeric filled %d of %d entries", j, f.lnz[j], f.lp[j+1]-f.lp[j])
			}
		}
		f.SolveTo(x, b)
		if r := residual(m, x, b); r > backward {
			t.Errorf("step %d: backward error %.3g > %.3g", step, r, backward)
		}
	}
	// A new coupling outside the pattern: re-analysis.
	u, v := 0, 0
	for u == v || m.find(u, v) >= 0 {
		u, v = rnd.IntN(n), rnd.IntN(n)
	}
	m.Add(u, v, -0.1)
	m.Add(u, u, 0.1)
	if err := f.Factorize(m); err != nil {
		t.Fatal(err)
	}
	if m.version == v0 {
		t.Fatalf("new entry did not change the pattern")
	}
	f.SolveTo(x, b)
	if r := residual(m, x, b); r > backward {
		t.Errorf("after new pattern: backward error %.3g > %.3g", r, backward)
	}
}

// TestNoAllocs checks that re-assembly, re-factorisation and solve on an
// unchanged pattern allocate nothing.
func TestNoAllocs(t *testing.T) {
	rnd := rand.New(rand.NewPCG(7, 0))
	n := 500
	es := randomCyclic(n, 300, rnd)
	for _, name := range []string{"real", "complex"} {
		t.Run(name, func(t *testing.T) {
			var allocs float64
			if name == "real" {
				m := driftSystem(n, es, 0.5, rnd)
				f := NewFactor[float64](nil)
				b := make([]float64, n)
				if err := f.Factorize(m); err != nil {
					t.Fatal(err)
				}
				allocs = testing.AllocsPerRun(5, func() {
					m.Add(es[0].u, es[0].v, 1e-3)
					_ = f.Factorize(m)
					f.SolveTo(b, b)
				})
			} else {
				m := laplacian(n, es, 1+5i, rnd)
				f := NewFactor[complex128](nil)
				b := make([]complex128, n)
				if err := f.Factorize(m); err != nil {
					t.Fatal(err)
				}
				allocs = testing.AllocsPerRun(5, func() {
					m.Add(es[0].u, es[0].u, 1e-3)
					_ = f.Factorize(m)
					f.SolveTo(b, b)
				})
			}
			if allocs != 0 {
				t.Errorf("%v allocations per re-assembly+Factorize+SolveTo, want 0", allocs)
			}
		})
	}
}

func TestSolveAliasAndPanics(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(8, 0))
	n := 50
	m := laplacian(n, randomCyclic(n, 30, rnd), 1.0, rnd)
	f := NewFactor[float64](nil)
	if err := f.Factorize(m); err != nil {
		t.Fatal(err)
	}
	b := make([]float64, n)
	for i := range b {
		b[i] = rnd.NormFloat64()
	}
	x := make([]float64, n)
	f.SolveTo(x, b)
	f.SolveTo(b, b)
	for i := range x {
		if x[i] != b[i] {
			t.Fatalf("aliased solve differs at %d: %g vs %g", i, b[i], x[i])
		}
	}
	panics := func(name string, fn func()) {
		defer func() {
			if recover() == nil {
				t.Errorf("%s did not panic", name)
			}
		}()
		fn()
	}
	panics("short dst", func() { f.SolveTo(x[:n-1], b) })
	panics("short b", func() { f.SolveTo(x, b[:1]) })
	panics("solve before factorize", func() { NewFactor[float64](nil).SolveTo(x, b) })
	panics("index out of range", func() { m.Add(n, 0, 1) })
	panics("negative index", func() { m.Add(0, -1, 1) })
	panics("unknown ordering", func() { NewFactor[float64](&Settings{Ordering: Ordering(42)}) })
}

// TestSharedAnalysis factors two matrices with the same pattern (two values
// of s in a Laplace inversion) with one Factor, and then a matrix whose
// pattern changed after the analysis: the analysis must be reused only when
// the pattern is really the same.
func TestSharedAnalysis(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(9, 0))
	n := 120
	es := randomCyclic(n, 90, rnd)
	a := laplacian(n, es, 1+5i, rnd)
	b := laplacian(n, es, 2-3i, rnd)
	f := NewFactor[complex128](nil)
	rhs := make([]complex128, n)
	for i := range rhs {
		rhs[i] = complex(rnd.NormFloat64(), 1)
	}
	x := make([]complex128, n)
	for _, m := range []*Matrix[complex128]{a, b, a} {
		if err := f.Factorize(m); err != nil {
			t.Fatal(err)
		}
		f.SolveTo(x, rhs)
		if r := residual(m, x, rhs); r > backward {
			t.Errorf("backward error %.3g > %.3g", r, backward)
		}
	}
	if &f.patPtr[0] != &a.rowPtr[0] {
		t.Errorf("analysis was redone for an identical pattern")
	}
	// a gets a new coupling; b is given the same one. b must not reuse the
	// analysis of the old pattern, although it matches a's current one.
	u, v := es[0].u, es[0].v
	for a.find(u, v) >= 0 {
		u, v = rnd.IntN(n), rnd.IntN(n)
	}
	a.Add(u, v, -0.5)
	b.Add(u, v, -0.5)
	a.freeze()
	if err := f.Factorize(b); err != nil {
		t.Fatal(err)
	}
	f.SolveTo(x, rhs)
	if r := residual(b, x, rhs); r > backward {
		t.Errorf("after pattern change: backward error %.3g > %.3g", r, backward)
	}
}

// TestEmpty: a node system with no unknowns (every node fixed) is valid.
func TestEmpty(t *testing.T) {
	t.Parallel()
	m := NewMatrix[float64](0)
	f := NewFactor[float64](nil)
	if err := f.Factorize(m); err != nil {
		t.Fatal(err)
	}
	f.SolveTo(nil, nil)
	if st := f.Stats(); st.N != 0 || st.NNZL != 0 || st.Fill != 0 {
		t.Errorf("stats %+v, want zeros", st)
	}
}

// TestSizeLimit: a factor larger than Settings.MaxNNZL is refused before it is
// allocated, with the size it would have had; one entry more is accepted.
func TestSizeLimit(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(16, 0))
	m := laplacian(900, mesh(30), 0.1, rnd)
	f := NewFactor[float64](nil)
	if err := f.Factorize(m); err != nil {
		t.Fatal(err)
	}
	need := f.Stats().NNZL
	g := NewFactor[float64](&Settings{MaxNNZL: need - 1})
	var se *SizeError
	if err := g.Factorize(m); !errors.As(err, &se) || se.NNZL != need || se.Max != need-1 {
		t.Fatalf("got %v, want *SizeError{%d, %d}", err, need, need-1)
	}
	if err := NewFactor[float64](&Settings{MaxNNZL: need}).Factorize(m); err != nil {
		t.Errorf("limit equal to the size: %v", err)
	}
}

// TestCloneConcurrent factors shifted Laplacians at several s on clones of
// one analysed Factor, concurrently (run with -race to check the sharing).
func TestCloneConcurrent(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(17, 0))
	n := 400
	es := randomCyclic(n, 300, rnd)
	shifts := []complex128{1 + 5i, 2 - 3i, 0.5 + 20i, 4}
	ms := make([]*Matrix[complex128], len(shifts))
	for w, s := range shifts {
		ms[w] = laplacian(n, es, s, rand.New(rand.NewPCG(17, uint64(w+1))))
	}
	f := NewFactor[complex128](nil)
	if err := f.Factorize(ms[0]); err != nil {
		t.Fatal(err)
	}
	rhs := make([]complex128, n)
	for i := range rhs {
		rhs[i] = complex(rnd.NormFloat64(), 0)
	}
	res := make([]float64, len(shifts))
	errs := make([]error, len(shifts))
	var wg sync.WaitGroup
	for w := range shifts {
		g := f.Clone()
		wg.Add(1)
		go func() {
			defer wg.Done()
			x := make([]complex128, n)
			for rep := 0; rep < 3; rep++ {
				if errs[w] = g.Factorize(ms[w]); errs[w] != nil {
					return
				}
				g.SolveTo(x, rhs)
			}
			res[w] = residual(ms[w], x, rhs)
			if &g.li[0] != &f.li[0] {
				errs[w] = errors.New("clone re-analysed an identical pattern")
			}
		}()
	}
	wg.Wait()
	for w := range shifts {
		if errs[w] != nil {
			t.Errorf("s=%v: %v", shifts[w], errs[w])
		} else if res[w] > backward {
			t.Errorf("s=%v: backward error %.3g > %.3g", shifts[w], res[w], backward)
		}
	}
}
