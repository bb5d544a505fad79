package nodesys

// MinimumDegreeOrder returns the minimum-degree elimination order that
// Factorize uses by default, for callers that build their own order on top
// of it and factor with Natural: perm[k] is the node eliminated k-th. The
// graph is given in compressed form (the neighbours of v are
// adj[ptr[v]:ptr[v+1]]; self loops are ignored). Cost: O(n + nnz) on trees,
// about O(nnz(L)) otherwise.
func MinimumDegreeOrder(n int, ptr, adj []int) []int {
	return minimumDegree(n, ptr, adj)
}
