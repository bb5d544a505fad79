package graphpde

import (
	"math"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// dynSystem is the node matrix K(λ) of the exact elements on the non-fixed
// nodes alone (no inner points), for values of λ below fastZ on every edge
// (see fastLimit), where no edge is near one of its clamped eigenvalues and
// no edge needs splitting. It is assembled through the slots of a
// nodePattern (no search per entry) and factored with the default
// minimum-degree ordering, which on a tree is the forest kernel of nodesys:
// a count costs one pass over the edges for their entries and a few linear
// passes for the factor.
//
// It also keeps the entries of M(λ) = −K'(λ): per unit weight the
// derivatives of the exact element's entries, which form the Gram matrix
// ∫ρ φ_i φ_j of the element's shape functions at λ (positive definite on
// the unknowns), the leak's −ρ_v on the diagonal. The linearised pencil
// K(σ) − μ M(σ) is what the shift-invert Lanczos of spectrum_fast.go
// works on.
type dynSystem struct {
	net *Network
	pat *nodePattern
	mat *nodesys.Matrix[float64]
	fac *nodesys.Factor[float64]
	n   int
	w   []float64 // edge → weight α (the same at both unknown ends)
	// Per edge, copied out of the Edge structs for one linear pass: a, c,
	// ρ, L, the unknowns at the ends (−1 fixed) and whether it is a loop.
	ea, ec, er, el []float64
	r0, r1         []int
	loop           []bool
	// Per edge the weighted entries of the last assembly: diagonal kd
	// (both ends; a loop's whole contribution), off-diagonal ko; and those
	// of M: md, mo.
	kd, ko, md, mo []float64
	// and those of K″(λ)
	k2d, k2o []float64
	// Per unknown: leak − λ·capacity, and the capacity.
	nk, nm []float64
	lam    float64
	facts  int
	e, x   []float64
}

// fastZ is the largest kL (k² = (λρ − c)/a) of any edge in the fast
// window: entries of K(λ) stay within about 10 times their size at λ = c/ρ,
// and no edge is anywhere near its first clamped eigenvalue (kL = π), where
// the count splits edges (|sin kL| < 0.1).
const fastZ = 0.9 * math.Pi

// fastLimit returns the upper end of the fast window: the least λ at which
// an edge reaches kL = fastZ (+Inf when none does: no capacity on any
// edge).
func fastLimit(net *Network) float64 {
	lim := math.Inf(1)
	for e := range net.Edges {
		ed := &net.Edges[e]
		if ed.Rho > 0 {
			lim = math.Min(lim, (ed.C+ed.A*(fastZ/ed.Length)*(fastZ/ed.Length))/ed.Rho)
		}
	}
	return lim
}

func newDyn(net *Network) *dynSystem {
	unk, nodes := numberNodes(net)
	ends := make([][2]int, len(net.Edges))
	ne := len(net.Edges)
	d := &dynSystem{net: net, n: len(nodes), w: make([]float64, ne),
		kd: make([]float64, ne), ko: make([]float64, ne), md: make([]float64, ne), mo: make([]float64, ne),
		k2d: make([]float64, ne), k2o: make([]float64, ne)}
	d.ea, d.ec, d.er, d.el = make([]float64, ne), make([]float64, ne), make([]float64, ne), make([]float64, ne)
	d.r0, d.r1, d.loop = make([]int, ne), make([]int, ne), make([]bool, ne)
	for e := range net.Edges {
		ed := &net.Edges[e]
		ends[e] = [2]int{ed.From, ed.To}
		d.w[e] = ed.EndWeight(0)
		if unk[ed.From] < 0 {
			d.w[e] = ed.EndWeight(1) // (the weight at a fixed end does not enter)
		}
		d.ea[e], d.ec[e], d.er[e], d.el[e] = ed.A, ed.C, ed.Rho, ed.Length
		d.r0[e], d.r1[e], d.loop[e] = unk[ed.From], unk[ed.To], ed.From == ed.To
	}
	d.pat = newNodePattern(unk, nodes, ends)
	d.mat = nodesys.NewMatrixPattern[float64](d.n, d.pat.rowPtr, d.pat.col)
	sym := true
	d.fac = nodesys.NewFactor[float64](&nodesys.Settings{Symmetric: &sym, PivotTol: 0x1p-60})
	d.nk, d.nm = make([]float64, d.n), make([]float64, d.n)
	d.e, d.x = make([]float64, d.n), make([]float64, d.n)
	for i := range d.e {
		d.e[i] = 1 + 0.5*math.Sin(1.7*float64(i)+0.3)
	}
	return d
}

// assemble sets the matrix values to K(λ) and the element arrays to K(λ)'s
// and M(λ)'s entries. Cost O(nodes + edges).
func (d *dynSystem) assemble(lam float64) {
	net := d.net
	p := d.pat
	val := d.mat.Values()
	clear(val)
	d.lam = lam
	for i, v := range p.nodes {
		l := net.Nodes[v].Law
		d.nk[i] = l.Leak - lam*l.Capacity
		d.nm[i] = l.Capacity
		val[p.dslot[i]] = d.nk[i]
	}
	for e, w := range d.w {
		r0, r1 := d.r0[e], d.r1[e]
		if r0 < 0 && r1 < 0 {
			continue
		}
		diag, off, dm, om, d2, o2 := edgeDynCoef(d.ea[e], d.ec[e], d.er[e], d.el[e], lam)
		if d.loop[e] {
			k := 2 * w * loopDyn(&net.Edges[e], lam)
			d.kd[e], d.ko[e] = k, 0
			d.md[e], d.mo[e] = -2*w*(dm+om), 0
			d.k2d[e], d.k2o[e] = 2*w*(d2+o2), 0
			val[p.dslot[r0]] += k
			continue
		}
		d.kd[e], d.ko[e] = w*diag, w*off
		d.md[e], d.mo[e] = -w*dm, -w*om
		d.k2d[e], d.k2o[e] = w*d2, w*o2
		if r0 >= 0 {
			val[p.dslot[r0]] += w * diag
			if r1 >= 0 {
				sl := p.eslot[e]
				val[sl[0]] += w * off
				val[sl[1]] += w * off
			}
		}
		if r1 >= 0 {
			val[p.dslot[r1]] += w * diag
		}
	}
}

// countAt assembles and factors K(λ): N(λ) is its number of negative
// pivots (no edge has a clamped eigenvalue below λ in the fast window),
// g(λ) = 1/(eᵀK(λ)⁻¹e) as for the other counters.
func (d *dynSystem) countAt(lam float64) (int, float64, error) {
	d.assemble(lam)
	d.facts++
	return inertiaSecant(d.fac, d.mat, d.e, d.x, "node")
}

func (d *dynSystem) factorizations() int { return d.facts }

// mulM sets y = M(λ)x = −K'(λ)x for the λ of the last assembly.
func (d *dynSystem) mulM(y, x []float64) { d.mul(y, x, d.nm, d.md, d.mo) }

// quadK2 returns xᵀK″(λ)x for the λ of the last assembly (the node
// terms are linear in λ). Cost O(edges).
func (d *dynSystem) quadK2(x []float64) float64 {
	s := 0.0
	for e, r0 := range d.r0 {
		r1 := d.r1[e]
		switch {
		case d.loop[e]:
			if r0 >= 0 {
				s += d.k2d[e] * x[r0] * x[r0]
			}
		case r0 >= 0 && r1 >= 0:
			s += d.k2d[e]*(x[r0]*x[r0]+x[r1]*x[r1]) + 2*d.k2o[e]*x[r0]*x[r1]
		case r0 >= 0:
			s += d.k2d[e] * x[r0] * x[r0]
		case r1 >= 0:
			s += d.k2d[e] * x[r1] * x[r1]
		}
	}
	return s
}

func (d *dynSystem) mul(y, x, node, diag, off []float64) {
	for i := range y {
		y[i] = node[i] * x[i]
	}
	for e, r0 := range d.r0 {
		r1 := d.r1[e]
		switch {
		case d.loop[e]:
			if r0 >= 0 {
				y[r0] += diag[e] * x[r0]
			}
		case r0 >= 0 && r1 >= 0:
			y[r0] += diag[e]*x[r0] + off[e]*x[r1]
			y[r1] += diag[e]*x[r1] + off[e]*x[r0]
		case r0 >= 0:
			y[r0] += diag[e] * x[r0]
		case r1 >= 0:
			y[r1] += diag[e] * x[r1]
		}
	}
}

// edgeDynCoef returns the entries of edgeDyn and their first and second
// derivatives in λ, for an edge with coefficients a, c, ρ and length L,
// with one evaluation of the trigonometric or exponential functions (the
// values as edgeDyn forms them). With w = qL² = (λρ − c)L²/a the entries
// are F(w)/L and −G(w)/L, F(w) = z cot z and G(w) = z/sin z for z = √w
// (z coth z and z/sinh z for w < 0), so d diag/dλ = (ρL/a)F'(w) and
// d off/dλ = −(ρL/a)G'(w), with F'(w) = (cot z − z/sin²z)/(2z) and
// G'(w) = (1/sin z − z cos z/sin²z)/(2z) (derived; the Taylor series of
// z cot z and z/sin z, Abramowitz and Stegun, Handbook of Mathematical
// Functions, 4.3.70 and 4.3.68, for |w| < 0.01; the test's edgeDynDeriv
// is the separate reference). Further, 2wF' = F − w − F² and
// 2wG' = G(1 − F) (derived from d(z cot z)/dz = cot z − z/sin²z and
// d(z/sin z)/dz = (1 − z cot z)/sin z), so
//
//	F″ = −(1 + F' + 2FF')/(2w),   G″ = −(G'(1 + F) + GF')/(2w),
//
// and d²diag/dλ² = (ρ²L³/a²)F″, d²off/dλ² = −(ρ²L³/a²)G″; near w = 0
// the differentiated Taylor series.
func edgeDynCoef(a, c, rho, L, lam float64) (diag, off, dDiag, dOff, d2Diag, d2Off float64) {
	q := (lam*rho - c) / a
	w := q * L * L
	var fp, gp, fpp, gpp float64
	small := math.Abs(w) < 0.01
	if small {
		fp = -1.0/3 - w*(2.0/45+w*(6.0/945+w*4.0/4725))
		gp = 1.0/6 + w*(7.0/180+w*(31.0/5040+w*127.0/151200))
		fpp = -2.0/45 - w*(12.0/945+w*12.0/4725)
		gpp = 7.0/180 + w*(62.0/5040+w*381.0/151200)
	}
	switch {
	case q > 0:
		z := math.Sqrt(q) * L
		if z < 1e-4 {
			z2 := z * z
			diag = 1 - z2/3
			off = -(1 + z2/6)
		} else {
			s, co := math.Sincos(z)
			diag = z * co / s
			off = -z / s
			if !small {
				fp = (co/s - z/(s*s)) / (2 * z)
				gp = (1/s - z*co/(s*s)) / (2 * z)
			}
		}
	case q < 0:
		z := math.Sqrt(-q) * L
		if z < 1e-4 {
			z2 := z * z
			diag = 1 + z2/3
			off = -(1 - z2/6)
		} else {
			ez := math.Exp(-z)
			e2 := ez * ez
			den := 1 - e2
			if z < 0.5 {
				den = -math.Expm1(-2 * z) // (1 − e^{−2z} would cancel)
			}
			diag = z * (1 + e2) / den
			off = -2 * z * ez / den
			if !small {
				coth := (1 + e2) / den
				fp = -(coth - 4*z*e2/(den*den)) / (2 * z)
				gp = -(2*ez/den - 2*z*ez*(1+e2)/(den*den)) / (2 * z)
			}
		}
	default:
		diag, off = 1, -1
	}
	if !small {
		F, G := diag, -off // z cot z and z/sin z (before the division by L)
		fpp = -(1 + fp + 2*F*fp) / (2 * w)
		gpp = -(gp*(1+F) + G*fp) / (2 * w)
	}
	s1 := rho * L / a
	s2 := s1 * s1 * L
	return diag / L, off / L, s1 * fp, -s1 * gp, s2 * fpp, -s2 * gpp
}
