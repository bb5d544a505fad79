package nodesys

// etree returns the elimination tree of the symmetric pattern of P·A·Pᵀ,
// given A's pattern in compressed rows and the order perm (perm[k] = node
// eliminated k-th; iperm its inverse): parent[k] is the parent of k, or -1 for
// a root. Liu's algorithm with path compression through an ancestor array,
// cost O(nnz·α(n)).
func etree(n int, rowPtr, col, perm, iperm []int) []int {
	parent := make([]int, n)
	anc := make([]int, n)
	for k := 0; k < n; k++ {
		parent[k], anc[k] = -1, -1
		c := perm[k]
		for p := rowPtr[c]; p < rowPtr[c+1]; p++ {
			for i := iperm[col[p]]; i != -1 && i < k; {
				nx := anc[i]
				anc[i] = k
				if nx == -1 {
					parent[i] = k
					break
				}
				i = nx
			}
		}
	}
	return parent
}

// postorder returns a depth-first postorder of the forest given by parent:
// post[k] is the k-th node visited. Children are visited in increasing order.
// Cost O(n).
func postorder(parent []int) []int {
	n := len(parent)
	head := make([]int, n)
	next := make([]int, n)
	for i := range head {
		head[i] = -1
	}
	for j := n - 1; j >= 0; j-- {
		if p := parent[j]; p >= 0 {
			next[j] = head[p]
			head[p] = j
		}
	}
	post := make([]int, 0, n)
	stack := make([]int, 0, 64)
	for r := 0; r < n; r++ {
		if parent[r] != -1 {
			continue
		}
		stack = append(stack, r)
		for len(stack) > 0 {
			top := stack[len(stack)-1]
			if c := head[top]; c >= 0 {
				head[top] = next[c]
				stack = append(stack, c)
			} else {
				stack = stack[:len(stack)-1]
				post = append(post, top)
			}
		}
	}
	return post
}

// inverse returns the inverse permutation.
func inverse(perm []int) []int {
	ip := make([]int, len(perm))
	for k, v := range perm {
		ip[v] = k
	}
	return ip
}

// countL returns the number of strictly lower entries of the factor of
// P·A·Pᵀ for the order perm, by climbing the row subtrees of the elimination
// tree. Cost O(nnz(L)).
func countL(n int, rowPtr, col, perm []int) int {
	iperm := inverse(perm)
	par := etree(n, rowPtr, col, perm, iperm)
	flag := make([]int, n)
	c := 0
	for k := 0; k < n; k++ {
		flag[k] = k
		v := perm[k]
		for p := rowPtr[v]; p < rowPtr[v+1]; p++ {
			for i := iperm[col[p]]; i < k && flag[i] != k; i = par[i] {
				flag[i] = k
				c++
			}
		}
	}
	return c
}
