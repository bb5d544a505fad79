package graphpde

import "math"

// Grid element.
//
// An edge of length L gets n cells of width h = L/n with vertices
// x_i = i·h; x_0 and x_n are the end nodes, x_1 … x_{n−1} the interior
// unknowns. With the local integrating factor w = exp(∫ b/a) the edge equation
// a u'' + b u' − c u + f = 0 (a, b frozen on a cell) is (w a u')' + w(f − c u) = 0,
// and the two-point flux of w a u' through cell j, divided by w at either
// vertex, is the Scharfetter–Gummel (exponentially fitted) flux
//
//	from x_j:      R_j (u_{j+1} − u_j),  R_j = (a_j/h) B(−P_j)
//	from x_{j+1}:  L_j (u_{j+1} − u_j),  L_j = (a_j/h) B(P_j)
//
// with a_j = a and P_j = b h/a at the cell midpoint and B(P) = P/(e^P − 1) > 0.
// The balance of vertex i is
//
//	R_i (u_{i+1} − u_i) − L_{i−1}(u_i − u_{i−1}) + m_i (f_i − c_i u_i) = 0,
//	m_i = (h/2)(ω(−P_{i−1}) + ω(P_i)),   ω(P) = 2(B(−P) − 1)/P,
//
// where (h/2)ω(P_j) is the share of cell j owned by its left vertex and
// (h/2)ω(−P_j) the share owned by its right one (ω(P) + ω(−P) = 2, ω = 1 at
// P = 0). This is an M-matrix at every cell Péclet number P, exact for
// constant a, b, f with c = 0 (boundary layers included), and second order for
// smooth coefficients. The nodes own the end half cells, whose storage and
// sources enter the node balance through the reconstructed end derivatives
//
//	a(0) u'(0) = R_0 (u_1 − U0) + m_0 (f_0 − c_0 U0),         m_0 = (h/2) ω(P_0),
//	a(L) u'(L) = L_{n−1}(UL − u_{n−1}) − m_n (f_n − c_n UL),   m_n = (h/2) ω(−P_{n−1}).
//
// Condensation: one forward Thomas sweep computes, for each interior vertex,
// (α_i, β⁰_i, βˢ_i) with
//
//	u_i = α_i u_{i+1} + β⁰_i U0 + βˢ_i,
//
// which at i = n−1 gives u_{n−1} in terms of U0, UL, and accumulates along the
// way u_1 = Π α · UL + Σ_j (Π_{i<j} α_i)(β⁰_j U0 + βˢ_j) (the second sweep,
// fused into the first). Together with the end derivatives this is the same
// affine 2×2 end map as the exact element. After the node solve, back
// substitution recovers the interior into a flat array of one value per
// interior unknown. An edge with varying coefficients keeps its triples in
// storage of its own (24 bytes per interior unknown); an edge with constant
// ones keeps only inv_i = α_i/r (8 bytes, in the place of its values), from
// which recovery rebuilds α_i and β⁰_i U0 + βˢ_i once U0 is known.

// gridEnds holds what the node balance and the flux reconstruction need of a
// grid edge: its cells, its place in the flat storage, and the end half-cell
// terms a(0)u'(0) = r0 (u_1 − U0) + mf0 − mc0 U0 and
// a(L)u'(L) = lL (UL − u_{n−1}) − mfL + mcL UL.
type gridEnds struct {
	n   int // cells
	off int // index of u_1 in the flat interior values (n−1 values)

	r0, mf0, mc0, a0 float64
	lL, mfL, mcL, aL float64

	// rs are the row sums of the end map, u'(0) and u'(L) for U0 = UL = 1
	// and f = 0, formed without cancellation (see gridMap).
	rs [2]float64
}

// sgB is the Bernoulli function B(P) = P/(e^P − 1), B(0) = 1; it is positive,
// 0 for P ≳ 745 and P for P ≲ −37.
func sgB(p float64) float64 {
	if p == 0 {
		return 1
	}
	return p / math.Expm1(p)
}

// sgOmega is ω(P) = 2(B(−P) − 1)/P, the share of a cell's length (in units of
// half the cell) owned by its left vertex; ω(0) = 1, 0 < ω < 2. A series is
// used for |P| < 0.05 to avoid cancellation.
func sgOmega(p float64) float64 {
	if math.Abs(p) < 0.05 {
		p2 := p * p
		return 1 + p/6 - p*p2/360 + p*p2*p2/15120
	}
	return 2 * (sgB(-p) - 1) / p
}

