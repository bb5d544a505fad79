package graphpde

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"time"
)

// This file holds the nonlinear steady solver: Newton's method on a
// monotone discretisation, through the same condensed node system as the
// linear solve (docs/nonlinear.md). The element residuals and Jacobians are
// in nonlinear_element.go, the condensation in nonlinear_system.go.

// NonlinearSettings controls SolveNonlinear. A nil *NonlinearSettings means
// the defaults.
type NonlinearSettings struct {
	// Method chooses the elements of linear edges (edges without a Law):
	// MethodAuto (the zero value) keeps exact elements where the
	// coefficients are constant; MethodGrid uses grids everywhere.
	// Edges with a Law always use grid elements. MethodExact is refused
	// when the network has a Law edge.
	Method Method
	// Cells is the number of cells of a grid edge whose Edge.Cells is 0;
	// 0 means DefaultCells.
	Cells int
	// MaxGridUnknowns bounds the interior grid unknowns (0: the default of
	// Settings).
	MaxGridUnknowns int
	// MaxIter is the Newton iteration budget; 0 means 50.
	MaxIter int
	// Tol is the convergence tolerance on the scaled residual (see
	// NonlinearResult.Residual); 0 means 1e-10.
	Tol float64
	// Guess, when non-nil, gives the starting field at every node and grid
	// vertex; nil starts from the fixed values at fixed nodes, their mean
	// (0 if there are none) at balance nodes, linear along the edges.
	Guess func(p Point) float64
	// Context, when not nil, stops the solve once it is cancelled: it is
	// looked at between batches of edges of every evaluation and between
	// batches of columns of every factorisation. A stopped solve returns
	// a *CanceledError (errors.Is(err, context.Canceled) holds) with a
	// result of Status NotSolved and no Solution. Nil: never stopped.
	Context context.Context
}

// NonlinearResult is the outcome of SolveNonlinear.
type NonlinearResult struct {
	// Solution is the field; nil unless Status is Converged (an
	// unconverged iterate is never returned as an answer).
	Solution *Solution
	Status   Status
	// Iterations is the number of Newton steps taken.
	Iterations int
	// Residual is the last scaled residual: the largest over grid vertices
	// and balance nodes of |residual| / |diagonal of the Jacobian row|,
	// the change of the local value that would cancel the residual, over
	// (1 + max |u|). History holds it before every step and at the end.
	Residual float64
	History  []float64
	// Steps holds the damping factor of every Newton step (1 = full step).
	Steps []float64
	// Unique is true when every law was monotone in u wherever it was
	// evaluated (edge equations non-increasing in u, node losses and laws
	// non-decreasing): then the discrete solution is unique. When false,
	// Notes names a place where monotonicity failed: other solutions may
	// exist, and a sweep follows the branches.
	Unique bool
	Notes  []string
	Stats  Stats
}

// LawError reports a law that fails, where the solver evaluated it, a
// property that the solver needs: ellipticity of an edge equation
// (∂E/∂uxx > 0), a positive diffusivity, flux monotonicity of a node law
// (∂G/∂d ≤ 0), or a finite value.
type LawError struct {
	Object   string // "edge" or "node"
	ID       string
	X        float64 // distance from the edge's From node (edges only)
	U        float64
	Quantity string // the offending quantity, e.g. "∂E/∂uxx"
	Value    float64
	Want     string // what the quantity must satisfy, e.g. "> 0"
	Why      string // what the failure means
}

func (e *LawError) Error() string {
	place := "u = " + fmtG(e.U)
	if e.Object == "edge" {
		place = "x = " + fmtG(e.X) + ", " + place
	}
	s := fmt.Sprintf("%s %q at %s: %s = %s, must be %s", e.Object, e.ID, place, e.Quantity, fmtG(e.Value), e.Want)
	if e.Why != "" {
		s += " (" + e.Why + ")"
	}
	return s
}

