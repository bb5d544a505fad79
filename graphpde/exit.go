package graphpde

import (
	"context"
	"errors"
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/internal/laplace"
	"github.com/ramify-dev/ramify/vertex"
)

// ExitSettings controls ExitStatistics. The zero value (or a nil pointer)
// gives the defaults.
type ExitSettings struct {
	// Method chooses the edge elements as for a steady solve: MethodAuto
	// (the zero value) uses the exact path when every edge of the start's
	// component has constant coefficients and the grid path otherwise;
	// MethodExact refuses varying edges; MethodGrid forces the grid path.
	Method Method
	// Cells is the number of grid cells of an edge whose Edge.Cells is 0 on
	// the grid path; 0 means DefaultCells.
	Cells int
	// Times are the times t ≥ 0 at which the survival function P(τ > t) is
	// reported in ExitStats.Survival. Nil means none.
	Times []float64
	// Quantiles are the probabilities p, 0 < p < 1, whose lifetime quantiles
	// (P(τ ≤ T) = p) are reported. Nil means 0.1, 0.25, 0.5, 0.75, 0.9; an
	// empty non-nil slice means none.
	Quantiles []float64
	// Moments is the number of moments E τ, E τ², … to compute. Zero (or 1)
	// means 2, the least that gives the standard deviation.
	Moments int
	// InversionNodes is the number of Talbot nodes per octave of times
	// (each one complex node-system solve); the transform values of an
	// octave serve every time in it. Zero means laplace.DefaultWindowM (32,
	// inversion error about 1e−11), and for a reversible walker whose
	// lifetime has a coefficient of variation of at least 0.5 one contour
	// of laplace.WideWindowM (40) nodes per two octaves instead (error
	// about 5e−12; docs/exit-statistics.md §7). A non-reversible walker (drift or
	// skewed weights around a cycle) costs at least twice that: every
	// octave is checked on a second contour (and taller contours of 48 and
	// 64 nodes are tried while the two disagree).
	InversionNodes int
	// general makes the exact path evaluate the transform by the general
	// node-system factorisation and invert it on octave windows, as before
	// the tree pass and the wide windows (tests compare the two).
	general bool
	// wideAnyCV lets wide windows serve whatever the coefficient of
	// variation (tests of the fallback).
	wideAnyCV bool
	// Context, when not nil, stops the statistics early: every evaluation
	// of the Laplace transform of τ (a complex node-system factorisation on
	// the exact path, a grid solve on the grid path) first checks it, and
	// ExitStatistics, or a later SurvivalAt, then returns an error that
	// wraps ctx.Err(). Nil means no cancellation.
	Context context.Context
}

// TimeProb is a value of the survival function: P(τ > T) = P.
type TimeProb struct{ T, P float64 }

// Quantile is a quantile of the lifetime: P(τ ≤ T) = P.
type Quantile struct{ P, T float64 }

// ExitStats are the statistics of the lifetime τ of a walker started at
// Start: the time until it is absorbed at a fixed node or killed by decay
// on an edge (rate c/ρ) or by the leak of a node. Times are in the units of
// the capacities ρ (docs/walkers.md §1).
type ExitStats struct {
	Start Point
	// Hit[v] is the probability of absorption at node v for a fixed node v
	// (0 for fixed nodes the walker cannot reach) and NaN for other nodes.
	Hit []float64
	// Killed is the probability of being killed before absorption,
	// 1 − Σ Hit.
	Killed float64
	// Moments[n−1] = E τⁿ, n = 1 … Settings.Moments. Moments beyond the
	// first and SD are NaN, with a note, when they could not be computed
	// reliably (a Cauchy integral that does not reproduce the mean, or
	// E τ² < (E τ)² beyond rounding).
	Moments  []float64
	Mean, SD float64
	// Occupation[e] is the expected time spent inside edge e before death.
	// The rest of the mean is held in node capacities.
	Occupation []float64
	// Survival holds P(τ > t) at Settings.Times, in their order; P is NaN
	// (with a note) where the inversion could not be verified, and every P
	// is NaN when the values are not non-increasing in t.
	Survival []TimeProb
	// Quantiles holds the lifetime quantiles, in the order of
	// Settings.Quantiles; NaN (with a note) like Survival.
	Quantiles []Quantile
	// HasDistribution reports whether the law of τ (Survival, Quantiles,
	// SurvivalAt) is available. It is true on both paths; on the grid path
	// the law comes from Gaver–Stehfest inversion with real shifts (about
	// 1e−5, plus the grid error) instead of Talbot contours (1e−11), and
	// Notes says so.
	HasDistribution bool
	// Notes explain what is unavailable and why, and any accuracy warning.
	Notes []string
	// Transforms is the number of values of the Laplace transform of τ
	// spent on moments, Survival and Quantiles (complex node-system solves
	// on the exact path, real grid solves on the grid path); later
	// SurvivalAt calls are not counted.
	Transforms int

	law *lifetimeLaw
}

