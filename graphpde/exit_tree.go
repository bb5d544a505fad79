package graphpde

// The Laplace transform of the lifetime on a tree by one elimination pass
// towards the start (docs/exit-statistics.md §7).

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// exitTree is the start's part of the node system arranged for
// transformer.atTree, when the unknowns joined to the start (through
// elements between unknowns) form a tree. Only that part matters for
// L(s) at the start: the fixed nodes cut the network into independent
// systems. The tree is rooted at the start and its nodes are numbered
// leaves first, every node after its children; eliminating them in that
// order is Gaussian elimination without fill (each node has one
// neighbour left, its parent), and the start's value is the last pivot's
// quotient, without a back substitution. Each node's own elements (those
// to its parent, to fixed nodes, loops) are stored next to it in the
// same order, so that one pass over two arrays assembles, eliminates and
// forward-substitutes. Built once per system (buildExitTree); read only.
type exitTree struct {
	par   []int32   // position of the parent, −1 for the start (last)
	sys   []int32   // position → system node
	leak  []float64 // β_v of the node at each position
	cap   []float64 // ρ_v
	first []int32   // elements of position k: els[first[k]:first[k+1]]
	els   []treeEl
}

// treeEl is one element as the tree pass needs it: the coefficients of
// its exact element and how its ends meet the owning node.
type treeEl struct {
	a, b, c, rho, L, w0, w1 float64
	// kind: treeUp when the owner is the From end and the other end its
	// parent, treeDown when the owner is the To end and the From end its
	// parent, treeFixFrom / treeFixTo when the owner is that end and the
	// other end is fixed (value 1 in the transform), treeLoop for a
	// self-loop.
	kind uint8
}

const (
	treeUp = iota
	treeDown
	treeFixFrom
	treeFixTo
	treeLoop
)

// buildExitTree returns the tree arrangement of sys, or nil when the
// unknowns joined to the start contain a cycle (the general node-system
// path then serves). Parallel elements between a node and its parent are
// allowed (their couplings add). Cost O(nodes + elements).
func buildExitTree(sys *exitSystem) *exitTree {
	nv := len(sys.law)
	root := sys.start
	if sys.unk[root] < 0 {
		return nil
	}
	// Adjacency of system nodes through elements (CSR of element ends).
	deg := make([]int32, nv+1)
	for k := range sys.el {
		el := &sys.el[k]
		deg[el.from+1]++
		if el.to != el.from {
			deg[el.to+1]++
		}
	}
	for v := 0; v < nv; v++ {
		deg[v+1] += deg[v]
	}
	adj := make([]int32, deg[nv])
	fill := append([]int32(nil), deg[:nv]...)
	for k := range sys.el {
		el := &sys.el[k]
		adj[fill[el.from]] = int32(k)
		fill[el.from]++
		if el.to != el.from {
			adj[fill[el.to]] = int32(k)
			fill[el.to]++
		}
	}
	// Breadth-first from the start over unknowns; parent element checks.
	const unseen = -2
	parent := make([]int32, nv) // system node of the parent, −1 root
	for v := range parent {
		parent[v] = unseen
	}
	parent[root] = -1
	order := []int32{int32(root)}
	for h := 0; h < len(order); h++ {
		v := int(order[h])
		for _, k := range adj[deg[v]:deg[v+1]] {
			el := &sys.el[k]
			u := el.from
			if u == v {
				u = el.to
			}
			if u == v || sys.unk[u] < 0 {
				continue // loop or fixed end
			}
			switch {
			case parent[u] == unseen:
				parent[u] = int32(v)
				order = append(order, int32(u))
			case int(parent[u]) == v || int(parent[v]) == u:
				// The element to the parent, or a parallel one.
			default:
				return nil // a cycle
			}
		}
	}
	n := len(order)
	pos := make([]int32, nv)
	t := &exitTree{
		par:   make([]int32, n),
		sys:   make([]int32, n),
		leak:  make([]float64, n),
		cap:   make([]float64, n),
		first: make([]int32, n+1),
	}
	for i, v := range order {
		pos[v] = int32(n - 1 - i) // leaves first, the start last
	}
	for i, v := range order {
		k := n - 1 - i
		t.sys[k] = v
		t.par[k] = -1
		if p := parent[v]; p >= 0 {
			t.par[k] = pos[p]
		}
		t.leak[k] = sys.law[v].Leak
		t.cap[k] = sys.law[v].Capacity
	}
	// Elements by owner: the child end of a coupling, the unknown end of
	// an element to a fixed node, the node of a loop.
	owner := make([]int32, len(sys.el))
	kind := make([]uint8, len(sys.el))
	for k := range sys.el {
		el := &sys.el[k]
		owner[k] = -1
		i, j := el.from, el.to
		inI := sys.unk[i] >= 0 && parent[i] != unseen
		inJ := sys.unk[j] >= 0 && parent[j] != unseen
		switch {
		case i == j:
			if inI {
				owner[k], kind[k] = pos[i], treeLoop
			}
		case inI && inJ:
			if int(parent[i]) == j {
				owner[k], kind[k] = pos[i], treeUp
			} else {
				owner[k], kind[k] = pos[j], treeDown
			}
		case inI && sys.unk[j] < 0:
			owner[k], kind[k] = pos[i], treeFixFrom
		case inJ && sys.unk[i] < 0:
			owner[k], kind[k] = pos[j], treeFixTo
		}
	}
	for _, o := range owner {
		if o >= 0 {
			t.first[o+1]++
		}
	}
	for k := 0; k < n; k++ {
		t.first[k+1] += t.first[k]
	}
	t.els = make([]treeEl, t.first[n])
	next := append([]int32(nil), t.first[:n]...)
	for k := range sys.el {
		o := owner[k]
		if o < 0 {
			continue
		}
		el := &sys.el[k]
		t.els[next[o]] = treeEl{a: el.a, b: el.b, c: el.c, rho: el.rho, L: el.L, w0: el.w0, w1: el.w1, kind: kind[k]}
		next[o]++
	}
	return t
}

