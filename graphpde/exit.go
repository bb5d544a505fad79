package graphpde

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sync"

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
	// inversion error about 1e−11). A non-reversible walker (drift or
	// skewed weights around a cycle) costs at least twice that: every
	// octave is checked on a second contour (and taller contours of 48 and
	// 64 nodes are tried while the two disagree).
	InversionNodes int
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
// O(InversionNodes). On the grid path each new t costs 16 grid solves
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
// A complex factorisation reuses the symbolic analysis, so each s costs one
// numeric factorisation, O(edges) on a tree.
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
	x.law = &lifetimeLaw{tr: newTransformer(sys), m: s.InversionNodes, base: x.Mean, check: !sys.reversible}
	if err := x.moments(sys.supMean(T1)); err != nil {
		return nil, fail("moments", err)
	}
	if err := x.law.findDelay(x.Mean); err != nil {
		return nil, fail("lifetime distribution", err)
	}
	x.HasDistribution = true
	if err := x.fillDistribution(&s); err != nil {
		return nil, fail("lifetime distribution", err)
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

// cauchyNodes is the number of points on the Cauchy circle (half of them
// solved, by conjugate symmetry). The aliasing error of the n-th Taylor
// coefficient is about (R/λ₁)^N ≤ 2^{−N} relative, λ₁ the smallest decay
// rate: 2^{−32} ≈ 2e−10.
const cauchyNodes = 32

// momentAgreement is the relative agreement required between the first
// moment from the Cauchy integral and the steady mean: the aliasing bound
// 2e−10 with a margin for rounding.
const momentAgreement = 1e-8

// moments fills Moments and SD from Taylor coefficients of L at s = 0.
func (x *ExitStats) moments(sup float64) error {
	n := len(x.Moments)
	N := cauchyNodes
	if n > 8 {
		N = 64
	}
	R := 0.5 / sup
	var coef []float64
	for try := 0; try < 6; try++ {
		var err error
		coef, err = x.law.taylor(R, N, n)
		if err != nil {
			return err
		}
		if math.Abs(-coef[1]-x.Mean) <= momentAgreement*x.Mean {
			break
		}
		if try == 5 {
			x.Notes = append(x.Notes, fmt.Sprintf("moments: the Cauchy integral did not reproduce the mean (%.10g vs %.10g); the higher moments and the standard deviation are not reported (NaN)", -coef[1], x.Mean))
			for k := 1; k < n; k++ {
				x.Moments[k] = math.NaN()
			}
			x.Moments[0] = x.Mean
			x.SD = math.NaN()
			return nil
		}
		R /= 4
	}
	fact := 1.0
	for k := 1; k <= n; k++ {
		fact *= float64(k)
		m := fact * coef[k]
		if k%2 == 1 {
			m = -m
		}
		x.Moments[k-1] = m
	}
	x.Moments[0] = x.Mean
	x.setSD(momentAgreement)
	return nil
}

// setSD sets SD from the first two moments, or NaN with a note when
// E τ² < (E τ)² beyond the relative accuracy rel of the moments (rounding
// can make a tiny variance slightly negative, which is reported as 0).
func (x *ExitStats) setSD(rel float64) {
	m1, m2 := x.Moments[0], x.Moments[1]
	v := m2 - m1*m1
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		x.SD = math.NaN()
		for k := 1; k < len(x.Moments); k++ {
			if math.IsInf(x.Moments[k], 0) {
				x.Moments[k] = math.NaN()
			}
		}
		x.Notes = append(x.Notes, fmt.Sprintf("moments: E τ² = %g is not a finite float64 (mean %g), so the standard deviation is not reported (NaN)", m2, m1))
	case v >= 0:
		x.SD = math.Sqrt(v)
	case -v <= 4*rel*m2:
		x.SD = 0
	default:
		x.SD = math.NaN()
		for k := 1; k < len(x.Moments); k++ {
			x.Moments[k] = math.NaN()
		}
		x.Notes = append(x.Notes, fmt.Sprintf("moments: E τ² = %.6g is below (E τ)² = %.6g, so the higher moments and the standard deviation are not reported (NaN)", m2, m1*m1))
	}
}

