package graphpde

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"
)

// SweepSettings controls Sweep. A nil *SweepSettings means the defaults.
type SweepSettings struct {
	// Solve holds the discretisation and the Newton settings of the
	// first solve and of every corrector (nil: defaults).
	Solve *NonlinearSettings
	// Step is the first arclength step; 0 means |to − from|/20. The step
	// adapts between Step/1024 and MaxStep.
	Step float64
	// MaxStep bounds the arclength step; 0 means |to − from|/5.
	MaxStep float64
	// MaxPoints bounds the number of points on the branch; 0 means 500.
	MaxPoints int
	// Probes are the points whose values every SweepPoint lists.
	Probes []Point
	// Context, when not nil, stops the sweep between two points, or
	// inside the Newton corrector of a point after the first (which is
	// then dropped), once it is done (Status SweepInterrupted, with the
	// points computed so far, the first always). Solve.Context, when set,
	// stops any solve with a *CanceledError.
	Context context.Context
}

// SweepPoint is one solution on the branch.
type SweepPoint struct {
	Value  float64   // the parameter
	Probes []float64 // the field at SweepSettings.Probes
	// Negative is the number of negative pivots of the factored Jacobian
	// (interior eliminations and node system): its parity is the sign of
	// the Jacobian's determinant, which changes at a simple fold.
	Negative int
	// Slope is dλ/ds, the parameter component of the unit tangent
	// (arclength in the parameter and the RMS of the unknowns); it
	// changes sign at a turning point.
	Slope float64
}

// SweepStatus says how a sweep ended.
type SweepStatus int

const (
	// SweepReached: the branch was followed to the target value.
	SweepReached SweepStatus = iota + 1
	// SweepTurned: the branch turned at a fold and left the range between
	// the start and the target: no steady solution on it reaches the
	// target.
	SweepTurned
	// SweepPointLimit: MaxPoints were computed first.
	SweepPointLimit
	// SweepFailed: the corrector did not converge even at the smallest
	// step, or a law failed its checks.
	SweepFailed
	// SweepInterrupted: SweepSettings.Context was cancelled; the points
	// computed before are kept.
	SweepInterrupted
)

// String returns the status as the command line prints it.
func (s SweepStatus) String() string {
	switch s {
	case SweepReached:
		return "reached"
	case SweepTurned:
		return "fold"
	case SweepPointLimit:
		return "point limit"
	case SweepFailed:
		return "failed"
	case SweepInterrupted:
		return "interrupted"
	}
	return fmt.Sprintf("SweepStatus(%d)", int(s))
}

// SweepResult is the outcome of Sweep.
type SweepResult struct {
	Param  string
	Points []SweepPoint
	// Fold is the first turning point on the branch (the parameter where
	// dλ/ds = 0, located by regula falsi on the tangent), nil if none.
	// Beyond it there is no steady solution on that branch.
	Fold *SweepPoint
	// FoldConfirmed reports that the sign of the Jacobian's determinant
	// (the parity of its negative pivots) changed across the fold too.
	FoldConfirmed bool
	Status        SweepStatus
	Notes         []string
	Elapsed       time.Duration
}

