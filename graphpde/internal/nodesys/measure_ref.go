package nodesys

import "math"

// numericSNRef is the supernodal kernel as it was before relaxed
// amalgamation, the dense kernels and the parallel subtrees (two source
// columns per pass over the update block, one pivot at a time in the
// trapezoid, Go loops, one goroutine), kept as the reference of
// MeasureKernels (ramify bench) and checked against the up-looking kernel
// by TestKernelsAgree. It runs on the fundamental supernodes (kernelRef).
func (f *Factor[T]) numericSNRef(m *Matrix[T], sym bool) error {
	sn, w := f.sn, f.snw
	val := m.val
	lp, li, lx, ux, d := f.lp, f.li, f.lx, f.ux, f.d
	c := &w.ctx[0]
	rel, head, next, npos, cs := c.rel, w.head, w.next, w.npos, w.cs
	nsup := len(sn.start) - 1
	for s := range head {
		head[s] = -1
	}
	tol := f.set.PivotTol
	for s := 0; s < nsup; s++ {
		if s%(stopEvery/8) == 0 && f.set.Stop != nil && f.set.Stop() {
			return ErrStopped
		}
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
		for k := head[s]; k >= 0; {
			nk := next[k]
			fk, ek := sn.start[k], sn.start[k+1]
			rk := li[lp[ek-1]:lp[ek]]
			q0 := npos[k]
			q1 := q0
			for q1 < len(rk) && rk[q1] < e {
				q1++
			}
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
			for ; t+1 < ek; t += 2 {
				o1, o2 := off(t), off(t+1)
				d1, d2 := d[t], d[t+1]
				for jj := 0; jj < nc; jj++ {
					dst := wl[jj*mr+jj : (jj+1)*mr]
					a := lx[o1+jj : o1+mr]
					b := lx[o2+jj : o2+mr]
					if sym {
						axpy2(false, dst, a, b, a[0]*d1, b[0]*d2)
					} else {
						au := ux[o1+jj : o1+mr]
						bu := ux[o2+jj : o2+mr]
						axpy2(false, dst, a, b, au[0]*d1, bu[0]*d2)
						axpy2(false, wu[jj*mr+jj:(jj+1)*mr], au, bu, a[0]*d1, b[0]*d2)
					}
				}
			}
			if t < ek {
				o1, d1 := off(t), d[t]
				for jj := 0; jj < nc; jj++ {
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
			for jj := 0; jj < nc; jj++ {
				j := rk[q0+jj]
				base := lp[j] - (j - f0)
				col := wl[jj*mr : (jj+1)*mr]
				d[j] -= col[jj]
				cs[j] += magMax(col[jj])
				for q := jj + 1; q < mr; q++ {
					lx[base+rel[rk[q0+q]]] -= col[q]
				}
				if !sym {
					col := wu[jj*mr : (jj+1)*mr]
					for q := jj + 1; q < mr; q++ {
						ux[base+rel[rk[q0+q]]] -= col[q]
					}
				}
			}
			npos[k] = q1
			if q1 < len(rk) {
				tg := sn.of[rk[q1]]
				next[k] = head[tg]
				head[tg] = k
			}
			k = nk
		}
		head[s] = -1

		// Dense factorisation of the trapezoid.
		for j := f0; j < e; j++ {
			dj := d[j]
			c := f.perm[j]
			scale := 0.0
			for _, v := range val[m.rowPtr[c]:m.rowPtr[c+1]] {
				scale = math.Max(scale, magMax(v))
			}
			if a := magMax(dj); !(a > tol*math.Max(scale, cs[j])) || math.IsInf(a, 0) {
				return &SingularError{Index: c, Pivot: mag(dj), Scale: math.Max(scale, cs[j])}
			}
			f.notePivot(c, magMax(dj)/math.Max(scale, cs[j]))
			colL := lx[lp[j]:lp[j+1]] // unscaled: L(r,j)·d_j
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
			tg := sn.of[rs[0]]
			next[s] = head[tg]
			head[tg] = s
		}
	}
	return nil
}
