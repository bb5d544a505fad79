package montecarlo

import (
	"math"
	"math/cmplx"

	"github.com/ramify-dev/ramify/internal/laplace"
	"github.com/ramify-dev/ramify/montecarlo/internal/starlaw"
	"github.com/ramify-dev/ramify/vertex"
)

// Positions at leaky and sticky nodes (docs/walkers.md §10). A node with
// a leak β or a capacity ρ_v (modeStar, or modeStarArms when its arms
// decay at different rates or decay under a capacity) has visits
// tabulated at one radius. Near a record time, with s the time left, a walker at it
//
//   - takes the full visit when that ends before the record time except
//     with probability below 5e-11 (its diffusive part (r²/2)(S + T_f) is
//     at most (r²/2)τ₁ in law, its hold θrL_v, θ = ρ_v/Σw, L_v ~ Exp(μ)
//     with μ ≥ 1; they share s: s ≥ (posU/2)r² + posHold·θr, see fits);
//   - otherwise, when the star's rim is at least posJump·sqrt(2s) away,
//     jumps straight to the record time by the exact law of the sticky,
//     leaky Walsh motion on the unbounded star (the rim is reached within
//     s with probability at most 4Φ(−posJump) ≈ 4e-9; a capacity only slows
//     the walker, a leak only removes it);
//   - otherwise takes a visit of a radius ε = r·2^{−j} of a ladder, the
//     largest that ends before the record time as above: exact in law at
//     any radius, with the tables of each level built on first use.
//
// The law of the jump (derived; the forward equation of docs/walkers.md §9
// in the coordinate y on every arm): with k_e = c_e/ρ_e the decay rate of
// arm e, z_e = sqrt(λ + k_e) and D(λ) = ρ_v λ + Σ w_e z_e + β, the
// transforms in time of the probability at the node, of the density at
// distance y on arm e and of the probability killed by then are
//
//	ρ_v/D,    w_e e^{−y z_e}/D,    (β + Σ k_e w_e/z_e)/(λD),
//
// which add up to 1/λ. The node's injection γ is collected at rate γ/ρ_v
// while held (per unit local time with ρ_v = 0), so its expected amount by
// s has the transform γ/(λD), and the expected time on arm e
// w_e/(λ z_e D). At a modeStarArms node (arms walked on intervals with
// their own decay rates, or a common rate under a capacity) the ladder's
// visits are the node's own rule at the smaller radius. The jump adds these expected rewards and occupations
// (exact in mean, the same as summing them along the path), draws the
// fate, the arm (w_e/W) and the distance by inverting the transforms on a
// fixed Talbot contour (internal/laplace, about 1e-11), and for a killed
// walker the time of death by bisection on the killed probability.

// posHold bounds the hold of a visit near a record time: e^{−posHold} is
// below 1.4e-11 (derived: L_v ~ Exp(μ), μ ≥ 1).
const posHold = 25.0

// maxLadder is the deepest ladder level, a radius r·2^{−maxLadder}.
const maxLadder = 60

// posNode is what a walker needs to stop at a record time at a leaky or
// sticky node.
type posNode struct {
	W, rhoV, beta, gamma float64
	theta                float64                     // ρ_v/W
	w, k, rate           []float64                   // per arm: weight w_e, decay rate c_e/ρ_e, source rate f_e/ρ_e
	levels               [maxLadder + 1]*ladderLevel // index 1…maxLadder
}

// ladderLevel is a visit at the radius eps = r·2^{−j}: the node's rule of
// prepareBalance (modeStar or modeStarArms) at that radius.
type ladderLevel struct {
	eps, dscale, pMove, reward float64
	hold                       bool
	occ                        []float64 // per arm: with a capacity (modeStar), always (modeStarArms)
	tab                        *lazyTable
	// modeStarArms: the leak's probability, per arm the cumulative fate
	// probabilities and the tables of the final pieces.
	killP            float64
	cx, ck           []float64
	exitTab, killTab []*lazyTable
}

// The fixed Talbot contour at t = 1 (internal/laplace): at time t its nodes
// are talbotS/t, so e^{t·s} is the constant e^{talbotS} and
// f(t) = Σ Re(talbotDE_k/t·F(talbotS_k/t)), talbotDE = D·e^{S}.
var talbotS, talbotDE [laplace.DefaultM]complex128

func init() {
	c := laplace.TalbotContour(1, laplace.DefaultM)
	for k := range c.S {
		talbotS[k] = c.S[k]
		talbotDE[k] = c.D[k] * cmplx.Exp(c.S[k])
	}
}

