package nodesys

import (
	"math"
	"math/rand/v2"
	"testing"
	"time"
)

// thomas solves the tridiagonal system with sub-diagonal a, diagonal d and
// super-diagonal c (a[0], c[n−1] unused) for right-hand side b, overwriting x;
// cp is workspace. It is the reference the benchmarks divide by: the cheapest
// possible solve of n unknowns.
func thomas(x, a, d, c, b, cp []float64) {
	n := len(d)
	beta := d[0]
	x[0] = b[0] / beta
	for i := 1; i < n; i++ {
		cp[i-1] = c[i-1] / beta
		beta = d[i] - a[i]*cp[i-1]
		x[i] = (b[i] - a[i]*x[i-1]) / beta
	}
	for i := n - 2; i >= 0; i-- {
		x[i] -= cp[i] * x[i+1]
	}
}

// thomasTime returns the best of three wall-clock times of a Thomas solve of
// a diagonally dominant tridiagonal system of n unknowns.
func thomasTime(n int) time.Duration {
	rnd := rand.New(rand.NewPCG(99, 0))
	a, d, c, b, x, cp := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range d {
		a[i], c[i] = -rnd.Float64(), -rnd.Float64()
		d[i] = 2.5
		b[i] = rnd.NormFloat64()
	}
	best := time.Duration(math.MaxInt64)
	for r := 0; r < 3; r++ {
		t0 := time.Now()
		thomas(x, a, d, c, b, cp)
		best = min(best, time.Since(t0))
	}
	return best
}

// benchSolve times Factorize+SolveTo on m: "first" includes ordering and
// symbolic analysis (a fresh Factor each op), "refactor" re-factors an
// analysed pattern. Reported: ns per unknown and the ratio to one Thomas
// solve of the same n measured in the same run.
func benchSolve(b *testing.B, m *Matrix[float64]) {
	n := m.Dim()
	th := thomasTime(n)
	rhs := make([]float64, n)
	for i := range rhs {
		rhs[i] = 1
	}
	x := make([]float64, n)
	report := func(b *testing.B) {
		per := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
		b.ReportMetric(per/float64(n), "ns/unknown")
		b.ReportMetric(per/float64(th.Nanoseconds()), "x-thomas")
	}
	b.Run("first", func(b *testing.B) {
		b.ReportAllocs()
		var st Stats
		for b.Loop() {
			f := NewFactor[float64](nil)
			if err := f.Factorize(m); err != nil {
				b.Fatal(err)
			}
			f.SolveTo(x, rhs)
			st = f.Stats()
		}
		report(b)
		b.ReportMetric(float64(st.OrderTime.Nanoseconds())/float64(n), "order-ns/unknown")
		b.ReportMetric(float64(st.Fill), "fill")
	})
	b.Run("refactor", func(b *testing.B) {
		f := NewFactor[float64](nil)
		if err := f.Factorize(m); err != nil {
			b.Fatal(err)
		}
		b.ReportAllocs()
		b.ResetTimer()
		for b.Loop() {
			if err := f.Factorize(m); err != nil {
				b.Fatal(err)
			}
			f.SolveTo(x, rhs)
		}
		report(b)
	})
}

func BenchmarkTree(b *testing.B) {
	for _, n := range []int{100_000, 1_000_000} {
		b.Run("n="+itoa(n), func(b *testing.B) {
			rnd := rand.New(rand.NewPCG(10, uint64(n)))
			m := laplacian(n, randomTree(n, rnd), 0.5, rnd)
			m.freeze()
			benchSolve(b, m)
		})
	}
}

func BenchmarkChain(b *testing.B) {
	n := 1_000_000
	rnd := rand.New(rand.NewPCG(11, 0))
	m := laplacian(n, chain(n, rnd), 0.5, rnd)
	m.freeze()
	benchSolve(b, m)
}

