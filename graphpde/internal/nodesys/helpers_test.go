package nodesys

import (
	"math"
	"math/cmplx"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

const eps = 0x1p-52

// edge is an undirected edge of a test graph.
type edge struct{ u, v int }

// randomTree returns the n−1 edges of a random recursive tree (node v is
// attached to a uniformly chosen earlier node) with the labels shuffled, so
// the natural order is no help.
func randomTree(n int, rnd *rand.Rand) []edge {
	lab := rnd.Perm(n)
	es := make([]edge, 0, n-1)
	for v := 1; v < n; v++ {
		es = append(es, edge{lab[v], lab[rnd.IntN(v)]})
	}
	return es
}

// randomCyclic returns a random connected graph: a random tree plus extra
// random edges (each closes a cycle); self loops and repeats are dropped.
func randomCyclic(n, extra int, rnd *rand.Rand) []edge {
	es := randomTree(n, rnd)
	seen := map[edge]bool{}
	for _, e := range es {
		seen[edge{min(e.u, e.v), max(e.u, e.v)}] = true
	}
	for len(es) < n-1+extra {
		u, v := rnd.IntN(n), rnd.IntN(n)
		k := edge{min(u, v), max(u, v)}
		if u == v || seen[k] {
			continue
		}
		seen[k] = true
		es = append(es, k)
	}
	return es
}

// chain returns the edges of a path through the nodes in a shuffled order.
func chain(n int, rnd *rand.Rand) []edge {
	lab := rnd.Perm(n)
	es := make([]edge, 0, n-1)
	for v := 1; v < n; v++ {
		es = append(es, edge{lab[v-1], lab[v]})
	}
	return es
}

// mesh returns the edges of a k×k five-point grid, node (r,c) = r*k+c.
func mesh(k int) []edge {
	var es []edge
	for r := 0; r < k; r++ {
		for c := 0; c < k; c++ {
			v := r*k + c
			if c+1 < k {
				es = append(es, edge{v, v + 1})
			}
			if r+1 < k {
				es = append(es, edge{v, v + k})
			}
		}
	}
	return es
}

// laplacian assembles the weighted graph Laplacian (conductances in (0.5,1.5))
// plus leak·diag[i] on the diagonal, where diag[i] is in (0.5,1.5): the node
// system of a conservative problem with a leak. With T complex and leak = s
// this is a shifted Laplacian L + s·D.
func laplacian[T Scalar](n int, es []edge, leak T, rnd *rand.Rand) *Matrix[T] {
	m := NewMatrix[T](n)
	for _, e := range es {
		g := fromReal[T](0.5 + rnd.Float64())
		m.Add(e.u, e.u, g)
		m.Add(e.v, e.v, g)
		m.Add(e.u, e.v, -g)
		m.Add(e.v, e.u, -g)
	}
	for i := 0; i < n; i++ {
		m.Add(i, i, leak*fromReal[T](0.5+rnd.Float64()))
	}
	return m
}

// driftSystem assembles a nonsymmetric, weakly diagonally dominant M-matrix:
// for each edge the off-diagonal couplings −a and −b differ (upwinded drift),
// each row's diagonal is the sum of its off-diagonal magnitudes plus a leak.
func driftSystem(n int, es []edge, leak float64, rnd *rand.Rand) *Matrix[float64] {
	m := NewMatrix[float64](n)
	for _, e := range es {
		a := 0.5 + rnd.Float64()
		b := 0.5 + 2*rnd.Float64()
		m.Add(e.u, e.v, -a)
		m.Add(e.u, e.u, a)
		m.Add(e.v, e.u, -b)
		m.Add(e.v, e.v, b)
	}
	for i := 0; i < n; i++ {
		m.Add(i, i, leak*(0.5+rnd.Float64()))
	}
	return m
}

// realDense copies m into a gonum dense matrix.
func realDense(m *Matrix[float64]) *mat.Dense {
	n := m.Dim()
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			a.Set(i, j, m.At(i, j))
		}
	}
	return a
}

// complexAsReal returns the real 2n×2n matrix [[Re A, −Im A], [Im A, Re A]],
// which acts on (Re x, Im x) as A acts on x: gonum's real dense solver and
// condition number then serve as the reference for complex systems.
func complexAsReal(m *Matrix[complex128]) *mat.Dense {
	n := m.Dim()
	a := mat.NewDense(2*n, 2*n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := m.At(i, j)
			a.Set(i, j, real(v))
			a.Set(i, j+n, -imag(v))
			a.Set(i+n, j, imag(v))
			a.Set(i+n, j+n, real(v))
		}
	}
	return a
}

// maxAbs returns max_i |x_i|.
func maxAbs[T Scalar](x []T) float64 {
	s := 0.0
	for _, v := range x {
		s = math.Max(s, mag(v))
	}
	return s
}

// maxDiff returns max_i |x_i − y_i|.
func maxDiff(x, y []complex128) float64 {
	s := 0.0
	for i := range x {
		s = math.Max(s, cmplx.Abs(x[i]-y[i]))
	}
	return s
}

// lowerNNZ returns the number of stored entries of A with i ≥ j.
func lowerNNZ[T Scalar](m *Matrix[T]) int {
	m.freeze()
	c := 0
	for i := 0; i < m.n; i++ {
		for p := m.rowPtr[i]; p < m.rowPtr[i+1]; p++ {
			if m.col[p] <= i {
				c++
			}
		}
	}
	return c
}

// residual returns ‖A·x − b‖∞ / (‖A‖∞·‖x‖∞ + ‖b‖∞), the normwise backward
// error of x.
func residual[T Scalar](m *Matrix[T], x, b []T) float64 {
	r := make([]T, len(b))
	m.MulVecTo(r, x)
	for i := range r {
		r[i] -= b[i]
	}
	anorm := 0.0
	m.freeze()
	for i := 0; i < m.n; i++ {
		s := 0.0
		for p := m.rowPtr[i]; p < m.rowPtr[i+1]; p++ {
			s += mag(m.val[p])
		}
		anorm = math.Max(anorm, s)
	}
	return maxAbs(r) / (anorm*maxAbs(x) + maxAbs(b))
}

// fromReal returns x as a T.
func fromReal[T Scalar](x float64) T {
	var v T
	switch p := any(&v).(type) {
	case *float64:
		*p = x
	case *complex128:
		*p = complex(x, 0)
	}
	return v
}

// Dim returns the dimension n of the matrix.
func (m *Matrix[T]) Dim() int { return m.n }

// MulVecTo sets dst = m·x. It panics if len(dst) or len(x) differs from the
// dimension. dst must not alias x. Cost O(nnz).
func (m *Matrix[T]) MulVecTo(dst, x []T) {
	if len(dst) != m.n || len(x) != m.n {
		panic("nodesys: MulVecTo length mismatch")
	}
	clear(dst)
	if m.rowPtr != nil {
		for i := 0; i < m.n; i++ {
			var s T
			for p := m.rowPtr[i]; p < m.rowPtr[i+1]; p++ {
				s += m.val[p] * x[m.col[p]]
			}
			dst[i] = s
		}
	}
	for k := range m.pi {
		dst[m.pi[k]] += m.pv[k] * x[m.pj[k]]
	}
}
