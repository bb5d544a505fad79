package graphpde

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
)

// condensed solves A x = b for a matrix A with the pattern of a grid system
// (fvSystem, fwdSystem: balance nodes first, then each edge's interior
// vertices in order; an interior row couples only to its neighbours along
// the edge, the first and last ones also to the end nodes) by condensation
// (docs/discretisation.md): every edge's tridiagonal interior block T_e is
// factored by the Thomas algorithm, the node system
//
//	S = A_NN − Σ_e A_Ne T_e⁻¹ A_eN
//
// (one 2×2 contribution per edge) is factored by nodesys, and a solve is
// two Thomas sweeps per edge around one node solve. Memory and work are
// linear and the sweeps run over contiguous storage, which is what makes a
// time step cost a few steady solves rather than a general sparse solve.
type condensed struct {
	rs *odeRows
	nb int
	ed []condEdge
	// per interior unknown k (from nb): slots of A(k, k−1), A(k, k),
	// A(k, k+1) (−1 where the neighbour is a fixed node)
	lo, di, up []int
	cp, inv    []float64 // Thomas factors, per interior unknown
	nodeDiag   []int     // slot of A(v, v) for node unknowns
	mat        *nodesys.Matrix[float64]
	fac        *nodesys.Factor[float64]
	w, xn      []float64 // scratch: interior values, node values
	rhsN       []float64
}

type condEdge struct {
	off, m   int // first interior unknown, number of interiors
	from, to int // node unknowns at the ends (−1: fixed)
	sf, st   int // slots of A(from, first interior), A(to, last interior)
	yf, yt   [2]float64
	// T⁻¹ applied to the columns of the end nodes: values at the first and
	// last interior (yf: from-node column, yt: to-node column)
}

// newCondensed prepares the condensation for the compressed rows of rs,
// whose unknowns are laid out as described: unk maps nodes to unknowns,
// off and cells give each edge's interior.
func newCondensed(rs *odeRows, net *Network, unk, off, cells []int) *condensed {
	nb := 0
	for _, u := range unk {
		if u >= 0 {
			nb++
		}
	}
	c := &condensed{rs: rs, nb: nb, ed: make([]condEdge, len(net.Edges))}
	ni := rs.n - nb
	c.lo, c.di, c.up = make([]int, ni), make([]int, ni), make([]int, ni)
	c.cp, c.inv = make([]float64, ni), make([]float64, ni)
	c.w = make([]float64, ni)
	c.nodeDiag = make([]int, nb)
	slotOr := func(i, j int) int {
		if i < 0 || j < 0 {
			return -1
		}
		return rs.slot(i, j)
	}
	for v := 0; v < nb; v++ {
		c.nodeDiag[v] = rs.slot(v, v)
	}
	c.mat = nodesys.NewMatrix[float64](nb)
	for v := 0; v < nb; v++ {
		c.mat.Add(v, v, 0)
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		m := cells[e] - 1
		ce := condEdge{off: off[e], m: m, from: unk[ed.From], to: unk[ed.To]}
		for i := 0; i < m; i++ {
			k := off[e] + i
			left, right := k-1, k+1
			if i == 0 {
				left = ce.from
			}
			if i == m-1 {
				right = ce.to
			}
			c.lo[k-nb] = slotOr(k, left)
			c.di[k-nb] = rs.slot(k, k)
			c.up[k-nb] = slotOr(k, right)
		}
		ce.sf = slotOr(ce.from, off[e])
		ce.st = slotOr(ce.to, off[e]+m-1)
		if ce.from >= 0 && ce.to >= 0 {
			c.mat.Add(ce.from, ce.to, 0)
			c.mat.Add(ce.to, ce.from, 0)
		}
		c.ed[e] = ce
	}
	c.fac = nodesys.NewFactor[float64](nil)
	c.xn = make([]float64, nb)
	c.rhsN = make([]float64, nb)
	return c
}

// clone returns a condensation that shares c's layout and node ordering
// and has storage of its own, for another matrix of the same pattern.
func (c *condensed) clone() *condensed {
	d := *c
	ni := len(c.cp)
	d.cp, d.inv, d.w = make([]float64, ni), make([]float64, ni), make([]float64, ni)
	d.ed = append([]condEdge(nil), c.ed...)
	d.mat = nodesys.NewMatrix[float64](c.nb)
	for v := 0; v < c.nb; v++ {
		d.mat.Add(v, v, 0)
	}
	for _, ce := range c.ed {
		if ce.from >= 0 && ce.to >= 0 {
			d.mat.Add(ce.from, ce.to, 0)
			d.mat.Add(ce.to, ce.from, 0)
		}
	}
	d.fac = nodesys.NewFactor[float64](nil)
	d.xn = make([]float64, c.nb)
	d.rhsN = make([]float64, c.nb)
	return &d
}

