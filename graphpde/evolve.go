package graphpde

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// EvolveSettings controls Evolve. Until is required; the zero value of
// every other field means its default.
type EvolveSettings struct {
	// Until is the final time T > 0.
	Until float64
	// Every is the spacing of the output times 0, Every, 2·Every, …, T;
	// 0 means the times of the accepted steps (grid method) or 100
	// equal intervals (exact method).
	Every float64
	// Probes are the points whose values are recorded at the output times.
	Probes []Point
	// Fields keeps the whole field at every output time (Snapshots).
	Fields bool
	// Method: MethodAuto and MethodGrid step the finite-volume grid in time
	// (TR-BDF2, adaptive); MethodExact inverts the Laplace transform of the
	// exact elements (constant coefficients; probes only).
	Method Method
	// Cells is the number of grid cells of an edge whose Edge.Cells is 0;
	// 0 means DefaultCells.
	Cells int
	// Tol is the tolerance of the adaptive steps, for the error of the time
	// stepping accumulated up to any time (not the grid's own error): the
	// estimated local error of a step of size h is kept below
	// Tol·max(h/T, 1/200)·(|u| + scale) in the root mean square over the
	// unknowns, scale the largest |u| of the initial and fixed values (1 if
	// all are 0), so that the local errors add up to about Tol. 0 means 1e-4.
	Tol float64
	// Step, when > 0, switches adaptivity off: every step has this size
	// (shortened to land on output times). For convergence studies.
	Step float64
	// Crossing, when in (0, 1), asks for the first time at which each probe
	// has covered that fraction of the way from its initial value to its
	// steady value (the steady state with the data as they are at Until).
	Crossing float64
	// MaxGridUnknowns bounds the unknowns of the grid (0: DefaultMaxGridUnknowns).
	MaxGridUnknowns int
	// Forward solves for where a tracer is instead of for the field
	// (docs/time-and-spectrum.md §3): the concentration q per unit
	// capacity of walkers released into the network, which obeys
	//
	//	∂_t(ρ q) = ∂_x(a ∂_x q − b q) − c q
	//
	// with the total flux conserved at the nodes, a q/α the same on every
	// edge at a node (a point mass ρ_v·that value at a node with capacity),
	// and q = 0 at fixed (absorbing) nodes. Sources and injections are not
	// used. The initial concentration is the network's initial field, or
	// a unit amount at Release. Grid method only.
	Forward bool
	// Release, with Forward, puts a unit amount of tracer at this point at
	// t = 0 (at the nearest grid vertex) instead of the initial field.
	Release *Point
	// Context stops the run early (Status IterationLimit, the output so far
	// kept). nil means never.
	Context context.Context
	// Progress, when non-nil, is called with the time reached and T after
	// steps, at most a few hundred times per run.
	Progress func(t, until float64)

	// general steps the network by the general stepper even where the
	// linear or the quasilinear one would do (tests compare them).
	general bool
}

// fieldSystem is what the stepping loop reads of a discretisation: the
// initial field and the values of a field at points and along edges.
type fieldSystem interface {
	initial(u []float64) (nodeVals []float64)          // u(0); the node values
	at(u []float64, p Point, t float64) float64        // value at a point
	edgeField(u []float64, e int, t float64) []float64 // values at the grid vertices
}

// Snapshot is the whole field at one output time: the node values and the
// values at the grid vertices of every edge (x_i = i·Length/cells).
type Snapshot struct {
	T     float64
	Nodes []float64
	Edges [][]float64
}

// EvolveResult is the outcome of Evolve.
type EvolveResult struct {
	// Times are the output times, from 0 to Until.
	Times []float64
	// Probes[k][i] is the value at probe k at Times[i].
	Probes [][]float64
	// Snapshots, when asked for, one per output time.
	Snapshots []Snapshot
	// Crossing[k] is the crossing time of probe k (NaN when it is not
	// reached by Until), when Settings.Crossing was set.
	Crossing []float64
	// Steady[k] is the steady value of probe k used for the crossing.
	Steady []float64
	Status Status
	// Notes say what the status and the numbers need said: steps shortened
	// because a stage's Newton iteration did not converge, a run stopped
	// early, laws that are not monotone in u.
	Notes []string
	Stats EvolveStats
}