// fillDistribution fills Survival and Quantiles, then checks what no
// correct law can violate: P(τ > t) non-increasing in t and quantiles
// non-decreasing in p (values are in [0, 1] by survival). A violation
// beyond the inversion's accuracy turns the whole list into NaN with a
// note.
func (x *ExitStats) fillDistribution(s *ExitSettings) error {
	x.Survival = make([]TimeProb, len(s.Times))
	for i, t := range s.Times {
		p, _, err := x.law.survival(t)
		if err != nil {
			return err
		}
		x.Survival[i] = TimeProb{T: t, P: p}
	}
	x.Quantiles = make([]Quantile, len(s.Quantiles))
	for i, p := range s.Quantiles {
		t, err := x.law.quantile(p, x.Mean)
		if err != nil {
			return err
		}
		x.Quantiles[i] = Quantile{P: p, T: t}
	}
	var nanT, nanP []float64
	for _, sp := range x.Survival {
		if math.IsNaN(sp.P) {
			nanT = append(nanT, sp.T)
		}
	}
	for _, q := range x.Quantiles {
		if math.IsNaN(q.T) {
			nanP = append(nanP, q.P)
		}
	}
	if len(nanT)+len(nanP) > 0 {
		x.Notes = append(x.Notes, fmt.Sprintf("the Laplace inversion could not be verified for P(τ > t) at t = %v and the quantiles %v (the law is too sharp or has complex decay rates there): those are not reported (NaN)", nanT, nanP))
	}
	tol := x.law.tolerance()
	for i := range x.Survival {
		for j := range x.Survival {
			a, b := x.Survival[i], x.Survival[j]
			if a.T < b.T && a.P < b.P-tol {
				x.Notes = append(x.Notes, fmt.Sprintf("P(τ > t) from the Laplace inversion increases from t = %g to %g (%.6g to %.6g): the survival values are not reported (NaN)", a.T, b.T, a.P, b.P))
				for k := range x.Survival {
					x.Survival[k].P = math.NaN()
				}
				break
			}
		}
	}
	for i := range x.Quantiles {
		for j := range x.Quantiles {
			a, b := x.Quantiles[i], x.Quantiles[j]
			if a.P < b.P && a.T > b.T*(1+tol) {
				x.Notes = append(x.Notes, fmt.Sprintf("the quantiles from the Laplace inversion are out of order (%g: %.6g, %g: %.6g): they are not reported (NaN)", a.P, a.T, b.P, b.T))
				for k := range x.Quantiles {
					x.Quantiles[k].T = math.NaN()
				}
				break
			}
		}
	}
	return nil
}

// delayMass is the probability the shifted inversion may ignore: the
// lifetime is below the delay T_s with at most this probability, and
// P(τ > t) is reported as 1 for t ≤ T_s.
const delayMass = 1e-14

// minDelay is the delay, relative to the mean, from which the inversion is
// shifted: below it the law is not delay-like and the plain contours work.
const minDelay = 0.25

// findDelay finds a time T_s below which the lifetime lies with probability
// at most delayMass, by the Chernoff bound P(τ ≤ T) ≤ e^{sT}·E e^{−sτ} for
// every s > 0 (derived from Markov's inequality applied to e^{−sτ}):
//
//	T_s = max_s (ln delayMass − ln L(s))/s
//
// over s = 2^k/mean, k = 0 … 40 (L at real s; the maximum of this unimodal
// function is approached from below, so a coarse lattice only gives a
// smaller, still valid T_s). With a strong drift towards the exit the
// lifetime is nearly a delay (inverse Gaussian with a small coefficient of
// variation: T_s ≈ mean − 6.5 sd at Péclet number 500) and L(s) ≈ e^{−s·mean}
// for moderate s, which no contour of fixed shape inverts in float64
// (e^{s(t − mean)} grows on the left half of the contour for t < mean).
// When T_s ≥ minDelay·mean, the law is inverted for τ − T_s instead: the
// transform e^{sT_s}L(s), times t − T_s, and octave windows from
// mean − T_s; every window is then also checked on a second contour.
func (lw *lifetimeLaw) findDelay(mean float64) error {
	if lw.zero || !(mean > 0) || math.IsInf(mean, 0) {
		return nil
	}
	logEps := math.Log(delayMass)
	best := math.Inf(-1)
	down := 0
	for k := 0; k <= 40; k++ {
		s := math.Exp2(float64(k)) / mean
		L, err := lw.realValue(s)
		if err != nil {
			return err
		}
		if !(L > 1e-280) || L > 1 {
			break
		}
		lw.chernoff = append(lw.chernoff, [2]float64{s, math.Log(L)})
		phi := (logEps - math.Log(L)) / s
		if phi > best {
			best, down = phi, 0
		} else if best > 0 {
			if down++; down == 3 {
				break
			}
		}
	}
	if best >= minDelay*mean && best < mean {
		lw.delay = best
		lw.base = mean - best
		lw.check = true
	}
	return nil
}

