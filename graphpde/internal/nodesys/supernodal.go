package nodesys

import (
	"errors"
	"math"
)

// Numeric kernels.
const (
	kernelAuto  = iota // supernodal when most of the work lies in wide supernodes
	kernelUp           // up-looking, row by row
	kernelSuper        // left-looking supernodal
	kernelRef          // the supernodal reference of MeasureKernels (measure_ref.go)
)

// snodes is the supernode partition of L: columns start[s] ≤ j < start[s+1]
// form supernode s when each column's pattern is the next column plus that
// column itself, so the columns are dense columns of one trapezoid: column j
// holds rows j+1 … start[s+1]−1, then the rows R_s shared by the whole
// supernode (the pattern of its last column). Shared read-only by clones.
type snodes struct {
	start []int
	of    []int // supernode of each column
	// Strictly lower part of P·A·Pᵀ by columns: column j has rows
	// brow[bcp[j]:bcp[j+1]] (> j), with slots of A(row,j) in blo and of
	// A(j,row) in bup.
	bcp, brow, blo, bup []int
	maxW                int     // size of the update buffer
	plan                *snPlan // split over goroutines, nil for one
}

// snWork is the per-Factor workspace of the supernodal kernel: the lists
// of descendants waiting to update each supernode (shared by the workers,
// which touch disjoint supernodes) and one snCtx per worker.
type snWork[T Scalar] struct {
	head, next, npos []int // descendants waiting to update a supernode, and their next row
	cs               []float64
	ctx              []snCtx[T]
	// Parallel runs: links to supernodes outside a task, two ints each
	// (descendant, target), kept in the task's region pend[2·lo:2·(hi+1)],
	// and each task's outcome.
	pend    []int
	outcome []snOutcome
}

// snCtx is one worker's scratch: relative positions, the dense update
// buffers, the range of supernodes its current task may link into, and the
// smallest pivot ratio it met.
type snCtx[T Scalar] struct {
	rel      []int       // position of a row in the first column of the current supernode
	relq     []int       // positions in the target of one update's rows
	wl, wu   []T         // dense update buffers
	hi       int         // last supernode of the current task (all: nsup−1)
	split    *snSplit[T] // the helper of split top supernodes, nil for none
	pend     []int       // links out of the task, in the order made
	minRatio float64
	minIdx   int
}

// snOutcome is what a task of a parallel factorisation left for the
// replay: its error, how many links it made out of itself, its smallest
// pivot ratio.
type snOutcome struct {
	err      error
	npend    int
	minRatio float64
	minIdx   int
}

// errNotRun marks a task a worker skipped after an earlier task of its own
// failed (the replay stops at that failure first).
var errNotRun = errors.New("nodesys: task not run")

func newSNWork[T Scalar](n int, sn *snodes) *snWork[T] {
	nsup := len(sn.start) - 1
	w := &snWork[T]{
		head: make([]int, nsup),
		next: make([]int, nsup),
		npos: make([]int, nsup),
		cs:   make([]float64, n),
	}
	nw := 1
	if sn.plan != nil {
		nw = sn.plan.workers
		w.pend = make([]int, 2*nsup)
		w.outcome = make([]snOutcome, len(sn.plan.tasks))
	}
	w.ctx = make([]snCtx[T], nw)
	for i := range w.ctx {
		w.ctx[i] = snCtx[T]{
			rel:  make([]int, n),
			relq: make([]int, n),
			wl:   make([]T, sn.maxW),
			wu:   make([]T, sn.maxW),
		}
	}
	return w
}

// link queues descendant k to update supernode tg next: on tg's list if tg
// lies in the current task, otherwise on the task's list of links out.
func (c *snCtx[T]) link(w *snWork[T], k, tg int) {
	if tg <= c.hi {
		w.next[k] = w.head[tg]
		w.head[tg] = k
		return
	}
	c.pend = append(c.pend, k, tg)
}

// notePivot records the pivot ratio r of row idx if it is the smallest so
// far in this context.
func (c *snCtx[T]) notePivot(idx int, r float64) {
	if r < c.minRatio {
		c.minRatio, c.minIdx = r, idx
	}
}