// EvolveStats describes the work of Evolve.
type EvolveStats struct {
	Steps, Rejected int // accepted and rejected steps
	// NewtonRetries counts the rejected steps whose stage Newton iteration
	// did not converge (laws of u): each was retried shorter.
	NewtonRetries  int
	Factorizations int     // of M + (γh/2)K, or Newton matrices with laws of u
	Unknowns       int     // of the grid
	MinStep        float64 // smallest and largest accepted step
	MaxStep        float64
	// ErrEstimate is the largest estimated local error of an accepted step
	// in the norm of Settings.Tol (≤ 1 when adaptive).
	ErrEstimate float64
	Time        time.Duration
}

// minShare: a step's local error may use at least 1/minShare of the
// tolerance (see evolveGrid).
const minShare = 200

// trGamma is γ = 2 − √2 of TR-BDF2.
var trGamma = 2 - math.Sqrt2

// Evolve solves the transient problem
//
//	ρ ∂_t u = ∂_x(a ∂_x u) + b ∂_x u − c u + f   on the edges,
//	Σ J + β u + ρ_v ∂_t u = γ                     at balance nodes,
//	u = g(t)                                       at fixed nodes,
//
// from the network's initial field up to Settings.Until
// (docs/time-and-spectrum.md). The grid method discretises the edges by
// finite volumes and steps with TR-BDF2 (Bank et al., IEEE Trans. CAD 4
// (1985) 436; Hosea & Shampine, Appl. Numer. Math. 20 (1996) 21 — both from
// memory): second order, L-stable, both stages with the matrix M + (γh/2)K,
// whose factorisations are kept for the last few step sizes; the local
// error is estimated from the third divided difference of the stages and
// filtered by that matrix (Hosea & Shampine), and drives the step size.
// The exact method is in evolveExact.
func Evolve(net *Network, set *EvolveSettings) (*EvolveResult, error) {
	if set == nil {
		return nil, errors.New("evolve: no settings (Until is required)")
	}
	s := *set
	if !(s.Until > 0) || math.IsInf(s.Until, 0) {
		return nil, fmt.Errorf("until = %g must be a finite number > 0", s.Until)
	}
	if s.Every < 0 || math.IsNaN(s.Every) || math.IsInf(s.Every, 0) {
		return nil, fmt.Errorf("every = %g must be a finite number ≥ 0", s.Every)
	}
	if s.Tol == 0 {
		s.Tol = 1e-4
	}
	if !(s.Tol > 0) || s.Step < 0 || math.IsNaN(s.Step) {
		return nil, fmt.Errorf("tol = %g and step = %g must be > 0 and ≥ 0", s.Tol, s.Step)
	}
	if s.Crossing != 0 && !(s.Crossing > 0 && s.Crossing < 1) {
		return nil, fmt.Errorf("crossing = %g must be between 0 and 1", s.Crossing)
	}
	if s.Context == nil {
		s.Context = context.Background()
	}
	if needsNewton(net) {
		if s.Forward || s.Method == MethodExact {
			return nil, errors.New("laws that depend on u, edge equations, node laws and coefficients of t other than the source: evolve steps them on the grid, not with --forward or method exact")
		}
		if err := checkGeneralTransient(net); err != nil {
			return nil, err
		}
	} else if err := linearTimeInvariant(net, "evolve"); err != nil {
		return nil, err
	}
	if err := checkIsolated(net); err != nil {
		return nil, err
	}
	t0 := time.Now()
	var res *EvolveResult
	var err error
	if s.Forward && (s.Method == MethodExact || s.Crossing != 0) {
		return nil, errors.New("forward transport: grid method only, and no crossing times")
	}
	if s.Method == MethodExact {
		res, err = evolveExact(net, &s)
	} else {
		res, err = evolveGrid(net, &s)
	}
	if res != nil {
		res.Stats.Time = time.Since(t0)
	}
	return res, err
}

