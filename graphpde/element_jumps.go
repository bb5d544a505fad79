package graphpde

import "math"

// Grid cells across coefficient jumps.
//
// A piecewise constant profile (a policy's network, Network.Apply) jumps at
// points that need not be grid vertices. Sampling a and b at a cell midpoint
// then moves the jump to the nearest cell face, a first-order error in the
// switch point: on a junction whose arm switches its drift from −3 to +3 at
// x = 0.1, 64 cells (faces at multiples of 1/64) moved the switch to 0.094 and
// the hub's value from 0.61185 to 0.6174. Instead each cell is split at the
// jumps inside it, and its two-point flux and vertex shares are those of the
// exact solution with a, b, f constant on each sub-piece (derived; it reduces
// to the Scharfetter–Gummel cell of element_grid.go on one piece):
//
// with w(x) = exp(∫_0^x b/a), the equation (a u')' + b u' + f = 0 is
// (w a u')' = −w f on the cell [0, h]. So J = w a u' has J(x) = J(0) − ∫_0^x w f,
// and u(h) − u(0) = J(0)·I − K_f with I = ∫ dx/(a w) and
// K_f = ∫_0^h (∫_0^x w f)/(a w) dx. Hence
//
//	a u'(0) = R (u_1 − u_0) + R K_f,                  R = 1/I,
//	a u'(h) = L (u_1 − u_0) − (W_f − R K_f)/w(h),     L = R/w(h),  W_f = ∫ w f:
//
// the left vertex owns the source R K_f of the cell and the right vertex
// (W_f − R K_f)/w(h). The decay c u is shared in the same proportions with u
// taken at the vertex (the scheme's own approximation, as for a smooth c).
// On sub-piece k (length l, β = b/a, w = e^{S_k} e^{β s}) the integrals are
// sums of E(β, l) = ∫_0^l e^{βs} ds = l/B(βl) and
// G(β, l) = ∫_0^l E(−β, s) ds = (l − E(−β, l))/β.

// fitE is E(β, l) = ∫_0^l e^{βs} ds = l/B(βl).
func fitE(beta, l float64) float64 { return l / sgB(beta*l) }

// fitG is G(β, l) = ∫_0^l E(−β, s) ds = (l − E(−β, l))/β, by its series
// l²(1/2 − P/6 + P²/24 − P³/120 + P⁴/720 − P⁵/5040), P = βl, for |P| < 0.05
// (next term below 1e−12 of the sum there; common practice, no source).
func fitG(beta, l float64) float64 {
	p := beta * l
	if math.Abs(p) < 0.05 {
		return l * l * (0.5 + p*(-1.0/6+p*(1.0/24+p*(-1.0/120+p*(1.0/720-p/5040)))))
	}
	return (l - fitE(-beta, l)) / beta
}

// jumpCell holds a cell's two-point flux coefficients (R from its left
// vertex, L from its right one) and the decay and source shares of its left
// and right vertices.
type jumpCell struct {
	r, lf    float64
	mcL, mcR float64 // ∫-shares of c: multiply u at the vertex
	mfL, mfR float64 // shares of f
}

// fitCell returns the exact cell of [x0, x0 + h] with coefficients constant
// between the jumps (sorted) that lie strictly inside it, each sub-piece's
// taken at its midpoint.
func fitCell(x0, h float64, jumps []float64, coef func(x float64) (a, b, c, f float64)) jumpCell {
	var I, S, Wc, Wf, Kc, Kf float64
	lo, hi := x0, x0+h
	k := 0
	for lo < hi {
		for k < len(jumps) && jumps[k] <= lo {
			k++
		}
		end := hi
		if k < len(jumps) && jumps[k] < hi {
			end = jumps[k]
		}
		l := end - lo
		a, b, c, f := coef(lo + l/2)
		beta := b / a
		eS, emS := math.Exp(S), math.Exp(-S)
		Em, Ep, g := fitE(-beta, l), fitE(beta, l), fitG(beta, l)
		Kc += (Wc*emS*Em + c*g) / a
		Kf += (Wf*emS*Em + f*g) / a
		I += emS * Em / a
		Wc += c * eS * Ep
		Wf += f * eS * Ep
		S += beta * l
		lo = end
	}
	R := 1 / I
	emS := math.Exp(-S)
	return jumpCell{
		r: R, lf: R * emS,
		mcL: R * Kc, mcR: (Wc - R*Kc) * emS,
		mfL: R * Kf, mfR: (Wf - R*Kf) * emS,
	}
}

// condenseJumps is condenseVar for a piecewise constant profile with jumps
// (sorted, inside (0, L)): every cell is fitted exactly across the jumps
// inside it (fitCell), then condensed by the same cancellation-free sweep.
func condenseJumps(st []float64, n int, L float64, jumps []float64, coef func(x float64) (a, b, c, f float64)) (d [2][2]float64, g [2]float64, ge gridEnds) {
	h := L / float64(n)
	cell := func(j int) jumpCell {
		x0 := float64(j) * h
		// Jumps at most one cell away decide the split; the rest are
		// skipped by fitCell's scan.
		k := 0
		for k < len(jumps) && jumps[k] <= x0 {
			k++
		}
		return fitCell(x0, h, jumps[k:], coef)
	}
	a0, _, _, _ := coef(0)
	k := cell(0)
	ge = gridEnds{n: n, r0: k.r, mf0: k.mfL, mc0: k.mcL, a0: a0}
	st = st[:3*(n-1)]
	abar, b0, bs, dl := 1.0, 1.0, 0.0, 0.0
	pi, pc, ps := 1.0, 0.0, 0.0
	for i := 1; i < n; i++ {
		prev := k
		k = cell(i)
		mc := prev.mcR + k.mcL
		mf := prev.mfR + k.mfL
		lfPrev, rr := prev.lf, k.r
		inv := 1 / (lfPrev*abar + rr + mc)
		alpha := rr * inv
		abar = (lfPrev*abar + mc) * inv
		b0 = lfPrev * b0 * inv
		bs = (mf + lfPrev*bs) * inv
		dl = (lfPrev*dl + mc) * inv
		j := 3 * (i - 1)
		st[j], st[j+1], st[j+2] = alpha, b0, bs
		pc += pi * dl
		ps += pi * bs
		pi *= alpha
	}
	aL, _, _, _ := coef(L)
	ge.lL, ge.mfL, ge.mcL, ge.aL = k.lf, k.mfR, k.mcR, aL
	d, g = gridMap(&ge, pi, ps, pc, abar, b0, bs, dl)
	return d, g, ge
}