// buildSupernodes finds the supernodes and decides whether the supernodal
// kernel pays: when at least half of the work Σ_j |L_j|² lies in supernodes
// of width four or more. Cost O(n + nnz(A)).
func (f *Factor[T]) buildSupernodes() {
	n := f.n
	lp, par := f.lp, f.par
	sn := &snodes{of: make([]int, n)}
	sn.start = append(sn.start, 0)
	for j := 1; j < n; j++ {
		if !(par[j-1] == j && lp[j]-lp[j-1] == lp[j+1]-lp[j]+1) {
			sn.start = append(sn.start, j)
		}
	}
	if n > 0 {
		sn.start = append(sn.start, n)
	}
	nsup := len(sn.start) - 1
	var work, wide float64
	maxR, maxWidth := 0, 0
	for s := 0; s < nsup; s++ {
		f0, e := sn.start[s], sn.start[s+1]
		for j := f0; j < e; j++ {
			sn.of[j] = s
			c := float64(lp[j+1] - lp[j])
			work += c * c
			if e-f0 >= 4 {
				wide += c * c
			}
		}
		maxR = max(maxR, lp[e]-lp[e-1])
		maxWidth = max(maxWidth, e-f0)
	}
	use := f.kernel == kernelSuper || f.kernel == kernelRef || (f.kernel == kernelAuto && wide >= 0.5*work && work > 0)
	if !use {
		f.sn, f.snw = nil, nil
		return
	}
	if f.kernel == kernelAuto || f.amalgamate {
		f.amalgamateSupernodes(sn)
		lp = f.lp
		nsup = len(sn.start) - 1
		maxR, maxWidth = 0, 0
		for s := 0; s < nsup; s++ {
			f0, e := sn.start[s], sn.start[s+1]
			for j := f0; j < e; j++ {
				sn.of[j] = s
			}
			maxR = max(maxR, lp[e]-lp[e-1])
			maxWidth = max(maxWidth, e-f0)
		}
	}
	// An update block has at most |R_K| rows and at most min(|R_K|, width
	// of the target) columns.
	sn.maxW = maxR * min(maxR, maxWidth)

	// Strictly lower part by columns: transpose of the upper part.
	sn.bcp = make([]int, n+1)
	for _, i := range f.arow {
		sn.bcp[i+1]++
	}
	for j := 0; j < n; j++ {
		sn.bcp[j+1] += sn.bcp[j]
	}
	m := len(f.arow)
	sn.brow, sn.blo, sn.bup = make([]int, m), make([]int, m), make([]int, m)
	pos := make([]int, n)
	copy(pos, sn.bcp[:n])
	for k := 0; k < n; k++ {
		for p := f.acp[k]; p < f.acp[k+1]; p++ {
			i := f.arow[p] // entry (i,k), i < k: column i of the lower part has row k
			q := pos[i]
			sn.brow[q] = k
			sn.blo[q] = f.alo[p] // A(k,i)
			sn.bup[q] = f.aup[p] // A(i,k)
			pos[i]++
		}
	}
	sn.plan = f.planParallel(sn)
	f.sn = sn
	f.snw = newSNWork[T](n, sn)
}

// numericSN is the left-looking supernodal factorisation: each supernode
// gathers its columns of A, subtracts the dense updates of the supernodes
// below it in the elimination tree (one dense block product per descendant,
// scattered once), and factors its dense trapezoid. With a parallel plan
// the independent subtrees go to several goroutines first
// (numericSNParallel); the factors are the same bit for bit.
func (f *Factor[T]) numericSN(m *Matrix[T], sym bool) error {
	sn, w := f.sn, f.snw
	for s := range w.head {
		w.head[s] = -1
	}
	nsup := len(sn.start) - 1
	f.stats.Workers = 1
	if f.kernel == kernelRef {
		return f.numericSNRef(m, sym)
	}
	if sn.plan != nil {
		f.stats.Workers = sn.plan.workers
		return f.numericSNParallel(m, sym)
	}
	c := &w.ctx[0]
	c.hi, c.pend, c.minRatio, c.minIdx = nsup-1, c.pend[:0], 1, -1
	for s := 0; s < nsup; s++ {
		if s%(stopEvery/8) == 0 && f.set.Stop != nil && f.set.Stop() {
			return ErrStopped
		}
		if err := f.snSupernode(s, m, sym, c); err != nil {
			return err
		}
	}
	f.notePivot(c.minIdx, c.minRatio)
	return nil
}

