package nodesys

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"time"
)

// Ordering selects the fill-reducing elimination order.
type Ordering int

const (
	// MinimumDegree (the default) peels nodes of degree at most one, then
	// orders the rest by approximate minimum degree on the quotient graph.
	// On a tree it eliminates leaves first and gives no fill.
	MinimumDegree Ordering = iota
	// Natural eliminates the nodes in their given order (for tests and for
	// systems already ordered by the caller, e.g. a chain numbered along it).
	Natural
	// NestedDissection splits the graph recursively by level-structure
	// separators (no coordinates needed) and orders small pieces by minimum
	// degree.
	NestedDissection
	// Best computes both MinimumDegree and NestedDissection and keeps the one
	// with fewer entries in L (about twice the analysis cost).
	Best
)

// String returns the name of the ordering.
func (o Ordering) String() string {
	switch o {
	case MinimumDegree:
		return "minimum degree"
	case Natural:
		return "natural"
	case NestedDissection:
		return "nested dissection"
	case Best:
		return "best"
	}
	return fmt.Sprintf("Ordering(%d)", int(o))
}

// DefaultPivotTol is the default relative pivot tolerance of Settings.
//
// A node system that is singular because a component has zero row sums
// (nothing anchors it) leaves a last pivot of the size of the rounding error
// accumulated in that component. Measured on unanchored random Laplacians
// (conductances in (0.5, 1.5)), relative to the scale of Settings.PivotTol:
// at most 25·eps on trees of up to 5·10⁴ nodes, 233·eps on a graph of 10⁴
// nodes with 5000 independent cycles (8·10⁵ entries in L), but 2.3·10⁴·eps on
// one of 5·10⁴ nodes with 2.5·10⁴ cycles (1.9·10⁷ entries in L), which this
// default does not catch. The pivot test is therefore a safeguard, not a
// proof of regularity: callers should check structurally that every
// component is anchored. A regular system is rejected only if a pivot falls
// below 1e4·eps ≈ 2.2e-12 of its row, e.g. a node joined to its anchor
// through a path whose effective conductance is that small against its own
// conductances.
const DefaultPivotTol = 1e4 * 0x1p-52

// Settings controls a Factor. The zero value (or a nil *Settings) gives the
// defaults.
type Settings struct {
	// Ordering is the fill-reducing order; the zero value is MinimumDegree.
	Ordering Ordering
	// Symmetric forces the LDLᵀ path (true: only the lower triangle is read)
	// or the LDU path (false). nil detects exact symmetry A = Aᵀ (transpose,
	// not conjugate transpose) at every Factorize, at cost O(nnz).
	Symmetric *bool
	// PivotTol is the relative pivot tolerance: a pivot
	//
	//	d_k = a_kk − Σ_j l_kj·d_j·u_jk
	//
	// with |d_k| ≤ PivotTol·max(max_j |a_kj|, |a_kk| + Σ_j |l_kj·d_j·u_jk|)
	// is reported as a *SingularError: small against the row and against the
	// terms that cancelled in it (for complex values all magnitudes in the
	// norm max(|Re|, |Im|)). Zero means DefaultPivotTol.
	PivotTol float64
	// MaxNNZL bounds the entries of L (diagonal included) that Factorize may
	// allocate; beyond it Factorize returns a *SizeError before allocating
	// the factor. The memory is about (8 + size of T)·MaxNNZL bytes (twice
	// the values on the nonsymmetric path). Zero means no limit.
	MaxNNZL int
	// Stop, when not nil, is called every stopEvery columns (supernodes)
	// of a numeric factorisation by the general kernels; when it returns
	// true Factorize gives up with ErrStopped. The forest kernel, whose
	// whole cost is O(n) with a few operations per column, does not call
	// it.
	Stop func() bool
	// Workers is the number of goroutines a supernodal factorisation (a
	// mesh-like pattern) may use for independent subtrees of its
	// elimination tree; zero means GOMAXPROCS, at most 8. The factors do
	// not depend on it. Trees and sparse networks use one goroutine.
	Workers int
}

// ErrStopped is returned by Factorize when Settings.Stop asked it to stop.
var ErrStopped = errors.New("nodesys: factorisation stopped")

