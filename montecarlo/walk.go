package montecarlo

import (
	"math"
	"math/rand/v2"
	"sync/atomic"

	"github.com/ramify-dev/ramify/montecarlo/internal/exitlaw"
	"github.com/ramify-dev/ramify/montecarlo/internal/starlaw"
)

// blockAcc holds the sums of one block of walkers.
type blockAcc struct {
	k                int
	n                int64
	valS, valQ       float64
	exited           int64
	tS, tQ           float64
	killed, censored int64
	maxW             float64 // largest growth weight
	steps            int64
	hits             []int64   // per node
	occS, occQ       []float64 // per edge
	visS, visQ       []float64 // per node
	dep              []int64   // per node end
	late             int64     // position records taken late
}

func newBlockAcc(m *model) *blockAcc {
	ne, nn := len(m.edges), len(m.nodes)
	return &blockAcc{
		hits: make([]int64, nn),
		occS: make([]float64, ne), occQ: make([]float64, ne),
		visS: make([]float64, nn), visQ: make([]float64, nn),
		dep: make([]int64, m.nDep),
	}
}

func (b *blockAcc) reset(k int) {
	hits, occS, occQ, visS, visQ, dep := b.hits, b.occS, b.occQ, b.visS, b.visQ, b.dep
	clear(hits)
	clear(occS)
	clear(occQ)
	clear(visS)
	clear(visQ)
	clear(dep)
	*b = blockAcc{k: k, hits: hits, occS: occS, occQ: occQ, visS: visS, visQ: visQ, dep: dep}
}

// aborted is the fate walk returns when the run was cancelled while the
// walker was out; its block is discarded.
const aborted = -3

// stopCheckSteps+1 is the number of steps between two looks at the stop
// flag inside one walker (an atomic load, far cheaper than a step), so that
// a walker with an astronomically long life still stops within about a
// microsecond of a cancellation.
const stopCheckSteps = 1023

// walker is one worker's state: its generator and per-walker scratch. Nothing
// in the step loop allocates.
type walker struct {
	stop     *atomic.Bool // set when the run is cancelled
	m        *model
	pcg      *rand.PCG
	rng      *rand.Rand
	tb       *exitlaw.Table
	fin      *starlaw.Table
	occ      []float64
	touchedE []int32
	vis      []float64
	touchedV []int32
	pos      []Position // the current walker's records at m.posT
	late     int64      // records taken after their time (overshoots)
	// Scratch of the jumps at leaky and sticky nodes (positions_sticky.go).
	jz, ja []complex128
	jp     []float64
}

func newWalker(m *model, stop *atomic.Bool) *walker {
	pcg := rand.NewPCG(0, 0)
	return &walker{
		stop: stop, m: m, pcg: pcg, rng: rand.New(pcg), tb: exitlaw.Default(), fin: m.fin,
		occ: make([]float64, len(m.edges)), vis: make([]float64, len(m.nodes)),
		pos: make([]Position, len(m.posT)),
	}
}

func (w *walker) addOcc(e int, t float64) {
	if w.occ[e] == 0 {
		w.touchedE = append(w.touchedE, int32(e))
	}
	w.occ[e] += t
}

func (w *walker) addVisit(v int) {
	if w.vis[v] == 0 {
		w.touchedV = append(w.touchedV, int32(v))
	}
	w.vis[v]++
}

// place is a walker position: node ≥ 0, or edge e at x.
type place struct {
	node, edge int
	x          float64
}