// vertexShare returns the exponentially fitted share m_i of grid vertex
// i = 0…n in cells of width h: half of each adjacent cell weighted by
// sgOmega of that cell's Péclet number (pPrev for cell i−1, p for cell i).
func vertexShare(i, n int, h, pPrev, p float64) float64 {
	m := 0.0
	if i > 0 {
		m += 0.5 * h * sgOmega(-pPrev)
	}
	if i < n {
		m += 0.5 * h * sgOmega(p)
	}
	return m
}

// constCell holds the cell coefficients of a grid edge whose a, b, c, f are
// constant: R, L of every cell, the diagonal and source of every interior
// vertex, and the end terms.
type constCell struct {
	r, lf, diag, mf float64
	hc              float64 // h·c, the decay part of diag = lf + r + hc
	ends            gridEnds
}

// sweepCoef is what recovery needs of a constant grid edge's cells.
type sweepCoef struct{ r, lf, mf float64 }

func (k *constCell) sweep() sweepCoef { return sweepCoef{k.r, k.lf, k.mf} }

func newConstCell(n int, L, a, b, c, f float64) constCell {
	h := L / float64(n)
	p := b * h / a
	r := a / h * sgB(-p)
	lf := a / h * sgB(p)
	m0 := 0.5 * h * sgOmega(p)
	mL := 0.5 * h * sgOmega(-p)
	return constCell{r: r, lf: lf, diag: lf + r + h*c, hc: h * c, mf: h * f,
		ends: gridEnds{n: n,
			r0: r, mf0: m0 * f, mc0: m0 * c, a0: a,
			lL: lf, mfL: mL * f, mcL: mL * c, aL: a}}
}

// condenseConst condenses a grid edge whose coefficients a, b, c (shift
// included) and f are constant (k from newConstCell) and returns the end map
// for u'. Of the forward sweep
//
//	inv_i = 1/(lf·ᾱ_{i−1} + r + hc),  α_i = r·inv_i,  ᾱ_i = 1 − α_i = (lf·ᾱ_{i−1} + hc)·inv_i,
//	β⁰_i = lf·β⁰_{i−1}·inv_i,  βˢ_i = (mf + lf·βˢ_{i−1})·inv_i,
//	δ_i = 1 − α_i − β⁰_i = (lf·δ_{i−1} + hc)·inv_i,
//
// (ᾱ_0 = 1, δ_0 = 0) every quantity is a sum of non-negative terms: the
// pivot diag − lf·α_{i−1} of the plain sweep is formed as lf·ᾱ_{i−1} + r + hc
// without the cancellation that costs about log₁₀(i) digits at vertex i (half
// the digits at 10⁸ cells) and, with a strong drift, all of them (the
// Grassmann–Taksar–Heyman idea for M-matrices; W. K. Grassmann, M. I. Taksar
// and D. P. Heyman, Regenerative analysis and steady state distributions for
// Markov chains, Oper. Res. 33 (1985) 1107–1116, from memory).
//
// it keeps only inv_i, in st[i−1] (n−1 values): recoverConst rebuilds α and
// the combination β⁰·U0 + βˢ from it once U0 is known, so that the storage
// is 8 bytes per interior unknown, later overwritten by the interior value.
// Cost O(n), no allocation.
func condenseConst(st []float64, k *constCell) (d [2][2]float64, g [2]float64) {
	n := k.ends.n
	r, lf, hc, mf := k.r, k.lf, k.hc, k.mf
	st = st[:n-1]
	abar, b0, bs, dl := 1.0, 1.0, 0.0, 0.0
	pi, pc, ps := 1.0, 0.0, 0.0
	for i := range st {
		inv := 1 / (lf*abar + r + hc)
		abar = (lf*abar + hc) * inv
		b0 = lf * b0 * inv
		bs = (mf + lf*bs) * inv
		dl = (lf*dl + hc) * inv
		st[i] = inv
		pc += pi * dl
		ps += pi * bs
		pi *= r * inv
	}
	return gridMap(&k.ends, pi, ps, pc, abar, b0, bs, dl)
}

