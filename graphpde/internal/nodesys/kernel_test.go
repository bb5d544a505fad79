package nodesys

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestKernelsAgree factors the same systems with the up-looking and the
// supernodal kernel in the same order and compares D, L and U entry by entry.
// Both compute the same quantities with the same arithmetic reordered, so
// they agree to roundoff: |Δ| ≤ roundoffK·(1 + |entry|) with roundoffK =
// 1e4·eps, generous for well-conditioned diagonally dominant systems (a wrong
// update gives differences of order one). The residual checks the supernodal
// solve on its own.
func TestKernelsAgree(t *testing.T) {
	const roundoffK = 1e4 * eps
	type sys struct {
		name string
		re   *Matrix[float64]
		cx   *Matrix[complex128]
	}
	rnd := rand.New(rand.NewPCG(30, 0))
	var cases []sys
	cases = append(cases,
		sys{name: "mesh 25 spd", re: laplacian(625, mesh(25), 0.1, rnd)},
		sys{name: "mesh 25 drift", re: driftSystem(625, mesh(25), 0.1, rnd)},
		sys{name: "random cyclic spd", re: laplacian(400, randomCyclic(400, 500, rnd), 0.5, rnd)},
		sys{name: "random cyclic drift", re: driftSystem(400, randomCyclic(400, 500, rnd), 0.5, rnd)},
		sys{name: "tree", re: laplacian(300, randomTree(300, rnd), 0.5, rnd)},
		sys{name: "mesh 20 complex s=1+5i", cx: laplacian(400, mesh(20), 1+5i, rnd)},
	)
	nonsymC := laplacian(400, randomCyclic(400, 600, rnd), 2+3i, rnd)
	nonsymC.Add(3, 3, 0.5i)
	for _, e := range randomCyclic(400, 600, rand.New(rand.NewPCG(31, 0)))[:40] {
		nonsymC.Add(e.u, e.v, 0.1)
	}
	cases = append(cases, sys{name: "random cyclic complex nonsymmetric", cx: nonsymC})
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if c.re != nil {
				compareKernels(t, c.re, roundoffK, rnd)
			} else {
				compareKernels(t, c.cx, roundoffK, rnd)
			}
		})
	}
}

func compareKernels[T Scalar](t *testing.T, m *Matrix[T], tol float64, rnd *rand.Rand) {
	t.Helper()
	up := NewFactor[T](nil)
	up.kernel = kernelUp
	sn := NewFactor[T](nil)
	sn.kernel = kernelSuper
	for _, f := range []*Factor[T]{up, sn} {
		if err := f.Factorize(m); err != nil {
			t.Fatal(err)
		}
	}
	if sn.sn == nil || up.sn != nil {
		t.Fatalf("kernel not forced")
	}
	if st := sn.Stats(); st.Supernodes == 0 || st.Supernodes > st.N {
		t.Errorf("supernodes %d for n %d", st.Supernodes, st.N)
	}
	worst := 0.0
	cmp := func(a, b []T) {
		for i := range a {
			worst = math.Max(worst, mag(a[i]-b[i])/(1+mag(a[i])))
		}
	}
	// The reference kernel of MeasureKernels too.
	ref := NewFactor[T](nil)
	ref.kernel = kernelRef
	if err := ref.Factorize(m); err != nil {
		t.Fatal(err)
	}
	for _, g := range []*Factor[T]{sn, ref} {
		cmp(up.d, g.d)
		cmp(up.lx, g.lx)
		if !up.symmetric {
			cmp(up.ux, g.ux)
		}
	}
	t.Logf("worst %.3g, supernodes %d of n %d", worst, sn.Stats().Supernodes, sn.Stats().N)
	if worst > tol {
		t.Errorf("kernels differ by %.3g > %.3g", worst, tol)
	}
	n := m.Dim()
	b := make([]T, n)
	for i := range b {
		b[i] = fromReal[T](rnd.NormFloat64())
	}
	x := make([]T, n)
	sn.SolveTo(x, b)
	if r := residual(m, x, b); r > backward {
		t.Errorf("supernodal backward error %.3g > %.3g", r, backward)
	}
	// Re-factorisation with the supernodal kernel allocates nothing.
	if a := testing.AllocsPerRun(2, func() { _ = sn.Factorize(m) }); a != 0 {
		t.Errorf("%v allocations per supernodal re-factorisation", a)
	}
}

