package nodesys

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestInertiaAgainstDenseEigenvalues checks Inertia against the number of
// negative eigenvalues computed by gonum's dense symmetric eigensolver
// (mat.EigenSym) on shifted weighted Laplacians L − σ·D, which are symmetric
// and indefinite for σ inside the spectrum: the matrices a spectrum count at
// trial value σ factors. Trees, chains and forests go through the tree
// analysis, sparse cyclic graphs through the up-looking kernel, meshes
// through the supernodal kernel (forced, and chosen automatically). The
// count is an integer and must match exactly; shifts whose nearest
// eigenvalue lies within gapTol of zero are skipped, since there the sign
// of a pivot is decided by rounding (the count is then ill-posed, not wrong).
func TestInertiaAgainstDenseEigenvalues(t *testing.T) {
	t.Parallel()
	// An eigenvalue this close to zero relative to ‖A‖ could change sign
	// under a backward error of a few hundred eps·(growth): skip the shift.
	const gapTol = 1e-8
	cases := []struct {
		name   string
		n      int
		edges  func(rnd *rand.Rand) []edge
		kernel int
		set    Settings
		tree   bool // the tree analysis must be taken
		super  bool // the supernodal kernel must be taken
	}{
		{name: "random tree", n: 120, edges: func(r *rand.Rand) []edge { return randomTree(120, r) }, tree: true},
		{name: "chain", n: 90, edges: func(r *rand.Rand) []edge { return chain(90, r) }, tree: true},
		{name: "forest", n: 100, edges: func(r *rand.Rand) []edge { return forest(100, 4, r) }, tree: true},
		{name: "sparse cyclic, up-looking", n: 150, edges: func(r *rand.Rand) []edge { return randomCyclic(150, 60, r) }},
		{name: "dense-ish cyclic, up-looking", n: 80, edges: func(r *rand.Rand) []edge { return randomCyclic(80, 500, r) }, kernel: kernelUp},
		{name: "mesh, supernodal forced", n: 144, edges: func(*rand.Rand) []edge { return mesh(12) }, kernel: kernelSuper, super: true},
		{name: "mesh, nested dissection", n: 225, edges: func(*rand.Rand) []edge { return mesh(15) }, set: Settings{Ordering: NestedDissection}},
		{name: "dense-ish cyclic, supernodal forced", n: 100, edges: func(r *rand.Rand) []edge { return randomCyclic(100, 900, r) }, kernel: kernelSuper, super: true},
		{name: "mesh, natural order", n: 100, edges: func(*rand.Rand) []edge { return mesh(10) }, set: Settings{Ordering: Natural}},
	}
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rnd := rand.New(rand.NewPCG(40, uint64(ci)))
			es := c.edges(rnd)
			checked := 0
			for _, sigma := range []float64{-0.5, 0.05, 0.4, 1.3, 2.7, 5, 40} {
				m := laplacian(c.n, es, -sigma, rnd)
				a := realDense(m)
				var eig mat.EigenSym
				if !eig.Factorize(mat.NewSymDense(c.n, a.RawMatrix().Data), false) {
					t.Fatal("EigenSym failed")
				}
				ev := eig.Values(nil)
				want, gap, norm := 0, math.Inf(1), 0.0
				for _, v := range ev {
					if v < 0 {
						want++
					}
					gap = math.Min(gap, math.Abs(v))
					norm = math.Max(norm, math.Abs(v))
				}
				if gap < gapTol*norm {
					continue
				}
				f := NewFactor[float64](&c.set)
				f.kernel = c.kernel
				if err := f.Factorize(m); err != nil {
					var se *SingularError
					if errors.As(err, &se) {
						// Without pivoting an indefinite matrix may
						// meet a tiny pivot; that is reported, not
						// miscounted. None of these cases does.
						t.Fatalf("σ=%g: %v", sigma, err)
					}
					t.Fatal(err)
				}
				if f.tree != c.tree || (f.sn != nil) != c.super {
					t.Fatalf("path: tree %v supernodal %v, want %v %v", f.tree, f.sn != nil, c.tree, c.super)
				}
				neg, ok := f.Inertia()
				if !ok || neg != want {
					t.Errorf("σ=%g: Inertia = %d, %v; EigenSym counts %d negative of %d", sigma, neg, ok, want, c.n)
				}
				checked++
			}
			if checked < 5 {
				t.Errorf("only %d shifts checked", checked)
			}
		})
	}
}

// TestInertiaNotDefined checks that Inertia declines where the count means
// nothing: before any factorisation, for complex factors, on the
// nonsymmetric path (drift, or Symmetric forced false), and after a failed
// Factorize.
func TestInertiaNotDefined(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(41, 0))
	es := randomCyclic(60, 30, rnd)

	f := NewFactor[float64](nil)
	if _, ok := f.Inertia(); ok {
		t.Error("Inertia ok before Factorize")
	}
	if err := f.Factorize(laplacian(60, es, 0.5, rnd)); err != nil {
		t.Fatal(err)
	}
	if neg, ok := f.Inertia(); !ok || neg != 0 {
		t.Errorf("positive definite: Inertia = %d, %v, want 0, true", neg, ok)
	}
	if err := f.Factorize(driftSystem(60, es, 0.5, rnd)); err != nil {
		t.Fatal(err)
	}
	if _, ok := f.Inertia(); ok {
		t.Error("Inertia ok on the nonsymmetric path")
	}
	no := false
	g := NewFactor[float64](&Settings{Symmetric: &no})
	if err := g.Factorize(laplacian(60, es, 0.5, rnd)); err != nil {
		t.Fatal(err)
	}
	if _, ok := g.Inertia(); ok {
		t.Error("Inertia ok with Symmetric forced false")
	}
	// Unanchored Laplacian: singular, Factorize fails.
	if err := g.Factorize(laplacian(60, es, 0.0, rnd)); err == nil {
		t.Fatal("singular Laplacian factored")
	}
	if _, ok := g.Inertia(); ok {
		t.Error("Inertia ok after a failed Factorize")
	}
	c := NewFactor[complex128](nil)
	if err := c.Factorize(laplacian[complex128](60, es, 1+2i, rnd)); err != nil {
		t.Fatal(err)
	}
	if _, ok := c.Inertia(); ok {
		t.Error("Inertia ok for a complex factor")
	}
}