// stopEvery is the number of columns between two calls of Settings.Stop:
// a column costs at least a few tens of nanoseconds, a call of a context's
// Err about ten, so the calls cost well under 1%.
const stopEvery = 1024

// Stats describes a factorisation.
type Stats struct {
	N         int    // number of unknowns
	NNZA      int    // stored entries of A, diagonal included
	NNZL      int    // entries of L, unit diagonal counted (= entries of D plus strictly lower L)
	Fill      int    // NNZL − entries of the lower triangle of A (diagonal included)
	Ordering  string // ordering used
	Symmetric bool   // whether the last numeric factorisation took the LDLᵀ path
	// Supernodes is the number of supernodes when the supernodal kernel
	// is used (most of the work in supernodes of width ≥ 4, as on meshes),
	// 0 when the up-looking kernel is (trees, sparse networks).
	Supernodes int
	// Workers is the number of goroutines of the last numeric
	// factorisation (1 but for large supernodal ones).
	Workers int

	// MinPivotRatio is the smallest |d_k| / max(max_j |a_kj|, |a_kk| +
	// Σ_j |l_kj·d_j·u_jk|) of the last numeric factorisation: the share
	// of a pivot that survived the cancellation in its elimination (1
	// without any). About ε/MinPivotRatio of relative accuracy is lost in
	// the solution; Settings.PivotTol is its floor. MinPivotIndex is that
	// row in the caller's numbering (−1 for an empty system).
	MinPivotRatio float64
	MinPivotIndex int

	// Reused reports whether the last Factorize kept an earlier analysis
	// (same pattern, or a Factor made by Clone or NewFactorFrom) instead
	// of ordering and analysing anew.
	Reused bool

	// Wall-clock times of the last analysis (ordering and symbolic
	// factorisation) and of the last numeric factorisation.
	OrderTime, SymbolicTime, NumericTime time.Duration
}

// SingularError reports a zero or tiny pivot: the node system is singular or
// nearly so (for example a component with zero row sums that nothing
// anchors). Index is the row/column in the caller's numbering.
type SingularError struct {
	Index int     // row/column of the pivot, original numbering
	Pivot float64 // |d| of the pivot
	Scale float64 // what the pivot was compared with (see Settings.PivotTol)
}

// Error implements error.
func (e *SingularError) Error() string {
	return fmt.Sprintf("nodesys: singular node system at unknown %d (pivot %.3g against scale %.3g)", e.Index, e.Pivot, e.Scale)
}

// SizeError reports that the factor would have more entries than
// Settings.MaxNNZL allows.
type SizeError struct {
	NNZL int // entries of L the ordering leads to, diagonal included
	Max  int // Settings.MaxNNZL
}

// Error implements error.
func (e *SizeError) Error() string {
	return fmt.Sprintf("nodesys: factor would hold %d entries, more than the limit %d", e.NNZL, e.Max)
}

// Factor is the factorisation P·A·Pᵀ = L·D·U of a node system with a
// fill-reducing permutation P, L unit lower and U unit upper triangular with
// the same pattern (U = Lᵀ on the symmetric path), computed without pivoting.
// That is stable for symmetric positive definite and for diagonally dominant
// matrices, which is what node systems are; tiny pivots are reported.
//
// The ordering and the symbolic factorisation are kept and reused as long as
// Factorize is called with a matrix of the same frozen pattern (the same
// matrix re-assembled, or another one with identical pattern); a
// re-factorisation then allocates nothing.
//
// A Factor is used by one goroutine at a time (SolveTo uses its workspace);
// Clone gives further Factors that share the analysis.
type Factor[T Scalar] struct {
	set Settings

	mat     *Matrix[T]
	version uint64
	// The pattern analysed (freeze never mutates these slices in place).
	patPtr, patCol []int
	ready          bool // numeric factorisation valid

	n     int
	perm  []int // perm[k]: original index of the k-th pivot
	iperm []int
	par   []int // elimination tree (permuted numbering)

	// Permuted strictly upper part of A by columns: for column k the rows
	// arow[acp[k]:acp[k+1]] (< k), with slots of A(row,k) in aup and of
	// A(k,row) in alo; adiag[k] is the slot of A(k,k).
	acp, arow, aup, alo, adiag []int

	// L by columns (strictly lower, rows increasing); ux holds U by rows in
	// the same positions (U(j,r) = ux[p] for r = li[p], p in column j).
	lp  []int
	li  []int
	lx  []T
	ux  []T
	d   []T
	lnz []int

	// Workspace.
	y, z  []T
	flag  []int
	stack []int
	work  []T

	symmetric bool
	stats     Stats

	kernel int  // kernelAuto unless a test forces one
	tree   bool // analysed by analyzeTree: numericTree applies
	// Row sums supplied by SetRowExcess (nil: none), and for the forest
	// kernel the slot of A(perm[k], parent) per k and the reduced row sums.
	excess []float64
	tpslot []int
	tsx    []float64
	sn     *snodes // supernodes, nil for the up-looking kernel
	// amalgamate asks for relaxed amalgamation when a test forces the
	// supernodal kernel (kernelAuto always amalgamates; a forced kernel
	// keeps the fundamental supernodes and the exact pattern of L).
	amalgamate bool
	snw        *snWork[T]
	// fma selects the AVX2 kernels for real values (useFMA unless a test
	// or MeasureKernels asks for the Go loops).
	fma bool
}