// outputTimes returns 0, every, 2·every, …, until (until always last).
func outputTimes(every, until float64) []float64 {
	ts := []float64{0}
	if every <= 0 {
		return append(ts, until)
	}
	for k := 1; ; k++ {
		t := float64(k) * every
		if t >= until*(1-1e-12) {
			break
		}
		ts = append(ts, t)
	}
	return append(ts, until)
}

// stepFactor is a factorisation of M + (γh/2)K for one step size.
type stepFactor struct {
	h    float64
	fac  *nodesys.Factor[float64] // general sparse factor, or
	cond *condensed               // condensation on the grid layout
	mat  *nodesys.Matrix[float64] // the values (pattern of K)
	use  int
}

// tridf2 holds the state of the TR-BDF2 integrator on an fvSystem.
type trbdf2 struct {
	sys     odeSystem
	rs      *odeRows
	cache   []*stepFactor
	facts   int
	g0, g1  []float64 // −K u + r at the step's ends
	gg      []float64 // at the TR stage
	rhs, tm []float64
	rn      []float64 // r(t) scratch
	// laws of u (nl nil: linear)
	nl     *nlFV
	jac    []float64
	nlMat  *nodesys.Matrix[float64]
	nlFac  *nodesys.Factor[float64]
	nlCond *condensed
}

const keepFactors = 4

// factorFor returns the factorisation for step h, from the cache or new
// (evicting the least used).
func (ig *trbdf2) factorFor(h float64) (*stepFactor, error) {
	for _, f := range ig.cache {
		if f.h == h {
			f.use++
			return f, nil
		}
	}
	sys := ig.rs
	var f *stepFactor
	if len(ig.cache) < keepFactors {
		// every step size has the pattern of K: the first factor's
		// analysis is shared by the others (Clone)
		f = &stepFactor{mat: nodesys.NewMatrixPattern[float64](sys.n, sys.rp, sys.ci)}
		switch {
		case len(ig.cache) > 0 && ig.cache[0].cond != nil:
			f.cond = ig.cache[0].cond.clone()
		case len(ig.cache) > 0:
			f.fac = ig.cache[0].fac.Clone()
		default:
			if lay, ok := ig.sys.(gridLayout); ok {
				net, unk, off, cells := lay.layout()
				f.cond = newCondensed(sys, net, unk, off, cells)
			} else {
				f.fac = nodesys.NewFactor[float64](nil)
			}
		}
		ig.cache = append(ig.cache, f)
	} else {
		f = ig.cache[0]
		for _, c := range ig.cache[1:] {
			if c.use < f.use {
				f = c
			}
		}
	}
	f.h, f.use = h, 1
	// M + (γh/2)K, straight into the values of the pattern.
	d := trGamma * h / 2
	val := f.mat.Values()
	for i := 0; i < sys.n; i++ {
		for p := sys.rp[i]; p < sys.rp[i+1]; p++ {
			val[p] = d * sys.cv[p]
			if sys.ci[p] == i {
				val[p] += sys.M[i]
			}
		}
	}
	ig.facts++
	var err error
	if f.cond != nil {
		err = f.cond.factor(val)
	} else {
		err = f.fac.Factorize(f.mat)
	}
	if err != nil {
		f.h = math.NaN()
		return nil, err
	}
	return f, nil
}

// SolveTo solves (M + (γh/2)K) dst = b with the factorisation. dst must
// not alias b.
func (f *stepFactor) SolveTo(dst, b []float64) {
	if f.cond != nil {
		f.cond.solve(f.mat.Values(), dst, b)
		return
	}
	f.fac.SolveTo(dst, b)
}