// walk follows one walker from p until it is absorbed, killed or passes the
// time cap, and adds its contributions to acc. It returns its lifetime and
// fate (node index, Killed or Censored).
func (w *walker) walk(p place, acc *blockAcc) (float64, int) {
	m, rng, tb := w.m, w.rng, w.tb
	tcap := m.timeCap
	node, e, x := p.node, p.edge, p.x
	var val, t float64
	wgt := 1.0 // growth weight (Settings.Growth)
	var steps int64
	fate := Censored
	// Records at m.posT: ki is the next, due at nextT; s is the time left
	// until then (+Inf when none is left: the steps are then unchanged).
	ki, nextT := 0, math.Inf(1)
	if len(m.posT) > 0 {
		nextT = m.posT[0]
	}
loop:
	for {
		steps++
		if steps&stopCheckSteps == 0 && w.stop.Load() {
			// Cancelled mid-walker: the block is discarded, so nothing
			// is added to acc.
			return t, aborted
		}
		for ki < len(m.posT) && t >= nextT*(1-posFloor) {
			if t > nextT*(1+posFloor) && t > nextT {
				w.late++
			}
			w.record(ki, node, e, x)
			ki++
			nextT = math.Inf(1)
			if ki < len(m.posT) {
				nextT = m.posT[ki]
			}
		}
		s := nextT - t
		if node >= 0 {
			nd := &m.nodes[node]
			w.addVisit(node)
			switch nd.mode {
			case modeFixed:
				val += wgt * nd.value
				fate = node
				acc.hits[node]++
				break loop
			case modeLaw:
				// Near a record time the star is shrunk to the radius
				// eps that the remaining time s covers (exact in law at
				// any radius: the same split w_k/Σw).
				dscale, reward, eps := nd.dscale, nd.reward, 0.0
				if 2*s < posU*nd.r*nd.r {
					eps = math.Sqrt(2 * s / posU)
					dscale, reward = eps*eps/2, shrunkStarReward(nd, eps)
				}
				d := dscale * tb.Draw(rng)
				u := rng.Float64()
				j := 0
				for u >= nd.arms[j].cum {
					j++
				}
				T, killed := killClock(rng, d, nd.kill)
				if t+T > tcap {
					t += T
					break loop
				}
				t += T
				val += wgt * (nd.fbar*T + reward)
				if nd.growth > 0 {
					wgt *= math.Exp(nd.growth * T)
				}
				a := &nd.arms[j]
				w.addOcc(a.edge, T)
				if killed {
					fate = Killed
					break loop
				}
				if eps > 0 {
					acc.dep[nd.depOff+j]++
					node, e = -1, a.edge
					if a.side == 0 {
						x = eps / a.ys
					} else {
						x = m.edges[e].L - eps/a.ys
					}
					continue
				}
				node, e, x = depart(nd, j, acc)
			case modeStar:
				if m.pos != nil && s < math.Inf(1) {
					// A record time is pending (positions_sticky.go).
					if o, ok := w.stickyStep(node, t, s, acc); ok {
						t = o.t
						val += wgt * o.val
						if o.done {
							fate = o.fate
							break loop
						}
						node, e, x = o.node, o.e, o.x
						continue
					}
				}
				// Fate and arm from one uniform: killed when u ≥ 1/μ,
				// and the rescaled remainder picks the arm (w_k/W).
				T := nd.dscale * nd.tab.Draw(rng)
				u := rng.Float64()
				killed := u >= nd.pMove
				if killed {
					u = (u - nd.pMove) / (1 - nd.pMove)
				} else {
					u /= nd.pMove
					T += nd.dscale * w.fin.Draw(rng)
				}
				j := 0
				for u >= nd.arms[j].cum {
					j++
				}
				if nd.kill > 0 {
					var k bool
					T, k = killClock(rng, T, nd.kill)
					killed = killed || k
				}
				if t+T > tcap {
					t += T
					break loop
				}
				t += T
				val += wgt * nd.reward
				if nd.growth > 0 {
					wgt *= math.Exp(nd.growth * T)
				}
				if nd.hold == 0 {
					// All of T is diffusive: on the arm of the draw,
					// independent of T (mean share w_k/W, exact).
					w.addOcc(nd.arms[j].edge, T)
				} else {
					for k := range nd.arms {
						w.addOcc(nd.arms[k].edge, nd.arms[k].occ)
					}
				}
				if killed {
					fate = Killed
					break loop
				}
				node, e, x = depart(nd, j, acc)
			case modeStarArms:
				if m.pos != nil && m.pos[node] != nil && s < math.Inf(1) {
					// A leaky or sticky node with a record pending
					// (positions_sticky.go).
					if o, ok := w.stickyStep(node, t, s, acc); ok {
						t = o.t
						val += wgt * o.val
						if o.done {
							fate = o.fate
							break loop
						}
						node, e, x = o.node, o.e, o.x
						continue
					}
				} else if 2*s < posU*nd.r*nd.r {
					// A record time is near: a Walsh step of a small
					// radius eps (split w_k/Σw, the arms' mean decay),
					// the limit of this node's visit as the radius
					// shrinks; its error in the split is of order eps
					// (Result.PositionApprox).
					eps := math.Sqrt(2 * s / posU)
					j := 0
					for u := rng.Float64(); u >= nd.arms[j].cw; {
						j++
					}
					T, killed := killClock(rng, eps*eps/2*tb.Draw(rng), nd.posKill)
					if t+T > tcap {
						t += T
						break loop
					}
					t += T
					val += wgt * (nd.posRate*T + eps*nd.posInject)
					if nd.growth > 0 {
						wgt *= math.Exp(nd.growth * T)
					}
					a := &nd.arms[j]
					w.addOcc(a.edge, T)
					if killed {
						fate = Killed
						break loop
					}
					acc.dep[nd.depOff+j]++
					node, e = -1, a.edge
					if a.side == 0 {
						x = eps / a.ys
					} else {
						x = m.edges[e].L - eps/a.ys
					}
					continue
				}
				// One uniform picks the fate: the leak, or per arm the
				// rim exit or a killing on it, with its final piece.
				T := nd.tab.Draw(rng)
				u := rng.Float64()
				killed := true
				j := 0
				if u >= nd.killP {
					for u >= nd.arms[j].ck {
						j++
					}
					a := &nd.arms[j]
					if u < a.cx || a.killTab == nil {
						killed = false
						T += a.exitTab.Draw(rng)
					} else {
						T += a.killTab.Draw(rng)
					}
				}
				T *= nd.dscale
				if t+T > tcap {
					t += T
					break loop
				}
				t += T
				val += wgt * nd.reward
				if nd.growth > 0 {
					wgt *= math.Exp(nd.growth * T)
				}
				for k := range nd.arms {
					w.addOcc(nd.arms[k].edge, nd.arms[k].occ)
				}
				if killed {
					fate = Killed
					break loop
				}
				node, e, x = depart(nd, j, acc)
			case modeIsolated:
				if nd.killP == 0 {
					for ; ki < len(m.posT); ki++ {
						w.record(ki, node, e, x)
					}
					t = math.Inf(1)
					break loop
				}
				T := nd.hold * rng.ExpFloat64()
				for ; ki < len(m.posT) && m.posT[ki] < t+T; ki++ {
					w.record(ki, node, e, x)
				}
				if t+T > tcap {
					t += T
					break loop
				}
				t += T
				val += wgt * nd.reward
				if nd.growth > 0 {
					wgt *= math.Exp(nd.growth * T)
				}
				fate = Killed
				break loop
			}
			continue
		}
		ed := &m.edges[e]
		if !ed.exact {
			var done bool
			var how int
			node, x, t, val, wgt, done, how = w.tsStep(e, x, t, val, wgt, s)
			if done {
				fate = how
				break loop
			}
			continue
		}
		// Walk on intervals: the largest interval centred at x.
		L := ed.L
		r, left := x, true
		if L-x < x {
			r, left = L-x, false
		}
		shrunk := false
		if ry2 := 2 * ed.tfac * r * r; 2*s < posU*ry2 {
			// A record time is near (see posU).
			if ry2 >= posJump*posJump*2*s {
				// No node within reach: the exact Gaussian increment
				// (variance 2as/ρ = s/tfac) straight to the record time.
				T, killed := killClock(rng, s, ed.kill)
				if t+T > tcap {
					t += T
					break
				}
				val += wgt * ed.rate * T
				w.addOcc(e, T)
				if killed {
					t += T
					fate = Killed
					break
				}
				t = nextT
				x += math.Sqrt(s/ed.tfac) * rng.NormFloat64()
				x = min(max(x, 0x1p-52*L), L*(1-0x1p-52))
				continue
			}
			r, shrunk = math.Sqrt(s/(posU*ed.tfac)), true
		}
		d := ed.tfac * r * r * tb.Draw(rng)
		T, killed := killClock(rng, d, ed.kill)
		if t+T > tcap {
			t += T
			break
		}
		t += T
		val += wgt * ed.rate * T
		w.addOcc(e, T)
		if killed {
			fate = Killed
			break
		}
		if shrunk {
			// The shrunk interval lies inside the edge.
			if rng.Uint64()&1 == 0 {
				x -= r
			} else {
				x += r
			}
			continue
		}
		if rng.Uint64()&1 == 0 {
			if left {
				node = ed.from
			} else {
				node = ed.to
			}
			continue
		}
		if left {
			x += r
			if x >= L {
				node = ed.to
			}
		} else {
			x -= r
			if x <= 0 {
				node = ed.from
			}
		}
	}
	if len(m.posT) > 0 {
		w.finishRecords(ki, fate)
	}
	// Per-walker sums into the block.
	acc.n++
	acc.maxW = max(acc.maxW, wgt)
	acc.steps += steps
	acc.valS += val
	acc.valQ += val * val
	switch fate {
	case Censored:
		acc.censored++
	case Killed:
		acc.killed++
	}
	if fate != Censored {
		acc.exited++
		acc.tS += t
		acc.tQ += t * t
	}
	for _, e := range w.touchedE {
		o := w.occ[e]
		acc.occS[e] += o
		acc.occQ[e] += o * o
		w.occ[e] = 0
	}
	w.touchedE = w.touchedE[:0]
	for _, v := range w.touchedV {
		o := w.vis[v]
		acc.visS[v] += o
		acc.visQ[v] += o * o
		w.vis[v] = 0
	}
	w.touchedV = w.touchedV[:0]
	return t, fate
}

