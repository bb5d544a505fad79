package nodesys

// ndLeaf is the piece size below which nested dissection stops and orders the
// piece by minimum degree.
const ndLeaf = 128

// nestedDissection returns a nested-dissection elimination order of the
// symmetric graph (neighbours of v are adj[ptr[v]:ptr[v+1]]) that uses no
// coordinates: each connected piece gets a rooted level structure (breadth-
// first levels from a pseudo-peripheral node, George and Liu 1981, from
// memory); the level that splits the piece's nodes closest to half, reduced
// to its nodes that touch the next level, is the separator. The two sides are
// ordered first, recursively, and the separator last. Pieces of at most ndLeaf
// nodes, and pieces whose level structure has fewer than three levels, are
// ordered by minimum degree.
//
// Cost O(nnz·log n) for the level structures plus the minimum-degree cost of
// the leaves.
func nestedDissection(n int, ptr, adj []int) []int {
	perm := make([]int, n)
	part := make([]int, n) // piece label of each node
	level := make([]int, n)
	loc := make([]int, n)
	for i := range loc {
		loc[i] = -1
	}
	queue := make([]int, 0, n)
	label := 1
	for i := range part {
		part[i] = label
	}

	// bfs fills queue with the nodes of v's component within piece id, in
	// breadth-first order, and level with their distance from v. It returns
	// the number of levels.
	bfs := func(v, id int) int {
		queue = queue[:0]
		queue = append(queue, v)
		part[v] = -id // visited this sweep
		level[v] = 0
		h := 1
		for q := 0; q < len(queue); q++ {
			u := queue[q]
			for _, x := range adj[ptr[u]:ptr[u+1]] {
				if part[x] == id {
					part[x] = -id
					level[x] = level[u] + 1
					h = max(h, level[x]+1)
					queue = append(queue, x)
				}
			}
		}
		for _, u := range queue {
			part[u] = id
		}
		return h
	}

	type piece struct {
		nodes []int
		lo    int
	}
	stack := []piece{{nodes: identity(n), lo: 0}}
	for len(stack) > 0 {
		pc := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		label++
		id := label
		for _, v := range pc.nodes {
			part[v] = id
		}
		if len(pc.nodes) <= ndLeaf {
			ndMinDeg(pc.nodes, id, part, loc, ptr, adj, perm[pc.lo:])
			continue
		}

		// Split into connected components first.
		h := bfs(pc.nodes[0], id)
		if len(queue) < len(pc.nodes) {
			lo := pc.lo
			seen := label + 1
			label++
			for _, v := range pc.nodes {
				if part[v] != id {
					continue
				}
				bfs(v, id)
				comp := append([]int(nil), queue...)
				for _, u := range comp {
					part[u] = seen
				}
				stack = append(stack, piece{nodes: comp, lo: lo})
				lo += len(comp)
			}
			continue
		}

		// Pseudo-peripheral node: restart from a least-degree node of the
		// last level while the number of levels grows.
		start := pc.nodes[0]
		for iter := 0; iter < 8; iter++ {
			best, bd := -1, 0
			for _, u := range queue {
				if level[u] == h-1 {
					d := ptr[u+1] - ptr[u]
					if best < 0 || d < bd {
						best, bd = u, d
					}
				}
			}
			h2 := bfs(best, id)
			if h2 <= h {
				h = bfs(start, id)
				break
			}
			start, h = best, h2
		}
		if h < 3 {
			ndMinDeg(pc.nodes, id, part, loc, ptr, adj, perm[pc.lo:])
			continue
		}

		// Level that splits the nodes closest to half.
		cnt := make([]int, h)
		for _, u := range queue {
			cnt[level[u]]++
		}
		half := len(queue) / 2
		sep, below := 1, cnt[0]
		for sep < h-2 && below+cnt[sep] < half {
			below += cnt[sep]
			sep++
		}
		// Separator: nodes of level sep with a neighbour in level sep+1.
		var a, b, s []int
		for _, u := range queue {
			switch lv := level[u]; {
			case lv < sep:
				a = append(a, u)
			case lv > sep:
				b = append(b, u)
			default:
				touches := false
				for _, x := range adj[ptr[u]:ptr[u+1]] {
					if part[x] == id && level[x] == sep+1 {
						touches = true
						break
					}
				}
				if touches {
					s = append(s, u)
				} else {
					a = append(a, u)
				}
			}
		}
		end := pc.lo + len(pc.nodes)
		copy(perm[end-len(s):end], s)
		for _, u := range s {
			part[u] = 0
		}
		stack = append(stack, piece{nodes: a, lo: pc.lo}, piece{nodes: b, lo: pc.lo + len(a)})
	}
	return perm
}

// ndMinDeg orders the subgraph induced by nodes (all labelled id in part) by
// minimum degree and writes the order to dst.
func ndMinDeg(nodes []int, id int, part, loc, ptr, adj, dst []int) {
	for k, v := range nodes {
		loc[v] = k
	}
	lptr := make([]int, len(nodes)+1)
	var ladj []int
	for k, v := range nodes {
		for _, x := range adj[ptr[v]:ptr[v+1]] {
			if part[x] == id && x != v {
				ladj = append(ladj, loc[x])
			}
		}
		lptr[k+1] = len(ladj)
	}
	for k, v := range minimumDegree(len(nodes), lptr, ladj) {
		dst[k] = nodes[v]
	}
	for _, v := range nodes {
		loc[v] = -1
		part[v] = 0
	}
}

func identity(n int) []int {
	p := make([]int, n)
	for i := range p {
		p[i] = i
	}
	return p
}
