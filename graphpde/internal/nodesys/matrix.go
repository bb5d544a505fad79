package nodesys

import "fmt"

// Matrix is a square sparse matrix with a symmetric pattern, assembled by Add.
//
// Entries are first collected in a pending list. The first Factorize freezes
// the pattern into compressed sparse rows (sorted columns, diagonal always
// present); after that, Add into an existing position costs O(log deg) and
// allocates nothing, which is what re-assembly in time stepping needs. Adding
// into a position outside the frozen pattern is allowed: it goes to the
// pending list and the next Factorize rebuilds the pattern and the ordering.
//
// A Matrix is not safe for concurrent mutation.
type Matrix[T Scalar] struct {
	n int

	// Frozen pattern in compressed sparse rows; rowPtr == nil before the
	// first freeze.
	rowPtr []int
	col    []int
	val    []T
	tr     []int // tr[s] is the slot of the transposed entry of slot s

	// Pending entries outside the frozen pattern.
	pi, pj []int
	pv     []T

	version uint64 // incremented whenever the frozen pattern changes
}

// NewMatrix returns an empty n×n matrix. It panics if n < 0.
func NewMatrix[T Scalar](n int) *Matrix[T] {
	if n < 0 {
		panic("nodesys: negative dimension")
	}
	return &Matrix[T]{n: n}
}

// Dim returns the dimension n of the matrix.
func (m *Matrix[T]) Dim() int { return m.n }

func (m *Matrix[T]) check(i, j int) {
	if uint(i) >= uint(m.n) || uint(j) >= uint(m.n) {
		panic(fmt.Sprintf("nodesys: index (%d,%d) out of range for dimension %d", i, j, m.n))
	}
}

// find returns the slot of (i,j) in the frozen pattern, or -1.
// Cost O(log deg(i)).
func (m *Matrix[T]) find(i, j int) int {
	if m.rowPtr == nil {
		return -1
	}
	lo, hi := m.rowPtr[i], m.rowPtr[i+1]
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if m.col[mid] < j {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	if lo < m.rowPtr[i+1] && m.col[lo] == j {
		return lo
	}
	return -1
}

// Add accumulates v into entry (i,j) and puts (j,i) into the pattern (with
// value zero if nothing else is added there). Into a frozen pattern position
// it costs O(log deg) and allocates nothing. It panics if i or j is out of
// range.
func (m *Matrix[T]) Add(i, j int, v T) {
	m.check(i, j)
	if s := m.find(i, j); s >= 0 {
		m.val[s] += v
		return
	}
	m.pi = append(m.pi, i)
	m.pj = append(m.pj, j)
	m.pv = append(m.pv, v)
	if i != j && m.find(j, i) < 0 {
		m.pi = append(m.pi, j)
		m.pj = append(m.pj, i)
		m.pv = append(m.pv, 0)
	}
}

// ZeroValues sets every stored value to zero and keeps the pattern, for
// re-assembly with the same pattern. Cost O(nnz).
func (m *Matrix[T]) ZeroValues() {
	clear(m.val)
	clear(m.pv)
}

// At returns entry (i,j). It is meant for tests: O(log deg) on a frozen
// pattern plus O(number of pending entries). It panics if i or j is out of
// range.
func (m *Matrix[T]) At(i, j int) T {
	m.check(i, j)
	var v T
	if s := m.find(i, j); s >= 0 {
		v = m.val[s]
	}
	for k := range m.pi {
		if m.pi[k] == i && m.pj[k] == j {
			v += m.pv[k]
		}
	}
	return v
}

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

// freeze merges the pending entries (and a diagonal entry in every row) into
// the compressed pattern. It reports whether the pattern changed. Cost
// O(nnz + n).
func (m *Matrix[T]) freeze() bool {
	if m.rowPtr != nil && len(m.pi) == 0 {
		return false
	}
	n := m.n
	old := 0
	if m.rowPtr != nil {
		old = len(m.col)
	}
	tot := old + len(m.pi) + n
	ti := make([]int, 0, tot)
	tj := make([]int, 0, tot)
	tv := make([]T, 0, tot)
	if m.rowPtr != nil {
		for i := 0; i < n; i++ {
			for p := m.rowPtr[i]; p < m.rowPtr[i+1]; p++ {
				ti = append(ti, i)
				tj = append(tj, m.col[p])
				tv = append(tv, m.val[p])
			}
		}
	}
	ti = append(ti, m.pi...)
	tj = append(tj, m.pj...)
	tv = append(tv, m.pv...)
	for i := 0; i < n; i++ {
		ti = append(ti, i)
		tj = append(tj, i)
		tv = append(tv, 0)
	}

	// Two stable counting sorts: by column, then by row, so that rows come
	// out with sorted columns.
	cnt := make([]int, n+1)
	ord := make([]int, tot)
	for _, j := range tj {
		cnt[j+1]++
	}
	for j := 0; j < n; j++ {
		cnt[j+1] += cnt[j]
	}
	for k, j := range tj {
		ord[cnt[j]] = k
		cnt[j]++
	}
	clear(cnt)
	for _, i := range ti {
		cnt[i+1]++
	}
	for i := 0; i < n; i++ {
		cnt[i+1] += cnt[i]
	}
	ord2 := make([]int, tot)
	for _, k := range ord {
		i := ti[k]
		ord2[cnt[i]] = k
		cnt[i]++
	}

	// Merge duplicates.
	rowPtr := make([]int, n+1)
	col := make([]int, 0, tot)
	val := make([]T, 0, tot)
	lastI, lastJ := -1, -1
	for _, k := range ord2 {
		i, j := ti[k], tj[k]
		if i == lastI && j == lastJ {
			val[len(val)-1] += tv[k]
			continue
		}
		col = append(col, j)
		val = append(val, tv[k])
		rowPtr[i+1]++
		lastI, lastJ = i, j
	}
	for i := 0; i < n; i++ {
		rowPtr[i+1] += rowPtr[i]
	}

	// Transpose slots: scanning rows in increasing order visits, for each
	// column j, the entries (i,j) in increasing i, which is the order of row
	// j's columns because the pattern is symmetric.
	tr := make([]int, len(col))
	cur := make([]int, n)
	copy(cur, rowPtr[:n])
	for i := 0; i < n; i++ {
		for p := rowPtr[i]; p < rowPtr[i+1]; p++ {
			j := col[p]
			tr[p] = cur[j]
			cur[j]++
		}
	}

	m.rowPtr, m.col, m.val, m.tr = rowPtr, col, val, tr
	m.pi, m.pj, m.pv = m.pi[:0], m.pj[:0], m.pv[:0]
	m.version++
	return true
}