// SurvivalAt returns P(τ > t) by numerical inversion of the Laplace
// transform of τ, clamped to [0, 1]; it is 1 for t ≤ 0 when the start is
// not absorbing. On the exact path the inversion uses Talbot contours, one
// per octave of t (absolute error about 1e−11): the first call in an octave
// [M·2^k, M·2^{k+1}] (M the mean) costs InversionNodes complex node-system
// factorisations, O(edges) each on a tree, later calls in the same octave
// O(InversionNodes); where wide windows serve (see InversionNodes), one
// contour of 40 values per (M·4^k, M·4^{k+1}]. On the grid path each new t costs 16 grid solves
// (Gaver–Stehfest, about 1e−5). It is safe for concurrent use (calls are
// serialised). When the lifetime is nearly a delay (strong drift) the
// transform of τ − T_s is inverted instead (findDelay); the result is NaN
// where the inversion cannot be verified (contours that disagree, a value
// far outside [0, 1], a transform that overflows on the contour). It
// returns an error when HasDistribution is false or a transform evaluation
// fails.
func (x *ExitStats) SurvivalAt(t float64) (float64, error) {
	if x.law == nil {
		return 0, errors.New("the law of the lifetime is not available (see Notes)")
	}
	s, _, err := x.law.survival(t)
	if err != nil {
		return 0, err
	}
	return s, nil
}

// ExitError reports exit statistics that cannot be computed for this data.
// A failure of a solve (a *SingularNodeError, *UnanchoredError,
// *NonFiniteError, …) is kept in Err.
type ExitError struct {
	Start  string // the start point in network-file syntax
	Reason string
	Err    error // underlying error, or nil
}

func (e *ExitError) Error() string {
	if e.Err != nil {
		return fmt.Sprintf("exit statistics from %s: %s: %v", e.Start, e.Reason, e.Err)
	}
	return fmt.Sprintf("exit statistics from %s: %s", e.Start, e.Reason)
}

// Unwrap returns the underlying error.
func (e *ExitError) Unwrap() error { return e.Err }