// snSupernode computes supernode s: gather, updates from the descendants
// on its list, dense factorisation, and the link of s to its next target.
func (f *Factor[T]) snSupernode(s int, m *Matrix[T], sym bool, c *snCtx[T]) error {
	sn, w := f.sn, f.snw
	val := m.val
	lp, li, lx, ux, d := f.lp, f.li, f.lx, f.ux, f.d
	rel, head, next, npos, cs := c.rel, w.head, w.next, w.npos, w.cs
	tol := f.set.PivotTol
	fma := f.fma
	f0, e := sn.start[s], sn.start[s+1]
	wd := e - f0
	rs := li[lp[e-1]:lp[e]] // shared rows R_s
	for t := 1; t < wd; t++ {
		rel[f0+t] = t - 1
	}
	for q, r := range rs {
		rel[r] = wd - 1 + q
	}

	// Gather A.
	for j := f0; j < e; j++ {
		base := lp[j] - (j - f0)
		clear(lx[lp[j]:lp[j+1]])
		if !sym {
			clear(ux[lp[j]:lp[j+1]])
		}
		d[j] = val[f.adiag[j]]
		cs[j] = magMax(d[j])
		for p := sn.bcp[j]; p < sn.bcp[j+1]; p++ {
			q := base + rel[sn.brow[p]]
			lx[q] = val[sn.blo[p]]
			if !sym {
				ux[q] = val[sn.bup[p]]
			}
		}
	}

	// Updates from descendants.
	split := c.split != nil && sn.plan.split[s]
	if split {
		// Two goroutines share the updates by target columns; the
		// links below follow in list order as on one.
		c.split.updates(s, rel, sym, f0, e, c)
	}
	for k := head[s]; k >= 0; {
		nk := next[k]
		ek := sn.start[k+1]
		rk := li[lp[ek-1]:lp[ek]]
		q0 := npos[k]
		q1 := q0
		for q1 < len(rk) && rk[q1] < e {
			q1++
		}
		if !split {
			f.snUpdate(c, rel, sym, f0, e, k, q0, q1, 0, 1)
		}
		npos[k] = q1
		if q1 < len(rk) {
			c.link(w, k, sn.of[rk[q1]])
		}
		k = nk
	}
	head[s] = -1

	// Dense factorisation of the trapezoid.
	pivot := func(j int) error {
		dj := d[j]
		col := f.perm[j]
		scale := 0.0
		for _, v := range val[m.rowPtr[col]:m.rowPtr[col+1]] {
			scale = max(scale, magMax(v))
		}
		if a := magMax(dj); !(a > tol*max(scale, cs[j])) || math.IsInf(a, 0) {
			return &SingularError{Index: col, Pivot: mag(dj), Scale: max(scale, cs[j])}
		}
		c.notePivot(col, magMax(dj)/max(scale, cs[j]))
		return nil
	}
	j := f0
	if sym {
		for ; j+3 < e; j += 4 {
			if err := f.block4(j, e, cs, pivot); err != nil {
				return err
			}
		}
	}
	for ; j < e; j++ {
		if err := pivot(j); err != nil {
			return err
		}
		dj := d[j]
		colL := lx[lp[j]:lp[j+1]] // unscaled: L(r,j)·d_j
		if sym && j+1 < e {
			// Two pivots at a time: column j updates column j+1,
			// then both update the columns after them in one pass.
			j1 := j + 1
			colL1 := lx[lp[j1]:lp[j1+1]]
			a := colL[0]
			c := a / dj
			d[j1] -= c * a
			cs[j1] += magMax(c * a)
			src := colL[1:]
			src = src[:len(colL1)]
			for q := range colL1 {
				colL1[q] -= src[q] * c
			}
			if err := pivot(j1); err != nil {
				return err
			}
			dj1 := d[j1]
			for j2 := j + 2; j2 < e; j2++ {
				a0, a1 := colL[j2-j-1], colL1[j2-j1-1]
				c0, c1 := a0/dj, a1/dj1
				d[j2] -= c0 * a0
				d[j2] -= c1 * a1
				cs[j2] += magMax(c0*a0) + magMax(c1*a1)
				dst := lx[lp[j2]:lp[j2+1]]
				axpy2(fma, dst, colL[j2-j:], colL1[j2-j1:], -c0, -c1)
			}
			inv, inv1 := 1/dj, 1/dj1
			for q := range colL {
				colL[q] *= inv
			}
			for q := range colL1 {
				colL1[q] *= inv1
			}
			j++
			continue
		}
		if sym {
			for j2 := j + 1; j2 < e; j2++ {
				a := colL[j2-j-1]
				if a == 0 {
					continue
				}
				c := a / dj
				d[j2] -= c * a
				cs[j2] += magMax(c * a)
				dst := lx[lp[j2]:lp[j2+1]]
				src := colL[j2-j:]
				src = src[:len(dst)]
				for q := range dst {
					dst[q] -= src[q] * c
				}
			}
			inv := 1 / dj
			for q := range colL {
				colL[q] *= inv
			}
		} else {
			colU := ux[lp[j]:lp[j+1]] // unscaled: d_j·U(j,r)
			for j2 := j + 1; j2 < e; j2++ {
				aL, aU := colL[j2-j-1], colU[j2-j-1]
				cl := aU / dj // U(j,j2)
				cu := aL / dj // L(j2,j)
				d[j2] -= cu * aU
				cs[j2] += magMax(cu * aU)
				dstL := lx[lp[j2]:lp[j2+1]]
				dstU := ux[lp[j2]:lp[j2+1]]
				srcL := colL[j2-j:]
				srcU := colU[j2-j:]
				srcL, srcU = srcL[:len(dstL)], srcU[:len(dstU)]
				if cl != 0 {
					for q := range dstL {
						dstL[q] -= srcL[q] * cl
					}
				}
				if cu != 0 {
					for q := range dstU {
						dstU[q] -= srcU[q] * cu
					}
				}
			}
			inv := 1 / dj
			for q := range colL {
				colL[q] *= inv
				colU[q] *= inv
			}
		}
	}
	if len(rs) > 0 {
		npos[s] = 0
		c.link(w, s, sn.of[rs[0]])
	}
	return nil
}

