package nodesys

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// splitSmall lets the parallel plan split the small test systems and
// restores the threshold afterwards.
func splitSmall(t *testing.T) {
	t.Helper()
	old, oldSplit := parallelMinWork, splitMinWork
	parallelMinWork, splitMinWork = 0, 1e3
	t.Cleanup(func() { parallelMinWork, splitMinWork = old, oldSplit })
}

// TestParallelSameBits factors systems with the supernodal kernel on one
// goroutine and on two to four, and requires the same D, L, U, pivot
// statistics and solution bit for bit: the replay of the tasks' links
// (parallel.go) keeps every update in the order of the sequential run, so
// any difference at all is a wrong or missing update, or a race.
func TestParallelSameBits(t *testing.T) {
	splitSmall(t)
	rnd := rand.New(rand.NewPCG(40, 0))
	cases := []struct {
		name string
		re   *Matrix[float64]
		cx   *Matrix[complex128]
		set  Settings
	}{
		{name: "mesh 40 spd", re: laplacian(1600, mesh(40), 0.01, rnd)},
		{name: "mesh 40 drift", re: driftSystem(1600, mesh(40), 0.1, rnd)},
		{name: "mesh 40 nested dissection", re: laplacian(1600, mesh(40), 0.01, rnd), set: Settings{Ordering: NestedDissection}},
		{name: "mesh 36 indefinite", re: laplacian(1296, mesh(36), -1.3, rnd)},
		{name: "triangulated mesh 30 spd", re: laplacian(900, triMesh(30, rnd), 0.5, rnd)},
		{name: "mesh 30 complex s=1+5i", cx: laplacian(900, mesh(30), 1+5i, rnd)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			for _, p := range []int{2, 3, 4} {
				if c.re != nil {
					sameBits(t, c.re, c.set, p)
				} else {
					sameBits(t, c.cx, c.set, p)
				}
			}
		})
	}
}

func sameBits[T Scalar](t *testing.T, m *Matrix[T], set Settings, p int) {
	t.Helper()
	one, many := set, set
	one.Workers, many.Workers = 1, p
	f1, fp := NewFactor[T](&one), NewFactor[T](&many)
	for _, f := range []*Factor[T]{f1, fp} {
		f.kernel, f.amalgamate = kernelSuper, true
		if err := f.Factorize(m); err != nil {
			t.Fatal(err)
		}
	}
	if fp.sn.plan == nil || fp.Stats().Workers != p || f1.Stats().Workers != 1 {
		t.Fatalf("workers %d: no parallel plan (stats %d)", p, fp.Stats().Workers)
	}
	pl := fp.sn.plan
	nsplit := 0
	for _, b := range pl.split {
		if b {
			nsplit++
		}
	}
	t.Logf("workers %d: %d tasks, %d top supernodes of %d (%d split); predicted speed-up %.2f",
		p, len(pl.tasks), len(pl.top), len(fp.sn.start)-1, nsplit, pl.work/(pl.maxWork+pl.topWork))
	if nsplit == 0 {
		t.Errorf("workers %d: no split top supernode: the split updates are not tested", p)
	}
	if !slices.Equal(f1.d, fp.d) || !slices.Equal(f1.lx, fp.lx) || !slices.Equal(f1.ux, fp.ux) {
		t.Errorf("workers %d: factors differ from one goroutine's", p)
	}
	s1, sp := f1.Stats(), fp.Stats()
	if s1.MinPivotRatio != sp.MinPivotRatio || s1.MinPivotIndex != sp.MinPivotIndex {
		t.Errorf("workers %d: pivot ratio %g at %d, one goroutine %g at %d", p, sp.MinPivotRatio, sp.MinPivotIndex, s1.MinPivotRatio, s1.MinPivotIndex)
	}
	// A second factorisation of the same factor gives the same again
	// (no state left over from the first).
	if err := fp.Factorize(m); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(f1.lx, fp.lx) {
		t.Errorf("workers %d: re-factorisation differs", p)
	}
}

// TestParallelSingularAndStop: a singular system fails with the same
// *SingularError on one goroutine and on two (the first failing pivot in
// elimination order, whichever worker meets it), and Settings.Stop stops a
// parallel factorisation with ErrStopped.
func TestParallelSingularAndStop(t *testing.T) {
	splitSmall(t)
	rnd := rand.New(rand.NewPCG(41, 0))
	// Zero leak: the Laplacian of a connected mesh is singular.
	m := laplacian(1600, mesh(40), 0.0, rnd)
	var errs [2]error
	for i, p := range []int{1, 2} {
		f := NewFactor[float64](&Settings{Workers: p})
		f.kernel, f.amalgamate = kernelSuper, true
		errs[i] = f.Factorize(m)
	}
	e1, ok1 := errs[0].(*SingularError)
	e2, ok2 := errs[1].(*SingularError)
	if !ok1 || !ok2 || *e1 != *e2 {
		t.Errorf("singular: one goroutine %v, two %v", errs[0], errs[1])
	}
	calls := 0
	f := NewFactor[float64](&Settings{Workers: 2, Stop: func() bool { calls++; return calls > 1 }})
	f.kernel, f.amalgamate = kernelSuper, true
	if err := f.Factorize(laplacian(1600, mesh(40), 0.1, rnd)); err != ErrStopped {
		t.Errorf("stop: got %v, want ErrStopped", err)
	}
}