// realValue returns L(s) at a real s > 0 on either path. The caller must
// not hold lw.mu.
func (lw *lifetimeLaw) realValue(s float64) (float64, error) {
	lw.mu.Lock()
	defer lw.mu.Unlock()
	if lw.real != nil {
		return lw.real(s)
	}
	v, err := lw.tr.at(complex(s, 0))
	return real(v), err
}

// shifted returns e^{s·delay}·L, the transform of τ − delay, without
// overflow (L = 0 stays 0: the mass the shift ignores is below delayMass).
func (lw *lifetimeLaw) shifted(s, L complex128) complex128 {
	if lw.delay == 0 {
		return L
	}
	if L == 0 {
		return 0
	}
	return cmplx.Exp(s*complex(lw.delay, 0) + cmplx.Log(L))
}

// tolerance is the accuracy of the inversion, with a margin: what the
// consistency checks of fillDistribution allow.
func (lw *lifetimeLaw) tolerance() float64 {
	if lw.real != nil {
		return stehfestQuantileTol * 50
	}
	return 1e-7
}

// suspectTimes returns the windows whose contours disagree, in times of τ.
func (lw *lifetimeLaw) suspectTimes() [][2]float64 {
	out := make([][2]float64, len(lw.suspects))
	for i, w := range lw.suspects {
		out[i] = [2]float64{w[0] + lw.delay, w[1] + lw.delay}
	}
	return out
}

// lifetimeLaw evaluates the law of τ from its Laplace transform. Times are
// grouped in octaves [base·2^k, base·2^{k+1}]; each octave gets one Talbot
// window contour whose transform values are computed once (m complex
// solves) and reused for every t in it, so the survival function and its
// density are cheap after the first call in an octave and do not depend on
// the order of calls.
//
// On the grid path real is set instead of tr: L(s) at real s, inverted by
// the Gaver–Stehfest formula with weights stehfest, results cached per t.
type lifetimeLaw struct {
	mu   sync.Mutex
	zero bool // τ = 0 a.s. (start at a fixed node)
	tr   *transformer
	m    int     // nodes per window
	base float64 // octave origin (the mean lifetime)
	win  map[int]*lawWindow

	real     func(s float64) (float64, error)
	stehfest []float64
	// stehfestCheck are the weights of a shorter Gaver–Stehfest sum on the
	// first of the same shifts: where the two differ by more than
	// stehfestAgreement the law is too sharp for the method and the value
	// is NaN.
	stehfestCheck []float64
	cache         map[float64][2]float64

	// check: evaluate every window also on a check contour, climbing the
	// levels of laplace.TalbotWindowLevel until the two agree, and record
	// where they never do (non-reversible problems only).
	check    bool
	suspects [][2]float64 // windows [t0, 2t0] whose contours disagree (times of τ − delay)
	worst    float64      // largest disagreement seen

	// delay is T_s of findDelay (0 when not shifted): the law is inverted
	// for τ − delay.
	delay float64
	// evalErr is the first failure of a transform evaluation on a
	// contour (its window is then not reported).
	evalErr error
	// chernoff holds (s, ln L(s)) at the real shifts findDelay evaluated:
	// P(τ ≤ t) ≤ min e^{st + ln L(s)} (see leftTail).
	chernoff [][2]float64
}

// leftTailTol is the probability below which leftTail reports P(τ > t) = 1:
// the accuracy of the Talbot inversion (about 1e−11) with a margin.
const leftTailTol = 1e-10

// leftTail reports whether the Chernoff bound of findDelay puts
// P(τ ≤ t) below leftTailTol, so that P(τ > t) = 1 to that accuracy
// without an inversion (far in the left tail the shifted transform is
// needed at |s| so large that its values lose their digits).
func (lw *lifetimeLaw) leftTail(t float64) bool {
	lt := math.Log(leftTailTol)
	for _, c := range lw.chernoff {
		if c[0]*t+c[1] <= lt {
			return true
		}
	}
	return false
}

// contourAgreement is the largest difference between the window and check
// contours accepted as agreement: the check contours' own errors (at most
// 4e−8, laplace.TalbotWindowLevel) with a margin.
const contourAgreement = 2e-7

// lawWindow holds one octave's contour and the values of L(s) and
// (1 − L(s))/s at its nodes.
type lawWindow struct {
	c      laplace.Contour
	fl, fs []complex128
	bad    bool // the check contour disagrees: values here are not reported
}