// snUpdate subtracts from the target supernode (columns f0 … e−1, row
// positions rel) the update of descendant k for its rows q0 … (its columns
// in the target are rows q0 … q1−1). With parts > 1 only the target
// columns j with (j−f0)/2 = part modulo parts: the workers of a split
// update own disjoint columns whatever the descendant, and pair columns
// the same way as one worker, so the sums are the same bit for bit.
func (f *Factor[T]) snUpdate(c *snCtx[T], rel []int, sym bool, f0, e, k, q0, q1, part, parts int) {
	sn := f.sn
	lp, li, lx, ux, d, cs := f.lp, f.li, f.lx, f.ux, f.d, f.snw.cs
	fma := f.fma
	fk, ek := sn.start[k], sn.start[k+1]
	rk := li[lp[ek-1]:lp[ek]]
	mr, nc := len(rk)-q0, q1-q0
	wl := c.wl[:mr*nc]
	clear(wl)
	var wu []T
	if !sym {
		wu = c.wu[:mr*nc]
		clear(wu)
	}
	// W_L[q,jj] = Σ_t L(r_q,t)·d_t·U(t,j_jj) and W_U[q,jj] = Σ_t
	// U(t,r_q)·d_t·L(j_jj,t) for rows q ≥ jj, two columns t at a
	// time to halve the traffic on W.
	off := func(t int) int { return lp[t] + (ek - 1 - t) + q0 }
	t := fk
	for ; t+3 < ek; t += 4 {
		o1, o2, o3, o4 := off(t), off(t+1), off(t+2), off(t+3)
		d1, d2, d3, d4 := d[t], d[t+1], d[t+2], d[t+3]
		for jj := 0; jj < nc; jj++ {
			// Two target columns at a time where they are an even
			// column of the target and the next (each entry of the
			// four source columns is loaded once for both): the
			// pairs, and so the sums, do not depend on the split.
			jt := rk[q0+jj] - f0
			pair := sym && jt%2 == 0 && jj+1 < nc && rk[q0+jj+1] == rk[q0+jj]+1
			if parts > 1 && (jt/2)%parts != part {
				if pair {
					jj++
				}
				continue
			}
			if pair {
				a := lx[o1+jj : o1+mr]
				b := lx[o2+jj : o2+mr]
				c := lx[o3+jj : o3+mr]
				e := lx[o4+jj : o4+mr]
				ca0, cb0, cc0, ce0 := a[0]*d1, b[0]*d2, c[0]*d3, e[0]*d4
				ca1, cb1, cc1, ce1 := a[1]*d1, b[1]*d2, c[1]*d3, e[1]*d4
				wl[jj*mr+jj] += a[0]*ca0 + b[0]*cb0 + c[0]*cc0 + e[0]*ce0
				axpy4x2(fma, wl[jj*mr+jj+1:(jj+1)*mr], wl[(jj+1)*mr+jj+1:(jj+2)*mr], a[1:], b[1:], c[1:], e[1:],
					ca0, cb0, cc0, ce0, ca1, cb1, cc1, ce1)
				jj++
				continue
			}
			dst := wl[jj*mr+jj : (jj+1)*mr]
			a := lx[o1+jj : o1+mr]
			b := lx[o2+jj : o2+mr]
			c := lx[o3+jj : o3+mr]
			e := lx[o4+jj : o4+mr]
			if sym {
				axpy4(fma, dst, a, b, c, e, a[0]*d1, b[0]*d2, c[0]*d3, e[0]*d4)
			} else {
				au := ux[o1+jj : o1+mr]
				bu := ux[o2+jj : o2+mr]
				cu := ux[o3+jj : o3+mr]
				eu := ux[o4+jj : o4+mr]
				axpy4(fma, dst, a, b, c, e, au[0]*d1, bu[0]*d2, cu[0]*d3, eu[0]*d4)
				axpy4(fma, wu[jj*mr+jj:(jj+1)*mr], au, bu, cu, eu, a[0]*d1, b[0]*d2, c[0]*d3, e[0]*d4)
			}
		}
	}
	for ; t+1 < ek; t += 2 {
		o1, o2 := off(t), off(t+1)
		d1, d2 := d[t], d[t+1]
		for jj := 0; jj < nc; jj++ {
			if parts > 1 && ((rk[q0+jj]-f0)/2)%parts != part {
				continue
			}
			dst := wl[jj*mr+jj : (jj+1)*mr]
			a := lx[o1+jj : o1+mr]
			b := lx[o2+jj : o2+mr]
			if sym {
				axpy2(fma, dst, a, b, a[0]*d1, b[0]*d2)
			} else {
				au := ux[o1+jj : o1+mr]
				bu := ux[o2+jj : o2+mr]
				axpy2(fma, dst, a, b, au[0]*d1, bu[0]*d2)
				axpy2(fma, wu[jj*mr+jj:(jj+1)*mr], au, bu, a[0]*d1, b[0]*d2)
			}
		}
	}
	if t < ek {
		o1, d1 := off(t), d[t]
		for jj := 0; jj < nc; jj++ {
			if parts > 1 && ((rk[q0+jj]-f0)/2)%parts != part {
				continue
			}
			dst := wl[jj*mr+jj : (jj+1)*mr]
			a := lx[o1+jj : o1+mr]
			if sym {
				axpy1(dst, a, a[0]*d1)
			} else {
				au := ux[o1+jj : o1+mr]
				axpy1(dst, a, au[0]*d1)
				axpy1(wu[jj*mr+jj:(jj+1)*mr], au, a[0]*d1)
			}
		}
	}
	// Scatter: the rows' positions in the target once, and a
	// plain subtraction where they are consecutive there.
	relq := c.relq[:mr]
	for q := range relq {
		relq[q] = rel[rk[q0+q]]
	}
	// (Row 0 is the diagonal of the first target column, which
	// has no position below the diagonal.)
	run := mr < 2 || relq[mr-1]-relq[1] == mr-2
	for jj := 0; jj < nc; jj++ {
		if parts > 1 && ((rk[q0+jj]-f0)/2)%parts != part {
			continue
		}
		j := rk[q0+jj]
		base := lp[j] - (j - f0)
		col := wl[jj*mr : (jj+1)*mr]
		d[j] -= col[jj]
		cs[j] += magMax(col[jj])
		if run {
			if jj+1 < mr {
				p0 := base + relq[jj+1]
				subTo(lx[p0:p0+mr-jj-1], col[jj+1:])
				if !sym {
					subTo(ux[p0:p0+mr-jj-1], wu[jj*mr+jj+1:(jj+1)*mr])
				}
			}
			continue
		}
		for q := jj + 1; q < mr; q++ {
			lx[base+relq[q]] -= col[q]
		}
		if !sym {
			col := wu[jj*mr : (jj+1)*mr]
			for q := jj + 1; q < mr; q++ {
				ux[base+relq[q]] -= col[q]
			}
		}
	}
}