// preparePosStar sets up the stop at record times at node v (modeStar).
func (m *model) preparePosStar(v int) *posNode {
	nd := &m.nodes[v]
	_, law, ends, split := m.net.WalkNode(v)
	n := len(ends)
	alpha := make([]float64, n)
	for k, end := range ends {
		alpha[k] = m.edges[end.Edge].alpha[end.Side]
	}
	if split != nil {
		vertex.ApplySplit(alpha, alpha, split)
	}
	w := make([]float64, n)
	type armCo struct{ a, b, c, f, rho, s float64 }
	co := make([]armCo, n)
	plain := true
	pn := &posNode{rhoV: law.Capacity, beta: law.Leak, gamma: law.Inject, w: w, k: make([]float64, n), rate: make([]float64, n)}
	for k, end := range ends {
		a, b, c, f, rho := m.armCoeffs(end.Edge, end.Side)
		s := math.Sqrt(rho / a)
		co[k] = armCo{a, b, c, f, rho, s}
		w[k] = alpha[k] * s
		pn.W += w[k]
		pn.k[k], pn.rate[k] = c/rho, f/rho
		if b != 0 || c != 0 || f != 0 {
			plain = false
		}
	}
	pn.theta = pn.rhoV / pn.W
	buildArms := func(j int) *ladderLevel {
		// prepareBalance's modeStarArms rule at the radius eps.
		eps := math.Ldexp(nd.r, -j)
		sc := law.StarScales(w, eps)
		lv := &ladderLevel{eps: eps, dscale: eps * eps / 2, occ: make([]float64, n), cx: make([]float64, n), ck: make([]float64, n),
			exitTab: make([]*lazyTable, n), killTab: make([]*lazyTable, n)}
		p, q := make([]float64, n), make([]float64, n)
		var g []float64
		for k, ac := range co {
			p[k] = w[k] / sc.W
			q[k] = ac.c / ac.rho * eps * eps / 2
			if ac.b != 0 {
				if g == nil {
					g = make([]float64, n)
				}
				g[k] = ac.b * (eps / ac.s) / (2 * ac.a)
			}
		}
		lv.tab = m.lazyMixture(sc.Kappa, sc.Eta, p, q, g)
		pl, ex, ki := starlaw.RatesDrift(sc.Kappa, p, q, g, nil, nil)
		lv.killP = pl
		cum := pl
		arms := make([]vertex.Arm, n)
		var den float64
		for k, ac := range co {
			ek := eps / ac.s
			arms[k] = vertex.NewArm(ac.a, ac.b, ac.c, ac.f, ek)
			den += alpha[k] * (arms[k].AmB + arms[k].B)
			lv.occ[k] = alpha[k] * vertex.NewArm(ac.a, ac.b, ac.c, ac.rho, ek).F
			cum += ex[k]
			lv.cx[k] = cum
			cum += ki[k]
			lv.ck[k] = cum
			gk := 0.0
			if g != nil {
				gk = g[k]
			}
			lv.exitTab[k] = m.lazyExit(q[k] + gk*gk/2)
			if q[k] > 0 {
				lv.killTab[k] = m.lazyKill(q[k], gk)
			}
		}
		lv.ck[n-1] = math.Inf(1)
		den += law.Leak
		for k := range co {
			lv.occ[k] /= den
		}
		var visit vertex.Visit
		law.StarArms(&visit, alpha, arms)
		lv.reward = visit.Reward
		return lv
	}
	build := func(j int) *ladderLevel {
		eps := math.Ldexp(nd.r, -j)
		sc := law.StarScales(w, eps)
		lv := &ladderLevel{eps: eps, dscale: eps * eps / 2, pMove: 1 / (1 + sc.Kappa), hold: sc.Hold > 0}
		mu, eta := 1+sc.Kappa, sc.Eta
		lv.tab = m.lazyVisit(mu, eta)
		var visit vertex.Visit
		if plain {
			law.Star(&visit, w, eps)
		} else {
			arms := make([]vertex.Arm, n)
			for k, ac := range co {
				arms[k] = vertex.NewArm(ac.a, ac.b, ac.c, ac.f, eps/ac.s)
			}
			law.StarArms(&visit, alpha, arms)
		}
		lv.reward = visit.Reward
		if lv.hold {
			lv.occ = make([]float64, n)
			for k := range n {
				lv.occ[k] = eps * eps * w[k] / 2 / (pn.W + eps*law.Leak)
			}
		}
		return lv
	}
	// The levels' rules are cheap (O(arms) each); their tables are built
	// on first use.
	for j := 1; j <= maxLadder; j++ {
		if nd.mode == modeStarArms {
			pn.levels[j] = buildArms(j)
		} else {
			pn.levels[j] = build(j)
		}
	}
	return pn
}

