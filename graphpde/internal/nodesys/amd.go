package nodesys

import (
	"math"
	"slices"
)

// Node kinds in the quotient graph of the minimum-degree ordering.
const (
	mdVar    uint8 = iota // principal variable, not yet eliminated
	mdElem                // element: an eliminated variable still in use
	mdDead                // element absorbed into a later element
	mdMerged              // variable merged into a supervariable or eliminated with one
	mdDense               // dense node, ordered last
)

// minimumDegree returns a minimum-degree elimination order of the symmetric
// graph given in compressed form (neighbours of v are adj[ptr[v]:ptr[v+1]];
// self loops are ignored): perm[k] is the node eliminated k-th.
//
// Nodes of degree at most one are peeled first, repeatedly, in O(n + nnz):
// eliminating them is a minimum-degree choice and creates no fill, so trees
// and the tree-like parts of any network (the whole graph outside its
// 2-core) come out leaves first with no fill and in linear time, whatever
// their degrees. The 2-core left over is ordered by amd.
func minimumDegree(n int, ptr, adj []int) []int {
	deg := make([]int, n)
	for v := 0; v < n; v++ {
		for _, u := range adj[ptr[v]:ptr[v+1]] {
			if u != v {
				deg[v]++
			}
		}
	}
	perm := make([]int, 0, n)
	done := make([]bool, n)
	for v := 0; v < n; v++ {
		if deg[v] <= 1 {
			done[v] = true
			perm = append(perm, v)
		}
	}
	for q := 0; q < len(perm); q++ {
		for _, u := range adj[ptr[perm[q]]:ptr[perm[q]+1]] {
			if !done[u] {
				deg[u]--
				if deg[u] <= 1 {
					done[u] = true
					perm = append(perm, u)
				}
			}
		}
	}
	if len(perm) == n {
		return perm
	}

	// The 2-core, renumbered.
	loc := deg // reuse: local number of core nodes
	core := make([]int, 0, n-len(perm))
	for v := 0; v < n; v++ {
		if !done[v] {
			loc[v] = len(core)
			core = append(core, v)
		}
	}
	cptr := make([]int, len(core)+1)
	cadj := make([]int, 0, len(adj))
	for k, v := range core {
		for _, u := range adj[ptr[v]:ptr[v+1]] {
			if u != v && !done[u] {
				cadj = append(cadj, loc[u])
			}
		}
		cptr[k+1] = len(cadj)
	}
	for _, k := range amd(len(core), cptr, cadj) {
		perm = append(perm, core[k])
	}
	return perm
}

