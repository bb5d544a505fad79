package nodesys

import (
	"errors"
	"math/rand/v2"
	"testing"
)

// TestStop checks Settings.Stop on the two general kernels (up-looking and
// supernodal, forced), symmetric and not: a Stop that fires on its k-th
// call makes Factorize return ErrStopped and leaves the factor unusable
// until the next Factorize, for every k up to the number of calls a full
// factorisation makes (so the calls are spread over the columns, not only
// at the start); a Stop that never fires gives the same factor, bit for
// bit, as none (the same pivots, so the same solution).
func TestStop(t *testing.T) {
	rnd := rand.New(rand.NewPCG(5, 0))
	n := 60 * 60
	mats := map[string]*Matrix[float64]{
		"symmetric":    laplacian[float64](n, mesh(60), 0.01, rnd),
		"nonsymmetric": driftSystem(n, mesh(60), 0.01, rnd),
	}
	b := make([]float64, n)
	for i := range b {
		b[i] = rnd.Float64()
	}
	for name, m := range mats {
		for _, kern := range []int{kernelUp, kernelSuper} {
			ref := NewFactor[float64](nil)
			ref.kernel = kern
			if err := ref.Factorize(m); err != nil {
				t.Fatal(err)
			}
			want := make([]float64, n)
			ref.SolveTo(want, b)
			calls := 0
			f := NewFactor[float64](&Settings{Stop: func() bool { calls++; return false }})
			f.kernel = kern
			if err := f.Factorize(m); err != nil {
				t.Fatal(err)
			}
			got := make([]float64, n)
			f.SolveTo(got, b)
			for i := range got {
				if got[i] != want[i] {
					t.Fatalf("%s, kernel %d: x[%d] = %v with Stop, %v without", name, kern, i, got[i], want[i])
				}
			}
			if calls < 2 {
				t.Errorf("%s, kernel %d: Stop called %d times in %d columns", name, kern, calls, n)
			}
			for k := 1; k <= calls; k++ {
				c := 0
				g := NewFactor[float64](&Settings{Stop: func() bool { c++; return c >= k }})
				g.kernel = kern
				if err := g.Factorize(m); !errors.Is(err, ErrStopped) {
					t.Fatalf("%s, kernel %d, stop at call %d of %d: %v, want ErrStopped", name, kern, k, calls, err)
				}
				func() {
					defer func() {
						if recover() == nil {
							t.Errorf("%s, kernel %d: SolveTo after a stopped Factorize did not panic", name, kern)
						}
					}()
					g.SolveTo(got, b)
				}()
			}
		}
	}
}