// fits reports whether a visit of radius eps ends within s except with
// probability below 5e-11: s is shared between the diffusive part, which
// outlasts its share s_d with probability below 3e-11 when
// 2s_d/ε² ≥ posU, and the hold, which outlasts s_h with probability
// e^{−s_h/(θε)} ≤ e^{−posHold} when s_h ≥ posHold·θε; such shares exist
// when s ≥ (posU/2)ε² + posHold·θε.
func (pn *posNode) fits(eps, s float64) bool {
	return s >= posU/2*eps*eps+posHold*pn.theta*eps
}

// stepOut is where a step near a record time leaves the walker.
type stepOut struct {
	node, e int
	x, t    float64
	val     float64 // reward collected
	done    bool    // killed or censored (fate)
	fate    int
}

// stickyStep moves a walker at leaky or sticky node v (with a record due
// in s) by one step near the record time; ok is false when the node's full
// visit ends before the record time and is to be taken as usual.
func (w *walker) stickyStep(v int, t, s float64, acc *blockAcc) (o stepOut, ok bool) {
	m := w.m
	nd := &m.nodes[v]
	pn := m.pos[v]
	if pn.fits(nd.r, s) {
		return o, false
	}
	if nd.r >= posJump*math.Sqrt(2*s) {
		return w.stickyJump(v, pn, t, s), true
	}
	j := 1
	for j < maxLadder && !pn.fits(math.Ldexp(nd.r, -j), s) {
		j++
	}
	lv := pn.levels[j]
	if nd.mode == modeStarArms {
		return w.ladderArms(nd, lv, t, acc), true
	}
	rng := w.rng
	T := lv.dscale * lv.tab.Draw(rng)
	u := rng.Float64()
	killed := u >= lv.pMove
	if killed {
		u = (u - lv.pMove) / (1 - lv.pMove)
	} else {
		u /= lv.pMove
		T += lv.dscale * w.fin.Draw(rng)
	}
	a := 0
	for u >= nd.arms[a].cw {
		a++
	}
	if nd.kill > 0 {
		var k bool
		T, k = killClock(rng, T, nd.kill)
		killed = killed || k
	}
	o.node, o.e = -1, -1
	if t+T > m.timeCap {
		return stepOut{t: t + T, done: true, fate: Censored}, true
	}
	o.t, o.val = t+T, lv.reward
	if !lv.hold {
		w.addOcc(nd.arms[a].edge, T)
	} else {
		for k := range nd.arms {
			w.addOcc(nd.arms[k].edge, lv.occ[k])
		}
	}
	if killed {
		o.done, o.fate = true, Killed
		return o, true
	}
	ar := &nd.arms[a]
	acc.dep[nd.depOff+a]++
	o.e = ar.edge
	if ar.side == 0 {
		o.x = lv.eps / ar.ys
	} else {
		o.x = m.edges[ar.edge].L - lv.eps/ar.ys
	}
	return o, true
}

// ladderArms makes a visit of ladder level lv at a modeStarArms node: the
// node's own rule (walk.go) at that radius.
func (w *walker) ladderArms(nd *nodeInfo, lv *ladderLevel, t float64, acc *blockAcc) stepOut {
	m, rng := w.m, w.rng
	T := lv.tab.Draw(rng)
	u := rng.Float64()
	killed := true
	j := 0
	if u >= lv.killP {
		for u >= lv.ck[j] {
			j++
		}
		if u < lv.cx[j] || lv.killTab[j] == nil {
			killed = false
			T += lv.exitTab[j].Draw(rng)
		} else {
			T += lv.killTab[j].Draw(rng)
		}
	}
	T *= lv.dscale
	if t+T > m.timeCap {
		return stepOut{node: -1, e: -1, t: t + T, done: true, fate: Censored}
	}
	for k := range nd.arms {
		w.addOcc(nd.arms[k].edge, lv.occ[k])
	}
	o := stepOut{node: -1, e: -1, t: t + T, val: lv.reward}
	if killed {
		o.done, o.fate = true, Killed
		return o
	}
	ar := &nd.arms[j]
	acc.dep[nd.depOff+j]++
	o.e = ar.edge
	if ar.side == 0 {
		o.x = lv.eps / ar.ys
	} else {
		o.x = m.edges[ar.edge].L - lv.eps/ar.ys
	}
	return o
}