func fmtG(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

// HasLaws reports whether some edge of net has a Law with coefficients or an
// equation, or some node has a nonlinear law: such a network is solved by
// SolveNonlinear. A coefficient that reads parameters only (Coef.UsesP and
// no variable) does not count: its plain field holds its value, which the
// linear engines read (a sweep still follows the parameter through Law).
func HasLaws(net *Network) bool {
	law := func(c *Coef) bool { return c != nil && !(c.UsesP && !c.UsesX && !c.UsesU && !c.UsesT) }
	for e := range net.Edges {
		if l := net.Edges[e].Law; l != nil && (law(l.A) || law(l.B) || law(l.C) || law(l.F) || l.Equation != nil) {
			return true
		}
	}
	for v := range net.Nodes {
		if net.Nodes[v].Nonlinear != nil {
			return true
		}
	}
	return false
}

// SolveNonlinear solves the steady problem of a network whose edges may
// carry laws that depend on x and u (EdgeLaw coefficients), fully nonlinear
// equations E(x, u, ux, uxx) = 0 (generator sign), and whose nodes may
// carry nonlinear balances (NodeNonlinear), by damped Newton's method:
//
//   - Law edges use a grid of cells with a monotone scheme: two-point
//     fluxes a(x, ū)(u_{i+1} − u_i)/h in divergence form for quasilinear
//     coefficients (exponentially fitted where there is drift); for an
//     equation, the central second difference and the central first
//     difference where the cell Péclet number |∂E/∂ux|·h/∂E/∂uxx is at
//     most 2 (second order), the one-sided one in the direction of
//     ∂E/∂ux elsewhere. Nodes own half a cell of every edge, whose
//     equation gives the end derivatives to second order.
//   - Edges without a law keep their linear elements (exact where the
//     coefficients are constant).
//   - Every Newton step linearises every grid edge, eliminates its
//     tridiagonal interior (Thomas) into a 2×2 end map, factors the node
//     system with the ordering of the first step, and recovers the
//     interior; a backtracking line search on the residual norm damps it.
//
// Ellipticity, positive diffusivity and node flux monotonicity are checked
// at every point where a law is evaluated: a failure is a *LawError (with
// Status NotElliptic). A singular Jacobian (a fold) gives Status Singular
// and a *SingularNodeError or a *LawError naming the vertex. Running out of
// iterations or a stalled line search gives Status IterationLimit and no
// error, or Status Fold where the law is not monotone in u and the last
// iterates crossed a singular Jacobian back and forth (see Fold); the
// result then has no Solution. Other errors: those of Solve
// (*UnanchoredError is not raised: a nonlinear law may anchor a component).
//
// net's parameters are read at evaluation time; net is not modified.
// Cost per iteration: O(grid unknowns + edges) law evaluations plus one
// numeric factorisation of the node system.
func SolveNonlinear(net *Network, set *NonlinearSettings) (*NonlinearResult, error) {
	t0 := time.Now()
	var s NonlinearSettings
	if set != nil {
		s = *set
	}
	if s.MaxIter == 0 {
		s.MaxIter = 50
	}
	if s.Tol == 0 {
		s.Tol = 1e-10
	}
	sys, err := newNLSystem(net, &s)
	if err != nil {
		return nil, err
	}
	sys.start(s.Guess)
	sys.handOver = true // the system is dropped after: no copy of the grid values
	res, err := sys.newton(&s)
	if res != nil {
		res.Stats = sys.stats
		if res.Solution != nil {
			res.Solution.Stats = sys.stats
			res.Solution.Stats.Elapsed = time.Since(t0)
		}
		res.Stats.Elapsed = time.Since(t0)
	}
	return res, err
}

// newton runs damped Newton from the current state of s.
func (s *nlSystem) newton(set *NonlinearSettings) (*NonlinearResult, error) {
	res := &NonlinearResult{Status: NotSolved}
	var negHist []int // negative pivots of every factorisation (the determinant's sign)
	if err := s.eval(s.U, s.w); err != nil {
		return s.fail(res, err)
	}
	merit := s.merit()
	for it := 0; ; it++ {
		if err := s.prepare(s.U, s.w); err != nil {
			return s.fail(res, err)
		}
		rho := s.scaledResidual()
		res.History = append(res.History, rho)
		res.Residual = rho
		if rho <= set.Tol {
			res.Status = Converged
			break
		}
		if it == set.MaxIter {
			res.Status = IterationLimit
			res.Notes = append(res.Notes, fmt.Sprintf("Newton stopped after %d iterations with the scaled residual at %.3g", it, rho))
			s.judgeFold(res, negHist, "the iteration budget ran out")
			return s.finishNotes(res), nil
		}
		if err := s.factor(); err != nil {
			return s.fail(res, err)
		}
		s.newtonStep()
		negHist = append(negHist, s.negPivots)
		t, ok, lastErr := s.lineSearch(merit, set.Tol)
		res.Iterations++
		if !ok {
			if lastErr != nil {
				return s.fail(res, lastErr)
			}
			res.Status = IterationLimit
			res.Notes = append(res.Notes, fmt.Sprintf("the line search stalled at iteration %d with the scaled residual at %.3g", it+1, rho))
			s.judgeFold(res, negHist, "no step lowered the residual")
			return s.finishNotes(res), nil
		}
		res.Steps = append(res.Steps, t)
		merit = s.merit()
	}
	if s.noSolution {
		return s.finishNotes(res), nil
	}
	sol, err := s.solution()
	if err != nil {
		res.Status = NotSolved
		return s.finishNotes(res), err
	}
	res.Solution = sol
	return s.finishNotes(res), nil
}

// fail labels res by the kind of err.
func (s *nlSystem) fail(res *NonlinearResult, err error) (*NonlinearResult, error) {
	var le *LawError
	var se *SingularNodeError
	switch {
	case errors.As(err, &le) && le.Quantity == "pivot":
		res.Status = Singular
	case errors.As(err, &le) && le.Want != "finite":
		res.Status = NotElliptic
	case errors.As(err, &se):
		res.Status = Singular
	default:
		res.Status = NotSolved
	}
	return s.finishNotes(res), err
}

// foldSwitches is the number of consecutive Newton steps at the end of a
// failed solve whose Jacobians' negative-pivot counts must go up and down
// by exactly one, alternately, for the failure to be reported as a fold.
const foldSwitches = 2

// judgeFold turns the IterationLimit of a failed solve into Fold where the
// evidence points to one: a law not monotone in u (a fold needs one: a
// monotone law has one solution, which Newton's damped steps approach), and
// iterates that straddle a singular Jacobian at the end — over the last
// foldSwitches steps the count of negative pivots (the determinant's sign)
// went up and down by exactly one, alternately, the signature of a simple
// zero eigenvalue crossed back and forth while the residual norm cannot be
// lowered (how says what ended the solve), as at a local minimum of the
// residual beside a fold. A start far
// from every solution, where the counts wander by several, stays an
// iteration limit. No field is returned either way.
func (s *nlSystem) judgeFold(res *NonlinearResult, neg []int, how string) {
	if s.nonMono == "" || len(neg) < foldSwitches+1 {
		return
	}
	tail := neg[len(neg)-foldSwitches-1:]
	for k := 1; k < len(tail); k++ {
		d := tail[k] - tail[k-1]
		if (d != 1 && d != -1) || (k > 1 && d != tail[k-2]-tail[k-1]) {
			return
		}
	}
	res.Status = Fold
	res.Notes = append(res.Notes, fmt.Sprintf("no steady solution near the iterates: the last %d Newton steps crossed a singular Jacobian back and forth (negative pivots %v) and %s, as past a fold; a sweep in a parameter locates the fold", foldSwitches, tail, how))
}

// finishNotes adds the uniqueness note, and for a law that is not monotone
// in u and did not converge, the hint that a fold may be the reason.
func (s *nlSystem) finishNotes(res *NonlinearResult) *NonlinearResult {
	res.Unique = s.nonMono == ""
	if !res.Unique {
		res.Notes = append(res.Notes, "the law is not monotone in u ("+s.nonMono+"): other solutions may exist; a sweep follows the branches")
		if res.Status == IterationLimit {
			res.Notes = append(res.Notes, "such a law may have no steady solution at all past a fold (thermal runaway): a sweep in a parameter finds the fold")
		}
	}
	return res
}

// lineSearch tries z + t·δ for t = 1, 1/2, … (Armijo condition on the
// residual norm, or a scaled residual below tol) and leaves the accepted
// state evaluated in s. The full step is formed and evaluated in one pass
// (evalStep); only a shorter step needs δ's interior part stored. It reports the step, whether one was accepted, and
// the law error of the last trial if every trial failed on one.
func (s *nlSystem) lineSearch(merit0, tol float64) (float64, bool, error) {
	const minStep = 1.0 / (1 << 20)
	var lastErr error
	for t := 1.0; t >= minStep; t /= 2 {
		var err error
		if t == 1 && s.pending {
			// The full step, formed and evaluated edge by edge.
			err = s.evalStep()
		} else {
			s.materialize()
			for i := range s.U {
				s.tU[i] = s.U[i] + t*s.dU[i]
			}
			for i := range s.w {
				s.tw[i] = s.w[i] + t*s.dw[i]
			}
			err = s.eval(s.tU, s.tw)
		}
		if err != nil {
			var ce *CanceledError
			if errors.As(err, &ce) {
				return 0, false, err
			}
			lastErr = err
			continue
		}
		lastErr = nil
		m := s.merit()
		if m <= (1-1e-4*t)*merit0 || m == 0 {
			s.pending = false
			s.U, s.tU = s.tU, s.U
			s.w, s.tw = s.tw, s.w
			return t, true, nil
		}
		if t == 1 {
			// A full step that lands within the tolerance is accepted even
			// when round-off keeps the norm from falling.
			if err := s.prepare(s.tU, s.tw); err == nil && s.scaledResidual() <= tol {
				s.pending = false
				s.U, s.tU = s.tU, s.U
				s.w, s.tw = s.tw, s.w
				return t, true, nil
			}
		}
	}
	// Restore the evaluation at the current state.
	if err := s.eval(s.U, s.w); err != nil {
		return 0, false, err
	}
	return 0, false, lastErr
}

// singularPivot is the LawError of a zero pivot inside a grid edge.
func singularPivot(id string, x, u, piv float64) *LawError {
	return &LawError{Object: "edge", ID: id, X: x, U: u, Quantity: "pivot", Value: piv, Want: "non-zero",
		Why: "the Jacobian is singular: a fold or a degenerate law"}
}
