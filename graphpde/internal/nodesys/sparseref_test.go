package nodesys

import (
	"math/rand/v2"
	"testing"

	"github.com/james-bowman/sparse"
	"gonum.org/v1/gonum/mat"
)

// TestAgainstSparseCholesky checks the production factorisation against a
// second, independent sparse reference: the Cholesky factorisation of
// github.com/james-bowman/sparse (no fill-reducing order, so it is kept for
// tests only, as docs/discretisation.md §5 says), on SPD graph Laplacians plus a leak with
// cycles. Both solves are backward stable on an SPD matrix, so the solutions
// may differ by cond(A)·(a small multiple of eps): the same roundoff bound as
// the dense comparisons of TestFactorRealAgainstDense.
func TestAgainstSparseCholesky(t *testing.T) {
	for ci, c := range []struct {
		name     string
		n, extra int
		leak     float64
	}{
		{"tree plus a few cycles", 200, 20, 0.5},
		{"many cycles", 150, 400, 0.1},
	} {
		t.Run(c.name, func(t *testing.T) {
			rnd := rand.New(rand.NewPCG(7, uint64(ci)))
			m := laplacian(c.n, randomCyclic(c.n, c.extra, rnd), c.leak, rnd)
			b := make([]float64, c.n)
			for i := range b {
				b[i] = rnd.NormFloat64()
			}
			f := NewFactor[float64](nil)
			if err := f.Factorize(m); err != nil {
				t.Fatal(err)
			}
			x := make([]float64, c.n)
			f.SolveTo(x, b)

			dok := sparse.NewDOK(c.n, c.n)
			for i := 0; i < c.n; i++ {
				for j := 0; j < c.n; j++ {
					if v := m.At(i, j); v != 0 {
						dok.Set(i, j, v)
					}
				}
			}
			var ch sparse.Cholesky
			ch.Factorize(dok.ToCSR())
			ref := mat.NewVecDense(c.n, nil)
			if err := ch.SolveVecTo(ref, mat.NewVecDense(c.n, b)); err != nil {
				t.Fatal(err)
			}
			var lu mat.LU
			lu.Factorize(realDense(m))
			tol := roundoff(lu.Cond())
			var scale float64
			for i := range x {
				scale = max(scale, abs(ref.AtVec(i)))
			}
			for i := range x {
				if d := abs(x[i] - ref.AtVec(i)); d > tol*scale {
					t.Fatalf("x[%d] = %.15g, sparse Cholesky %.15g (tolerance %.2g)", i, x[i], ref.AtVec(i), tol*scale)
				}
			}
		})
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
