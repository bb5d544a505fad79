package montecarlo

import (
	"math"
	"slices"

	"github.com/ramify-dev/ramify/montecarlo/internal/starlaw"
	"github.com/ramify-dev/ramify/vertex"
)

// Node visit modes.
const (
	modeFixed    = iota // absorbing
	modeLaw             // walk on stars, exact in law
	modeIsolated        // balance node without edges
	modeStar            // walk on stars with leak or capacity, exact in law
	modeStarArms        // walk on stars with arms decaying at their own rates
)

// aPrimeStep is the half-width, relative to the edge length, of the
// difference quotient for a'(x) on an edge with varying diffusivity: a
// central difference has error O(d²·a‴) and rounding O(eps·a/d), balanced
// near d ≈ eps^{1/3} ≈ 6e−6 (common practice, no source).
const aPrimeStep = 1e-6

// sameRateTol is the relative difference of two arms' decay rates c/ρ below
// which they count as one rate (their departures then follow the weights
// exactly): rates read from a file that agree to twelve digits are meant to
// be equal.
const sameRateTol = 1e-12

// reachTol is the relative shortfall of a star radius against the edge
// length below which the step lands on the far node rather than a hair
// before it (rounding of ε = r/s).
const reachTol = 1e-12

// The default Euler–Maruyama step on a time-stepping edge (Settings.Step
// = 0): these fractions of its diffusive time L²ρ/(2a) and of its drift
// time Lρ/|b|, whichever is smaller. The weak error of the step is first
// order in dt (common practice, no source); TestTimeStepping checks the
// resulting estimates against closed forms within their error bars.
const (
	stepOfDiffusiveTime = 1e-3
	stepOfDriftTime     = 1e-2
)

// profileSamples is the number of points at which a varying edge's
// coefficients are checked and its scales taken.
const profileSamples = 33

type edgeInfo struct {
	id       string
	from, to int
	L        float64
	alpha    [2]float64 // end weights α at From and To
	constant bool       // coefficients constant along the edge
	exact    bool       // constant coefficients and no drift: walk on intervals
	// Exact edges: constant coefficients.
	a, c, f, rho float64
	kill         float64 // c/ρ, killing rate per unit time
	rate         float64 // f/ρ, reward per unit time
	tfac         float64 // ρ/(2a): a step of radius r lasts r²·tfac·τ₁
	// Time-stepping edges.
	dt, hz  float64 // Euler step and near-node zone width
	aVaries bool    // a depends on x: the SDE drift includes a'
	// jumps: points where piecewise constant coefficients jump
	// (JumpNetwork), each a boundary of the walker's steps (jumps.go);
	// skip: reach from each end of a frozen node star, within which the
	// jumps are left to the star's freezing.
	jumps     []float64
	skip      [2]float64
	piecewise bool // the network lists the jumps: a' = 0 between them
}

type arm struct {
	edge, side int
	toNode     int     // ≥ 0: the step lands on this node
	x          float64 // landing position on edge otherwise
	ys         float64 // sqrt(ρ/a) at the node: y = ys·x in the star
	cw         float64 // cumulative w_k/Σw up to this arm (position records)
	cum        float64 // cumulative move probability up to this arm
	occ        float64 // expected time on this arm per visit
	// modeStarArms: cumulative fate probabilities up to the rim exit and
	// the killing on this arm, and the tables of their final pieces.
	cx, ck           float64
	exitTab, killTab *lazyTable
}