// condenseConstPair is condenseConst for two edges with the same number of
// cells at once (sa, sb their storage, ka, kb their coefficients). The two
// sweeps are independent chains, so interleaving them hides the latency of
// the division that bounds a single sweep. Results equal two condenseConst
// calls bit for bit.
func condenseConstPair(sa, sb []float64, ka, kb *constCell) (da, db [2][2]float64, ga, gb [2]float64) {
	n := ka.ends.n
	sa = sa[:n-1]
	sb = sb[:n-1]
	ra, lfa, hca, mfa := ka.r, ka.lf, ka.hc, ka.mf
	rb, lfb, hcb, mfb := kb.r, kb.lf, kb.hc, kb.mf
	aba, b0a, bsa, dla, pia, pca, psa := 1.0, 1.0, 0.0, 0.0, 1.0, 0.0, 0.0
	abb, b0b, bsb, dlb, pib, pcb, psb := 1.0, 1.0, 0.0, 0.0, 1.0, 0.0, 0.0
	for i := range sa {
		inva := 1 / (lfa*aba + ra + hca)
		invb := 1 / (lfb*abb + rb + hcb)
		aba = (lfa*aba + hca) * inva
		abb = (lfb*abb + hcb) * invb
		b0a = lfa * b0a * inva
		b0b = lfb * b0b * invb
		bsa = (mfa + lfa*bsa) * inva
		bsb = (mfb + lfb*bsb) * invb
		dla = (lfa*dla + hca) * inva
		dlb = (lfb*dlb + hcb) * invb
		sa[i] = inva
		sb[i] = invb
		pca += pia * dla
		pcb += pib * dlb
		psa += pia * bsa
		psb += pib * bsb
		pia *= ra * inva
		pib *= rb * invb
	}
	da, ga = gridMap(&ka.ends, pia, psa, pca, aba, b0a, bsa, dla)
	db, gb = gridMap(&kb.ends, pib, psb, pcb, abb, b0b, bsb, dlb)
	return da, db, ga, gb
}

// recoverConst recovers the interior values u_1 … u_{n−1} of a constant grid
// edge from its end values, writing them over the inv_i that condenseConst
// left in u (n−1 values): a forward pass
//
//	γ_0 = U0,  γ_i = (mf + lf·γ_{i−1})·inv_i   (= β⁰_i·U0 + βˢ_i)
//
// into scr (n−1 values of scratch), then back substitution
// u_i = r·inv_i·u_{i+1} + γ_i from u_n = UL. It reports whether all values
// are finite. Cost O(n), no allocation.
func recoverConst(u, scr []float64, k sweepCoef, U0, UL float64) bool {
	r, lf, mf := k.r, k.lf, k.mf
	scr = scr[:len(u)]
	gam := U0
	for i, inv := range u {
		gam = (mf + lf*gam) * inv
		scr[i] = gam
	}
	x, z := UL, 0.0
	for i := len(u) - 1; i >= 0; i-- {
		x = r*u[i]*x + scr[i]
		u[i] = x
		z += x * 0 // becomes NaN at the first NaN or ±Inf
	}
	return z == 0
}

// recoverConstPair is recoverConst for two edges with the same number of
// cells at once (interleaved like condenseConstPair); sa, sb are their values
// and scr 2(n−1) values of scratch. It reports whether all values of each
// edge are finite.
func recoverConstPair(sa, sb, scr []float64, ka, kb sweepCoef, U0a, ULa, U0b, ULb float64) (oka, okb bool) {
	m := len(sa)
	sb = sb[:m]
	ga, gb := scr[:m], scr[m:2*m]
	ra, lfa, mfa := ka.r, ka.lf, ka.mf
	rb, lfb, mfb := kb.r, kb.lf, kb.mf
	gama, gamb := U0a, U0b
	for i := range sa {
		gama = (mfa + lfa*gama) * sa[i]
		gamb = (mfb + lfb*gamb) * sb[i]
		ga[i] = gama
		gb[i] = gamb
	}
	xa, xb, za, zb := ULa, ULb, 0.0, 0.0
	for i := m - 1; i >= 0; i-- {
		xa = ra*sa[i]*xa + ga[i]
		xb = rb*sb[i]*xb + gb[i]
		sa[i] = xa
		sb[i] = xb
		za += xa * 0
		zb += xb * 0
	}
	return za == 0, zb == 0
}