// block4 factors the columns j … j+3 of the supernode whose columns end
// before e on the LDLᵀ path (columns hold L(r,k)·d_k until scaled at the
// end): each column first updates the later columns of the block, then the
// four together update the columns j+4 … e−1, two target columns per pass,
// so that every entry of a target is loaded and stored once for four
// sources.
func (f *Factor[T]) block4(j, e int, cs []float64, pivot func(int) error) error {
	lp, lx, d, fma := f.lp, f.lx, f.d, f.fma
	for i := j; i < j+4; i++ {
		if err := pivot(i); err != nil {
			return err
		}
		colI := lx[lp[i]:lp[i+1]]
		di := d[i]
		for i2 := i + 1; i2 < j+4; i2++ {
			a := colI[i2-i-1]
			if a == 0 {
				continue
			}
			c := a / di
			d[i2] -= c * a
			cs[i2] += magMax(c * a)
			axpy1(lx[lp[i2]:lp[i2+1]], colI[i2-i:], -c)
		}
	}
	c0, c1, c2, c3 := lx[lp[j]:lp[j+1]], lx[lp[j+1]:lp[j+2]], lx[lp[j+2]:lp[j+3]], lx[lp[j+3]:lp[j+4]]
	d0, d1, d2, d3 := d[j], d[j+1], d[j+2], d[j+3]
	j2 := j + 4
	for ; j2+1 < e; j2 += 2 {
		// Rows j2 and j2+1 of the four columns.
		a0, a1, a2, a3 := c0[j2-j-1], c1[j2-j-2], c2[j2-j-3], c3[j2-j-4]
		b0, b1, b2, b3 := c0[j2-j], c1[j2-j-1], c2[j2-j-2], c3[j2-j-3]
		k0, k1, k2, k3 := a0/d0, a1/d1, a2/d2, a3/d3
		m0, m1, m2, m3 := b0/d0, b1/d1, b2/d2, b3/d3
		d[j2] -= k0*a0 + k1*a1 + k2*a2 + k3*a3
		cs[j2] += magMax(k0*a0) + magMax(k1*a1) + magMax(k2*a2) + magMax(k3*a3)
		d[j2+1] -= m0*b0 + m1*b1 + m2*b2 + m3*b3
		cs[j2+1] += magMax(m0*b0) + magMax(m1*b1) + magMax(m2*b2) + magMax(m3*b3)
		dst0, dst1 := lx[lp[j2]:lp[j2+1]], lx[lp[j2+1]:lp[j2+2]]
		// Entry 0 of column j2 is row j2+1, which column j2+1 lacks.
		dst0[0] -= k0*b0 + k1*b1 + k2*b2 + k3*b3
		axpy4x2(fma, dst0[1:], dst1, c0[j2-j+1:], c1[j2-j:], c2[j2-j-1:], c3[j2-j-2:],
			-k0, -k1, -k2, -k3, -m0, -m1, -m2, -m3)
	}
	if j2 < e {
		a0, a1, a2, a3 := c0[j2-j-1], c1[j2-j-2], c2[j2-j-3], c3[j2-j-4]
		k0, k1, k2, k3 := a0/d0, a1/d1, a2/d2, a3/d3
		d[j2] -= k0*a0 + k1*a1 + k2*a2 + k3*a3
		cs[j2] += magMax(k0*a0) + magMax(k1*a1) + magMax(k2*a2) + magMax(k3*a3)
		axpy4(fma, lx[lp[j2]:lp[j2+1]], c0[j2-j:], c1[j2-j-1:], c2[j2-j-2:], c3[j2-j-3:], -k0, -k1, -k2, -k3)
	}
	for k, col := range [4][]T{c0, c1, c2, c3} {
		inv := 1 / d[j+k]
		for q := range col {
			col[q] *= inv
		}
	}
	return nil
}