// BenchmarkMesh times the phases on a k×k five-point grid and reports
// nnz(L) against the nested-dissection leading term 31/8·n·log₂n (George
// 1973, from memory).
func BenchmarkMesh(b *testing.B) {
	for _, k := range []int{100, 300} {
		n := k * k
		rnd := rand.New(rand.NewPCG(12, uint64(k)))
		m := laplacian(n, mesh(k), 0.01, rnd)
		m.freeze()
		th := thomasTime(n)
		rhs := make([]float64, n)
		for i := range rhs {
			rhs[i] = rnd.NormFloat64()
		}
		x := make([]float64, n)
		nd := 31.0 / 8 * float64(n) * math.Log2(float64(n))
		f := NewFactor[float64](nil)
		ratio := func(b *testing.B) {
			per := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
			b.ReportMetric(per/float64(th.Nanoseconds()), "x-thomas")
		}
		b.Run("k="+itoa(k)+"/analyze", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				_ = f.analyze(m)
			}
			ratio(b)
			st := f.Stats()
			b.ReportMetric(float64(st.NNZL), "nnzL")
			b.ReportMetric(float64(st.NNZL)/nd, "nnzL/ND")
			b.ReportMetric(float64(st.NNZL)/float64(lowerNNZ(m)), "nnzL/nnzA_lower")
			b.ReportMetric(float64(st.OrderTime.Nanoseconds())/float64(n), "order-ns/unknown")
		})
		b.Run("k="+itoa(k)+"/factor", func(b *testing.B) {
			if err := f.Factorize(m); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := f.Factorize(m); err != nil {
					b.Fatal(err)
				}
			}
			ratio(b)
			b.ReportMetric(float64(f.Stats().Supernodes), "supernodes")
			b.ReportMetric(float64(f.Stats().Workers), "goroutines")
		})
		// The same on one goroutine: the gain of the parallel subtrees.
		b.Run("k="+itoa(k)+"/factor-one-goroutine", func(b *testing.B) {
			g := NewFactor[float64](&Settings{Workers: 1})
			if err := g.Factorize(m); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := g.Factorize(m); err != nil {
					b.Fatal(err)
				}
			}
			ratio(b)
		})
		b.Run("k="+itoa(k)+"/factor-uplooking", func(b *testing.B) {
			g := NewFactor[float64](nil)
			g.kernel = kernelUp
			if err := g.Factorize(m); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := g.Factorize(m); err != nil {
					b.Fatal(err)
				}
			}
			ratio(b)
		})
		// The supernodal kernel on the fundamental supernodes, without
		// relaxed amalgamation: the reference for factor's gain from it.
		b.Run("k="+itoa(k)+"/factor-fundamental", func(b *testing.B) {
			g := NewFactor[float64](nil)
			g.kernel = kernelSuper
			if err := g.Factorize(m); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := g.Factorize(m); err != nil {
					b.Fatal(err)
				}
			}
			ratio(b)
			b.ReportMetric(float64(g.Stats().Supernodes), "supernodes")
		})
		b.Run("k="+itoa(k)+"/solve", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				f.SolveTo(x, rhs)
			}
			ratio(b)
		})
	}
}

func itoa(n int) string {
	switch {
	case n >= 1_000_000 && n%1_000_000 == 0:
		return itoa(n/1_000_000) + "e6"
	case n >= 1000 && n%1000 == 0:
		return itoa(n/1000) + "e3"
	}
	s := ""
	for {
		s = string(rune('0'+n%10)) + s
		n /= 10
		if n == 0 {
			return s
		}
	}
}

// BenchmarkMeshOrderings compares the orderings on a k×k grid: nnz(L) against
// the nested-dissection leading term 31/8·n·log₂n (George 1973, from memory).
func BenchmarkMeshOrderings(b *testing.B) {
	for _, k := range []int{100, 300} {
		n := k * k
		rnd := rand.New(rand.NewPCG(13, uint64(k)))
		m := laplacian(n, mesh(k), 0.01, rnd)
		m.freeze()
		nd := 31.0 / 8 * float64(n) * math.Log2(float64(n))
		th := thomasTime(n)
		for _, o := range []Ordering{MinimumDegree, NestedDissection, Best} {
			b.Run("k="+itoa(k)+"/"+o.String(), func(b *testing.B) {
				f := NewFactor[float64](&Settings{Ordering: o})
				b.ReportAllocs()
				for b.Loop() {
					_ = f.analyze(m)
				}
				st := f.Stats()
				b.ReportMetric(float64(st.NNZL), "nnzL")
				b.ReportMetric(float64(st.NNZL)/nd, "nnzL/ND")
				b.ReportMetric(float64(st.OrderTime.Nanoseconds())/float64(th.Nanoseconds()), "order-x-thomas")
			})
		}
	}
}

// BenchmarkComplexTree times re-factorisation and solve of a shifted tree
// Laplacian L + s·D at s = 1+5i (one point of a Laplace-inversion contour),
// against a real Thomas solve of the same n.
func BenchmarkComplexTree(b *testing.B) {
	n := 100_000
	rnd := rand.New(rand.NewPCG(14, 0))
	m := laplacian(n, randomTree(n, rnd), complex(1, 5), rnd)
	th := thomasTime(n)
	f := NewFactor[complex128](nil)
	if err := f.Factorize(m); err != nil {
		b.Fatal(err)
	}
	x := make([]complex128, n)
	rhs := make([]complex128, n)
	for i := range rhs {
		rhs[i] = 1
	}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if err := f.Factorize(m); err != nil {
			b.Fatal(err)
		}
		f.SolveTo(x, rhs)
	}
	per := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	b.ReportMetric(per/float64(n), "ns/unknown")
	b.ReportMetric(per/float64(th.Nanoseconds()), "x-thomas")
}
