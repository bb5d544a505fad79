package nodesys

import (
	"math"
	"time"
)

// analyzeTree is the analysis of a pattern whose graph is a forest, the
// common case of networks without cycles. Peeling nodes of degree at most one
// (the first phase of minimumDegree) then eliminates every node, each with at
// most one neighbour left, its parent: the elimination tree is the forest
// itself, L has no fill and at most one entry below the diagonal per column,
// and no general symbolic analysis is needed. The order is the peeling order
// (leaves first), which minimumDegree would also return; it is not
// postordered, since with one entry per column there is no locality to gain.
//
// It reports false, having changed nothing, if the peeling stops at a
// 2-core (the graph has a cycle); the caller then runs the general analysis.
// It returns a *SizeError if the factor would exceed Settings.MaxNNZL. Cost O(n + nnz), five passes over n-vectors.
func (f *Factor[T]) analyzeTree(m *Matrix[T]) (bool, error) {
	t0 := time.Now()
	n := m.n
	rowPtr, col, tr := m.rowPtr, m.col, m.tr

	// Degrees without the diagonal (present once in every frozen row).
	// pos[v] is v's place in the order once it is queued, n before.
	deg := make([]int, n)
	pos := make([]int, n)
	perm := make([]int, 0, n)
	for v := 0; v < n; v++ {
		deg[v] = rowPtr[v+1] - rowPtr[v] - 1
		pos[v] = n
		if deg[v] <= 1 {
			pos[v] = len(perm)
			perm = append(perm, v)
		}
	}
	// pnode[k], pslot[k]: the parent (original numbering) of the k-th node
	// and the slot of A(perm[k], parent); −1 for a root. adiag[k]: slot of
	// the diagonal of row perm[k].
	pnode := make([]int, n)
	pslot := make([]int, n)
	adiag := make([]int, n)
	for k := 0; k < len(perm); k++ {
		v := perm[k]
		pnode[k], pslot[k] = -1, -1
		for s := rowPtr[v]; s < rowPtr[v+1]; s++ {
			u := col[s]
			if u == v {
				adiag[k] = s
				continue
			}
			if pos[u] < k {
				continue // eliminated before v
			}
			// The one neighbour eliminated after v: queued already or
			// still waiting.
			pnode[k], pslot[k] = u, s
			if pos[u] == n {
				deg[u]--
				if deg[u] <= 1 {
					pos[u] = len(perm)
					perm = append(perm, u)
				}
			}
		}
	}
	if len(perm) < n {
		return false, nil
	}
	t1 := time.Now()

	// pos is the inverse permutation now; par in the permuted numbering.
	iperm := pos
	par := pnode
	for k, u := range pnode {
		if u >= 0 {
			par[k] = iperm[u]
		}
	}
	// Column k of the permuted upper part holds its children i (par[i] = k),
	// in increasing i, with A(i,k) at pslot[i] and A(k,i) at its transpose.
	acp := make([]int, n+1)
	nnzL := 0
	for _, p := range par {
		if p >= 0 {
			acp[p+1]++
			nnzL++
		}
	}
	for k := 0; k < n; k++ {
		acp[k+1] += acp[k]
	}
	arow := make([]int, nnzL)
	aup := make([]int, nnzL)
	alo := make([]int, nnzL)
	lp := make([]int, n+1)
	li := make([]int, nnzL)
	next := deg // reuse: fill position of each column
	copy(next, acp[:n])
	for i, p := range par {
		lp[i+1] = lp[i]
		if p < 0 {
			continue
		}
		q := next[p]
		next[p]++
		arow[q], aup[q], alo[q] = i, pslot[i], tr[pslot[i]]
		li[lp[i]] = p
		lp[i+1]++
	}
	if f.set.MaxNNZL > 0 && nnzL+n > f.set.MaxNNZL {
		f.mat, f.patPtr, f.patCol = nil, nil, nil
		return true, &SizeError{NNZL: nnzL + n, Max: f.set.MaxNNZL}
	}

	f.perm, f.iperm, f.par = perm, iperm, par
	f.acp, f.arow, f.aup, f.alo, f.adiag = acp, arow, aup, alo, adiag
	f.lp, f.li = lp, li
	f.lx = make([]T, nnzL)
	f.ux = nil
	f.d = make([]T, n)
	f.lnz = make([]int, n)
	f.y = make([]T, n)
	f.z = make([]T, n)
	f.tpslot = append([]int(nil), pslot...)
	f.tsx = nil
	f.flag = pslot // reuse as workspace
	f.stack = make([]int, n)
	f.work = make([]T, n)
	f.sn, f.snw = nil, nil
	f.tree = true
	f.stats = Stats{
		N:            n,
		NNZA:         len(col),
		NNZL:         nnzL + n,
		Fill:         0,
		Ordering:     f.set.Ordering.String(),
		OrderTime:    t1.Sub(t0),
		SymbolicTime: time.Since(t1),
	}
	return true, nil
}

