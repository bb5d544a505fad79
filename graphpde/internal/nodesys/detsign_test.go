package nodesys

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestNegativePivotsDeterminantSign checks that (−1)^NegativePivots is the
// sign of det A, computed independently by gonum's dense LU (mat.LU.LogDet),
// on shifted Laplacians made nonsymmetric by a drift-like perturbation of
// the off-diagonal entries (the LDU path), through the tree and the general
// kernels. det A = Π d_k because L and U are unit triangular (any linear
// algebra text; common practice).
func TestNegativePivotsDeterminantSign(t *testing.T) {
	cases := []struct {
		name  string
		n     int
		edges func(r *rand.Rand) []edge
	}{
		{"chain", 60, func(r *rand.Rand) []edge { return chain(60, r) }},
		{"tree", 80, func(r *rand.Rand) []edge { return randomTree(80, r) }},
		{"cyclic", 70, func(r *rand.Rand) []edge { return randomCyclic(70, 40, r) }},
	}
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rnd := rand.New(rand.NewPCG(7, uint64(ci)))
			es := c.edges(rnd)
			checked := 0
			for _, sigma := range []float64{-0.3, 0.2, 0.9, 2.1, 3.3} {
				m := laplacian(c.n, es, -sigma, rnd)
				for _, e := range es {
					m.Add(e.u, e.v, 0.2*(rnd.Float64()-0.5))
				}
				a := realDense(m)
				var lu mat.LU
				lu.Factorize(a)
				logDet, sign := lu.LogDet()
				if logDet < -20 { // too close to singular for a sign
					continue
				}
				f := NewFactor[float64](nil)
				if err := f.Factorize(m); err != nil {
					continue
				}
				if f.Stats().Symmetric {
					t.Fatal("perturbed matrix took the symmetric path")
				}
				neg, ok := f.NegativePivots()
				if !ok {
					t.Fatal("NegativePivots not ok on a real factor")
				}
				if got := math.Pow(-1, float64(neg)); got != sign {
					t.Errorf("σ=%g: (−1)^%d = %g, det sign %g", sigma, neg, got, sign)
				}
				checked++
			}
			if checked < 3 {
				t.Errorf("only %d shifts checked", checked)
			}
		})
	}
}