// ExitStatistics computes the first-passage statistics of a walker started
// at start (docs/exit-statistics.md): absorption probabilities, killed fraction, mean
// and higher moments of the lifetime, expected occupation time of every
// edge, and the survival function and quantiles of the lifetime.
//
// On networks whose edges (in the start's component) all have constant
// coefficients every quantity is computed with exact edge elements, with
// one unknown per node:
//
//   - the steady statistics (hits, killed fraction, occupations, mean) from
//     one adjoint solve Kᵀw = e_start at s = 0, w being the expected local
//     time per node: each statistic is w·r for its own right-hand side r;
//     the mean is also solved forward and the two must agree;
//   - the Laplace transform L(s) = E e^{−sτ} at complex s from the node
//     system with decay c + sρ, leak β + sρ_v, value 1 at fixed nodes and
//     the killing paid as a reward (f = c, γ = β);
//   - the moments E τⁿ = (−1)ⁿ n! [sⁿ]L by the trapezoidal rule for the
//     Cauchy integral on a circle |s| = R, R half a lower bound of the
//     smallest decay rate (1/sup E τ), halved until the first moment agrees
//     with the steady mean;
//   - P(τ > t) by Talbot inversion of (1 − L(s))/s, one contour per octave
//     of times serving every t in it, and quantiles by a Newton iteration
//     safeguarded by a bracket (the density comes from the same contour
//     values). When the walker is not reversible (drift or skewed weights
//     around a cycle) the decay rates may be complex; every octave is then
//     also inverted on a second contour, on taller and finer ones (48 and
//     64 nodes) while the two disagree, and a disagreement that remains is
//     reported in Notes.
//
// When the unknowns joined to the start form a tree (fixed nodes cut
// cycles) each s costs one pass that assembles and eliminates towards the
// start, O(edges) with no matrix; otherwise a complex factorisation reuses
// the symbolic analysis, so each s costs one numeric factorisation.
// Reversible laws that are not sharply peaked (coefficient of variation
// ≥ 0.5) are inverted on contours of two octaves each.
//
// Edges with varying coefficients (or MethodGrid) take the grid path on the
// start's component: grid elements for every edge, one steady solve per
// fixed node for the hits, the moment hierarchy T_n with edge source
// nρT_{n−1}(x) and node injection nρ_vT_{n−1}(v), one solve per edge for the
// occupations (skipped with a note above a work budget), and the law of τ
// by Gaver–Stehfest inversion of the transform at real shifts (16 grid
// solves per time). These are second order in the cell size.
//
// Bad input (start off the network, times < 0, quantiles outside (0, 1), a
// component that never kills) gives an error; failures of a solve come as
// an *ExitError wrapping the solver's error.
func ExitStatistics(net *Network, start Point, set *ExitSettings) (*ExitStats, error) {
	x, err := exitStatistics(net, start, set)
	if err == nil && set != nil && set.Context != nil && set.Context.Err() != nil {
		// Stopped part-way: failed transforms became NaN values with notes.
		return nil, &ExitError{Start: net.PointString(start), Reason: "stopped", Err: set.Context.Err()}
	}
	return x, err
}