// treeNode is the working state of one node during atTree: the assembled
// diagonal, the sum of the elimination terms of its children, the
// right-hand side, and the sizes the pivot test needs. One cache line.
type treeNode struct {
	a, t, r complex128
	cs, sc  float64
}

// atTree returns L(s) at the start by one pass over the tree: node k
// (leaves first) adds its elements (to its parent, to fixed nodes, loops)
// to its own row and its parent's, then is eliminated into its parent,
//
//	l = A(p,k)/d_k,  d_p −= l·A(k,p),  r_p −= l·r_k,   d_k = A(k,k) − Σ_children t,
//
// and at the start u = r/d. The entries are those of assemble (the same
// element maps, weights and signs); only the order of the additions
// differs, so the value agrees with the general path to rounding. A pivot
// with |d_k| ≤ nodesys.DefaultPivotTol·max(row scale, |A(k,k)| + Σ|t|)
// (magnitudes max(|Re|, |Im|)) is reported as a *SingularNodeError, the
// test of the general factorisation. Cost O(nodes + elements), no
// allocation after the first call.
func (tr *transformer) atTree(s complex128) (complex128, error) {
	t := tr.tree
	n := len(t.par)
	if len(tr.tw) != n {
		tr.tw = make([]treeNode, n)
	}
	w := tr.tw
	clear(w)
	tol := nodesys.DefaultPivotTol
	for k := 0; k < n; k++ {
		nd := &w[k]
		nd.a += complex(t.leak[k], 0) + s*complex(t.cap[k], 0)
		nd.r += complex(t.leak[k], 0)
		var akp, apk complex128 // couplings with the parent
		pk := t.par[k]
		for e := t.first[k]; e < t.first[k+1]; e++ {
			el := &t.els[e]
			c := complex(el.c, 0) + s*complex(el.rho, 0)
			d, g := exitElement(el.a, el.b, c, complex(el.c, 0), el.L)
			w0, w1 := complex(el.w0, 0), complex(el.w1, 0)
			switch el.kind {
			case treeUp: // k is From, the parent To
				nd.a += -w0 * d[0][0]
				akp += -w0 * d[0][1]
				nd.r += w0 * g[0]
				pp := &w[pk]
				apk += w1 * d[1][0]
				pp.a += w1 * d[1][1]
				pp.r -= w1 * g[1]
			case treeDown: // k is To, the parent From
				akp += w1 * d[1][0]
				nd.a += w1 * d[1][1]
				nd.r -= w1 * g[1]
				pp := &w[pk]
				pp.a += -w0 * d[0][0]
				apk += -w0 * d[0][1]
				pp.r += w0 * g[0]
			case treeFixFrom: // the To end is fixed at 1
				nd.a += -w0 * d[0][0]
				nd.r += w0*d[0][1] + w0*g[0]
			case treeFixTo: // the From end is fixed at 1
				nd.a += w1 * d[1][1]
				nd.r += -w1*d[1][0] - w1*g[1]
			case treeLoop:
				_, gc := exitElement(el.a, el.b, c, c, el.L)
				nd.a += w0*gc[0] - w1*gc[1]
				nd.r += w0*g[0] - w1*g[1]
			}
		}
		dk := nd.a - nd.t
		ma := magC(nd.a)
		scale := maxF(maxF(nd.sc, ma), magC(akp))
		cs := ma + nd.cs
		if a := magC(dk); !(a > tol*maxF(scale, cs)) || math.IsInf(a, 0) {
			return 0, &SingularNodeError{Node: tr.sys.ids[t.sys[k]], Pivot: cmplx.Abs(dk), Scale: maxF(scale, cs)}
		}
		if pk < 0 {
			return nd.r / dk, nil
		}
		pp := &w[pk]
		l := apk / dk
		tk := l * akp
		pp.t += tk
		pp.cs += magC(tk)
		pp.r -= l * nd.r
		pp.sc = maxF(pp.sc, magC(apk))
	}
	return 0, fmt.Errorf("exit tree without a root") // unreachable: the start is last
}

// magC is max(|Re z|, |Im z|), the magnitude of the pivot tests.
// Plain comparisons, not math.Max: a NaN makes the pivot test fail
// anyway (it compares with !(a > …)), and this is in the inner loop.
func magC(z complex128) float64 {
	a, b := math.Abs(real(z)), math.Abs(imag(z))
	if b > a {
		return b
	}
	return a
}

// maxF is the larger of a and b, the first when either is NaN.
func maxF(a, b float64) float64 {
	if b > a {
		return b
	}
	return a
}