// TestAmalgamatedAgrees factors the systems of TestKernelsAgree with
// amalgamated supernodes and compares D and every entry of L and U with the
// up-looking kernel's, entry by entry through the row indices (the
// amalgamated pattern is a superset of the true one: the padded positions
// must hold exact zeros). Same arithmetic reordered, so the same roundoffK
// bound; a wrong merge (a padded pattern missing a true entry) gives
// differences of order one or a lost entry.
func TestAmalgamatedAgrees(t *testing.T) {
	const roundoffK = 1e4 * eps
	rnd := rand.New(rand.NewPCG(32, 0))
	cases := []struct {
		name string
		m    *Matrix[float64]
	}{
		{"mesh 25 spd", laplacian(625, mesh(25), 0.1, rnd)},
		{"mesh 25 drift", driftSystem(625, mesh(25), 0.1, rnd)},
		{"random cyclic spd", laplacian(400, randomCyclic(400, 500, rnd), 0.5, rnd)},
		{"random cyclic drift", driftSystem(400, randomCyclic(400, 500, rnd), 0.5, rnd)},
		{"tree", laplacian(300, randomTree(300, rnd), 0.5, rnd)},
		{"mesh 40 nested dissection", laplacian(1600, mesh(40), 0.01, rnd)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			up := NewFactor[float64](nil)
			up.kernel = kernelUp
			sn := NewFactor[float64](nil)
			sn.kernel, sn.amalgamate = kernelSuper, true
			fund := NewFactor[float64](nil)
			fund.kernel = kernelSuper
			for _, f := range []*Factor[float64]{up, sn, fund} {
				if err := f.Factorize(c.m); err != nil {
					t.Fatal(err)
				}
			}
			if sn.Stats().Supernodes >= fund.Stats().Supernodes {
				t.Errorf("amalgamation merged nothing: %d supernodes, %d fundamental", sn.Stats().Supernodes, fund.Stats().Supernodes)
			}
			if sn.Stats().NNZL != up.Stats().NNZL {
				t.Errorf("reported nnz(L) %d, want the true %d", sn.Stats().NNZL, up.Stats().NNZL)
			}
			worst := 0.0
			for j := range up.d {
				worst = math.Max(worst, math.Abs(up.d[j]-sn.d[j])/(1+math.Abs(up.d[j])))
			}
			upper := func(f *Factor[float64]) []float64 { return f.upper() }
			for j := 0; j < c.m.Dim(); j++ {
				p := up.lp[j]
				for q := sn.lp[j]; q < sn.lp[j+1]; q++ {
					var l, u float64
					if p < up.lp[j+1] && up.li[p] == sn.li[q] {
						l, u = up.lx[p], upper(up)[p]
						p++
					}
					worst = math.Max(worst, math.Abs(l-sn.lx[q])/(1+math.Abs(l)))
					worst = math.Max(worst, math.Abs(u-upper(sn)[q])/(1+math.Abs(u)))
				}
				if p != up.lp[j+1] {
					t.Fatalf("column %d: amalgamated pattern lacks row %d", j, up.li[p])
				}
			}
			t.Logf("worst %.3g; supernodes %d amalgamated, %d fundamental; stored %d for nnz(L) %d",
				worst, sn.Stats().Supernodes, fund.Stats().Supernodes, len(sn.li), len(up.li))
			if worst > roundoffK {
				t.Errorf("kernels differ by %.3g > %.3g", worst, roundoffK)
			}
			if a := testing.AllocsPerRun(2, func() { _ = sn.Factorize(c.m) }); a != 0 {
				t.Errorf("%v allocations per amalgamated re-factorisation", a)
			}
		})
	}
}