// exitStatistics is ExitStatistics without the final look at the context.
func exitStatistics(net *Network, start Point, set *ExitSettings) (*ExitStats, error) {
	var s ExitSettings
	if set != nil {
		s = *set
	}
	if err := checkStart(net, &start); err != nil {
		return nil, err
	}
	where := net.PointString(start)
	bad := func(format string, args ...any) error {
		return &ExitError{Start: where, Reason: fmt.Sprintf(format, args...)}
	}
	fail := func(what string, err error) error {
		return &ExitError{Start: where, Reason: what, Err: err}
	}
	for _, t := range s.Times {
		if !(t >= 0) || math.IsInf(t, 0) {
			return nil, bad("time %g must be a finite number ≥ 0", t)
		}
	}
	if s.Quantiles == nil {
		s.Quantiles = vertex.DefaultQuantiles()
	}
	for _, p := range s.Quantiles {
		if !(p > 0 && p < 1) {
			return nil, bad("quantile probability %g must lie in (0, 1)", p)
		}
	}
	switch {
	case s.Moments < 0:
		return nil, bad("number of moments %d must be ≥ 0", s.Moments)
	case s.Moments < 2:
		s.Moments = 2
	case s.Moments > 20:
		return nil, bad("number of moments %d: at most 20 are computed (the Cauchy integral loses all digits beyond)", s.Moments)
	}
	if s.InversionNodes == 0 {
		s.InversionNodes = laplace.DefaultWindowM
	}
	if s.InversionNodes < 4 {
		return nil, bad("inversion nodes %d must be ≥ 4", s.InversionNodes)
	}

	x := &ExitStats{
		Start:      start,
		Hit:        make([]float64, len(net.Nodes)),
		Occupation: make([]float64, len(net.Edges)),
		Moments:    make([]float64, s.Moments),
	}
	for v := range net.Nodes {
		if net.Nodes[v].Law.Kind != vertex.Fixed {
			x.Hit[v] = math.NaN()
		}
	}
	if start.Edge < 0 && net.Nodes[start.Node].Law.Kind == vertex.Fixed {
		// Absorbed at once: τ = 0.
		x.Hit[start.Node] = 1
		x.HasDistribution = true
		x.law = &lifetimeLaw{zero: true, m: s.InversionNodes}
		x.fillDistribution(&s)
		return x, nil
	}
	grid := s.Method == MethodGrid
	switch s.Method {
	case MethodAuto, MethodExact, MethodGrid:
	default:
		return nil, bad("unknown method %v", s.Method)
	}
	for e := range net.Edges {
		if !grid && !net.Edges[e].Constant() && inComponent(net, start, e) {
			if s.Method == MethodExact {
				return nil, bad("edge %q has coefficients that vary along it: method exact needs constant ones (use auto or grid)", net.Edges[e].ID)
			}
			grid = true
		}
	}
	if grid {
		if s.Cells < 0 {
			return nil, bad("cells = %d must be ≥ 0", s.Cells)
		}
		if err := x.gridStatistics(net, start, &s); err != nil {
			return nil, fail("grid path", err)
		}
		if err := x.law.findDelay(x.Mean); err != nil {
			return nil, fail("lifetime distribution", err)
		}
		x.HasDistribution = true
		if err := x.fillDistribution(&s); err != nil {
			return nil, fail("lifetime distribution", err)
		}
		return x, nil
	}
	sys, err := newExitSystem(net, start)
	if err != nil {
		return nil, fail("component of the start", err)
	}
	if !sys.anchored {
		return nil, bad("its component has no fixed node, leak or decay, so the walker never dies")
	}
	if err := x.steady(sys); err != nil {
		return nil, fail("steady adjoint problem", err)
	}
	T1, err := sys.steadyMean()
	if err != nil {
		return nil, fail("steady mean problem", err)
	}
	if d := math.Abs(T1[sys.start] - x.Mean); d > adjointAgreement*x.Mean {
		x.Notes = append(x.Notes, fmt.Sprintf("forward and adjoint mean differ by %.2g (relative): ill-conditioned node system", d/x.Mean))
	}
	x.Mean = T1[sys.start]
	if x.Mean == 0 {
		// Only an isolated node with a leak and no capacity: killed at once.
		x.Killed = 1
		x.HasDistribution = true
		x.law = &lifetimeLaw{zero: true}
		x.fillDistribution(&s)
		return x, nil
	}
	tr := newTransformer(sys)
	tr.ctx = s.Context
	if s.general {
		tr.useGeneral()
	}
	x.law = &lifetimeLaw{tr: tr, m: s.InversionNodes, base: x.Mean, check: !sys.reversible}
	if err := x.moments(sys.supMean(T1)); err != nil {
		// The transform near s = 0 is a complex node system, factored
		// without the one-sign pivots of the steady solve: on a nearly
		// decoupled network it can fail where the mean did not.
		for k := 1; k < len(x.Moments); k++ {
			x.Moments[k] = math.NaN()
		}
		x.Moments[0], x.SD = x.Mean, math.NaN()
		x.Notes = append(x.Notes, fmt.Sprintf("moments beyond the mean and the standard deviation are not reported (NaN): %v", err))
	}
	// Two octaves per contour where the law is spread enough for it
	// (wideMinCV); the default number of nodes only.
	x.law.wide = sys.reversible && (set == nil || set.InversionNodes == 0) && !s.general && (x.SD >= wideMinCV*x.Mean || s.wideAnyCV)
	if err := x.law.findDelay(x.Mean); err != nil {
		x.law.delay, x.law.chernoff = 0, nil // invert without a shift; windows that fail are NaN
	}
	x.HasDistribution = true
	notes := len(x.Notes)
	if err := x.fillDistribution(&s); err != nil {
		return nil, fail("lifetime distribution", err)
	}
	if lw := x.law; lw.wide && lw.wideGap > wideAgreement {
		// Two wide windows disagree where they meet: start again on
		// octave windows.
		lw.wide, lw.win, lw.points, lw.suspects, lw.worst, lw.evalErr = false, nil, nil, nil, 0, nil
		x.Notes = x.Notes[:notes]
		if err := x.fillDistribution(&s); err != nil {
			return nil, fail("lifetime distribution", err)
		}
	}
	x.Transforms = x.law.tr.n
	if len(x.law.suspects) > 0 {
		why := "drift or skewed weights around a cycle give complex decay rates that the Talbot contours do not enclose"
		if x.law.delay > 0 {
			why = "the lifetime is nearly a delay (strong drift) and the inversion of the shifted transform could not be verified"
		}
		if x.law.evalErr != nil {
			why = "the transform could not be evaluated on the contour (" + x.law.evalErr.Error() + ")"
		}
		x.Notes = append(x.Notes, fmt.Sprintf("the law of τ is unreliable for t in %v and is not reported there (NaN): %s (contours disagree by up to %.2g)", x.law.suspectTimes(), why, x.law.worst))
	}
	return x, nil
}