// stickyJump moves a walker at node v straight to the record time t + s
// by the exact law of the sticky, leaky motion on the unbounded star, each
// arm decaying at its own rate (drift and varying coefficients frozen out:
// Result.PositionApprox there).
func (w *walker) stickyJump(v int, pn *posNode, t, s float64) stepOut {
	m, rng := w.m, w.rng
	nd := &m.nodes[v]
	if t+s > m.timeCap {
		return stepOut{node: -1, e: -1, t: t + s, done: true, fate: Censored}
	}
	n, M := len(pn.w), len(talbotS)
	if cap(w.jz) < n*M {
		w.jz, w.ja = make([]complex128, n*M), make([]complex128, n*M)
	}
	z, a := w.jz[:n*M], w.ja[:n*M] // per arm e and contour node k: [e*M+k]
	if cap(w.jp) < 2*n {
		w.jp = make([]float64, 2*n)
	}
	pArm, occ := w.jp[:n], w.jp[n:2*n] // per arm: probability there at s, expected time there by s
	clear(w.jp[:2*n])
	var pNode, pKill, inj, val float64
	for k := range talbotS {
		lam := talbotS[k] / complex(s, 0)
		c := talbotDE[k] / complex(s, 0)
		d := complex(pn.rhoV, 0)*lam + complex(pn.beta, 0)
		for e := range n {
			ze := cmplx.Sqrt(lam + complex(pn.k[e], 0))
			z[e*M+k] = ze
			d += complex(pn.w[e], 0) * ze
		}
		cd := c / d
		pNode += real(cd) * pn.rhoV
		kill := complex(pn.beta, 0)
		for e := range n {
			ae := cd * complex(pn.w[e], 0) / z[e*M+k]
			a[e*M+k] = ae
			pArm[e] += real(ae)
			kill += complex(pn.k[e]*pn.w[e], 0) / z[e*M+k]
			occ[e] += real(ae / lam)
		}
		pKill += real(cd * kill / lam)
		inj += real(cd/lam) * pn.gamma
	}
	val += inj
	for e := range n {
		w.addOcc(nd.arms[e].edge, occ[e])
		val += pn.rate[e] * occ[e]
	}
	var pAway float64
	for _, p := range pArm {
		pAway += p
	}
	u := rng.Float64() * (pNode + pAway + pKill) // the sum is 1 to about 1e-11
	switch {
	case u < pKill:
		return stepOut{node: -1, e: -1, t: t + pn.deathTime(u, s), val: val, done: true, fate: Killed}
	case u < pKill+pNode:
		return stepOut{node: v, e: -1, t: t + s, val: val}
	}
	target := u - pKill - pNode
	e := 0
	for e < n-1 && target >= pArm[e] {
		target -= pArm[e]
		e++
	}
	target = min(target, pArm[e])
	ae, ze := a[e*M:(e+1)*M], z[e*M:(e+1)*M]
	// Distance on arm e: G(y) = Σ Re(a_k(1 − e^{−z_k y})) = target,
	// G' = Σ Re(a_k z_k e^{−z_k y}); Newton's method safeguarded by bisection.
	lo, hi := 0.0, nd.r
	y := math.Min(math.Sqrt(s), 0.5*hi)
	for range 100 {
		var g, dg float64
		for k := range ae {
			ex := cmplx.Exp(-ze[k] * complex(y, 0))
			g += real(ae[k] * (1 - ex))
			dg += real(ae[k] * ze[k] * ex)
		}
		if g < target {
			lo = y
		} else {
			hi = y
		}
		next := y - (g-target)/dg
		if !(next > lo && next < hi) || dg <= 0 {
			next = 0.5 * (lo + hi)
		}
		done := math.Abs(next-y) <= 1e-13*(y+math.Sqrt(s)) || hi-lo <= 1e-13*(y+math.Sqrt(s))
		y = next
		if done {
			break
		}
	}
	arm := &nd.arms[e]
	L := m.edges[arm.edge].L
	x := y / arm.ys
	if arm.side == 1 {
		x = L - x
	}
	x = min(max(x, 0x1p-52*L), L*(1-0x1p-52))
	return stepOut{node: -1, e: arm.edge, x: x, t: t + s, val: val}
}

// killedBy returns the probability that a walker at the node is killed
// within time tau > 0.
func (pn *posNode) killedBy(tau float64) float64 {
	var p float64
	for k := range talbotS {
		lam := talbotS[k] / complex(tau, 0)
		c := talbotDE[k] / complex(tau, 0)
		d := complex(pn.rhoV, 0)*lam + complex(pn.beta, 0)
		kill := complex(pn.beta, 0)
		for e := range pn.w {
			ze := cmplx.Sqrt(lam + complex(pn.k[e], 0))
			d += complex(pn.w[e], 0) * ze
			kill += complex(pn.k[e]*pn.w[e], 0) / ze
		}
		p += real(c * kill / (lam * d))
	}
	return p
}

// deathTime returns the time of death of a walker killed within s whose
// killed probability by then is target: bisection on killedBy to a
// relative 1e-12 of s.
func (pn *posNode) deathTime(target, s float64) float64 {
	lo, hi := 0.0, s
	for hi-lo > 1e-12*s {
		mid := 0.5 * (lo + hi)
		if pn.killedBy(mid) < target {
			lo = mid
		} else {
			hi = mid
		}
	}
	return 0.5 * (lo + hi)
}