// tsStep makes one step on a time-stepping edge: an Euler–Maruyama step of
// dt away from the nodes, or, within hz of a node, a step on the interval
// (x − d, x + d) reaching the node, with the coefficients frozen at x (exit
// side from the scale function, mean duration from the frozen backward
// equation, law of the duration that of the driftless step). It returns the
// new node (−1 if still on the edge), position, time, value, whether the walk
// ended, and the fate if it did.
//
// s is the time left until the next position record (+Inf for none): an
// Euler step is shortened to end there, and a near-node step that could
// last beyond it is replaced by an Euler step.
func (w *walker) tsStep(e int, x, t, val, wgt, s float64) (int, float64, float64, float64, float64, bool, int) {
	m, rng := w.m, w.rng
	ed := &m.edges[e]
	// The piece of constant coefficients around x, between lo and hi
	// (the edge's ends, or jumps: jumps.go).
	L := ed.L
	lo, hi, onJump := 0.0, L, -1
	if len(ed.jumps) > 0 {
		lo, hi, onJump = ed.piece(x)
		if onJump >= 0 {
			node, x2, t2, v2, w2, done, how, ok := w.jumpStep(e, onJump, lo, hi, t, val, wgt, s)
			if ok {
				return node, x2, t2, v2, w2, done, how
			}
			x = x2 // a record is due: an Euler step from the jump
		}
	}
	a, b, c, f, rho := m.net.EdgeCoeffs(e, x)
	if ed.aVaries && !ed.piecewise {
		b += m.aPrime(e, x)
	}
	d, left := x-lo, true
	if hi-x < d {
		d, left = hi-x, false
	}
	var T float64
	near := d < ed.hz && onJump < 0
	dt := min(ed.dt, s)
	if near {
		// Mean exit time of (a/ρ)u'' + (b/ρ)u' from the centre of
		// (−d, d): (d²ρ/2a)·tanh(μ)/μ, μ = bd/(2a).
		mu := b * d / (2 * a)
		g := 1.0
		if math.Abs(mu) > tanhSeriesBelow {
			g = math.Tanh(mu) / mu
		}
		mean := d * d * rho / (2 * a) * g
		if s < posU*mean {
			near = false
			T = dt
		} else {
			T = mean * w.tb.Draw(rng)
		}
	} else {
		T = dt
	}
	killed := false
	if c > 0 {
		if z := rng.ExpFloat64() * rho / c; z < T {
			T, killed = z, true
		}
	}
	if t+T > m.timeCap {
		return -1, x, t + T, val, wgt, true, Censored
	}
	t += T
	val += wgt * f / rho * T
	if c < 0 {
		// Settings.Growth: the weight grows at rate |c|/ρ.
		wgt *= math.Exp(-c / rho * T)
	}
	w.addOcc(e, T)
	if killed {
		return -1, x, t, val, wgt, true, Killed
	}
	if near {
		// P(exit at x + d) = 1/(1 + e^{−bd/a}) from the scale function.
		up := rng.Float64()*(1+math.Exp(-b*d/a)) < 1
		if up == left {
			// Away from the near node, to distance 2d from it.
			if left {
				return -1, x + d, t, val, wgt, false, 0
			}
			return -1, x - d, t, val, wgt, false, 0
		}
		switch {
		case left && lo > 0:
			return -1, lo, t, val, wgt, false, 0 // onto the jump
		case left:
			return ed.from, 0, t, val, wgt, false, 0
		case hi < L:
			return -1, hi, t, val, wgt, false, 0
		}
		return ed.to, 0, t, val, wgt, false, 0
	}
	v2 := 2 * a / rho * dt
	x2 := x + b/rho*dt + math.Sqrt(v2)*rng.NormFloat64()
	// A step that ends inside may still have touched an end of its piece
	// in between: given both ends of the step, the path is a Brownian
	// bridge (whatever the drift), which touches a level at distances d0
	// and d1 from its ends with probability exp(−2·d0·d1/v2), v2 the
	// step's variance (the law of a Brownian bridge's maximum, from
	// memory; checked here by the ring of docs/walkers.md §10). Without this
	// check the walker misses those visits and its law near the ends is
	// off by O(sqrt(dt)) (measured on positions at record times, which
	// take such steps close to nodes); with it, O(dt). The draw is made
	// only when the probability is above 1e-12, so steps far from the
	// ends draw nothing more.
	hitLo, hitHi := x2 <= lo, x2 >= hi
	if !hitLo && !hitHi {
		if p := math.Exp(-2 * (x - lo) * (x2 - lo) / v2); p > 1e-12 {
			hitLo = rng.Float64() < p
		}
		if p := math.Exp(-2 * (hi - x) * (hi - x2) / v2); !hitLo && p > 1e-12 {
			hitHi = rng.Float64() < p
		}
	}
	switch {
	case hitLo && lo > 0:
		return -1, lo, t, val, wgt, false, 0 // onto the jump
	case hitLo:
		return ed.from, 0, t, val, wgt, false, 0
	case hitHi && hi < L:
		return -1, hi, t, val, wgt, false, 0
	case hitHi:
		return ed.to, 0, t, val, wgt, false, 0
	}
	return -1, x2, t, val, wgt, false, 0
}

// killClock runs an exponential killing clock of the given rate against a
// step of duration d: it returns the time the step lasts and whether the
// walker died in it (the clock is independent of the path for a constant
// rate, so this is exact in law). A zero rate never kills and draws nothing.
func killClock(rng *rand.Rand, d, rate float64) (float64, bool) {
	if rate > 0 {
		if z := rng.ExpFloat64() / rate; z < d {
			return z, true
		}
	}
	return d, false
}

// depart counts a departure from the node nd along its arm j and returns
// where the walker lands: the node at the arm's far end when the star reaches
// it (then e and x are unused), else the point at x on the arm's edge.
func depart(nd *nodeInfo, j int, acc *blockAcc) (node, e int, x float64) {
	a := &nd.arms[j]
	acc.dep[nd.depOff+j]++
	if a.toNode >= 0 {
		return a.toNode, -1, 0
	}
	return -1, a.edge, a.x
}

// tanhSeriesBelow is the |μ| below which tanh(μ)/μ is taken as 1: its error
// μ²/3 is then below 4e−17, under the rounding of 1 (common practice, no
// source).
const tanhSeriesBelow = 1e-8