// Sweep follows the steady solution of net as the named parameter goes from
// its value in net.Params to the value to, by pseudo-arclength continuation
// (H. B. Keller, in Applications of Bifurcation Theory, Academic Press 1977;
// from memory): at every point the tangent t solves J·t_z = −∂r/∂λ·t_λ
// (∂r/∂λ by central differences), a predictor steps ds along it, and Newton
// corrects on the residual bordered by the arclength condition
// ⟨t, y − y_pred⟩ = 0, with the Jacobian condensed and factored as in
// SolveNonlinear (one extra solve per step for the border). At a turning
// point the parameter component of the tangent changes sign; the fold is
// located there by regula falsi on that component and confirmed by the
// change of the determinant's sign (the parity of the negative pivots of
// the factors). The sweep continues beyond a fold; it ends when the
// parameter reaches to (landing on it exactly), when the branch leaves the
// range between the start and to, or at MaxPoints.
//
// net.Params is changed during the sweep and restored before Sweep
// returns. Errors: an unknown parameter, a first solve that does not
// converge (with its *NonlinearResult's reason), and the errors of
// SolveNonlinear.
func Sweep(net *Network, param string, to float64, set *SweepSettings) (*SweepResult, error) {
	t0 := time.Now()
	var ss SweepSettings
	if set != nil {
		ss = *set
	}
	ip := net.Params.Index(param)
	if ip < 0 {
		return nil, fmt.Errorf("no parameter %q", param)
	}
	if !finite(to) {
		return nil, fmt.Errorf("sweep target %g must be a finite number", to)
	}
	from := net.Params.Values[ip]
	defer func() { net.Params.Values[ip] = from }()
	var ns NonlinearSettings
	if ss.Solve != nil {
		ns = *ss.Solve
	}
	if ns.MaxIter == 0 {
		ns.MaxIter = 50
	}
	if ns.Tol == 0 {
		ns.Tol = 1e-10
	}
	span := math.Abs(to - from)
	if span == 0 {
		span = 1
	}
	if ss.Step <= 0 {
		ss.Step = span / 20
	}
	if ss.MaxStep <= 0 {
		ss.MaxStep = span / 5
	}
	if ss.MaxPoints <= 0 {
		ss.MaxPoints = 500
	}
	sys, err := newNLSystem(net, &ns)
	if err != nil {
		return nil, err
	}
	sys.keepInterior() // the bordered solves need the rows
	sys.start(ns.Guess)
	first, err := sys.newton(&ns)
	if err != nil {
		return nil, err
	}
	if first.Status != Converged {
		return nil, fmt.Errorf("the solve at %s = %g did not converge (%v): %v", param, from, first.Status, first.Notes)
	}
	c := &continuation{s: sys, ip: ip, ns: &ns, probes: ss.Probes}
	c.alloc()
	res := &SweepResult{Param: param}
	dir := 1.0
	if to < from {
		dir = -1
	}
	cur, err := c.point(from, nil, 0, dir)
	if err != nil {
		return nil, err
	}
	res.Points = append(res.Points, cur.pt)
	own := sys.ctx // Solve.Context
	ds := ss.Step
	minStep := ss.Step / 1024
	lo, hi := math.Min(from, to), math.Max(from, to)
	for {
		if ss.Context != nil && ss.Context.Err() != nil {
			res.Status = SweepInterrupted
			break
		}
		if len(res.Points) >= ss.MaxPoints {
			res.Status = SweepPointLimit
			break
		}
		if own == nil {
			sys.ctx = ss.Context // a corrector stops part-way; landing and fold location do not
		}
		next, its, err := c.advance(cur, ds)
		sys.ctx = own
		if ce := (*CanceledError)(nil); errors.As(err, &ce) {
			res.Status = SweepInterrupted // the point under way is dropped
			break
		}
		if err != nil || next == nil {
			ds /= 2
			if ds < minStep {
				res.Status = SweepFailed
				if err != nil {
					res.Notes = append(res.Notes, err.Error())
				}
				res.Notes = append(res.Notes, fmt.Sprintf("the corrector failed near %s = %g at the smallest step", param, cur.lambda))
				break
			}
			continue
		}
		// The target: the parameter passes to between cur and next.
		if (cur.lambda-to)*(next.lambda-to) <= 0 && cur.lambda != to {
			last, err := c.land(cur, next, to)
			if err != nil {
				res.Status = SweepFailed
				res.Notes = append(res.Notes, err.Error())
				break
			}
			if res.Fold == nil && cur.pt.Slope*next.pt.Slope < 0 {
				c.locateFold(res, cur, next, ds)
			}
			res.Points = append(res.Points, last.pt)
			res.Status = SweepReached
			break
		}
		if cur.pt.Slope*next.pt.Slope < 0 && res.Fold == nil {
			c.locateFold(res, cur, next, ds)
		} else if cur.pt.Slope*next.pt.Slope > 0 && (cur.pt.Negative-next.pt.Negative)%2 != 0 {
			res.Notes = append(res.Notes, fmt.Sprintf("the Jacobian's determinant changes sign between %s = %.6g and %.6g without a turn: a branch point (bifurcation) lies between, where other branches may start", param, cur.lambda, next.lambda))
		}
		res.Points = append(res.Points, next.pt)
		cur = next
		if cur.lambda < lo-1e-12*span || cur.lambda > hi+1e-12*span {
			res.Status = SweepTurned
			if res.Fold == nil {
				res.Notes = append(res.Notes, "the branch left the range without a turning point")
			}
			break
		}
		switch {
		case its <= 3:
			ds = math.Min(ds*1.5, ss.MaxStep)
		case its > 5:
			ds *= 0.7
		}
	}
	if res.Fold != nil && !res.FoldConfirmed {
		res.Notes = append(res.Notes, "the determinant's sign did not change across the turning point: it may be a degenerate fold")
	}
	if sys.nonMono != "" {
		res.Notes = append(res.Notes, "the law is not monotone in u ("+sys.nonMono+"): other solutions may exist")
	}
	res.Elapsed = time.Since(t0)
	return res, nil
}