// window returns the octave window that contains t > 0, computing it if
// needed. The caller holds lw.mu.
func (lw *lifetimeLaw) window(t float64) (*lawWindow, error) {
	k := int(math.Floor(math.Log2(t / lw.base)))
	t0 := lw.base * math.Exp2(float64(k))
	for t < t0 {
		k--
		t0 = lw.base * math.Exp2(float64(k))
	}
	for t > 2*t0 {
		k++
		t0 = lw.base * math.Exp2(float64(k))
	}
	if w, ok := lw.win[k]; ok {
		return w, nil
	}
	if !lw.check {
		w, err := lw.evalWindow(laplace.TalbotWindow(t0, 2*t0, lw.m))
		if err != nil {
			return nil, err
		}
		if w.bad {
			lw.suspects = append(lw.suspects, [2]float64{t0, 2 * t0})
		}
		lw.store(k, w)
		return w, nil
	}
	// Non-reversible: climb the levels until the window and check contours
	// agree.
	var w *lawWindow
	var d float64
	for level := range laplace.WindowLevels {
		c, cc := laplace.TalbotWindowLevel(t0, 2*t0, level)
		var err error
		if w, err = lw.evalWindow(c); err != nil {
			return nil, err
		}
		wc, err := lw.evalWindow(cc)
		if err != nil {
			return nil, err
		}
		if w.bad || wc.bad {
			d = math.Inf(1)
			continue
		}
		d = 0
		for _, tt := range []float64{t0, t0 * math.Sqrt2, 2 * t0} {
			d = math.Max(d, math.Abs(w.c.Apply(tt, w.fs)-wc.c.Apply(tt, wc.fs)))
		}
		if d <= contourAgreement {
			break
		}
	}
	lw.worst = math.Max(lw.worst, d)
	if d > contourAgreement {
		lw.suspects = append(lw.suspects, [2]float64{t0, 2 * t0})
		w.bad = true
	}
	lw.store(k, w)
	return w, nil
}

// evalWindow evaluates the transform at the nodes of c. The caller holds
// lw.mu.
func (lw *lifetimeLaw) evalWindow(c laplace.Contour) (*lawWindow, error) {
	w := &lawWindow{c: c, fl: make([]complex128, len(c.S)), fs: make([]complex128, len(c.S))}
	for j, s := range c.S {
		L, err := lw.tr.at(s)
		if err != nil {
			// Contours reach far into the left half plane (the more so
			// for the shifted inversion), where the transform may
			// overflow or the shifted node system be singular: the
			// window is not reported, and the first such error is
			// kept for the note.
			w.bad = true
			if lw.evalErr == nil {
				lw.evalErr = err
			}
			return w, nil
		}
		L = lw.shifted(s, L)
		w.fl[j] = L
		w.fs[j] = (1 - L) / s
	}
	return w, nil
}

func (lw *lifetimeLaw) store(k int, w *lawWindow) {
	if lw.win == nil {
		lw.win = make(map[int]*lawWindow)
	}
	lw.win[k] = w
}

// taylor returns the Taylor coefficients c_0 … c_n of L at 0 from N points
// on the circle |s| = R: c_k ≈ (1/N) Σ_j L(R ω^j) ω^{−jk} / R^k, ω = e^{2πi/N}.
// L(conj s) = conj L(s) halves the solves.
func (lw *lifetimeLaw) taylor(R float64, N, n int) ([]float64, error) {
	lw.mu.Lock()
	defer lw.mu.Unlock()
	vals := make([]complex128, N)
	for j := 0; j <= N/2; j++ {
		s := cmplx.Rect(R, 2*math.Pi*float64(j)/float64(N))
		if j == 0 {
			s = complex(R, 0)
		} else if 2*j == N {
			s = complex(-R, 0)
		}
		v, err := lw.tr.at(s)
		if err != nil {
			return nil, err
		}
		vals[j] = v
		if j > 0 && 2*j < N {
			vals[N-j] = cmplx.Conj(v)
		}
	}
	coef := make([]float64, n+1)
	for k := 0; k <= n; k++ {
		var sum complex128
		for j, v := range vals {
			sum += v * cmplx.Rect(1, -2*math.Pi*float64(j*k%N)/float64(N))
		}
		coef[k] = real(sum) / float64(N) / math.Pow(R, float64(k))
	}
	return coef, nil
}

// survival returns P(τ > t), clamped to [0, 1], and the density of τ at t.
func (lw *lifetimeLaw) survival(t float64) (S, dens float64, err error) {
	if lw.zero {
		return 0, 0, nil
	}
	if t <= lw.delay || (lw.delay > 0 && lw.leftTail(t)) {
		return 1, 0, nil
	}
	t -= lw.delay
	lw.mu.Lock()
	defer lw.mu.Unlock()
	if lw.real != nil {
		return lw.stehfestAt(t)
	}
	w, err := lw.window(t)
	if err != nil {
		return math.NaN(), math.NaN(), err
	}
	if w.bad {
		return math.NaN(), math.NaN(), nil
	}
	S = w.c.Apply(t, w.fs)
	if S < -clampSlack || S > 1+clampSlack {
		// Far outside [0, 1]: the inversion failed here.
		return math.NaN(), math.NaN(), nil
	}
	S = math.Min(1, math.Max(0, S))
	return S, w.c.Apply(t, w.fl), nil
}