type nodeInfo struct {
	mode int
	// growth is the growth rate |c|/ρ of a visit next to arms with a
	// negative decay (Settings.Growth), averaged by the star weights.
	growth float64
	// splitExact: departures follow w_e/Σw exactly (every arm walked on
	// intervals, all decaying at one rate).
	splitExact bool
	// frozen: visits freeze coefficients that vary within the star.
	frozen bool
	value  float64 // fixed value
	arms   []arm
	depOff int // offset of the node's ends in the departure counts
	r      float64
	// modeLaw
	dscale float64 // r²/2: the visit lasts dscale·τ₁
	kill   float64 // common killing rate c/ρ on the arms
	fbar   float64 // Σ p_e f_e/ρ_e, expected reward rate during a visit
	// modeStar (pMove = 1/μ, reward, hold > 0 iff the node has a
	// capacity, arms[].occ, dscale, kill; arms[].cum normalised to Σw),
	// modeStarArms (killP, reward, dscale, arms[]) and modeIsolated
	// (killP, reward, hold).
	killP, reward, hold float64
	pMove               float64
	tab                 *lazyTable
	// The small star near a position record in modeStarArms (approximate,
	// positions.go): mean decay and source rates of the arms, injection
	// per unit radius γ/Σw, and whether the node has no leak or capacity.
	posKill, posRate, posInject float64
	posPlain                    bool
}