// gridMap turns the sweep results into the end map for u' and its row sums
// (into ge.rs): u_1 = p0·U0 + pn·UL + ps with 1 − p0 = pn + pc (pc the value
// u_1 of the problem with source c and zero ends: u_1 − 1 for U0 = UL = 1 and
// f = 0 is −pc), and u_{n−1} = (1 − ab)·UL + b0·U0 + bs with
// 1 − (1 − ab) − b0 = dl. Every entry is then a sum of terms of one sign: no
// 1 − p0 or p0 + pn − 1 is ever formed, so the coupling between the ends
// keeps its relative accuracy when it is e^{−Pe} small and the row sums are
// exactly 0 without decay (a self-loop contributes no round-off to its node).
func gridMap(ge *gridEnds, pn, ps, pc, ab, b0, bs, dl float64) (d [2][2]float64, g [2]float64) {
	d[0][0] = (-ge.r0*(pn+pc) - ge.mc0) / ge.a0
	d[0][1] = ge.r0 * pn / ge.a0
	g[0] = (ge.r0*ps + ge.mf0) / ge.a0
	d[1][0] = -ge.lL * b0 / ge.aL
	d[1][1] = (ge.lL*ab + ge.mcL) / ge.aL
	g[1] = (-ge.lL*bs - ge.mfL) / ge.aL
	ge.rs = [2]float64{(-ge.r0*pc - ge.mc0) / ge.a0, (ge.lL*dl + ge.mcL) / ge.aL}
	return d, g
}

// condenseVar condenses a grid edge with coefficients varying along it:
// coef(x) returns a, b, c (shift included) and f at x. Coefficients are
// sampled at vertices (c, f) and cell midpoints (a, b). Cost O(n) calls of
// coef, no allocation.
func condenseVar(st []float64, n int, L float64, coef func(x float64) (a, b, c, f float64)) (d [2][2]float64, g [2]float64, ge gridEnds) {
	h := L / float64(n)
	mh := 0.5 * h
	face := func(j int) (r, lf, p float64) {
		a, b, _, _ := coef((float64(j) + 0.5) * h)
		p = b * h / a
		return a / h * sgB(-p), a / h * sgB(p), p
	}
	a0, _, c0, f0 := coef(0)
	r, lf, p := face(0)
	m0 := mh * sgOmega(p)
	ge = gridEnds{n: n, r0: r, mf0: m0 * f0, mc0: m0 * c0, a0: a0}
	st = st[:3*(n-1)]
	abar, b0, bs, dl := 1.0, 1.0, 0.0, 0.0
	pi, pc, ps := 1.0, 0.0, 0.0
	for i := 1; i < n; i++ {
		// vertex i: left face i−1 (lf, p), right face i. The sweep is
		// condenseConst's, in the same cancellation-free form.
		lfPrev, wl := lf, sgOmega(-p)
		var rr float64
		rr, lf, p = face(i)
		_, _, ci, fi := coef(float64(i) * h)
		m := mh * (wl + sgOmega(p))
		mc := m * ci
		inv := 1 / (lfPrev*abar + rr + mc)
		alpha := rr * inv
		abar = (lfPrev*abar + mc) * inv
		b0 = lfPrev * b0 * inv
		bs = (m*fi + lfPrev*bs) * inv
		dl = (lfPrev*dl + mc) * inv
		j := 3 * (i - 1)
		st[j], st[j+1], st[j+2] = alpha, b0, bs
		pc += pi * dl
		ps += pi * bs
		pi *= alpha
	}
	aL, _, cL, fL := coef(L)
	mL := mh * sgOmega(-p)
	ge.lL, ge.mfL, ge.mcL, ge.aL = lf, mL*fL, mL*cL, aL
	d, g = gridMap(&ge, pi, ps, pc, abar, b0, bs, dl)
	return d, g, ge
}

// recoverGrid recovers the interior values u_1 … u_{n−1} (into u, n−1
// values) of a grid edge with varying coefficients from the end values and
// the triples of its sweep in st (3(n−1) values) by back substitution. It
// reports whether all values are finite. Cost O(n).
func recoverGrid(u, st []float64, U0, UL float64) bool {
	x := UL
	z := 0.0
	st = st[:3*len(u)]
	for i := len(u) - 1; i >= 0; i-- {
		j := 3 * i
		x = st[j]*x + st[j+1]*U0 + st[j+2]
		u[i] = x
		z += x * 0 // becomes NaN at the first NaN or ±Inf
	}
	return z == 0
}

// endDerivs reconstructs u'(0) and u'(L) of a grid edge from its end values
// and its recovered interior (u_1 = first, u_{n−1} = last; both are the end
// values when n = 1).
func (ge *gridEnds) endDerivs(U0, UL, first, last float64) (d0, dL float64) {
	d0 = (ge.r0*(first-U0) + ge.mf0 - ge.mc0*U0) / ge.a0
	dL = (ge.lL*(UL-last) - ge.mfL + ge.mcL*UL) / ge.aL
	return d0, dL
}