// continuation holds the state of a sweep.
type continuation struct {
	s      *nlSystem
	ip     int
	ns     *NonlinearSettings
	probes []Point
	// wz weights the unknowns in the arclength: 1/Σ(dz/dλ)² at the start,
	// so that the first tangent has equal parts in λ and in the unknowns
	// (arclength in units of the parameter); 1/N if dz/dλ = 0 there.
	wz float64
	// Scratch: residual derivative in λ, and solves.
	rlN, rlI, aU, aW, bU, bW []float64
}

// branchPoint is a solution with its tangent.
type branchPoint struct {
	lambda float64
	U, w   []float64
	tU, tw []float64 // tangent, unknowns part (0 at fixed nodes)
	tl     float64   // tangent, parameter part
	pt     SweepPoint
}

func (c *continuation) alloc() {
	s := c.s
	nn, ni := len(s.U), len(s.w)
	for _, p := range []*[]float64{&c.rlN, &c.aU, &c.bU} {
		*p = make([]float64, nn)
	}
	for _, p := range []*[]float64{&c.rlI, &c.aW, &c.bW} {
		*p = make([]float64, ni)
	}
	c.wz = 1 / float64(max(1, s.stats.Unknowns))
}

func (c *continuation) set(lambda float64) { c.s.net.Params.Values[c.ip] = lambda }

// dot is the weighted inner product of two tangents or increments,
// wz·⟨a_z, b_z⟩ + a_λ b_λ.
func (c *continuation) dot(aU, aW []float64, al float64, bU, bW []float64, bl float64) float64 {
	s := c.s
	sum := 0.0
	for _, v := range s.nodes {
		sum += aU[v] * bU[v]
	}
	for e := range s.net.Edges {
		if s.kind[e] == nlQuasi || s.kind[e] == nlEquation {
			for i := s.off[e]; i < s.off[e]+s.n[e]-1; i++ {
				sum += aW[i] * bW[i]
			}
		}
	}
	return sum*c.wz + al*bl
}