type model struct {
	net       Network
	edges     []edgeInfo
	nodes     []nodeInfo
	nDep      int
	timeCap   float64
	rc        float64 // the RC time C·R of DefaultTimeCap
	exact     bool
	fin       *starlaw.Table        // T_f table when a node is in modeStar
	tables    tableStats            // visit-law tables looked up lazily
	shared    map[string]*lazyTable // lazy tables by quantised law (prepare only)
	posT      []float64             // Settings.PositionTimes, sorted
	posApprox bool                  // some record may come from an approximate small star
	pos       []*posNode            // per node: the stop at record times at leaky or sticky nodes
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// prepare validates the network and builds the per-edge and per-node step
// rules. Cost O(nodes + edges·profileSamples).
func prepare(net Network, set *Settings) (*model, error) {
	m := &model{net: net, exact: true}
	nn, ne := net.Size()
	m.edges = make([]edgeInfo, ne)
	var capTot, resTot, lossTot float64
	for e := range ne {
		ed := &m.edges[e]
		ed.id, ed.from, ed.to, ed.L, ed.alpha, ed.constant = net.WalkEdge(e)
		if !finite(ed.L) || ed.L <= 0 {
			return nil, &CoefficientError{Edge: ed.id, Field: "length", Value: ed.L, Reason: "must be a finite number > 0"}
		}
		var a0, taken float64
		var aMin, aoMax, rhoMean, cMean, tDiff, tDrift = math.Inf(1), 0.0, 0.0, 0.0, math.Inf(1), math.Inf(1)
		for i := range profileSamples {
			x := ed.L * float64(i) / (profileSamples - 1)
			a, b, c, f, rho := net.EdgeCoeffs(e, x)
			cc := c
			if set.Growth && !ed.constant && c < 0 {
				cc = 0 // a growth rate, allowed on time-stepping edges
			}
			if err := checkCoeffs(ed.id, x, a, b, cc, f, rho); err != nil {
				return nil, err
			}
			if i == 0 {
				a0 = a
				ed.a, ed.c, ed.f, ed.rho = a, c, f, rho
				ed.exact = b == 0
			}
			if a != a0 {
				ed.aVaries = true
			}
			aMin = math.Min(aMin, a)
			aoMax = math.Max(aoMax, a/rho)
			rhoMean += rho
			cMean += c
			taken++
			tDiff = math.Min(tDiff, ed.L*ed.L*rho/(2*a))
			if b != 0 {
				tDrift = math.Min(tDrift, ed.L*rho/math.Abs(b))
			}
			if ed.constant {
				break
			}
		}
		if !ed.constant {
			ed.exact = false
		}
		rhoMean /= taken
		cMean /= taken
		capTot += rhoMean * ed.L
		resTot += ed.L / aMin
		lossTot += cMean * ed.L
		if ed.exact {
			ed.kill = ed.c / ed.rho
			ed.rate = ed.f / ed.rho
			ed.tfac = ed.rho / (2 * ed.a)
			continue
		}
		m.exact = false
		ed.dt = set.Step
		if ed.dt == 0 {
			ed.dt = math.Min(stepOfDiffusiveTime*tDiff, stepOfDriftTime*tDrift)
		}
		if set.StepScale > 0 {
			ed.dt *= set.StepScale
		}
		ed.hz = math.Min(4*math.Sqrt(2*aoMax*ed.dt), ed.L/8)
		if jn, ok := net.(JumpNetwork); ok && !ed.constant {
			ed.jumps = slices.Clone(jn.Jumps(e))
			ed.piecewise = len(ed.jumps) > 0
		}
	}

	m.nodes = make([]nodeInfo, nn)
	anyFixed := false
	for v := range nn {
		id, law, ends, split := net.WalkNode(v)
		if err := law.Validate(); err != nil {
			le := err.(*vertex.LawError)
			return nil, &NodeError{Node: id, Field: le.Field, Value: le.Value, Reason: le.Reason}
		}
		nd := &m.nodes[v]
		switch law.Kind {
		case vertex.Fixed:
			nd.mode = modeFixed
			nd.value = law.Value
			anyFixed = true
			continue
		case vertex.Balance:
			capTot += law.Capacity
			lossTot += law.Leak
			if err := m.prepareBalance(v, id, law, ends, split, set); err != nil {
				return nil, err
			}
		default:
			panic("montecarlo: unknown node kind")
		}
	}
	m.trimJumps()
	m.rc = capTot * resTot
	m.timeCap = set.TimeCap
	if m.timeCap == 0 {
		m.timeCap = DefaultTimeCap(capTot, resTot, lossTot, anyFixed)
	}
	return m, nil
}

// DefaultTimeCap returns the default per-walker time cap: 1000 times the
// network's RC time C·R, with C = Σ ρ_e L_e + Σ ρ_v its total capacity and
// R = Σ L_e/min a_e the sum of the edge resistances (an upper bound on the
// resistance between any two points for conservative weights, so C·R bounds
// the mean exit time when a fixed node exists), plus 1000·C/K when no node
// is fixed, K = Σ β_v + Σ c_e L_e the total loss.
func DefaultTimeCap(capTot, resTot, lossTot float64, anyFixed bool) float64 {
	t := capTot * resTot
	if !anyFixed && lossTot > 0 {
		t += capTot / lossTot
	}
	return 1000 * t
}

func checkCoeffs(id string, x, a, b, c, f, rho float64) error {
	bad := func(field string, v float64, reason string) error {
		return &CoefficientError{Edge: id, Field: field, X: x, Value: v, Reason: reason}
	}
	switch {
	case !finite(a) || a <= 0:
		return bad("diffusivity", a, "must be a finite number > 0")
	case !finite(rho) || rho <= 0:
		return bad("capacity", rho, "must be a finite number > 0")
	case !finite(c) || c < 0:
		return bad("decay", c, "must be a finite number ≥ 0")
	case !finite(b):
		return bad("drift", b, "must be a finite number")
	case !finite(f):
		return bad("source", f, "must be a finite number")
	}
	return nil
}

// armCoeffs returns the coefficients of edge e at the node end side, with the
// drift (a' + b for a varying edge) oriented away from the node.
func (m *model) armCoeffs(e, side int) (a, bAway, c, f, rho float64) {
	ed := &m.edges[e]
	x := 0.0
	if side == 1 {
		x = ed.L
	}
	a, b, c, f, rho := m.net.EdgeCoeffs(e, x)
	if ed.aVaries {
		b += m.aPrime(e, x)
	}
	if side == 1 {
		b = -b
	}
	return a, b, c, f, rho
}

// aPrime returns da/dx on edge e at x by a difference quotient of width
// 2e−6·L (one-sided at the ends).
func (m *model) aPrime(e int, x float64) float64 {
	ed := &m.edges[e]
	d := aPrimeStep * ed.L
	lo, hi := math.Max(0, x-d), math.Min(ed.L, x+d)
	al, _, _, _, _ := m.net.EdgeCoeffs(e, lo)
	ah, _, _, _, _ := m.net.EdgeCoeffs(e, hi)
	return (ah - al) / (hi - lo)
}

// prepareBalance builds the visit rule of balance node v (id, law, incident
// ends and walker-only split as the network reports them).
func (m *model) prepareBalance(v int, id string, law vertex.Law, ends []vertex.End, split []float64, set *Settings) error {
	nd := &m.nodes[v]
	n := len(ends)
	nd.depOff = m.nDep
	m.nDep += n
	if n == 0 {
		nd.mode = modeIsolated
		nd.killP, nd.reward, nd.hold = law.Isolated()
		return nil
	}
	alpha := make([]float64, n)
	for k, end := range ends {
		alpha[k] = m.edges[end.Edge].alpha[end.Side]
		if !finite(alpha[k]) || alpha[k] <= 0 {
			return &WeightError{Node: id, Edge: m.edges[end.Edge].id, Field: "weight", Value: alpha[k]}
		}
	}
	if split != nil {
		if len(split) != n {
			panic("montecarlo: the split of a node is not aligned with its ends")
		}
		// A zero entry is legal: walkers never leave along that end. The
		// entries must not all be zero.
		var sum float64
		for k, p := range split {
			if !finite(p) || p < 0 {
				return &WeightError{Node: id, Edge: m.edges[ends[k].Edge].id, Field: "split", Value: p}
			}
			sum += p
		}
		if !(sum > 0) {
			return &WeightError{Node: id, Edge: m.edges[ends[0].Edge].id, Field: "split", Value: sum}
		}
		vertex.ApplySplit(alpha, alpha, split)
	}

	type armCo struct{ a, b, c, f, rho, s, w, max float64 }
	co := make([]armCo, n)
	grow := make([]float64, n)
	plain := true // no drift, decay or source on any arm
	allExact := true
	varying := false // an arm's coefficients vary along its edge
	sameKill := true
	for k, end := range ends {
		ed := &m.edges[end.Edge]
		a, b, c, f, rho := m.armCoeffs(end.Edge, end.Side)
		if c < 0 {
			// Settings.Growth (checked with the edge): the visit law
			// sees no decay on this arm; the walker grows instead.
			grow[k] = -c / rho
			c = 0
		}
		s := math.Sqrt(rho / a)
		ac := armCo{a: a, b: b, c: c, f: f, rho: rho, s: s, w: alpha[k] * s}
		self := ed.from == ed.to
		switch {
		case !ed.exact:
			allExact = false
			ac.max = ed.hz * s
			if !ed.constant {
				// Varying coefficients: exact if they are constant over
				// the star's reach on this arm (at most hz), else frozen.
				// With known jumps (JumpNetwork) a stretch short of
				// hz clips the reach at the first jump instead,
				// unless it is shorter than StarFraction of hz.
				st := 0.0
				if sn, ok := m.net.(StretchNetwork); ok {
					st = sn.ConstantStretch(end.Edge, end.Side)
				}
				switch {
				case st >= ed.hz:
				case len(ed.jumps) > 0 && st >= set.StarFraction*ed.hz:
					ac.max = st * s
				default:
					varying = true
				}
			}
		case self:
			ac.max = ed.L * s / 2
		default:
			ac.max = ed.L * s
		}
		if b != 0 || c != 0 || f != 0 {
			plain = false
		}
		if k > 0 && math.Abs(c/rho-co[0].c/co[0].rho) > sameRateTol*(c/rho) {
			sameKill = false
		}
		co[k] = ac
	}
	var gw, wsum float64
	for k := range co {
		gw += co[k].w * grow[k]
		wsum += co[k].w
	}
	if gw > 0 {
		nd.growth = gw / wsum
	}
	nd.splitExact = allExact && sameKill
	free := math.Inf(1)
	for _, ac := range co {
		free = math.Min(free, ac.max)
	}

	nd.arms = make([]arm, n)
	w := make([]float64, n)
	for k := range co {
		w[k] = co[k].w
	}
	var visit vertex.Visit
	if law.Leak == 0 && law.Capacity == 0 && allExact && sameKill {
		// Walk on stars: the y-star of radius r is a Walsh diffusion with
		// generator d²/dy² on every arm; it leaves along arm k with
		// probability w_k/Σw, independently of its exit time r²τ₁/2; a
		// decay rate common to all arms is an independent clock.
		nd.mode = modeLaw
		nd.r = free
		law.Star(&visit, w, nd.r)
		nd.dscale = nd.r * nd.r / 2
		nd.kill = co[0].c / co[0].rho
		for k := range co {
			nd.fbar += visit.Move[k] * co[k].f / co[k].rho
		}
		// Injection per visit: rγ/Σw (Star's Reward), or its form
		// under a common decay rate.
		nd.reward = visit.Reward
		if nd.kill > 0 {
			nd.reward = law.StarRewardDecay(w, nd.r, nd.kill)
		}
	} else if allExact && sameKill && (law.Capacity == 0 || co[0].c == 0) {
		// Walk on stars with a leak or a capacity, exact in law (package
		// starlaw): with W = Σw, κ = rβ/W and μ = 1 + κ, the visit is
		// killed with probability κ/μ, else leaves along arm k with
		// probability w_k/W; its duration is (r²/2)·Y + (r²/2)·T_f on
		// leaving, Y with transform μ/(μ + Φ(s) + ηs), η = 2ρ_v/(rW).
		// A common decay rate on the arms is an independent clock when
		// no capacity holds the walker at the node (where the arms'
		// decay does not act).
		nd.mode = modeStar
		m.fin = starlaw.Final()
		nd.r = free
		r := free
		sc := law.StarScales(w, r)
		sw := sc.W
		mu := 1 + sc.Kappa
		nd.pMove = 1 / mu
		nd.dscale = r * r / 2
		nd.kill = co[0].c / co[0].rho
		nd.hold = sc.Hold
		nd.tab = m.lazyVisit(mu, sc.Eta)
		// The value estimator of the exact-in-mean rule at the full
		// radius: the mean reward per visit.
		if plain {
			law.Star(&visit, w, r)
		} else {
			arms := make([]vertex.Arm, n)
			for k, ac := range co {
				arms[k] = vertex.NewArm(ac.a, ac.b, ac.c, ac.f, r/ac.s)
			}
			law.StarArms(&visit, alpha, arms)
		}
		nd.reward = visit.Reward
		// Moves are drawn from w_k/W (the fate apart).
		for k := range co {
			visit.Move[k] = w[k] / sw
			// With a capacity (then no decay): the mean diffusive time
			// per visit, (r²/2)/μ, shared in proportion to w_k.
			nd.arms[k].occ = r * r * w[k] / 2 / (sw + r*law.Leak)
		}
	} else {
		// Arms decaying at their own rates, or a common rate with a
		// capacity, or arms that need time stepping: package starlaw's
		// decomposition with per-arm kill rates q_e = (c_e/ρ_e)·r²/2 in
		// the time of the reflected motion and drifts
		// γ_e = b_e ε_e/(2a_e) (b_e away from the node, ε_e = r/s_e),
		// with the coefficients of each arm frozen at the node. It is
		// exact at any radius when they are constant on [0, ε_e]. With
		// different rates the star is shrunk to StarFraction so that the
		// departures stay close to the weights: a move along e has
		// probability ∝ w_e·z_e/sinh z_e, z_e = r·sqrt(c_e/ρ_e), which
		// tends to w_e/Σw only as r → 0 (with a common rate it is w_e/Σw
		// at any radius); next to an arm whose coefficients vary it is
		// shrunk so that freezing them costs little.
		nd.mode = modeStarArms
		r := free
		if !sameKill || varying {
			r *= set.StarFraction
		}
		nd.frozen = varying
		nd.r = r
		if varying {
			for k, end := range ends {
				sk := &m.edges[end.Edge].skip[end.Side]
				*sk = math.Max(*sk, r/co[k].s)
			}
		}
		sc := law.StarScales(w, r)
		sw := sc.W
		p, q := make([]float64, n), make([]float64, n)
		var g []float64
		for k, ac := range co {
			p[k] = w[k] / sw
			q[k] = ac.c / ac.rho * r * r / 2
			if ac.b != 0 {
				if g == nil {
					g = make([]float64, n)
				}
				g[k] = ac.b * (r / ac.s) / (2 * ac.a)
			}
		}
		gam := func(k int) float64 {
			if g == nil {
				return 0
			}
			return g[k]
		}
		nd.dscale = r * r / 2
		kappa, eta := sc.Kappa, sc.Eta
		nd.tab = m.lazyMixture(kappa, eta, p, q, g)
		pl, ex, ki := starlaw.RatesDrift(sc.Kappa, p, q, g, nil, nil)
		nd.killP = pl
		cum := pl
		arms := make([]vertex.Arm, n)
		var den float64
		for k, ac := range co {
			eps := r / ac.s
			arms[k] = vertex.NewArm(ac.a, ac.b, ac.c, ac.f, eps)
			den += alpha[k] * (arms[k].AmB + arms[k].B)
			nd.arms[k].occ = alpha[k] * vertex.NewArm(ac.a, ac.b, ac.c, ac.rho, eps).F
			cum += ex[k]
			nd.arms[k].cx = cum
			cum += ki[k]
			nd.arms[k].ck = cum
			gk := gam(k)
			qe := q[k] + gk*gk/2
			nd.arms[k].exitTab = m.lazyExit(qe)
			if q[k] > 0 {
				nd.arms[k].killTab = m.lazyKill(q[k], gk)
			}
		}
		nd.arms[n-1].ck = math.Inf(1)
		den += law.Leak
		for k := range co {
			nd.arms[k].occ /= den
		}
		law.StarArms(&visit, alpha, arms)
		nd.reward = visit.Reward
		for k := range co {
			visit.Move[k] = 0 // the arms' cum is not used in this mode
		}
	}
	var cum float64
	for k, end := range ends {
		ed := &m.edges[end.Edge]
		a := &nd.arms[k]
		a.edge, a.side = end.Edge, end.Side
		a.ys = co[k].s
		cum += visit.Move[k]
		a.cum = cum
		eps := nd.r / co[k].s
		a.toNode = -1
		if ed.from != ed.to && eps >= ed.L*(1-reachTol) {
			a.toNode = ed.to
			if end.Side == 1 {
				a.toNode = ed.from
			}
			continue
		}
		if ed.from == ed.to {
			eps = math.Min(eps, ed.L/2)
		}
		eps = math.Min(eps, ed.L)
		if end.Side == 0 {
			a.x = eps
		} else {
			a.x = ed.L - eps
		}
	}
	// The small star of a position record (positions.go): split w_k/Σw,
	// the arms' decay and source rates averaged by the same weights.
	var cw float64
	for k := range co {
		p := co[k].w / wsum
		cw += p
		nd.arms[k].cw = cw
		nd.posKill += p * co[k].c / co[k].rho
		nd.posRate += p * co[k].f / co[k].rho
	}
	nd.arms[n-1].cw = math.Inf(1)
	nd.posInject = law.Inject / wsum
	nd.posPlain = law.Leak == 0 && law.Capacity == 0
	if nd.mode == modeLaw || nd.mode == modeStar {
		// Σ Move = 1 up to round-off: make the last arm catch it.
		nd.arms[n-1].cum = math.Inf(1)
	}
	return nil
}