// gridLayout is implemented by the grid systems whose unknowns are the
// balance nodes followed by each edge's interior, for condensation.
type gridLayout interface {
	layout() (net *Network, unk, off, cells []int)
}

func (s *fvSystem) layout() (*Network, []int, []int, []int)  { return s.net, s.unk, s.off, s.cells }
func (s *fwdSystem) layout() (*Network, []int, []int, []int) { return s.net, s.unk, s.off, s.cells }

// residual sets dst = −K u + r(t).
func (ig *trbdf2) residual(dst, u []float64, t float64) {
	if ig.nl != nil {
		ig.nl.eval(u, t, dst, nil)
		return
	}
	ig.rs.mulK(dst, u)
	ig.sys.load(ig.rn, t)
	for i := range dst {
		dst[i] = ig.rn[i] - dst[i]
	}
}

// step advances u (g0 = −K u + r(t) given) by h. It writes the TR stage
// into ug, the new value into u1, g1 and the filtered error estimate into
// est.
func (ig *trbdf2) step(u, ug, u1, est []float64, t, h float64) error {
	sys := ig.sys
	f, err := ig.factorFor(h)
	if err != nil {
		return err
	}
	g := trGamma
	d := g * h / 2
	M := ig.rs.M
	// TR stage: (M + dK) u_γ = M u_n + d(g_n + r_γ)   [since −dK u_n = d(g_n − r_n)]
	sys.load(ig.rn, t+g*h)
	for i := range ig.rhs {
		ig.rhs[i] = M[i]*u[i] + d*(ig.g0[i]+ig.rn[i])
	}
	f.SolveTo(ug, ig.rhs)
	ig.residual(ig.gg, ug, t+g*h)
	// BDF2 stage: (M + dK) u_{n+1} = [M u_γ − (1−γ)² M u_n]/(γ(2−γ)) + d r_{n+1}
	sys.load(ig.rn, t+h)
	c := 1 / (g * (2 - g))
	q := (1 - g) * (1 - g)
	for i := range ig.rhs {
		ig.rhs[i] = c*M[i]*(ug[i]-q*u[i]) + d*ig.rn[i]
	}
	f.SolveTo(u1, ig.rhs)
	ig.residual(ig.g1, u1, t+h)
	// Error: 2k h f[0,γ,1], k = (−3γ² + 4γ − 2)/(12(2 − γ)), filtered by
	// (M + dK)⁻¹ M (in terms of g = M f, the M cancels).
	k := (-3*g*g + 4*g - 2) / (12 * (2 - g))
	for i := range ig.rhs {
		ig.rhs[i] = 2 * k * h * (ig.g0[i]/g - ig.gg[i]/(g*(1-g)) + ig.g1[i]/(1-g))
	}
	f.SolveTo(est, ig.rhs)
	return nil
}