// TestKernelPathsAgainstDense solves SPD, indefinite and nonsymmetric
// systems with every numeric path — up-looking, supernodal with the Go
// loops, supernodal with the AVX2 kernels (where the processor has them),
// each on one goroutine and on two — and compares the solution with gonum's
// dense LU (partial pivoting) and, for the SPD system, gonum's dense
// Cholesky. Tolerance roundoff(cond) as in TestFactorRealAgainstDense for
// the SPD and nonsymmetric systems; the indefinite one is factored without
// pivoting, so its tolerance also carries the growth max|d_k|·… measured
// as the backward error of the solve (checked against backwardIndef).
func TestKernelPathsAgainstDense(t *testing.T) {
	splitSmall(t)
	// The indefinite LDLᵀ without pivoting has no growth bound; on these
	// systems (shift between eigenvalues, no tiny pivot) the measured
	// backward error is a few eps; 1e4·eps leaves room and still catches
	// a wrong entry.
	const backwardIndef = 1e4 * eps
	rnd := rand.New(rand.NewPCG(42, 0))
	cases := []struct {
		name  string
		m     *Matrix[float64]
		spd   bool
		indef bool
	}{
		{"mesh 24 spd", laplacian(576, mesh(24), 0.05, rnd), true, false},
		{"triangulated mesh 20 spd", laplacian(400, triMesh(20, rnd), 0.3, rnd), true, false},
		{"mesh 24 indefinite (L − 1.3·D)", laplacian(576, mesh(24), -1.3, rnd), false, true},
		{"triangulated mesh 20 indefinite (L − 2.1·D)", laplacian(400, triMesh(20, rnd), -2.1, rnd), false, true},
		{"mesh 24 drift", driftSystem(576, mesh(24), 0.1, rnd), false, false},
	}
	hasFMA := useFMA
	type path struct {
		name    string
		kernel  int
		fma     bool
		workers int
	}
	paths := []path{{"up-looking", kernelUp, false, 1}}
	for _, fma := range []bool{false, true} {
		if fma && !hasFMA {
			t.Log("no AVX2/FMA on this processor: the AVX2 paths are not tested")
			continue
		}
		for _, wk := range []int{1, 2} {
			name := "supernodal, Go loops"
			if fma {
				name = "supernodal, AVX2"
			}
			paths = append(paths, path{name + ", " + itoa(wk) + " goroutine(s)", kernelSuper, fma, wk})
		}
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			n := len(c.m.rowPtr) - 1
			if n <= 0 {
				c.m.freeze()
				n = len(c.m.rowPtr) - 1
			}
			a := realDense(c.m)
			b := make([]float64, n)
			for i := range b {
				b[i] = rnd.NormFloat64()
			}
			var lu mat.LU
			lu.Factorize(a)
			var ref mat.VecDense
			if err := lu.SolveVecTo(&ref, false, mat.NewVecDense(n, b)); err != nil {
				t.Fatal(err)
			}
			refs := []*mat.VecDense{&ref}
			if c.spd {
				var ch mat.Cholesky
				if !ch.Factorize(mat.NewSymDense(n, a.RawMatrix().Data)) {
					t.Fatal("gonum Cholesky: not positive definite")
				}
				var rc mat.VecDense
				if err := ch.SolveVecTo(&rc, mat.NewVecDense(n, b)); err != nil {
					t.Fatal(err)
				}
				refs = append(refs, &rc)
			}
			tol := roundoff(lu.Cond())
			bw := backward
			if c.indef {
				bw = backwardIndef
				tol = 1e3 * backwardIndef * lu.Cond()
			}
			for _, p := range paths {
				f := NewFactor[float64](&Settings{Workers: p.workers})
				f.fma = p.fma
				f.kernel, f.amalgamate = p.kernel, p.kernel == kernelSuper
				if err := f.Factorize(c.m); err != nil {
					t.Fatalf("%s: %v", p.name, err)
				}
				if p.kernel == kernelSuper && f.Stats().Workers != p.workers {
					t.Fatalf("%s: ran on %d goroutines", p.name, f.Stats().Workers)
				}
				if neg, ok := f.Inertia(); c.indef && (!ok || neg == 0) {
					t.Fatalf("%s: %d negative pivots: not indefinite", p.name, neg)
				}
				x := make([]float64, n)
				f.SolveTo(x, b)
				for ri, r := range refs {
					d := 0.0
					for i := range x {
						d = math.Max(d, math.Abs(x[i]-r.AtVec(i)))
					}
					d /= mat.Norm(r, math.Inf(1))
					if d > tol {
						t.Errorf("%s: relative difference %.3g from gonum reference %d > %.3g", p.name, d, ri, tol)
					}
				}
				if r := residual(c.m, x, b); r > bw {
					t.Errorf("%s: backward error %.3g > %.3g", p.name, r, bw)
				}
			}
		})
	}
}

// triMesh is the k×k five-point mesh with a diagonal in each cell taken
// with probability one half (either direction): a planar pattern with
// irregular degrees, separable like the mesh.
func triMesh(k int, rnd *rand.Rand) []edge {
	es := mesh(k)
	for r := 0; r+1 < k; r++ {
		for c := 0; c+1 < k; c++ {
			v := r*k + c
			switch rnd.IntN(4) {
			case 0:
				es = append(es, edge{v, v + k + 1})
			case 1:
				es = append(es, edge{v + 1, v + k})
			}
		}
	}
	return es
}