// NewFactor returns an empty factorisation with the given settings (nil for
// the defaults). The settings are copied. It panics on an unknown Ordering or
// a negative PivotTol or MaxNNZL (programmer mistakes).
func NewFactor[T Scalar](set *Settings) *Factor[T] {
	f := &Factor[T]{fma: useFMA}
	if set != nil {
		f.set = *set
	}
	if f.set.Ordering < MinimumDegree || f.set.Ordering > Best {
		panic("nodesys: unknown ordering " + f.set.Ordering.String())
	}
	if f.set.PivotTol < 0 || f.set.MaxNNZL < 0 {
		panic("nodesys: negative PivotTol or MaxNNZL")
	}
	if f.set.PivotTol == 0 {
		f.set.PivotTol = DefaultPivotTol
	}
	return f
}

// Stats returns figures of the last factorisation.
func (f *Factor[T]) Stats() Stats { return f.stats }

// Factorize orders m (on first use, or when m or its pattern changed) and
// factors it. It freezes m's pattern. On a zero, tiny or non-finite pivot it
// returns a *SingularError, and if the factor would exceed Settings.MaxNNZL a
// *SizeError; either leaves f unusable for SolveTo until the next successful
// Factorize.
//
// Cost: ordering and symbolic analysis O(nnz(L)) (O(n) on trees and chains),
// numeric factorisation O(Σ_k |L_k|²) over the columns L_k of L; a
// re-factorisation on an unchanged pattern allocates nothing.
func (f *Factor[T]) Factorize(m *Matrix[T]) error {
	m.freeze()
	reused := true
	switch {
	case f.mat == m && f.version == m.version:
	case f.patPtr != nil && f.samePattern(m):
		f.mat, f.version = m, m.version
	default:
		reused = false
		if err := f.analyze(m); err != nil {
			f.ready = false
			return err
		}
	}
	f.stats.Reused = reused
	f.ready = false
	t0 := time.Now()
	err := f.numeric(m)
	f.stats.NumericTime = time.Since(t0)
	if err != nil {
		return err
	}
	f.ready = true
	return nil
}

// SetRowExcess gives the row sums s_r = Σ_j A_rj of the matrices to be
// factored next, computed by the caller without cancellation (nil switches
// them off; the slice is read at every Factorize and must not change
// during one). When the pattern is a forest and the matrix a real M-matrix
// in sign (off-diagonal entries ≤ 0, s ≥ 0), the pivots are then formed
// as sums of non-negative terms,
//
//	s'_k = s_k + Σ_i |l_ki|·s'_i,   d_k = s'_k + |a_k,parent(k)|,
//
// over the children i of k, instead of a_kk − Σ_i l_ki·a_ik, which cancels
// when the rows nearly sum to zero (a node coupled to what anchors it only
// through an e^{−Pe} small link). Every quantity then has a small relative
// error (the GTH idea: W. K. Grassmann, M. I. Taksar and D. P. Heyman,
// Regenerative analysis and steady state distributions for Markov chains,
// Oper. Res. 33 (1985) 1107–1116; for M-matrices C. A. O'Cinneide,
// Entrywise perturbation theory and error analysis for Markov chains,
// Numer. Math. 65 (1993) 109–120; both from memory), so no pivot is
// refused for its size and MinPivotRatio stays 1. Other patterns and
// other matrices ignore the row sums.
func (f *Factor[T]) SetRowExcess(s []float64) {
	if s != nil && len(s) != f.n && f.n != 0 {
		panic("nodesys: SetRowExcess with a wrong length")
	}
	f.excess = s
}

