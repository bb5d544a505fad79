package montecarlo

import (
	"math"
	"sort"
)

// JumpNetwork is implemented by networks that can list where an edge's
// piecewise constant coefficients jump (an edge whose control switches
// inside it: graphpde's Network.Apply). On a time-stepped edge the walker
// then never freezes coefficients across a jump: steps near a jump end on
// it, and at a jump it makes a step of the two pieces' exact law in mean
// (jumps.go).
type JumpNetwork interface {
	Network
	// Jumps returns the points inside edge e, sorted, where its
	// coefficients jump; between them they are constant. Nil when none is
	// known.
	Jumps(e int) []float64
}

// jumpAt is the distance, relative to the edge length, within which a
// walker is taken to stand on a jump (round-off of a landing position such
// as a star's rim, r/s; common practice, no source).
const jumpAt = 1e-12

// trimJumps drops the jumps that lie within the reach of a frozen node star
// (edgeInfo.skip): there the star freezes the coefficients anyway, and a
// jump so close to the node would only make the walker's steps tiny.
func (m *model) trimJumps() {
	for e := range m.edges {
		ed := &m.edges[e]
		if len(ed.jumps) == 0 {
			continue
		}
		k := 0
		for _, x := range ed.jumps {
			if x > ed.skip[0] && x < ed.L-ed.skip[1] && x > 0 && x < ed.L {
				ed.jumps[k] = x
				k++
			}
		}
		ed.jumps = ed.jumps[:k]
	}
}

// piece returns the piece of edge ed that holds x: its ends lo < x < hi
// (jumps or the edge's ends), or, when x stands on a jump (within jumpAt),
// that jump's index j ≥ 0 (then lo and hi are the jump's neighbours).
func (ed *edgeInfo) piece(x float64) (lo, hi float64, j int) {
	js := ed.jumps
	i := sort.SearchFloat64s(js, x) // js[i] ≥ x
	tol := jumpAt * ed.L
	j = -1
	switch {
	case i < len(js) && js[i]-x <= tol:
		j = i
	case i > 0 && x-js[i-1] <= tol:
		j = i - 1
	}
	if j >= 0 {
		lo, hi = 0, ed.L
		if j > 0 {
			lo = js[j-1]
		}
		if j+1 < len(js) {
			hi = js[j+1]
		}
		return lo, hi, j
	}
	lo, hi = 0, ed.L
	if i > 0 {
		lo = js[i-1]
	}
	if i < len(js) {
		hi = js[i]
	}
	return lo, hi, -1
}

// jumpMean is the mean of ∫ g dt (g per unit capacity-time: the duration
// for g = ρ, the reward for g = f, the decay for g = c) until a walker that
// starts on a jump leaves (s − δ, s + δ), together with the probability
// pR of leaving on the right. On each side the coefficients (a, b, g) are
// constant; the interface carries a u' (the flux form of the policy
// network). With β = b/a and E(β, l) = ∫_0^l e^{βt} dt, the scale function
// gives pR = I_L/(I_L + I_R), I_L = E(β_L, δ)/a_L, I_R = E(−β_R, δ)/a_R, and
// the mean solves a Q” + b Q' = −g on each side, Q(s ± δ) = 0, Q and a Q'
// continuous at s:
//
//	Q(s) = pR·(g_R/a_R)·G(β_R, δ) + (1 − pR)·(g_L/a_L)·G(−β_L, δ),
//	G(β, l) = ∫_0^l E(−β, t) dt = (l − E(−β, l))/β   (derived).
type jumpSide struct{ a, b, rho, c, f float64 }

// expInt is E(β, l) = ∫_0^l e^{βt} dt, by its series below |βl| = 1e−5.
func expInt(beta, l float64) float64 {
	p := beta * l
	if math.Abs(p) < 1e-5 {
		return l * (1 + p/2 + p*p/6)
	}
	return math.Expm1(p) / beta
}

// expInt2 is G(β, l) = ∫_0^l E(−β, t) dt, by its series below |βl| = 0.05
// (next term below 1e−12 of the sum).
func expInt2(beta, l float64) float64 {
	p := beta * l
	if math.Abs(p) < 0.05 {
		return l * l * (0.5 + p*(-1.0/6+p*(1.0/24+p*(-1.0/120+p*(1.0/720-p/5040)))))
	}
	return (l - expInt(-beta, l)) / beta
}

// jumpLaw returns pR and the means of the duration, the reward and the
// decay of a step of radius δ from a jump between sides L and R.
func jumpLaw(L, R jumpSide, delta float64) (pR, T, reward, decay float64) {
	bL, bR := L.b/L.a, R.b/R.a
	iL := expInt(bL, delta) / L.a
	iR := expInt(-bR, delta) / R.a
	pR = iL / (iL + iR)
	gR := expInt2(bR, delta) / R.a
	gL := expInt2(-bL, delta) / L.a
	mean := func(l, r float64) float64 { return pR*r*gR + (1-pR)*l*gL }
	return pR, mean(L.rho, R.rho), mean(L.f, R.f), mean(L.c, R.c)
}

// jumpStep makes one step of a walker standing on jump j of edge e: the
// interval (s − δ, s + δ), δ half the shortest of hz and the two pieces'
// lengths (lo, hi: the jump's neighbours), left on either side by the
// scale function of the two pieces; duration of the mean jumpLaw gives and
// the law of the driftless step; reward and decay (or growth) at their mean
// rates over the step, which keeps the value exact in mean. It returns
// what tsStep returns, and ok = false (nothing done) when a position record
// is due before the step would end (s, as in tsStep): an Euler step then
// stands in.
func (w *walker) jumpStep(e, j int, lo, hi, t, val, wgt, s float64) (node int, x, t2, val2, wgt2 float64, done bool, how int, ok bool) {
	m, rng := w.m, w.rng
	ed := &m.edges[e]
	x = ed.jumps[j]
	delta := math.Min(ed.hz, math.Min(x-lo, hi-x)) / 2
	var sd [2]jumpSide
	for k, at := range [2]float64{x - delta/2, x + delta/2} {
		a, b, c, f, rho := m.net.EdgeCoeffs(e, at)
		sd[k] = jumpSide{a: a, b: b, rho: rho, c: c, f: f}
	}
	pR, mean, reward, decay := jumpLaw(sd[0], sd[1], delta)
	if s < posU*mean {
		return -1, x, t, val, wgt, false, 0, false
	}
	T := mean * w.tb.Draw(rng)
	rate := decay / mean // mean decay per unit time of the step
	killed := false
	if rate > 0 {
		if z := rng.ExpFloat64() / rate; z < T {
			T, killed = z, true
		}
	}
	if t+T > m.timeCap {
		return -1, x, t + T, val, wgt, true, Censored, true
	}
	t += T
	val += wgt * reward / mean * T
	if rate < 0 {
		wgt *= math.Exp(-rate * T)
	}
	w.addOcc(e, T)
	if killed {
		return -1, x, t, val, wgt, true, Killed, true
	}
	if rng.Float64() < pR {
		return -1, x + delta, t, val, wgt, false, 0, true
	}
	return -1, x - delta, t, val, wgt, false, 0, true
}