// wideMinCV is the smallest coefficient of variation SD/mean of the
// lifetime for which the law is inverted on wide windows
// (laplace.TalbotWideWindow, two octaves per contour): their test pairs are
// smooth, and on the sharply peaked laws of a strongly drifting walker
// they lose accuracy first. Measured on one drifting edge against
// octave windows (derived from that measurement, no source): the same
// error (3e−10) down to CV 0.32, 4e−9 at CV 0.27, 1e−6 at CV 0.2; 0.5
// keeps a margin. The random trees of the benchmarks have CV ≈ 1–1.6.
const wideMinCV = 0.5

// adjointAgreement is the relative difference allowed between the mean from
// the adjoint (w·r) and from the forward solve: both are the same linear
// algebra on a well-conditioned system, so they agree to rounding amplified
// by the condition number; 1e−8 flags a condition number near 1e8.
const adjointAgreement = 1e-8

// checkStart validates p and turns a point at the end of an edge into its
// node.
func checkStart(net *Network, p *Point) error {
	if err := net.CheckPoint(*p); err != nil {
		return fmt.Errorf("exit statistics: start: %w", err)
	}
	if p.Edge >= 0 {
		e := &net.Edges[p.Edge]
		switch p.X {
		case 0:
			*p = vertex.AtNode(e.From)
		case e.Length:
			*p = vertex.AtNode(e.To)
		}
	}
	return nil
}

// inComponent reports whether edge e is in the component of p. It is called
// only for the (rare) non-constant edges.
func inComponent(net *Network, p Point, e int) bool {
	comp, _ := net.Components()
	v := p.Node
	if p.Edge >= 0 {
		v = net.Edges[p.Edge].From
	}
	return comp[net.Edges[e].From] == comp[v]
}

// steady fills Hit, Killed, Occupation and Mean from one adjoint solve.
func (x *ExitStats) steady(sys *exitSystem) error {
	ad, err := sys.steadyAdjoint()
	if err != nil {
		return err
	}
	var mean, hitSum float64
	for k := range sys.el {
		el := &sys.el[k]
		occ := el.rho * ad.load(sys, el)
		x.Occupation[el.orig] += occ
		mean += occ
		hf, ht := ad.hitInto(sys, el)
		if hf != 0 {
			x.Hit[sys.orig[el.from]] += hf
		}
		if ht != 0 {
			x.Hit[sys.orig[el.to]] += ht
		}
		hitSum += hf + ht
	}
	for v, l := range sys.law {
		if l.Kind == vertex.Balance {
			mean += l.Capacity * ad.at(sys, v)
		}
	}
	x.Mean = mean
	x.Killed = math.Max(0, 1-hitSum)
	return nil
}