// Clone returns a Factor with the same settings that shares f's ordering and
// symbolic analysis (read-only) and has its own numeric storage, so that
// several goroutines can factor matrices of one pattern (one value of s each)
// without repeating the analysis. The clone has no numeric factorisation until
// its own Factorize; f and its clones may be used concurrently, each by one
// goroutine. If f has not been analysed, Clone returns an empty Factor. Cost:
// O(nnz(L)) allocation.
func (f *Factor[T]) Clone() *Factor[T] {
	if f.patPtr == nil {
		return NewFactor[T](&f.set)
	}
	return f.cloneWith(f.set)
}

// Analysis is the ordering and symbolic factorisation of one pattern as a
// Factor computed it: read-only, shared by every Factor made from it by
// NewFactorFrom, so that solves of the same pattern with other values (the
// steps of Newton's method, time steps, points of a Laplace contour, a
// steady problem with other sources or coefficients) pay for the analysis
// once. It stays valid when the Factor it came from analyses another
// pattern later.
type Analysis[T Scalar] struct {
	f Factor[T] // a snapshot of the analysed Factor; its numeric storage is never used
}

// Analysis returns the analysis of f's last Factorize or Analyze, or nil
// if f has none. Cost O(1).
func (f *Factor[T]) Analysis() *Analysis[T] {
	if f.patPtr == nil {
		return nil
	}
	return &Analysis[T]{f: *f}
}

// Dim returns the dimension of the analysed pattern.
func (a *Analysis[T]) Dim() int { return a.f.n }

// Analyze computes the ordering and the symbolic factorisation of m's
// pattern, as the first Factorize would, without a numeric factorisation
// (nothing when f has analysed that pattern already). It freezes m's
// pattern. It returns a *SizeError when the factor would exceed
// Settings.MaxNNZL.
func (f *Factor[T]) Analyze(m *Matrix[T]) error {
	m.freeze()
	switch {
	case f.mat == m && f.version == m.version:
	case f.patPtr != nil && f.samePattern(m):
		f.mat, f.version = m, m.version
	default:
		f.ready = false
		return f.analyze(m)
	}
	return nil
}

// NewFactorFrom returns a Factor with settings set (nil for the defaults)
// that starts from the analysis a: its Factorize of a matrix with a's
// pattern skips the ordering and the symbolic factorisation. A nil a, or
// settings with another Ordering, or a MaxNNZL the analysed factor
// exceeds, give a Factor that analyses on its first Factorize as
// NewFactor's does. Cost O(nnz(L)) allocation.
func NewFactorFrom[T Scalar](a *Analysis[T], set *Settings) *Factor[T] {
	g := NewFactor[T](set)
	if a == nil || a.f.set.Ordering != g.set.Ordering || (g.set.MaxNNZL > 0 && a.f.stats.NNZL > g.set.MaxNNZL) {
		return g
	}
	return a.f.cloneWith(g.set)
}

// cloneWith returns a Factor with settings set that shares f's analysis
// and has its own numeric storage and workspace.
func (f *Factor[T]) cloneWith(set Settings) *Factor[T] {
	g := *f
	g.set = set
	n, nnzL := f.n, len(f.li)
	g.ready = false
	g.lx = make([]T, nnzL)
	g.ux = nil
	g.d = make([]T, n)
	g.lnz = make([]int, n)
	g.y = make([]T, n)
	g.z = make([]T, n)
	g.flag = make([]int, n)
	g.stack = make([]int, n)
	g.work = make([]T, n)
	g.tsx, g.excess = nil, nil // own workspace; row sums are set per Factor
	if f.sn != nil {
		if g.workers() != f.workers() {
			// Another number of goroutines: the same supernodes, a
			// plan of its own.
			sn := *f.sn
			sn.plan = g.planParallel(&sn)
			g.sn = &sn
		}
		g.snw = newSNWork[T](n, g.sn)
	}
	return &g
}