// factor factors the matrix whose values (in the slots of the compressed
// rows) are a. It fails on a zero pivot in a Thomas sweep or in the node
// system.
func (c *condensed) factor(a []float64) error {
	nb := c.nb
	c.mat.ZeroValues()
	for v := 0; v < nb; v++ {
		c.mat.Add(v, v, a[c.nodeDiag[v]])
	}
	for e := range c.ed {
		ce := &c.ed[e]
		b := ce.off - nb
		for i := 0; i < ce.m; i++ {
			k := b + i
			den := a[c.di[k]]
			if i > 0 {
				den -= a[c.lo[k]] * c.cp[k-1]
			}
			if den == 0 || math.IsNaN(den) {
				return fmt.Errorf("graphpde: zero pivot in the interior of edge %d", e)
			}
			c.inv[k] = 1 / den
			if i < ce.m-1 {
				c.cp[k] = a[c.up[k]] * c.inv[k]
			}
		}
		// T⁻¹ of the end columns, at the first and last interior
		ce.yf, ce.yt = [2]float64{}, [2]float64{}
		if ce.from >= 0 {
			c.sweepUnit(a, ce, 0, a[c.lo[b]], &ce.yf)
		}
		if ce.to >= 0 {
			c.sweepUnit(a, ce, ce.m-1, a[c.up[b+ce.m-1]], &ce.yt)
		}
		if ce.from >= 0 {
			af := a[ce.sf]
			c.mat.Add(ce.from, ce.from, -af*ce.yf[0])
			if ce.to >= 0 {
				c.mat.Add(ce.from, ce.to, -af*ce.yt[0])
			}
		}
		if ce.to >= 0 {
			at := a[ce.st]
			c.mat.Add(ce.to, ce.to, -at*ce.yt[1])
			if ce.from >= 0 {
				c.mat.Add(ce.to, ce.from, -at*ce.yf[1])
			}
		}
	}
	if nb == 0 {
		return nil
	}
	return c.fac.Factorize(c.mat)
}

// sweepUnit solves T y = v·e_pos (pos the first or last interior) and
// stores y at the first and last interior in out.
func (c *condensed) sweepUnit(a []float64, ce *condEdge, pos int, v float64, out *[2]float64) {
	b := ce.off - c.nb
	w := c.w[b : b+ce.m]
	for i := range w {
		r := 0.0
		if i == pos {
			r = v
		}
		if i > 0 {
			r -= a[c.lo[b+i]] * w[i-1]
		}
		w[i] = r * c.inv[b+i]
	}
	for i := ce.m - 2; i >= 0; i-- {
		w[i] -= c.cp[b+i] * w[i+1]
	}
	out[0], out[1] = w[0], w[ce.m-1]
}

// sweep solves T_e w = r (r the edge's part of the right-hand side, with
// r0 added at the first and rL at the last interior) into w.
func (c *condensed) sweep(a []float64, ce *condEdge, r []float64, r0, rL float64, w []float64) {
	b := ce.off - c.nb
	m := ce.m
	for i := 0; i < m; i++ {
		x := r[i]
		if i == 0 {
			x += r0
		}
		if i == m-1 {
			x += rL
		}
		if i > 0 {
			x -= a[c.lo[b+i]] * w[i-1]
		}
		w[i] = x * c.inv[b+i]
	}
	for i := m - 2; i >= 0; i-- {
		w[i] -= c.cp[b+i] * w[i+1]
	}
}

// solve sets dst = A⁻¹ b for the factored values a. dst may not alias b.
func (c *condensed) solve(a, dst, b []float64) {
	nb := c.nb
	copy(c.rhsN, b[:nb])
	for e := range c.ed {
		ce := &c.ed[e]
		w := dst[ce.off : ce.off+ce.m]
		c.sweep(a, ce, b[ce.off:ce.off+ce.m], 0, 0, w)
		if ce.from >= 0 {
			c.rhsN[ce.from] -= a[ce.sf] * w[0]
		}
		if ce.to >= 0 {
			c.rhsN[ce.to] -= a[ce.st] * w[ce.m-1]
		}
	}
	if nb > 0 {
		c.fac.SolveTo(c.xn, c.rhsN)
		copy(dst[:nb], c.xn)
	}
	for e := range c.ed {
		ce := &c.ed[e]
		var r0, rL float64
		bb := ce.off - nb
		if ce.from >= 0 {
			r0 = -a[c.lo[bb]] * c.xn[ce.from]
		}
		if ce.to >= 0 {
			rL = -a[c.up[bb+ce.m-1]] * c.xn[ce.to]
		}
		c.sweep(a, ce, b[ce.off:ce.off+ce.m], r0, rL, dst[ce.off:ce.off+ce.m])
	}
}