// evolveGrid runs TR-BDF2 on the finite-volume grid.
func evolveGrid(net *Network, s *EvolveSettings) (*EvolveResult, error) {
	maxU := int64(s.MaxGridUnknowns)
	if maxU == 0 {
		maxU = DefaultMaxGridUnknowns
	}
	var sys fieldSystem
	var ig *trbdf2
	var nw *newtonStepper
	var n int
	if !s.Forward && (s.general || needsNewton(net) && generalTransient(net)) {
		var err error
		if nw, err = newNewtonStepper(net, s); err != nil {
			return nil, err
		}
		sys, n = nw, nw.n
	} else {
		var ode odeSystem
		var err error
		if s.Forward {
			ode, err = newForward(net, s.Cells, maxU, s.Release)
		} else {
			ode, err = newFV(net, s.Cells, maxU)
		}
		if err != nil {
			return nil, err
		}
		sys = ode
		n = ode.rows().n
		ig = &trbdf2{sys: ode, rs: ode.rows(), g0: make([]float64, n), g1: make([]float64, n), gg: make([]float64, n),
			rhs: make([]float64, n), tm: make([]float64, n), rn: make([]float64, n)}
		if fv, ok := ode.(*fvSystem); ok && needsNewton(net) {
			ig.setupNL(&nlFV{fvSystem: fv, uLaw: true})
		}
	}
	u := make([]float64, n)
	ug := make([]float64, n)
	u1 := make([]float64, n)
	est := make([]float64, n)
	nodeVals := sys.initial(u)
	res := &EvolveResult{Status: Converged, Probes: make([][]float64, len(s.Probes))}
	res.Stats.Unknowns = n
	res.Stats.MinStep = math.Inf(1)

	// Error weights: Tol·(|u_i| + scale).
	scale := 0.0
	for _, v := range u {
		scale = math.Max(scale, math.Abs(v))
	}
	for _, v := range nodeVals {
		scale = math.Max(scale, math.Abs(v))
	}
	if scale == 0 {
		scale = 1
	}

	// Crossing levels from the steady state of the grid with the data as
	// they are at t = Until (K u∞ = r(Until)).
	var level, start []float64
	var crossed []bool
	if s.Crossing > 0 {
		var uinf []float64
		var err error
		switch {
		case nw != nil:
			uinf = append([]float64(nil), u...)
			err = nw.steady(uinf, s.Until)
		case ig.nl != nil:
			uinf = append([]float64(nil), u...)
			err = ig.steadyNL(uinf, s.Until)
		default:
			uinf, err = steadyOf(ig.sys, s.Until)
		}
		var ce *CanceledError
		noSteady := err != nil && (nw != nil || ig.nl != nil) && !errors.As(err, &ce)
		if err != nil && !noSteady {
			return nil, fmt.Errorf("steady values for the crossing times: %w", err)
		}
		if noSteady {
			// A nonlinear law past its fold (a runaway) has no steady
			// state: the transient is still wanted, the crossing times
			// are not reported.
			res.Notes = append(res.Notes, fmt.Sprintf("no steady state for the crossing times (%v): steady values and crossing times not reported", err))
		}
		res.Steady = make([]float64, len(s.Probes))
		res.Crossing = make([]float64, len(s.Probes))
		level = make([]float64, len(s.Probes))
		start = make([]float64, len(s.Probes))
		crossed = make([]bool, len(s.Probes))
		for k, p := range s.Probes {
			res.Crossing[k] = math.NaN()
			if noSteady {
				res.Steady[k] = math.NaN()
				crossed[k] = true // nothing to cross
				continue
			}
			res.Steady[k] = sys.at(uinf, p, s.Until)
			start[k] = sys.at(u, p, 0)
			level[k] = start[k] + s.Crossing*(res.Steady[k]-start[k])
		}
	}

	record := func(t float64, v []float64) {
		res.Times = append(res.Times, t)
		for k, p := range s.Probes {
			res.Probes[k] = append(res.Probes[k], sys.at(v, p, t))
		}
		if s.Fields {
			sn := Snapshot{T: t, Nodes: make([]float64, len(net.Nodes)), Edges: make([][]float64, len(net.Edges))}
			for nd := range net.Nodes {
				sn.Nodes[nd] = sys.at(v, Point{Node: nd, Edge: -1}, t)
			}
			for e := range net.Edges {
				sn.Edges[e] = sys.edgeField(v, e, t)
			}
			res.Snapshots = append(res.Snapshots, sn)
		}
	}
	outs := outputTimes(s.Every, s.Until)
	next := 1 // index of the next output time
	record(0, u)
	tmp := make([]float64, n)
	// interpolate writes into tmp the field at fraction θ of the step from
	// u (t) through ug (t + γh) to u1 (t + h): the quadratic through the
	// stages, second order like the method.
	interpolate := func(th float64) {
		g := trGamma
		l0 := (th - g) * (th - 1) / g
		lg := th * (th - 1) / (g * (g - 1))
		l1 := th * (th - g) / (1 - g)
		for i := range tmp {
			tmp[i] = l0*u[i] + lg*ug[i] + l1*u1[i]
		}
	}

	// Step sizes are Until·2^(−k/2) (adaptive), so that sizes repeat and
	// their factorisations are reused.
	quantize := func(x float64) float64 {
		k := math.Ceil(-2 * math.Log2(x/s.Until))
		return s.Until * math.Pow(2, -k/2)
	}
	// The error norm grows like h² (h³ where the share is at its floor).
	expo := func(hs float64) float64 {
		if hs/s.Until >= 1.0/minShare {
			return -0.5
		}
		return -1.0 / 3
	}
	// tooShort says that a step h at time t is too short to go on with:
	// below round-off of t, or of a millionth of the run where t is still
	// smaller (an initial layer of a long run needs steps far below
	// Until·1e-14: a run to 1e9 of a network whose data jump at t = 0 was
	// stopped at t = 0 as a blow-up).
	tooShort := func(h, t float64) bool { return h < 1e-14*math.Max(math.Abs(t), 1e-6*s.Until) }
	h := s.Step
	adaptive := h == 0
	if adaptive {
		h = quantize(s.Until * 1e-4)
	}
	t := 0.0
	if nw != nil {
		if err := nw.initialRate(u); err != nil {
			var ce *CanceledError
			if errors.As(err, &ce) {
				res.Status = IterationLimit // stopped before the first step
				return res, nil
			}
			return nil, err
		}
	} else {
		ig.residual(ig.g0, u, 0)
	}
	umax := 0.0
	for _, v := range u {
		umax = math.Max(umax, math.Abs(v))
	}
	// stopShort ends the run at t, keeping the output so far, with Status
	// NotSolved and a note, when no step can go on.
	stopShort := func(t float64, why string) {
		big := 0.0
		for _, v := range u {
			big = math.Max(big, math.Abs(v))
		}
		res.Status = NotSolved
		res.Notes = append(res.Notes, fmt.Sprintf("the run stops at t = %.6g: %s. The largest |u| there is %.4g (in the data and the initial field: %.4g); a field that grows without bound (thermal runaway, blow-up) ends like this. The output up to t = %.6g is kept", t, why, big, scale, t))
	}
	lastProgress := time.Now()
	worstStep := 0.0 // largest local error estimate of a step as a share of the whole tolerance
	for t < s.Until {
		if s.Context.Err() != nil {
			res.Status = IterationLimit
			break
		}
		hs := h
		landing := false
		if t+hs >= s.Until*(1-1e-13) {
			hs = s.Until - t
			landing = true
		}
		if nw != nil {
			// Stages to a Newton tolerance well below the step's share of
			// Tol (scaled like NonlinearResult.Residual), within
			// [1e-12, 1e-10].
			share := math.Max(hs/s.Until, 1.0/minShare)
			tolN := min(max(0.01*s.Tol*share*scale/(1+umax), 1e-12), 1e-10)
			ok, err := nw.step(u, ug, u1, est, t, hs, tolN)
			if err != nil {
				var ce *CanceledError
				if errors.As(err, &ce) {
					res.Status = IterationLimit // as when stopped between steps
					break
				}
				return nil, fmt.Errorf("at t = %g, step %g: %w", t, hs, err)
			}
			if !ok {
				res.Stats.Rejected++
				res.Stats.NewtonRetries++
				if !adaptive {
					res.Status = NotSolved
					msg := fmt.Sprintf("a stage's Newton iteration did not converge at t = %g in the fixed step %g, which is not shortened: the run stops there", t, hs)
					if nw.lastErr != nil {
						msg += " (last: " + nw.lastErr.Error() + ")"
					}
					res.Notes = append(res.Notes, msg)
					break
				}
				h = quantize(hs / 2)
				if h >= hs {
					h = hs / 2
				}
				if tooShort(h, t) {
					why := fmt.Sprintf("Newton's method does not converge even in a step of %.3g", hs)
					if nw.lastErr != nil {
						why += " (last: " + nw.lastErr.Error() + ")"
					}
					stopShort(t, why)
					break
				}
				continue
			}
		} else if ig.nl != nil {
			share := math.Max(hs/s.Until, 1.0/minShare)
			wt := func(i int) float64 { return s.Tol * share * (math.Abs(u[i]) + scale) }
			ok, err := ig.stepNL(u, ug, u1, est, t, hs, wt)
			var se *nodesys.SingularError
			if err != nil && !errors.As(err, &se) {
				return nil, fmt.Errorf("at t = %g, step %g: %w", t, hs, err)
			}
			if !ok || err != nil {
				// Newton did not converge (or met a singular
				// matrix): a shorter step
				res.Stats.Rejected++
				res.Stats.NewtonRetries++
				h = hs / 4
				if !adaptive {
					return nil, fmt.Errorf("at t = %g: Newton's method does not converge in a step of %g", t, hs)
				}
				if tooShort(h, t) {
					stopShort(t, fmt.Sprintf("Newton's method does not converge even in a step of %.3g", hs))
					break
				}
				continue
			}
		} else if err := ig.step(u, ug, u1, est, t, hs); err != nil {
			return nil, fmt.Errorf("at t = %g, step %g: %w", t, hs, err)
		}
		// Error per unit step: the local error of a step may use the share
		// hs/T of the tolerance, so that the local errors of all steps add
		// up to about Tol (the global error of the time stepping), but at
		// least 1/minShare of it: the short steps of an initial layer (a
		// step response) would otherwise be held to a bound far below what
		// their errors, which decay with the layer, contribute at later
		// times.
		errNorm := 0.0
		share := math.Max(hs/s.Until, 1.0/minShare)
		for i, e := range est {
			w := s.Tol * share * (math.Abs(u1[i]) + scale)
			errNorm += (e / w) * (e / w)
		}
		errNorm = math.Sqrt(errNorm / float64(max(n, 1)))
		if math.IsNaN(errNorm) {
			if !adaptive || tooShort(hs/10, t) {
				stopShort(t, fmt.Sprintf("the field is not finite after a step of %.3g", hs))
				break
			}
			res.Stats.Rejected++
			h = quantize(hs / 8)
			continue
		}
		if adaptive && errNorm > 1 {
			res.Stats.Rejected++
			h = quantize(hs * math.Max(0.2, 0.9*math.Pow(errNorm, expo(hs))))
			if tooShort(h, t) {
				stopShort(t, fmt.Sprintf("the error control asks for steps shorter than %.3g", h))
				break
			}
			continue
		}
		// Accepted.
		res.Stats.Steps++
		res.Stats.ErrEstimate = math.Max(res.Stats.ErrEstimate, errNorm)
		worstStep = math.Max(worstStep, errNorm*share)
		res.Stats.MinStep = math.Min(res.Stats.MinStep, hs)
		res.Stats.MaxStep = math.Max(res.Stats.MaxStep, hs)
		if crossed != nil {
			for k, p := range s.Probes {
				if crossed[k] {
					continue
				}
				a, m, b := sys.at(u, p, t), sys.at(ug, p, t+trGamma*hs), sys.at(u1, p, t+hs)
				if tc, ok := crossingIn(a, m, b, level[k], start[k]); ok {
					crossed[k] = true
					res.Crossing[k] = t + tc*hs
				}
			}
		}
		tEnd := t + hs
		if landing {
			tEnd = s.Until
		}
		// Output times inside this step, by interpolation.
		if s.Every > 0 {
			for next < len(outs)-1 && outs[next] <= tEnd {
				interpolate((outs[next] - t) / hs)
				record(outs[next], tmp)
				next++
			}
		}
		t = tEnd
		u, u1 = u1, u
		if nw != nil {
			nw.accept()
			for _, v := range u {
				umax = math.Max(umax, math.Abs(v))
			}
		} else {
			ig.g0, ig.g1 = ig.g1, ig.g0
		}
		if s.Every == 0 || landing {
			record(t, u)
		}
		if adaptive {
			ratio := 0.9 * math.Pow(math.Max(errNorm, 1e-10), expo(hs))
			if !landing || hs >= h {
				h = quantize(hs * math.Min(ratio, 2))
			}
		}
		if s.Progress != nil && time.Since(lastProgress) > 100*time.Millisecond {
			s.Progress(t, s.Until)
			lastProgress = time.Now()
		}
	}
	if s.Progress != nil {
		s.Progress(t, s.Until)
	}
	if nw != nil {
		res.Stats.Factorizations = nw.facts()
		if nw.steadyNote != "" {
			res.Notes = append(res.Notes, "a law is not monotone in u ("+nw.steadyNote+"): the field may grow without bound (a runaway), and the state it settles to need not be the only steady one")
		}
	} else {
		res.Stats.Factorizations = ig.facts
	}
	if s.Step > 0 && worstStep > 1 {
		// Fixed steps are not controlled: say when one step's local
		// error estimate alone exceeds the whole tolerance (it said
		// nothing beside an estimate of 1.6e4 × tol and values 100 %
		// off). An estimate, not a bound: after a jump in the data the
		// damping of later steps may remove most of it.
		res.Notes = append(res.Notes, fmt.Sprintf("the fixed step %g is not controlled: one step's local error estimate is %.2g times the whole tolerance %g, so the values may be off by more than that (compare a run at half the step, or drop --step for adaptive steps)", s.Step, worstStep, s.Tol))
	}
	if res.Stats.NewtonRetries > 0 && s.Step == 0 {
		res.Notes = append(res.Notes, fmt.Sprintf("Newton's method did not converge in a stage of %d steps: each was rejected and retried with a shorter step", res.Stats.NewtonRetries))
	}
	return res, nil
}