// numericTree is the numeric factorisation after analyzeTree: column i of L
// holds at most its parent, so row k of L and column k of U need no
// triangular solve, only one division per child i of k:
//
//	l_ki = a_ki/d_i,  u_ik = a_ik/d_i,  d_k = a_kk − Σ_i l_ki·a_ik,
//
// with the pivot test of numeric. Cost O(nnz), no allocation.
func (f *Factor[T]) numericTree(m *Matrix[T], sym bool) error {
	if f.excess != nil {
		if ff, ok := any(f).(*Factor[float64]); ok {
			if done, err := numericTreeGTH(ff, any(m).(*Matrix[float64]), sym); done {
				return err
			}
		}
	}
	val, rowPtr := m.val, m.rowPtr
	acp, arow, aup, alo, adiag := f.acp, f.arow, f.aup, f.alo, f.adiag
	lp, lx, ux, d := f.lp, f.lx, f.ux, f.d
	tol := f.set.PivotTol
	for k, c := range f.perm {
		dk := val[adiag[k]]
		scale := 0.0
		for _, v := range val[rowPtr[c]:rowPtr[c+1]] {
			scale = math.Max(scale, magMax(v))
		}
		cs := magMax(dk)
		for p := acp[k]; p < acp[k+1]; p++ {
			i := arow[p]
			q := lp[i]
			di := d[i]
			yi := val[alo[p]]
			if !sym {
				yi = val[aup[p]]
				ux[q] = yi / di
			}
			l := val[alo[p]] / di
			t := l * yi
			dk -= t
			cs += magMax(t)
			lx[q] = l
		}
		if a := magMax(dk); !(a > tol*math.Max(scale, cs)) || math.IsInf(a, 0) {
			return &SingularError{Index: c, Pivot: mag(dk), Scale: math.Max(scale, cs)}
		}
		f.notePivot(c, magMax(dk)/math.Max(scale, cs))
		d[k] = dk
	}
	return nil
}

// numericTreeGTH is numericTree for real matrices with the pivots formed
// from the row sums of SetRowExcess (see there). It reports false, having
// done nothing, when the matrix is not an M-matrix in sign or a row sum is
// negative or not finite. Cost O(nnz), no allocation after the first call.
func numericTreeGTH(f *Factor[float64], m *Matrix[float64], sym bool) (bool, error) {
	val := m.val
	acp, arow, aup, alo, adiag := f.acp, f.arow, f.aup, f.alo, f.adiag
	ex := f.excess
	for _, s := range ex {
		if !(s >= 0) || math.IsInf(s, 0) {
			return false, nil
		}
	}
	for p := range arow {
		if !(val[aup[p]] <= 0) || !(val[alo[p]] <= 0) {
			return false, nil
		}
	}
	for k := range adiag {
		if !(val[adiag[k]] > 0) {
			return false, nil
		}
	}
	if len(f.tsx) != f.n {
		f.tsx = make([]float64, f.n)
	}
	lp, lx, ux, d, sx := f.lp, f.lx, f.ux, f.d, f.tsx
	for k, c := range f.perm {
		sk := ex[c]
		for p := acp[k]; p < acp[k+1]; p++ {
			i := arow[p]
			q := lp[i]
			di := d[i]
			l := val[alo[p]] / di // ≤ 0
			if !sym {
				ux[q] = val[aup[p]] / di
			}
			lx[q] = l
			sk -= l * sx[i]
		}
		dk := sk
		if ps := f.tpslot[k]; ps >= 0 {
			dk -= val[ps] // |A(k, parent)|
		}
		if !(dk > 0) || math.IsInf(dk, 0) {
			return true, &SingularError{Index: c, Pivot: math.Abs(dk), Scale: val[adiag[k]]}
		}
		sx[k] = sk
		d[k] = dk
	}
	return true, nil
}
