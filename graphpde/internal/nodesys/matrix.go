package nodesys

import (
	"fmt"
	"slices"
)

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

// NewMatrixPattern returns an n×n matrix with all values zero whose pattern
// is already frozen to the compressed rows rowPtr (n+1 offsets) and col: the
// columns of row i are col[rowPtr[i]:rowPtr[i+1]], strictly increasing, the
// diagonal among them, and the pattern symmetric. Adds into the pattern then
// cost O(log deg) and allocate nothing from the first assembly on, which
// spares a caller that knows its pattern (a network's incidence) the pending
// list and the sort of the first Factorize. The slices are kept, not copied,
// and must not be modified afterwards. It panics if the pattern is not of
// that form. Cost O(n + nnz).
func NewMatrixPattern[T Scalar](n int, rowPtr, col []int) *Matrix[T] {
	if n < 0 || len(rowPtr) != n+1 || rowPtr[0] != 0 || rowPtr[n] != len(col) {
		panic("nodesys: NewMatrixPattern: bad row offsets")
	}
	tr := make([]int, len(col))
	cur := make([]int, n)
	copy(cur, rowPtr[:n])
	for i := 0; i < n; i++ {
		diag := false
		for p := rowPtr[i]; p < rowPtr[i+1]; p++ {
			j := col[p]
			if uint(j) >= uint(n) || (p > rowPtr[i] && j <= col[p-1]) {
				panic("nodesys: NewMatrixPattern: columns not increasing or out of range")
			}
			diag = diag || j == i
			// Rows are visited in increasing order, so the entries (·,j)
			// come in increasing row order: that of row j's columns.
			q := cur[j]
			if q >= rowPtr[j+1] || col[q] != i {
				panic("nodesys: NewMatrixPattern: pattern not symmetric")
			}
			tr[p] = q
			cur[j]++
		}
		if !diag {
			panic("nodesys: NewMatrixPattern: diagonal missing")
		}
	}
	return &Matrix[T]{n: n, rowPtr: rowPtr, col: col, val: make([]T, len(col)), tr: tr, version: 1}
}

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

// Values returns the values of the frozen pattern in the order of its
// compressed rows (for NewMatrixPattern, the order of its col argument), or
// nil before the first freeze. A caller that knows the slot of an entry may
// accumulate into it directly; the slice stays valid until the pattern
// changes (an Add outside it followed by Factorize). Cost O(1).
func (m *Matrix[T]) Values() []T { return m.val }

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

// freeze merges the pending entries (and a diagonal entry in every row) into
// the compressed pattern. It reports whether the pattern changed. Cost
// O(nnz + n).
func (m *Matrix[T]) freeze() bool {
	if m.rowPtr != nil && len(m.pi) == 0 {
		return false
	}
	n := m.n
	// Bucket all entries by row: the diagonal, the frozen entries, the
	// pending ones.
	cnt := make([]int, n+1)
	for i := 0; i < n; i++ {
		cnt[i+1] = 1
		if m.rowPtr != nil {
			cnt[i+1] += m.rowPtr[i+1] - m.rowPtr[i]
		}
	}
	for _, i := range m.pi {
		cnt[i+1]++
	}
	for i := 0; i < n; i++ {
		cnt[i+1] += cnt[i]
	}
	tot := cnt[n]
	col := make([]int, tot)
	val := make([]T, tot)
	fill := make([]int, n)
	for i := 0; i < n; i++ {
		q := cnt[i]
		col[q] = i
		q++
		if m.rowPtr != nil {
			q += copy(col[q:], m.col[m.rowPtr[i]:m.rowPtr[i+1]])
			copy(val[cnt[i]+1:], m.val[m.rowPtr[i]:m.rowPtr[i+1]])
		}
		fill[i] = q
	}
	for k, i := range m.pi {
		col[fill[i]] = m.pj[k]
		val[fill[i]] = m.pv[k]
		fill[i]++
	}

	// Sort each row by column and merge duplicates, compacting in place.
	rowPtr := make([]int, n+1)
	var tmp []colVal[T]
	w := 0
	for i := 0; i < n; i++ {
		c, v := col[cnt[i]:cnt[i+1]], val[cnt[i]:cnt[i+1]]
		if len(c) <= 32 {
			for a := 1; a < len(c); a++ {
				for b := a; b > 0 && c[b] < c[b-1]; b-- {
					c[b], c[b-1] = c[b-1], c[b]
					v[b], v[b-1] = v[b-1], v[b]
				}
			}
		} else {
			tmp = tmp[:0]
			for a := range c {
				tmp = append(tmp, colVal[T]{c[a], v[a]})
			}
			slices.SortStableFunc(tmp, func(x, y colVal[T]) int { return x.c - y.c })
			for a := range tmp {
				c[a], v[a] = tmp[a].c, tmp[a].v
			}
		}
		for a := range c {
			if a > 0 && c[a] == c[a-1] {
				val[w-1] += v[a]
				continue
			}
			col[w], val[w] = c[a], v[a]
			w++
		}
		rowPtr[i+1] = w
	}
	col, val = col[:w:w], val[:w:w]

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

type colVal[T Scalar] struct {
	c int
	v T
}
