package graphpde

import "slices"

// nodePattern is the structure of a node system over a graph of "system
// nodes" (the network's nodes, or those of a component with a split point)
// joined by elements: one unknown per non-fixed node, one row per unknown,
// an entry for every pair of unknowns joined by an element, and for every
// entry its slot in the compressed rows, so that assembly writes values
// straight into the matrix (no search). Every solver of the package that
// assembles a node system (steady, exit statistics, Laplace transforms,
// Newton) uses it, in float64 or complex128, through addMatrix and addRHS.
//
// The row of a non-fixed node v (docs/node-laws.md) is
//
//	Σ_ends J_e(v) + diag_v·u(v) = rhs_v,
//	J = −α₀ u'(0) at a From end,  J = +α_L u'(L) at a To end,
//
// with u'(0), u'(L) the affine end maps of the elements; values at fixed
// nodes go to the right-hand side.
type nodePattern struct {
	unk         []int    // system node → unknown, −1 for fixed nodes
	nodes       []int    // unknown → system node
	ends        [][2]int // element → its (from, to) system nodes
	rowPtr, col []int    // compressed rows, columns sorted, diagonal present
	dslot       []int    // unknown → slot of its diagonal entry
	eslot       [][2]int // element → slots of (from row, to column) and (to row, from column), −1 at a fixed end
}

// newNodePattern builds the pattern for the numbering unk (system node →
// unknown or −1), nodes (its inverse) and the element ends. Parallel
// elements share their slots; a loop's entries are diagonal ones. Cost
// O(nodes + elements), plus sorting the rows of nodes of high degree.
func newNodePattern(unk, nodes []int, ends [][2]int) *nodePattern {
	p := &nodePattern{unk: unk, nodes: nodes, ends: ends}
	m := len(nodes)
	p.dslot = make([]int, m)
	p.eslot = make([][2]int, len(ends))
	rowPtr := make([]int, m+1)
	for r := 0; r < m; r++ {
		rowPtr[r+1] = 1
	}
	for _, en := range ends {
		if r0, r1 := unk[en[0]], unk[en[1]]; r0 >= 0 && r1 >= 0 && r0 != r1 {
			rowPtr[r0+1]++
			rowPtr[r1+1]++
		}
	}
	for r := 0; r < m; r++ {
		rowPtr[r+1] += rowPtr[r]
	}
	// Entries tagged with their origin: −1 the diagonal, 2k and 2k+1 the
	// from and to rows of element k.
	type entry struct{ col, tag int }
	ent := make([]entry, rowPtr[m])
	fill := make([]int, m)
	for r := 0; r < m; r++ {
		ent[rowPtr[r]] = entry{r, -1}
		fill[r] = rowPtr[r] + 1
	}
	for k, en := range ends {
		r0, r1 := unk[en[0]], unk[en[1]]
		p.eslot[k] = [2]int{-1, -1}
		if r0 >= 0 && r1 >= 0 && r0 != r1 {
			ent[fill[r0]] = entry{r1, 2 * k}
			fill[r0]++
			ent[fill[r1]] = entry{r0, 2*k + 1}
			fill[r1]++
		}
	}
	// Sort every row, merge repeats (parallel elements) and note the slots.
	col := make([]int, len(ent))
	w := 0
	start := 0
	for r := 0; r < m; r++ {
		c := ent[start:rowPtr[r+1]]
		start = rowPtr[r+1]
		if len(c) <= 16 {
			for a := 1; a < len(c); a++ {
				for b := a; b > 0 && c[b].col < c[b-1].col; b-- {
					c[b], c[b-1] = c[b-1], c[b]
				}
			}
		} else {
			slices.SortFunc(c, func(x, y entry) int { return x.col - y.col })
		}
		for a, x := range c {
			if a == 0 || x.col != c[a-1].col {
				col[w] = x.col
				w++
			}
			if x.tag < 0 {
				p.dslot[r] = w - 1
			} else {
				p.eslot[x.tag/2][x.tag%2] = w - 1
			}
		}
		rowPtr[r+1] = w
	}
	for k, en := range ends {
		if r := unk[en[0]]; r >= 0 && en[0] == en[1] {
			p.eslot[k] = [2]int{p.dslot[r], p.dslot[r]}
		}
	}
	p.rowPtr, p.col = rowPtr, col[:w:w]
	return p
}

// addMatrix adds the entries of element k, with end weights w0, w1 and end
// map d (u'(0) = d[0]·(U0, UL) + …, u'(L) = d[1]·(U0, UL) + …), to the
// matrix values val (in the pattern's slots). A loop (both ends at one node,
// U0 = UL) enters through the row sums rs of its map, d[i][0] + d[i][1]
// formed without cancellation by the element. Cost O(1).
func addMatrix[T scalar](p *nodePattern, val []T, k int, w0, w1 T, d *[2][2]T, rs *[2]T) {
	en := p.ends[k]
	r0, r1 := p.unk[en[0]], p.unk[en[1]]
	if en[0] == en[1] {
		if r0 >= 0 {
			val[p.dslot[r0]] += -w0*rs[0] + w1*rs[1]
		}
		return
	}
	sl := p.eslot[k]
	if r0 >= 0 {
		val[p.dslot[r0]] += -w0 * d[0][0]
		if r1 >= 0 {
			val[sl[0]] += -w0 * d[0][1]
		}
	}
	if r1 >= 0 {
		if r0 >= 0 {
			val[sl[1]] += w1 * d[1][0]
		}
		val[p.dslot[r1]] += w1 * d[1][1]
	}
}

// addExcess adds element k's share of the row sums Σ_j A_rj (over the
// unknown columns) to ex, the way addMatrix adds its entries: −w0·rs[0] to
// the From row and w1·rs[1] to the To row when both ends are unknown (the
// element's row sums, formed without cancellation), the diagonal entry
// alone when the other end is fixed (its column went to the right-hand
// side), both row sums for a self-loop. Cost O(1).
func addExcess(p *nodePattern, ex []float64, k int, w0, w1 float64, d *[2][2]float64, rs *[2]float64) {
	en := p.ends[k]
	r0, r1 := p.unk[en[0]], p.unk[en[1]]
	if en[0] == en[1] {
		if r0 >= 0 {
			ex[r0] += -w0*rs[0] + w1*rs[1]
		}
		return
	}
	if r0 >= 0 {
		if r1 >= 0 {
			ex[r0] += -w0 * rs[0]
		} else {
			ex[r0] += -w0 * d[0][0]
		}
	}
	if r1 >= 0 {
		if r0 >= 0 {
			ex[r1] += w1 * rs[1]
		} else {
			ex[r1] += w1 * d[1][1]
		}
	}
}

// addRHS adds element k's terms to the right-hand side rhs: its sources g
// and the values fix0, fix1 at its ends where these are fixed. Cost O(1).
func addRHS[T scalar](p *nodePattern, rhs []T, k int, w0, w1 T, d *[2][2]T, g *[2]T, fix0, fix1 T) {
	en := p.ends[k]
	r0, r1 := p.unk[en[0]], p.unk[en[1]]
	if en[0] == en[1] {
		if r0 >= 0 {
			rhs[r0] += w0*g[0] - w1*g[1]
		}
		return
	}
	if r0 >= 0 {
		if r1 < 0 {
			rhs[r0] -= -w0 * d[0][1] * fix1
		}
		rhs[r0] += w0 * g[0]
	}
	if r1 >= 0 {
		if r0 < 0 {
			rhs[r1] -= w1 * d[1][0] * fix0
		}
		rhs[r1] -= w1 * g[1]
	}
}