// crossingIn returns the fraction τ ∈ (0, 1] of a step at which the
// quadratic through (0, a), (γ, m), (1, b) first reaches level, moving away
// from start, if it does within the step.
func crossingIn(a, m, b, level, start float64) (float64, bool) {
	up := level >= start
	reached := func(v float64) bool {
		if up {
			return v >= level
		}
		return v <= level
	}
	if reached(a) {
		return 0, true
	}
	if !reached(b) && !reached(m) {
		return 0, false
	}
	// p(τ) = a + c1 τ + c2 τ², through the three points.
	g := trGamma
	// divided differences
	d1 := (m - a) / g
	d2 := ((b-m)/(1-g) - d1) / 1
	// p(τ) = a + d1 τ + d2 τ(τ − γ)
	c1 := d1 - d2*g
	c2 := d2
	// first root of p(τ) − level in (0, 1]: bisection on the quadratic
	p := func(x float64) float64 { return a + c1*x + c2*x*x }
	lo, hi := 0.0, 1.0
	if reached(m) {
		hi = g
	}
	for range 60 {
		mid := 0.5 * (lo + hi)
		if reached(p(mid)) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi, true
}

// steadyOf solves K u = r(t) on the grid: the steady state with the data
// as they are at time t. A network that nothing anchors has none (a
// *nodesys.SingularError).
func steadyOf(sys odeSystem, t float64) ([]float64, error) {
	rs := sys.rows()
	m := nodesys.NewMatrixPattern[float64](rs.n, rs.rp, rs.ci)
	copy(m.Values(), rs.cv)
	f := nodesys.NewFactor[float64](nil)
	if err := f.Factorize(m); err != nil {
		return nil, err
	}
	r := make([]float64, rs.n)
	sys.load(r, t)
	u := make([]float64, rs.n)
	f.SolveTo(u, r)
	return u, nil
}