// subTo sets dst −= src; len(src) ≥ len(dst).
func subTo[T Scalar](dst, src []T) {
	src = src[:len(dst)]
	for q := range dst {
		dst[q] -= src[q]
	}
}

// fmaMin is the shortest vector handed to the AVX2 kernels: below it the
// call costs more than it saves (measured on the mesh benchmarks).
const fmaMin = 4

// real64 returns v as a float64; it is called only where T is float64.
func real64[T Scalar](v T) float64 {
	switch x := any(v).(type) {
	case float64:
		return x
	}
	panic("unreachable")
}

// axpy1 sets dst += c·a. len(a) ≥ len(dst).
func axpy1[T Scalar](dst, a []T, c T) {
	if c == 0 {
		return
	}
	a = a[:len(dst)]
	for q := range dst {
		dst[q] += a[q] * c
	}
}

// axpy4 sets dst += ca·a + cb·b + cc·c + ce·e. All of a, b, c, e are at
// least as long as dst.
func axpy4[T Scalar](fma bool, dst, a, b, c, e []T, ca, cb, cc, ce T) {
	a, b, c, e = a[:len(dst)], b[:len(dst)], c[:len(dst)], e[:len(dst)]
	if fma && len(dst) >= fmaMin {
		if p, ok := any(&dst[0]).(*float64); ok {
			co := [4]float64{real64(ca), real64(cb), real64(cc), real64(ce)}
			axpy4FMA(p, any(&a[0]).(*float64), any(&b[0]).(*float64), any(&c[0]).(*float64), any(&e[0]).(*float64), len(dst), &co)
			return
		}
	}
	for q := range dst {
		dst[q] += a[q]*ca + b[q]*cb + c[q]*cc + e[q]*ce
	}
}