// linearise evaluates at (U, w, λ): ∂r/∂λ by central differences into rlN,
// rlI, then the residual and Jacobian at the point, condensed and factored.
func (c *continuation) linearise(U, w []float64, lambda float64) error {
	s := c.s
	eps := 1e-6 * math.Max(1, math.Abs(lambda))
	c.set(lambda + eps)
	if err := s.eval(U, w); err != nil {
		c.set(lambda)
		return err
	}
	copy(c.rlN, s.nres)
	copy(c.rlI, s.ires)
	c.set(lambda - eps)
	if err := s.eval(U, w); err != nil {
		c.set(lambda)
		return err
	}
	for i := range c.rlN {
		c.rlN[i] = (c.rlN[i] - s.nres[i]) / (2 * eps)
	}
	for i := range c.rlI {
		c.rlI[i] = (c.rlI[i] - s.ires[i]) / (2 * eps)
	}
	c.set(lambda)
	if err := s.eval(U, w); err != nil {
		return err
	}
	if err := s.prepare(U, w); err != nil {
		return err
	}
	return s.factor()
}

// point builds the branch point at the system's current state (converged
// at λ): tangent (oriented along prev's, or with dλ/ds of the sign dir),
// probes and pivot count.
func (c *continuation) point(lambda float64, prev *branchPoint, _ float64, dir float64) (*branchPoint, error) {
	s := c.s
	if err := c.linearise(s.U, s.w, lambda); err != nil {
		return nil, err
	}
	neg := s.negPivots
	// J·b = −∂r/∂λ; tangent ∝ (b, 1).
	s.step(c.bU, c.bW, c.rlN, c.rlI, -1)
	p := &branchPoint{lambda: lambda, U: append([]float64(nil), s.U...), w: append([]float64(nil), s.w...),
		tU: append([]float64(nil), c.bU...), tw: append([]float64(nil), c.bW...), tl: 1}
	if prev == nil {
		if b2 := c.dot(p.tU, p.tw, 0, p.tU, p.tw, 0) / c.wz; b2 > 0 && finite(b2) {
			c.wz = 1 / b2
		}
	}
	norm := math.Sqrt(c.dot(p.tU, p.tw, 1, p.tU, p.tw, 1))
	sg := dir
	if prev != nil {
		if c.dot(p.tU, p.tw, 1, prev.tU, prev.tw, prev.tl) < 0 {
			sg = -1
		} else {
			sg = 1
		}
	}
	k := sg / norm
	for i := range p.tU {
		p.tU[i] *= k
	}
	for i := range p.tw {
		p.tw[i] *= k
	}
	p.tl = k
	sol, err := s.solution()
	if err != nil {
		return nil, err
	}
	p.pt = SweepPoint{Value: lambda, Negative: neg, Slope: p.tl, Probes: make([]float64, len(c.probes))}
	for i, q := range c.probes {
		v, err := sol.At(q)
		if err != nil {
			return nil, err
		}
		p.pt.Probes[i] = v
	}
	return p, nil
}

// advance predicts from cur along its tangent by ds and corrects; it
// returns the new point (nil if the corrector failed) and the corrector's
// iteration count.
func (c *continuation) advance(cur *branchPoint, ds float64) (*branchPoint, int, error) {
	s := c.s
	for i := range s.U {
		s.U[i] = cur.U[i] + ds*cur.tU[i]
	}
	for i := range s.w {
		s.w[i] = cur.w[i] + ds*cur.tw[i]
	}
	lambda := cur.lambda + ds*cur.tl
	// Predicted point, for the arclength condition.
	pU := append([]float64(nil), s.U...)
	pW := append([]float64(nil), s.w...)
	pl := lambda
	const maxIter = 8
	for it := 1; it <= maxIter; it++ {
		if err := c.linearise(s.U, s.w, lambda); err != nil {
			return nil, it, err
		}
		rho := s.scaledResidual()
		for i := range s.U {
			c.aU[i] = s.U[i] - pU[i]
		}
		for i := range s.w {
			c.aW[i] = s.w[i] - pW[i]
		}
		N := c.dot(cur.tU, cur.tw, cur.tl, c.aU, c.aW, lambda-pl)
		if rho <= c.ns.Tol && math.Abs(N) <= 1e-9*ds && it > 1 {
			p, err := c.point(lambda, cur, ds, 0)
			return p, it, err
		}
		s.step(c.aU, c.aW, s.nres, s.ires, -1)
		s.step(c.bU, c.bW, c.rlN, c.rlI, -1)
		den := c.dot(cur.tU, cur.tw, 0, c.bU, c.bW, 0) + cur.tl
		if den == 0 || !finite(den) {
			return nil, it, nil
		}
		dl := (-N - c.dot(cur.tU, cur.tw, 0, c.aU, c.aW, 0)) / den
		for i := range s.U {
			s.U[i] += c.aU[i] + dl*c.bU[i]
		}
		for i := range s.w {
			s.w[i] += c.aW[i] + dl*c.bW[i]
		}
		lambda += dl
		if !finite(lambda) {
			return nil, it, nil
		}
	}
	return nil, maxIter, nil
}