// quantileTol is the accuracy of a quantile search in probability with
// Talbot inversion: a hundred times its error (1e−11); below it there is
// nothing left to gain. stehfestQuantileTol is the same for the grid path,
// whose Gaver–Stehfest inversion is good to about 1e−5 and whose values
// carry rounding noise of about 1e−5 (the grid transform's rounding, 1e−13,
// times weights of up to 1e8; measured), so that a finer search only
// bisects noise. quantileWidth is the relative width of the bracket at which
// the search stops in any case.
const (
	// clampSlack is how far outside [0, 1] an inverted P(τ > t) may fall
	// and still be clamped (the Talbot error is about 1e−11; Gaver–Stehfest
	// about 1e−5); beyond it the value is NaN.
	clampSlack         = 1e-6
	stehfestClampSlack = 1e-3
	// stehfestAgreement: Gaver–Stehfest with 16 and with stehfestCheckN
	// terms differ by about 1e−4 on smooth laws (measured on the grid
	// tests); a larger difference means the law is too sharp (strong drift)
	// for real-axis inversion.
	stehfestAgreement   = 1e-3
	stehfestCheckN      = 12
	quantileTol         = 1e-9
	stehfestQuantileTol = 2e-5
	quantileWidth       = 1e-12
	stehfestWidth       = 1e-7
)

// quantile returns T with P(τ ≤ T) = p, 0 < p < 1, for a lifetime of the
// given mean. The root is bracketed on the lattice mean·2^k (whose values
// are shared among quantiles: the Talbot windows are the octaves of the same
// lattice, and the Gaver–Stehfest values are cached), then found by Newton
// steps with the density where they stay inside the bracket and bisection
// in log t otherwise.
func (lw *lifetimeLaw) quantile(p, mean float64) (float64, error) {
	if lw.zero {
		return 0, nil
	}
	tol, width := quantileTol, quantileWidth
	if lw.real != nil {
		tol, width = stehfestQuantileTol, stehfestWidth
	}
	y := 1 - p
	lo, hi := mean, mean
	// surv is lw.survival; a NaN (an unverified inversion) ends the search
	// with a NaN quantile.
	errNaN := errors.New("NaN")
	surv := func(t float64) (float64, float64, error) {
		S, d, err := lw.survival(t)
		if err == nil && math.IsNaN(S) {
			err = errNaN
		}
		return S, d, err
	}
	q, err := func() (float64, error) {
		slo, _, err := surv(mean)
		if err != nil {
			return 0, err
		}
		shi := slo
		const maxOctaves = 200 // t from mean·2^−200 to mean·2^200
		if slo > y {
			for k := 1; shi > y; k++ {
				if k > maxOctaves {
					return 0, fmt.Errorf("quantile %g: P(τ > t) stays above %g up to t = %g", p, y, hi)
				}
				lo, slo = hi, shi
				hi = mean * math.Exp2(float64(k))
				if shi, _, err = surv(hi); err != nil {
					return 0, err
				}
			}
		} else {
			for k := 1; slo <= y; k++ {
				if k > maxOctaves {
					return 0, fmt.Errorf("quantile %g: P(τ > t) stays below %g down to t = %g", p, y, lo)
				}
				hi, shi = lo, slo
				lo = mean * math.Exp2(-float64(k))
				if slo, _, err = surv(lo); err != nil {
					return 0, err
				}
			}
		}
		// Start from linear interpolation in log t.
		t := math.Exp(math.Log(lo) + (slo-y)/(slo-shi)*math.Log(hi/lo))
		for it := 0; it < 100; it++ {
			st, ft, err := surv(t)
			if err != nil {
				return 0, err
			}
			if math.Abs(st-y) <= tol {
				return t, nil
			}
			if st > y {
				lo = t
			} else {
				hi = t
			}
			if hi-lo <= width*hi {
				return t, nil
			}
			next := t + (st-y)/ft
			if !(ft > 0) || !(next > lo && next < hi) {
				next = math.Sqrt(lo * hi)
			}
			t = next
		}
		return t, nil
	}()
	if err == errNaN {
		return math.NaN(), nil
	}
	return q, err
}