// amd returns an approximate minimum-degree elimination order of
// the symmetric graph given in compressed form (neighbours of v are
// adj[ptr[v]:ptr[v+1]]; self loops are ignored): perm[k] is the node
// eliminated k-th.
//
// The graph is kept as a quotient graph of variables and elements (cliques
// left by eliminated nodes). Elements adjacent to the pivot are absorbed into
// the new element, elements contained in it are absorbed too (aggressive
// absorption), indistinguishable variables are merged into supervariables
// (found by hashing their adjacency), variables whose whole neighbourhood lies
// in the new element are eliminated with the pivot (mass elimination), and the
// external degree is bounded from above as in approximate minimum degree:
//
//	d_i = min(n_left − |i|, d_i_old + |L_p \ i|, |A_i \ i| + |L_p \ i| + Σ_e |L_e \ L_p|)
//
// Nodes with more than max(16, 10√n) neighbours are ordered last, which keeps
// stars and hubs from making the degree updates quadratic.
//
// Cost: on a tree O(Σ_v deg(v)²), which is O(n) for bounded or slowly growing
// degrees; in general O(nnz(L)) up to the (small) cost of degree updates.
func amd(n int, ptr, adj []int) []int {
	if n == 0 {
		return nil
	}
	kind := make([]uint8, n)
	nv := make([]int, n)  // supervariable weight, negated while in L_p
	deg := make([]int, n) // approximate external degree
	head := make([]int, n+1)
	next := make([]int, n)
	prev := make([]int, n)
	w := make([]int, n)     // |L_e \ L_p| + wflg for elements touched this step
	esize := make([]int, n) // weighted size of element lists
	mark := make([]int, n)  // tags for the supervariable comparison
	hash := make([]uint64, n)
	mnext := make([]int, n) // member chains of supervariables
	mlast := make([]int, n)
	estart := make([]int, n) // element e's variable list is arena[estart[e]:estart[e]+elen[e]]
	elen := make([]int, n)
	var arena []int

	// Variable adjacency A_i (pruned as we go) and element adjacency E_i.
	abuf := make([]int, 0, len(adj))
	vadj := make([][]int, n)
	eadj := make([][]int, n)
	dense := int(math.Max(16, 10*math.Sqrt(float64(n))))
	nDense := 0
	for v := 0; v < n; v++ {
		start := len(abuf)
		for _, u := range adj[ptr[v]:ptr[v+1]] {
			if u != v {
				abuf = append(abuf, u)
			}
		}
		vadj[v] = abuf[start:len(abuf):len(abuf)]
		nv[v] = 1
		mnext[v] = -1
		mlast[v] = v
		if len(vadj[v]) > dense {
			kind[v] = mdDense
			nDense++
		}
	}
	for i := range head {
		head[i] = -1
	}
	insert := func(i, d int) {
		deg[i] = d
		prev[i] = -1
		next[i] = head[d]
		if head[d] >= 0 {
			prev[head[d]] = i
		}
		head[d] = i
	}
	remove := func(i int) {
		if prev[i] >= 0 {
			next[prev[i]] = next[i]
		} else {
			head[deg[i]] = next[i]
		}
		if next[i] >= 0 {
			prev[next[i]] = prev[i]
		}
	}
	link := func(into, from int) {
		mnext[mlast[into]] = from
		mlast[into] = mlast[from]
	}
	mindeg := n
	for v := 0; v < n; v++ {
		if kind[v] != mdVar {
			continue
		}
		d := 0
		for _, u := range vadj[v] {
			if kind[u] == mdVar {
				d++
			}
		}
		insert(v, d)
		mindeg = min(mindeg, d)
	}

	nEff := n - nDense
	nel := 0
	wflg := 1
	tag := 0
	pivots := make([]int, 0, n)
	var lp, cand []int
	for nel < nEff {
		for head[mindeg] < 0 {
			mindeg++
		}
		p := head[mindeg]
		remove(p)
		nvp := nv[p]
		nel += nvp
		nv[p] = -nvp

		// L_p: the union of the lists of p's elements and p's variables.
		lp = lp[:0]
		degme := 0
		take := func(i int) {
			if kind[i] == mdVar && nv[i] > 0 {
				degme += nv[i]
				nv[i] = -nv[i]
				lp = append(lp, i)
				remove(i)
			}
		}
		for _, e := range eadj[p] {
			if kind[e] != mdElem {
				continue
			}
			for _, i := range arena[estart[e] : estart[e]+elen[e]] {
				take(i)
			}
			kind[e] = mdDead
		}
		for _, j := range vadj[p] {
			take(j)
		}
		vadj[p], eadj[p] = nil, nil
		kind[p] = mdElem

		// |L_e \ L_p| for every element e adjacent to L_p.
		for _, i := range lp {
			for _, e := range eadj[i] {
				if kind[e] != mdElem {
					continue
				}
				if w[e] >= wflg {
					w[e] += nv[i] // nv[i] < 0
				} else {
					w[e] = esize[e] + wflg + nv[i]
				}
			}
		}

		// Degree bounds, pruning, aggressive absorption, mass elimination.
		for _, i := range lp {
			ext := 0
			var h uint64
			ei := eadj[i][:0]
			for _, e := range eadj[i] {
				if kind[e] != mdElem {
					continue
				}
				we := w[e] - wflg
				if we == 0 {
					kind[e] = mdDead // L_e ⊆ L_p
					continue
				}
				ext += we
				h += uint64(e)
				ei = append(ei, e)
			}
			ai := vadj[i][:0]
			for _, j := range vadj[i] {
				if kind[j] == mdVar && nv[j] > 0 {
					ext += nv[j]
					h += uint64(j) * 0x9e3779b97f4a7c15
					ai = append(ai, j)
				}
			}
			if ext == 0 {
				// Every neighbour of i is in L_p: eliminate i with p.
				ni := -nv[i]
				nv[i] = 0
				kind[i] = mdMerged
				nvp += ni
				nel += ni
				degme -= ni
				link(p, i)
				vadj[i], eadj[i] = nil, nil
				continue
			}
			vadj[i] = ai
			eadj[i] = append(ei, p)
			deg[i] = min(deg[i], ext)
			hash[i] = h
		}

		// Supervariables: equal hash, then equal adjacency.
		cand = cand[:0]
		for _, i := range lp {
			if kind[i] == mdVar {
				cand = append(cand, i)
			}
		}
		if len(cand) > 1 {
			slices.SortFunc(cand, func(a, b int) int {
				switch {
				case hash[a] < hash[b]:
					return -1
				case hash[a] > hash[b]:
					return 1
				}
				return a - b
			})
			for x := 0; x < len(cand); x++ {
				i := cand[x]
				if kind[i] != mdVar {
					continue
				}
				marked := false
				for y := x + 1; y < len(cand) && hash[cand[y]] == hash[i]; y++ {
					j := cand[y]
					if kind[j] != mdVar || len(vadj[j]) != len(vadj[i]) || len(eadj[j]) != len(eadj[i]) {
						continue
					}
					if !marked {
						tag++
						for _, e := range eadj[i] {
							mark[e] = tag
						}
						for _, u := range vadj[i] {
							mark[u] = tag
						}
						marked = true
					}
					same := true
					for _, e := range eadj[j] {
						if mark[e] != tag {
							same = false
							break
						}
					}
					if same {
						for _, u := range vadj[j] {
							if mark[u] != tag {
								same = false
								break
							}
						}
					}
					if same {
						nv[i] += nv[j] // both negative
						nv[j] = 0
						kind[j] = mdMerged
						link(i, j)
						vadj[j], eadj[j] = nil, nil
					}
				}
			}
		}

		// Final degrees; the new element's list.
		nleft := nEff - nel
		start := len(arena)
		for _, i := range lp {
			if kind[i] != mdVar {
				continue
			}
			ni := -nv[i]
			nv[i] = ni
			d := min(deg[i]+degme-ni, nleft-ni)
			insert(i, d)
			mindeg = min(mindeg, d)
			arena = append(arena, i)
		}
		estart[p] = start
		elen[p] = len(arena) - start
		esize[p] = degme
		nv[p] = nvp
		pivots = append(pivots, p)
		wflg += n + 1
	}

	perm := make([]int, 0, n)
	for _, p := range pivots {
		for x := p; x >= 0; x = mnext[x] {
			perm = append(perm, x)
		}
	}
	for v := 0; v < n; v++ {
		if kind[v] == mdDense {
			perm = append(perm, v)
		}
	}
	return perm
}