// samePattern reports whether m has the frozen pattern f was analysed for,
// so that another matrix with the same pattern (one per value of s, say)
// reuses the analysis. Cost O(nnz), no allocation.
func (f *Factor[T]) samePattern(m *Matrix[T]) bool {
	return slices.Equal(f.patPtr, m.rowPtr) && slices.Equal(f.patCol, m.col)
}

// analyze computes the ordering and the symbolic factorisation.
func (f *Factor[T]) analyze(m *Matrix[T]) error {
	n := m.n
	f.mat, f.version, f.n = m, m.version, n
	f.patPtr, f.patCol = m.rowPtr, m.col
	if f.set.Ordering == MinimumDegree && f.kernel == kernelAuto {
		if ok, err := f.analyzeTree(m); ok {
			return err
		}
	}
	f.tree = false
	t0 := time.Now()
	name := f.set.Ordering.String()
	var perm []int
	switch f.set.Ordering {
	case Natural:
		perm = identity(n)
	case MinimumDegree:
		perm = minimumDegree(n, m.rowPtr, m.col)
	case NestedDissection:
		perm = nestedDissection(n, m.rowPtr, m.col)
	case Best:
		p1 := minimumDegree(n, m.rowPtr, m.col)
		p2 := nestedDissection(n, m.rowPtr, m.col)
		if countL(n, m.rowPtr, m.col, p2) < countL(n, m.rowPtr, m.col, p1) {
			perm, name = p2, "best: "+NestedDissection.String()
		} else {
			perm, name = p1, "best: "+MinimumDegree.String()
		}
	default:
		panic("nodesys: unknown ordering " + f.set.Ordering.String())
	}
	t1 := time.Now()
	iperm := inverse(perm)

	// Postorder the elimination tree: the same fill, better locality.
	par := etree(n, m.rowPtr, m.col, perm, iperm)
	post := postorder(par)
	ipost := make([]int, n)
	for k, v := range post {
		ipost[v] = k
	}
	perm2 := make([]int, n)
	par2 := make([]int, n)
	for k, v := range post {
		perm2[k] = perm[v]
		if par[v] >= 0 {
			par2[k] = ipost[par[v]]
		} else {
			par2[k] = -1
		}
	}
	perm, par = perm2, par2
	for k, v := range perm {
		iperm[v] = k
	}
	f.perm, f.iperm, f.par = perm, iperm, par

	// Permuted upper part of A by columns.
	f.acp = make([]int, n+1)
	f.adiag = make([]int, n)
	nnzA := len(m.col)
	nUp := (nnzA - n) / 2
	f.arow = make([]int, 0, nUp)
	f.aup = make([]int, 0, nUp)
	f.alo = make([]int, 0, nUp)
	for k := 0; k < n; k++ {
		c := perm[k]
		for s := m.rowPtr[c]; s < m.rowPtr[c+1]; s++ {
			i := iperm[m.col[s]]
			switch {
			case i < k:
				f.arow = append(f.arow, i)
				f.aup = append(f.aup, m.tr[s])
				f.alo = append(f.alo, s)
			case i == k:
				f.adiag[k] = s
			}
		}
		f.acp[k+1] = len(f.arow)
	}

	// Column counts of L: row k of L is the set of nodes reached from the
	// upper entries of column k by walking up the elimination tree.
	cnt := make([]int, n)
	flag := make([]int, n)
	for k := 0; k < n; k++ {
		flag[k] = k
		for p := f.acp[k]; p < f.acp[k+1]; p++ {
			for i := f.arow[p]; flag[i] != k; i = par[i] {
				flag[i] = k
				cnt[i]++
			}
		}
	}
	nnzL := 0
	for _, c := range cnt {
		nnzL += c
	}
	if f.set.MaxNNZL > 0 && nnzL+n > f.set.MaxNNZL {
		f.mat, f.patPtr, f.patCol = nil, nil, nil
		return &SizeError{NNZL: nnzL + n, Max: f.set.MaxNNZL}
	}
	f.lp = make([]int, n+1)
	for j := 0; j < n; j++ {
		f.lp[j+1] = f.lp[j] + cnt[j]
	}
	// Row indices of L, column by column in increasing row order: the same
	// walk again, now recording k in every column it reaches.
	f.li = make([]int, nnzL)
	copy(cnt, f.lp[:n])
	for k := range flag {
		flag[k] = -1
	}
	for k := 0; k < n; k++ {
		flag[k] = k
		for p := f.acp[k]; p < f.acp[k+1]; p++ {
			for i := f.arow[p]; flag[i] != k; i = par[i] {
				flag[i] = k
				f.li[cnt[i]] = k
				cnt[i]++
			}
		}
	}
	f.lx = make([]T, nnzL)
	f.ux = nil
	f.d = make([]T, n)
	f.lnz = make([]int, n)
	f.y = make([]T, n)
	f.z = make([]T, n)
	f.flag = flag
	f.stack = make([]int, n)
	f.work = make([]T, n)

	f.buildSupernodes()
	nsn := 0
	if f.sn != nil {
		nsn = len(f.sn.start) - 1
	}
	f.stats = Stats{
		Supernodes:   nsn,
		N:            n,
		NNZA:         nnzA,
		NNZL:         nnzL + n,
		Fill:         nnzL - nUp,
		Ordering:     name,
		OrderTime:    t1.Sub(t0),
		SymbolicTime: time.Since(t1),
	}
	return nil
}