// axpy4x2 sets d0 += ca0·a + cb0·b + cc0·c + ce0·e and d1 likewise with
// the second coefficients. len(d0) == len(d1) ≤ len(a), len(b), len(c),
// len(e).
func axpy4x2[T Scalar](fma bool, d0, d1, a, b, c, e []T, ca0, cb0, cc0, ce0, ca1, cb1, cc1, ce1 T) {
	d1 = d1[:len(d0)]
	a, b, c, e = a[:len(d0)], b[:len(d0)], c[:len(d0)], e[:len(d0)]
	if fma && len(d0) >= fmaMin {
		if p, ok := any(&d0[0]).(*float64); ok {
			co := [8]float64{real64(ca0), real64(cb0), real64(cc0), real64(ce0), real64(ca1), real64(cb1), real64(cc1), real64(ce1)}
			axpy4x2FMA(p, any(&d1[0]).(*float64), any(&a[0]).(*float64), any(&b[0]).(*float64), any(&c[0]).(*float64), any(&e[0]).(*float64), len(d0), &co)
			return
		}
	}
	for q := range d0 {
		aq, bq, cq, eq := a[q], b[q], c[q], e[q]
		d0[q] += aq*ca0 + bq*cb0 + cq*cc0 + eq*ce0
		d1[q] += aq*ca1 + bq*cb1 + cq*cc1 + eq*ce1
	}
}

