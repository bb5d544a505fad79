// Package nodesys factors and solves the sparse node systems of package
// graphpde: one unknown per non-fixed node, a matrix with the network graph's
// own (symmetric) pattern, symmetric positive definite for conservative
// problems without drift, nonsymmetric but diagonally dominant with drift, and
// complex (L + s·D) for Laplace-transform work.
//
// A Matrix is assembled by Add; a Factor computes
//
//	P·A·Pᵀ = L·D·U,   L unit lower, U unit upper, U = Lᵀ when A = Aᵀ,
//
// without pivoting, in a fill-reducing order P, and solves by two triangular
// sweeps. The ordering and the symbolic factorisation are computed once per
// pattern and reused: time stepping, Newton steps and Laplace inversion at many
// values of s re-factor the same pattern without allocating.
//
// Methods:
//
//   - Ordering: approximate minimum degree on the quotient graph, with element
//     absorption, aggressive absorption, supervariables found by hashing, mass
//     elimination and the approximate external degree bound of P. R. Amestoy,
//     T. A. Davis and I. S. Duff, An approximate minimum degree ordering
//     algorithm, SIAM J. Matrix Anal. Appl. 17 (1996) 886–905 (from
//     memory). The quotient
//     graph and the minimum-degree idea: A. George and J. W. H. Liu, The
//     evolution of the minimum degree ordering algorithm, SIAM Review 31 (1989)
//     1–19 (from memory). Nodes of degree at most one are peeled off first
//     (repeatedly, in linear time); this is a minimum-degree choice that makes
//     no fill, so trees and the tree-like parts of any network are ordered
//     leaves first with no fill, and only the 2-core goes through the
//     quotient graph.
//   - Nested dissection (option): recursive separators taken from rooted
//     level structures (breadth-first levels from a pseudo-peripheral node),
//     pieces of at most 128 nodes ordered by minimum degree; George and Liu
//     1981 (below), ch. 8, from memory. The Best option runs both orderings
//     and keeps the one with fewer entries in L.
//   - Symbolic factorisation: the elimination tree (J. W. H. Liu, The role of
//     elimination trees in sparse factorization, SIAM J. Matrix Anal. Appl. 11
//     (1990) 134–172, from memory), its postorder, and the column counts of L
//     from the row subtrees (row k of L is the set of nodes reached from the
//     entries of column k of the upper triangle by climbing the tree); A.
//     George and J. W. H. Liu, Computer Solution of Large Sparse Positive
//     Definite Systems, Prentice-Hall, 1981 (from memory, no page).
//   - Numeric factorisation, two kernels computing the same factors. Up-looking,
//     one row of L and one column of U per step, each a sparse triangular
//     solve whose pattern is that row subtree, as in T. A. Davis, Direct
//     Methods for Sparse Linear Systems, SIAM, 2006, ch. 4 (from memory): used
//     for trees and sparse networks. Left-looking supernodal (columns with
//     nested patterns form dense trapezoids; each supernode receives one dense
//     block update per descendant, scattered once through relative indices),
//     after E. Ng and B. W. Peyton, Block sparse Cholesky algorithms on
//     advanced uniprocessor computers, SIAM J. Sci. Comput. 14 (1993)
//     1034–1056 (from memory): used when at least half of the work lies in
//     supernodes of width four or more, as on meshes. Without pivoting this is
//     stable for symmetric positive definite and for diagonally dominant
//     matrices (growth factor at most 2 for the latter; G. H. Golub and C. F.
//     Van Loan, Matrix Computations, 3rd ed., §3.4, from memory), which covers
//     node systems; complex symmetric systems (A = Aᵀ, not Hermitian) take the
//     LDLᵀ path with the plain transpose.
//   - Dense kernels of the supernodal path: small supernodes are merged into
//     their parents (relaxed amalgamation, explicit zeros, our own rule); the
//     update of a supernode by a descendant runs four source columns by two
//     target columns per pass, and each trapezoid is factored four pivots at
//     a time, its later columns updated two at a time. For real values on
//     amd64 processors with AVX2 and FMA (CPUID) these loops are assembly,
//     four rows per instruction; elsewhere, and for complex values, Go loops.
//   - Independent subtrees of the supernodal elimination tree are factored by
//     up to Settings.Workers goroutines (default GOMAXPROCS), the supernodes
//     above them by the calling one. The split replays the kernel's update
//     lists to count each supernode's work, then splits the heaviest
//     subtree while that lowers (largest worker's share + top) and deals the
//     subtrees largest first to the least loaded worker (R. L. Graham,
//     SIAM J. Appl. Math. 17 (1969) 416–429, from memory). Links from a
//     subtree to supernodes outside it are replayed in elimination order,
//     and the updates of large supernodes above the subtrees are shared by
//     two goroutines by target columns with the pairing of one, so the
//     factors are the same bit for bit on any number of goroutines.
//   - Analysis reuse: Factorize keeps the ordering and symbolic factorisation
//     while the pattern is unchanged; Clone and NewFactorFrom (from
//     Factor.Analysis) hand them to other Factors, with other settings.
//   - Forests: when minimum-degree peeling eliminates every node (the network
//     is a tree or a forest), the order, the parents, the pattern of L and
//     the permuted upper triangle come out of the peeling pass itself, with
//     no general symbolic analysis, and the numeric factorisation is one
//     division per child (each column of L has one entry below the
//     diagonal). The whole factor-and-solve is then a few linear passes.
//
// A caller that knows its pattern (graphpde builds it from the network) can
// create the matrix with NewMatrixPattern and write values straight into the
// slots of Values, skipping the assembly by Add.
//
// Nested dissection of the k×k five-point grid gives nnz(L) ≈ 31/8·n·log₂n to
// leading order (A. George, Nested dissection of a regular finite element
// mesh, SIAM J. Numer. Anal. 10 (1973) 345–363, from memory); the benchmarks
// report nnz(L) of both orderings against that term (about 0.47 of it on a
// 300×300 grid for either, so minimum degree stays the default).
package nodesys