// numeric computes L, D and U by rows (up-looking): row k of L and column k
// of U solve triangular systems whose pattern is the reach of column k's
// upper entries in the elimination tree.
func (f *Factor[T]) numeric(m *Matrix[T]) error {
	n := f.n
	val := m.val
	sym := false
	if f.set.Symmetric != nil {
		sym = *f.set.Symmetric
	} else {
		sym = true
		for s, t := range m.tr {
			if val[s] != val[t] {
				sym = false
				break
			}
		}
	}
	f.symmetric = sym
	f.stats.Symmetric = sym
	f.stats.MinPivotRatio, f.stats.MinPivotIndex = 1, -1
	f.stats.Workers = 1
	if !sym && len(f.ux) != len(f.lx) {
		f.ux = make([]T, len(f.lx))
	}
	if f.sn != nil {
		return f.numericSN(m, sym)
	}
	if f.tree {
		return f.numericTree(m, sym)
	}

	par, flag, stack := f.par, f.flag, f.stack
	lp, li, lx, ux, d, lnz := f.lp, f.li, f.lx, f.ux, f.d, f.lnz
	y, z := f.y, f.z
	for k := range flag {
		flag[k] = -1
	}
	clear(lnz)
	tol := f.set.PivotTol
	for k := 0; k < n; k++ {
		if k%stopEvery == 0 && f.set.Stop != nil && f.set.Stop() {
			return ErrStopped
		}
		// Scatter column k of the upper part (row k of the lower part) and
		// find the reach in topological order: stack[top:n].
		top := n
		flag[k] = k
		for p := f.acp[k]; p < f.acp[k+1]; p++ {
			i := f.arow[p]
			if sym {
				y[i] = val[f.alo[p]]
			} else {
				y[i] = val[f.aup[p]]
				z[i] = val[f.alo[p]]
			}
			ln := 0
			for ; flag[i] != k; i = par[i] {
				stack[ln] = i
				ln++
				flag[i] = k
			}
			for ln > 0 {
				ln--
				top--
				stack[top] = stack[ln]
			}
		}
		dk := val[f.adiag[k]]
		// Row scale max_j |a_kj| over row perm[k] of A: contiguous, and
		// cache-hot after the scatter above.
		scale := 0.0
		cs := magMax(dk) // |a_kk| + Σ_i |l_ki·y_i|: the size of what cancels in d_k
		c := f.perm[k]
		for _, v := range val[m.rowPtr[c]:m.rowPtr[c+1]] {
			scale = math.Max(scale, magMax(v))
		}
		if sym {
			for _, i := range stack[top:n] {
				yi := y[i]
				y[i] = 0
				p0, p1 := lp[i], lp[i]+lnz[i]
				for p := p0; p < p1; p++ {
					y[li[p]] -= lx[p] * yi
				}
				l := yi / d[i]
				t := l * yi
				dk -= t
				cs += magMax(t)
				lx[p1] = l
				lnz[i]++
			}
		} else {
			for _, i := range stack[top:n] {
				yi, zi := y[i], z[i]
				y[i], z[i] = 0, 0
				p0, p1 := lp[i], lp[i]+lnz[i]
				for p := p0; p < p1; p++ {
					r := li[p]
					y[r] -= lx[p] * yi
					z[r] -= ux[p] * zi
				}
				di := d[i]
				l := zi / di
				t := l * yi
				dk -= t
				cs += magMax(t)
				lx[p1] = l
				ux[p1] = yi / di
				lnz[i]++
			}
		}
		if a := magMax(dk); !(a > tol*math.Max(scale, cs)) || math.IsInf(a, 0) {
			return &SingularError{Index: c, Pivot: mag(dk), Scale: math.Max(scale, cs)}
		}
		f.notePivot(c, magMax(dk)/math.Max(scale, cs))
		d[k] = dk
	}
	return nil
}

