package graphpde

import (
	"context"
	"fmt"
	"strings"
	"time"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// Method chooses the edge elements of a solve.
type Method int

const (
	// MethodAuto uses exact elements on edges whose coefficients are
	// constant and grid elements elsewhere. It is the zero value.
	MethodAuto Method = iota
	// MethodExact uses exact elements everywhere; an edge with varying
	// coefficients is an error.
	MethodExact
	// MethodGrid uses grid elements everywhere.
	MethodGrid
)

// ParseMethod reads "auto", "exact" or "grid".
func ParseMethod(s string) (Method, error) {
	switch s {
	case "auto":
		return MethodAuto, nil
	case "exact":
		return MethodExact, nil
	case "grid":
		return MethodGrid, nil
	}
	return 0, fmt.Errorf("unknown method %q (want auto, exact or grid)", s)
}

// String returns "auto", "exact" or "grid".
func (m Method) String() string {
	switch m {
	case MethodAuto:
		return "auto"
	case MethodExact:
		return "exact"
	case MethodGrid:
		return "grid"
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// DefaultCells is the number of grid cells of an edge when neither the edge
// nor the settings say otherwise.
const DefaultCells = 64

// DefaultMaxGridUnknowns is the default bound on the interior grid unknowns
// of one solve (8 bytes each on edges with constant coefficients, 32 on
// edges with varying ones, so 2 to 8 GB).
const DefaultMaxGridUnknowns = 1 << 28

// Settings controls a steady solve. A nil *Settings means the defaults.
type Settings struct {
	// Method chooses the edge elements; the zero value is MethodAuto.
	Method Method
	// Cells is the number of cells of a grid edge whose Edge.Cells is 0;
	// 0 means DefaultCells.
	Cells int
	// MaxGridUnknowns bounds the interior grid unknowns; a larger grid is
	// refused with a *GridSizeError before anything is allocated. 0 means
	// DefaultMaxGridUnknowns.
	MaxGridUnknowns int
	// Context, when not nil, stops the solve once it is cancelled: it is
	// looked at between batches of edges while the elements are built and
	// recovered, between batches of columns of the node factorisation,
	// and between the stages of the solve. A stopped solve returns a
	// *CanceledError (errors.Is(err, context.Canceled) or
	// context.DeadlineExceeded holds) and no solution. Nil: never stopped.
	Context context.Context
	// Analysis, when not nil, keeps the ordering and the symbolic
	// factorisation of the node system between solves: a solve whose node
	// system has the pattern kept there (the same network again, or one
	// with the same nodes and edges and other values, sources, fixed
	// values, methods or cells) skips them and factors at once; any other
	// solve analyses its own pattern and keeps that. Stats.Reused says
	// which happened. The results are the same bit for bit. One solve at
	// a time may use a NodeAnalysis.
	Analysis *NodeAnalysis
}

// NodeAnalysis holds the ordering and symbolic factorisation of a node
// system for later solves (Settings.Analysis). The zero value is empty.
type NodeAnalysis struct {
	a *nodesys.Analysis[float64]
}

// CanceledError reports a solve stopped by its context. Err is the
// context's error (context.Canceled or context.DeadlineExceeded), which
// Unwrap returns; Stage says what was under way.
type CanceledError struct {
	Stage string
	Err   error
}

func (e *CanceledError) Error() string {
	return "the solve stopped during the " + e.Stage + ": " + e.Err.Error()
}

// Unwrap returns the context's error.
func (e *CanceledError) Unwrap() error { return e.Err }

// stopEvery is the number of edges (or node columns) handled between two
// looks at a solve's context: an element costs at least tens of
// nanoseconds, a look about ten, so the looks cost well under 1% while a
// cancelled solve stops within a millisecond or so.
const stopEvery = 4096

// canceled returns a *CanceledError for stage when ctx (which may be nil)
// has been cancelled, else nil.
func canceled(ctx context.Context, stage string) error {
	if ctx == nil {
		return nil
	}
	if err := ctx.Err(); err != nil {
		return &CanceledError{Stage: stage, Err: err}
	}
	return nil
}

// Status describes how a solver ended. The linear steady solve ends
// Converged, or Inaccurate when it cannot vouch for its values, or returns
// an error; the iterative solvers of the package (Newton) also end at their
// budget (IterationLimit), where an edge law loses ellipticity (NotElliptic),
// at a singular Jacobian (Singular) or where no solution is found past a
// fold (Fold), each with a Result that says so.
type Status int

const (
	// NotSolved is the zero value: no solver has run.
	NotSolved Status = iota
	// Converged: the solve succeeded (for the linear solve: the node
	// system was factored and solved and the result is finite).
	Converged
	// IterationLimit: an iterative solver stopped at its budget.
	IterationLimit
	// NotElliptic: the operator lost uniform ellipticity.
	NotElliptic
	// Singular: a linear system met a zero pivot.
	Singular
	// Inaccurate: the solve finished but cannot vouch for its values:
	// the node system's scaled residual stayed above its tolerance after
	// iterative refinement (Notes says where and how far).
	Inaccurate
	// Fold: Newton found no solution, and the evidence points to a fold
	// (no steady solution on that branch): a law not monotone in u, and
	// iterates that crossed a singular Jacobian back and forth (the
	// determinant's sign alternating) without lowering the residual.
	// Notes gives the evidence; no field is returned.
	Fold
)

// String returns the status in words.
func (s Status) String() string {
	switch s {
	case NotSolved:
		return "not solved"
	case Converged:
		return "converged"
	case IterationLimit:
		return "iteration limit"
	case NotElliptic:
		return "not elliptic"
	case Singular:
		return "singular"
	case Inaccurate:
		return "inaccurate"
	case Fold:
		return "fold"
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Stats gives the size and cost of a solve.
type Stats struct {
	Unknowns     int // node unknowns plus interior grid unknowns
	NodeUnknowns int // balance nodes (rows of the node system)
	ExactEdges   int
	GridEdges    int
	FillNNZ      int           // entries of the node system's factor L (diagonal included)
	FactorTime   time.Duration // ordering, symbolic and numeric factorisation of the node system
	// Reused reports that the node system's ordering and symbolic
	// factorisation came from Settings.Analysis (FactorTime is then the
	// numeric factorisation alone).
	Reused  bool
	Elapsed time.Duration // wall-clock time of the whole solve
	// Refinements is the number of iterative refinement steps the node
	// solve took (0 when the first solve was accurate to a few ε).
	Refinements int
	// ScaledResidual is the node system's scaled residual
	// max_r |b − Ax|_r / (Σ_j |A_rj x_j| + |b_r|) after refinement: a few
	// ε for an accurate solve (see Status Inaccurate).
	ScaledResidual float64
}

// UnanchoredError reports a connected component that nothing anchors: no
// fixed node, no node leak and no edge decay, so that constants solve its
// homogeneous steady problem and the solution is not unique.
type UnanchoredError struct {
	Nodes      []string // node ids of the first such component
	Components int      // number of such components
}

func (e *UnanchoredError) Error() string {
	const show = 3
	var b strings.Builder
	b.WriteString("the component of node")
	if len(e.Nodes) > 1 {
		b.WriteString("s")
	}
	b.WriteString(" ")
	for i, id := range e.Nodes {
		if i == show {
			fmt.Fprintf(&b, " and %d more", len(e.Nodes)-show)
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(id)
	}
	b.WriteString(" has no fixed node, leak or decay: its steady solution is not unique")
	if e.Components > 1 {
		fmt.Fprintf(&b, " (%d components are in this state)", e.Components)
	}
	return b.String()
}

// SingularNodeError reports a zero or tiny pivot of the node system at a node,
// with the pivot and the scale of its row (as in a resonant Laplace shift or a
// component anchored only by a decay lost in round-off).
type SingularNodeError struct {
	Node         string
	Pivot, Scale float64
}

func (e *SingularNodeError) Error() string {
	return fmt.Sprintf("the node system is singular at node %s (pivot %.3g, row scale %.3g)", e.Node, e.Pivot, e.Scale)
}

// NonFiniteError reports a NaN or infinite value in a result, naming where it
// first appeared.
type NonFiniteError struct {
	Object string // "node" or "edge"
	ID     string
}

func (e *NonFiniteError) Error() string {
	return fmt.Sprintf("the solution is not finite at %s %s", e.Object, e.ID)
}

// GridSizeError reports a grid too large to allocate.
type GridSizeError struct {
	Unknowns int64 // interior grid unknowns requested
	Max      int64
}

func (e *GridSizeError) Error() string {
	return fmt.Sprintf("the grid would have %d interior unknowns (at least %d MB); at most %d are allowed: use fewer cells", e.Unknowns, e.Unknowns*8>>20, e.Max)
}

// Variant overrides data of a network for one solve, so that related problems
// (Laplace transforms, exit times, hitting probabilities, occupation times)
// can be solved without copying the network. The zero value changes nothing;
// a nil slice or function means "as in the network". Slices are indexed by
// node or edge index and must have the length of Nodes or Edges (SolveVariant
// panics otherwise).
type Variant struct {
	// Shift s adds s·ρ to the decay of every edge and s·ρ_v to the leak of
	// every balance node (Laplace transform or implicit time step).
	Shift float64
	// EdgeSource(e, x), when non-nil, replaces the source f of every edge
	// at distance x from its From node. Every edge then uses a grid
	// element (MethodExact is an error). It must not be set together
	// with ConstSource.
	EdgeSource func(e int, x float64) float64
	// ConstSource[e], when non-nil, replaces the source of edge e by a
	// constant (exact elements remain usable).
	ConstSource []float64
	// NodeInject[v], when non-nil, replaces the injection γ of every
	// balance node.
	NodeInject []float64
	// FixedValue[v], when non-nil, replaces the value g of every fixed node
	// (entries of balance nodes are ignored).
	FixedValue []float64
}

// Solve solves the steady problem of net: on every edge
//
//	∂_x(a ∂_x u) + b ∂_x u − c u + f = 0,
//
// u continuous at the nodes, and every node's condition (fixed value or flux
// balance). Edges use exact or grid elements as set.Method says; grid
// interiors are condensed, the node system (one unknown per balance node) is
// factored with a minimum-degree order, and the interiors recovered.
//
// Errors: *UnanchoredError for a component with nothing to fix its level,
// *ModelError naming an edge that MethodExact cannot handle,
// *GridSizeError, *SingularNodeError, *NonFiniteError. net is not modified
// (its incidence lists are built if needed). Cost: O(grid unknowns + edges)
// plus the factorisation of the node system (O(nodes) on trees).
func Solve(net *Network, set *Settings) (*Solution, error) {
	return SolveVariant(net, nil, set)
}

// SolveVariant is Solve for the problem of net modified by v (nil for none).
func SolveVariant(net *Network, v *Variant, set *Settings) (*Solution, error) {
	t0 := time.Now()
	sys, err := newSystem(net, v, set)
	if err != nil {
		return nil, err
	}
	if err := sys.assembleSolve(sys.v.Shift); err != nil {
		return nil, err
	}
	sol, err := sys.solution()
	if err != nil {
		return nil, err
	}
	sys.judge(sol)
	sol.Stats.Elapsed = time.Since(t0)
	return sol, nil
}