// land solves at λ = target by Newton from the point interpolated between a
// and b.
func (c *continuation) land(a, b *branchPoint, target float64) (*branchPoint, error) {
	s := c.s
	th := 0.0
	if b.lambda != a.lambda {
		th = (target - a.lambda) / (b.lambda - a.lambda)
	}
	for i := range s.U {
		s.U[i] = a.U[i] + th*(b.U[i]-a.U[i])
	}
	for i := range s.w {
		s.w[i] = a.w[i] + th*(b.w[i]-a.w[i])
	}
	c.set(target)
	r, err := s.newton(c.ns)
	if err != nil {
		return nil, err
	}
	if r.Status != Converged {
		return nil, fmt.Errorf("the solve at the target %g did not converge (%v)", target, r.Status)
	}
	return c.point(target, b, 0, 0)
}

// locateFold finds the turning point between cur and next (dλ/ds of
// opposite signs) and records it in res. Regula falsi (Illinois variant) on
// the arclength from cur narrows the bracket until it is 1e−4 of the step
// or the corrector fails (near the fold the Jacobian is nearly singular and
// the bordered solve loses digits). In the final bracket dλ/ds is linear in
// s to high accuracy, so the fold is at its zero s*, λ* = λ_a + (s* − s_a)·
// (dλ/ds)_a/2 (the area under the linear slope), and the probes are
// interpolated linearly in s (error O(|s_b − s_a|²)).
func (c *continuation) locateFold(res *SweepResult, cur, next *branchPoint, ds float64) {
	sa, pa := 0.0, cur
	sb, pb := ds, next
	fa, fb := cur.tl, next.tl
	side := 0
	for it := 0; it < 30 && sb-sa > 1e-4*ds; it++ {
		sm := sb - fb*(sb-sa)/(fb-fa)
		if !(sm > sa && sm < sb) {
			sm = 0.5 * (sa + sb)
		}
		p, _, err := c.advance(cur, sm)
		if err != nil || p == nil {
			break
		}
		if p.tl*pa.tl > 0 {
			sa, pa, fa = sm, p, p.tl
			if side == -1 {
				fb /= 2
			}
			side = -1
		} else {
			sb, pb, fb = sm, p, p.tl
			if side == 1 {
				fa /= 2
			}
			side = 1
		}
	}
	ta, tb := pa.tl, pb.tl
	th := ta / (ta - tb) // zero of the slope, as a fraction of the bracket
	fp := SweepPoint{
		Value:    pa.lambda + th*(sb-sa)*ta/2,
		Probes:   make([]float64, len(pa.pt.Probes)),
		Negative: pb.pt.Negative,
	}
	for i := range fp.Probes {
		fp.Probes[i] = pa.pt.Probes[i] + th*(pb.pt.Probes[i]-pa.pt.Probes[i])
	}
	res.Fold = &fp
	res.FoldConfirmed = (cur.pt.Negative-next.pt.Negative)%2 != 0
	// Leave the system at next for the sweep to continue.
	copy(c.s.U, next.U)
	copy(c.s.w, next.w)
	c.set(next.lambda)
}