// notePivot records the pivot ratio r of row c if it is the smallest so
// far.
func (f *Factor[T]) notePivot(c int, r float64) {
	if r < f.stats.MinPivotRatio {
		f.stats.MinPivotRatio, f.stats.MinPivotIndex = r, c
	}
}

// SolveTo solves A·x = b with the last factorisation and stores x in dst. dst
// may alias b. It panics if the lengths differ from the dimension or if there
// is no valid factorisation. Cost O(nnz(L)); it allocates nothing.
func (f *Factor[T]) SolveTo(dst, b []T) {
	f.checkSolve("SolveTo", dst, b)
	f.solve(dst, b, f.lx, f.upper())
}

// SolveTransTo solves Aᵀ·x = b (plain transpose, no conjugation) with the
// last factorisation and stores x in dst, for adjoint problems: the factor
// of A serves both, with the accuracy SetRowExcess gives A's (whose row
// sums are known where Aᵀ's are not). dst may alias b. It panics like
// SolveTo. Cost O(nnz(L)); it allocates nothing.
func (f *Factor[T]) SolveTransTo(dst, b []T) {
	f.checkSolve("SolveTransTo", dst, b)
	// P·Aᵀ·Pᵀ = Uᵀ·D·Lᵀ: forward with Uᵀ (column j of Uᵀ is row j of U),
	// diagonal, backward with Lᵀ.
	f.solve(dst, b, f.upper(), f.lx)
}

// upper returns the values of U stored like L (those of L when symmetric).
func (f *Factor[T]) upper() []T {
	if f.symmetric {
		return f.lx
	}
	return f.ux
}

func (f *Factor[T]) checkSolve(name string, dst, b []T) {
	if !f.ready {
		panic("nodesys: " + name + " without a successful Factorize")
	}
	if len(dst) != f.n || len(b) != f.n {
		panic(fmt.Sprintf("nodesys: %s length mismatch: dst %d, b %d, dimension %d", name, len(dst), len(b), f.n))
	}
}

// solve runs the permuted forward substitution with the unit lower factor
// whose columns hold fwd, the diagonal, and the backward substitution with
// the unit upper factor whose rows hold bwd, both on the pattern of L.
func (f *Factor[T]) solve(dst, b, fwd, bwd []T) {
	n := f.n
	w := f.work
	for k, v := range f.perm {
		w[k] = b[v]
	}
	lp, li, d := f.lp, f.li, f.d
	for j := 0; j < n; j++ {
		wj := w[j]
		if wj == 0 {
			continue
		}
		for p := lp[j]; p < lp[j+1]; p++ {
			w[li[p]] -= fwd[p] * wj
		}
	}
	for j := 0; j < n; j++ {
		w[j] /= d[j]
	}
	for j := n - 1; j >= 0; j-- {
		s := w[j]
		for p := lp[j]; p < lp[j+1]; p++ {
			s -= bwd[p] * w[li[p]]
		}
		w[j] = s
	}
	for k, v := range f.perm {
		dst[v] = w[k]
	}
}