// axpy2 sets dst += ca·a + cb·b. len(a), len(b) ≥ len(dst).
func axpy2[T Scalar](fma bool, dst, a, b []T, ca, cb T) {
	a, b = a[:len(dst)], b[:len(dst)]
	if fma && len(dst) >= fmaMin {
		if p, ok := any(&dst[0]).(*float64); ok {
			axpy2FMA(p, any(&a[0]).(*float64), any(&b[0]).(*float64), len(dst), real64(ca), real64(cb))
			return
		}
	}
	for q := range dst {
		dst[q] += a[q]*ca + b[q]*cb
	}
}

// Relaxed amalgamation. A fundamental supernode holds only columns whose
// patterns nest exactly, so on a mesh most supernodes are one or two columns
// wide and the dense kernels run on slivers. amalgamateSupernodes merges a
// supernode C into the supernode P that follows it in the postordered
// elimination tree when the parent of C's last column lies in P: the merged
// block stores every column of C with the full pattern of P's trapezoid
// (rows up to the end of P, then P's shared rows), which contains C's true
// pattern because the structure of a column, less its parent, lies in the
// structure of that parent. The padding is explicit zeros that the kernels
// multiply through.
//
// Our rule (tuned on the five-point meshes of the benchmarks, no source): a
// merge is taken when the merged block stays at most maxAmalgWidth wide and
// its zeros are at most relaxFrac(w) of its stored entries (lower trapezoid
// with the diagonal), a fraction that shrinks as the block widens: narrow
// blocks gain most from merging and lose least to padding.
//
// The patterns lp/li are rewritten to the padded ones (the true nnz(L) in
// Stats is unchanged). Cost O(nnz of the padded L).
func (f *Factor[T]) amalgamateSupernodes(sn *snodes) {
	lp, li, par := f.lp, f.li, f.par
	type group struct {
		f0, e, r int // columns [f0,e), shared rows
		zeros    int // padded explicit zeros
	}
	nfund := len(sn.start) - 1
	stack := make([]group, 0, nfund)
	for s := 0; s < nfund; s++ {
		p := group{f0: sn.start[s], e: sn.start[s+1]}
		p.r = lp[p.e] - lp[p.e-1]
		for len(stack) > 0 {
			c := stack[len(stack)-1]
			pc := par[c.e-1]
			if c.e != p.f0 || pc < p.f0 || pc >= p.e {
				break
			}
			wc, wp := c.e-c.f0, p.e-p.f0
			w := wc + wp
			z := c.zeros + p.zeros + wc*(wp+p.r-c.r)
			total := w*(w+1)/2 + w*p.r
			if w > maxAmalgWidth || float64(z) > relaxFrac(w)*float64(total) {
				break
			}
			stack = stack[:len(stack)-1]
			p.f0, p.zeros = c.f0, z
		}
		stack = append(stack, p)
	}
	if len(stack) == nfund {
		return
	}
	n := f.n
	start := make([]int, 0, len(stack)+1)
	nlp := make([]int, n+1)
	for _, g := range stack {
		start = append(start, g.f0)
		for j := g.f0; j < g.e; j++ {
			nlp[j+1] = nlp[j] + (g.e - 1 - j) + g.r
		}
	}
	start = append(start, n)
	nli := make([]int, nlp[n])
	for _, g := range stack {
		rs := li[lp[g.e-1]:lp[g.e]]
		for j := g.f0; j < g.e; j++ {
			q := nlp[j]
			for r := j + 1; r < g.e; r++ {
				nli[q] = r
				q++
			}
			copy(nli[q:nlp[j+1]], rs)
		}
	}
	sn.start = start
	f.lp, f.li = nlp, nli
	f.lx = make([]T, len(nli))
}

// maxAmalgWidth caps the width of an amalgamated supernode.
const maxAmalgWidth = 128

// relaxFrac is the largest share of explicit zeros allowed in an
// amalgamated supernode of width w.
func relaxFrac(w int) float64 {
	switch {
	case w <= 4:
		return 0.75
	case w <= 16:
		return 0.3
	case w <= 48:
		return 0.12
	default:
		return 0.04
	}
}
