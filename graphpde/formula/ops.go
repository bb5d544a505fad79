package formula

import (
	"math"
	"sync"
)

// point is where an expression is evaluated. It is passed by value so that
// evaluation allocates nothing (the five fields travel in registers).
type point struct {
	x, u, ux, uxx, t float64
}

// lawState holds the derivatives d.EDGE of a node law while EvalLaw (or
// another method, under mu) evaluates it: the closures read them from here.
type lawState struct {
	mu  sync.Mutex
	d   []float64 // nil outside an evaluation: d.EDGE is then NaN
	dir int       // the d seeded for differentiation (into DUX), or -1
}

// fn is a compiled subexpression.
type fn func(p point) Dual

// cnode is a compiled subexpression with what is known about it.
type cnode struct {
	konst  bool    // a constant (no variable, no parameter)
	c      float64 // its value when konst
	f      fn      // the closure when not konst
	uses   Var
	params []int // parameter indices read
	text   string
	col    int // 1-based column of the node's token
	kids   []*cnode

	// Leaves that operators read in place instead of calling them.
	pv  *[]float64 // a parameter: (*pv)[pi]
	pi  int
	isU bool // the variable u
}

// active reports whether the subexpression can have a non-zero derivative.
func (n *cnode) active() bool { return n.uses&(U|UX|UXX|D) != 0 }

func (n *cnode) eval(p point) float64 {
	if n.konst {
		return n.c
	}
	return n.f(p).V
}

func (n *cnode) usesParam(i int) bool {
	for _, j := range n.params {
		if j == i {
			return true
		}
	}
	return false
}

// firstBad returns the innermost non-finite subexpression at p, or nil.
func (n *cnode) firstBad(p point) *cnode {
	if Finite(n.eval(p)) {
		return nil
	}
	for _, k := range n.kids {
		if b := k.firstBad(p); b != nil {
			return b
		}
	}
	return n
}

// chain returns the dual of a function with value v and derivative g at
// r.V, applied to r. Components of r that are zero stay zero even when g is
// infinite (sqrt at 0 has no slope in a variable it does not depend on).
func chain(v, g float64, r Dual) Dual {
	out := Dual{V: v}
	if r.DU != 0 {
		out.DU = g * r.DU
	}
	if r.DUX != 0 {
		out.DUX = g * r.DUX
	}
	if r.DUXX != 0 {
		out.DUXX = g * r.DUXX
	}
	return out
}

// Leaves.

func leafX(p point) Dual   { return Dual{V: p.x} }
func leafU(p point) Dual   { return Dual{V: p.u, DU: 1} }
func leafUX(p point) Dual  { return Dual{V: p.ux, DUX: 1} }
func leafUXX(p point) Dual { return Dual{V: p.uxx, DUXX: 1} }
func leafT(p point) Dual   { return Dual{V: p.t} }

func leafParam(vals *[]float64, i int) fn {
	return func(point) Dual { return Dual{V: (*vals)[i]} }
}

func leafD(st *lawState, j int) fn {
	return func(point) Dual {
		if j >= len(st.d) {
			return Dual{V: math.NaN()} // evaluated without the law's d (Value, Eval)
		}
		if st.dir == j {
			return Dual{V: st.d[j], DUX: 1}
		}
		return Dual{V: st.d[j]}
	}
}

// Operators. Each builds the closure for its operands, specialised for
// constant and derivative-free operands.

func neg(a *cnode) fn {
	fa := a.f
	return func(p point) Dual {
		r := fa(p)
		return Dual{-r.V, -r.DU, -r.DUX, -r.DUXX}
	}
}

func add(a, b *cnode) fn {
	switch {
	case a.pv != nil && !b.konst:
		pv, i, fb := a.pv, a.pi, b.f
		return func(p point) Dual { r := fb(p); r.V = (*pv)[i] + r.V; return r }
	case b.pv != nil && !a.konst:
		fa, pv, i := a.f, b.pv, b.pi
		return func(p point) Dual { r := fa(p); r.V += (*pv)[i]; return r }
	case a.konst:
		c, fb := a.c, b.f
		return func(p point) Dual { r := fb(p); r.V = c + r.V; return r }
	case b.konst:
		fa, c := a.f, b.c
		return func(p point) Dual { r := fa(p); r.V += c; return r }
	}
	fa, fb := a.f, b.f
	return func(p point) Dual {
		l, r := fa(p), fb(p)
		return Dual{l.V + r.V, l.DU + r.DU, l.DUX + r.DUX, l.DUXX + r.DUXX}
	}
}

func sub(a, b *cnode) fn {
	switch {
	case a.konst:
		c, fb := a.c, b.f
		return func(p point) Dual {
			r := fb(p)
			return Dual{c - r.V, -r.DU, -r.DUX, -r.DUXX}
		}
	case b.konst:
		fa, c := a.f, b.c
		return func(p point) Dual { r := fa(p); r.V -= c; return r }
	}
	fa, fb := a.f, b.f
	return func(p point) Dual {
		l, r := fa(p), fb(p)
		return Dual{l.V - r.V, l.DU - r.DU, l.DUX - r.DUX, l.DUXX - r.DUXX}
	}
}

// scale returns the closure for c·b with c constant or derivative-free.
func scaleBy(c float64, fb fn) fn {
	return func(p point) Dual {
		r := fb(p)
		return Dual{c * r.V, c * r.DU, c * r.DUX, c * r.DUXX}
	}
}

func mul(a, b *cnode) fn {
	if b.pv != nil && !a.konst {
		a, b = b, a // a parameter times anything: the parameter first
	}
	switch {
	case a.konst:
		return scaleBy(a.c, b.f)
	case b.konst:
		return scaleBy(b.c, a.f)
	case a.pv != nil && b.isU:
		pv, i := a.pv, a.pi
		return func(p point) Dual { c := (*pv)[i]; return Dual{V: c * p.u, DU: c} }
	case a.pv != nil:
		pv, i, fb := a.pv, a.pi, b.f
		return func(p point) Dual {
			c, r := (*pv)[i], fb(p)
			return Dual{c * r.V, c * r.DU, c * r.DUX, c * r.DUXX}
		}
	case !a.active() && !b.active():
		fa, fb := a.f, b.f
		return func(p point) Dual { return Dual{V: fa(p).V * fb(p).V} }
	case !a.active():
		fa, fb := a.f, b.f
		return func(p point) Dual {
			c, r := fa(p).V, fb(p)
			return Dual{c * r.V, c * r.DU, c * r.DUX, c * r.DUXX}
		}
	case !b.active():
		fa, fb := a.f, b.f
		return func(p point) Dual {
			r, c := fa(p), fb(p).V
			return Dual{c * r.V, c * r.DU, c * r.DUX, c * r.DUXX}
		}
	}
	fa, fb := a.f, b.f
	return func(p point) Dual {
		l, r := fa(p), fb(p)
		return Dual{l.V * r.V, l.DU*r.V + l.V*r.DU, l.DUX*r.V + l.V*r.DUX, l.DUXX*r.V + l.V*r.DUXX}
	}
}

func div(a, b *cnode) fn {
	fa, fb := a.f, b.f
	switch {
	case b.konst:
		c := b.c
		return func(p point) Dual {
			r := fa(p)
			return Dual{r.V / c, r.DU / c, r.DUX / c, r.DUXX / c}
		}
	case !b.active():
		return func(p point) Dual {
			r, c := fa(p), fb(p).V
			return Dual{r.V / c, r.DU / c, r.DUX / c, r.DUXX / c}
		}
	}
	return func(p point) Dual {
		l, r := fa(p), fb(p)
		v := l.V / r.V
		return Dual{v, (l.DU - v*r.DU) / r.V, (l.DUX - v*r.DUX) / r.V, (l.DUXX - v*r.DUXX) / r.V}
	}
}

func pow(a, b *cnode) fn {
	if b.konst {
		n := b.c
		fa := a.f
		switch n {
		case 0:
			return func(point) Dual { return Dual{V: 1} }
		case 1:
			return fa
		case 2:
			return func(p point) Dual {
				r := fa(p)
				g := 2 * r.V
				return Dual{r.V * r.V, g * r.DU, g * r.DUX, g * r.DUXX}
			}
		case 0.5:
			return func(p point) Dual {
				r := fa(p)
				v := math.Sqrt(r.V)
				return chain(v, 0.5/v, r)
			}
		}
		return func(p point) Dual {
			r := fa(p)
			return chain(math.Pow(r.V, n), n*math.Pow(r.V, n-1), r)
		}
	}
	fa, fb := a.f, b.f
	return func(p point) Dual {
		l, r := fa(p), fb(p)
		v := math.Pow(l.V, r.V)
		out := chain(v, r.V*math.Pow(l.V, r.V-1), l)
		if r.DU != 0 || r.DUX != 0 || r.DUXX != 0 {
			lg := chain(0, v*math.Log(l.V), r)
			out.DU += lg.DU
			out.DUX += lg.DUX
			out.DUXX += lg.DUXX
		}
		return out
	}
}

// unary is a function of one argument with its derivative, given the
// argument and the function's value there.
type unary struct {
	f  func(float64) float64
	df func(x, fx float64) float64
}

var unaries = map[string]unary{
	"exp":  {math.Exp, func(_, fx float64) float64 { return fx }},
	"log":  {math.Log, func(x, _ float64) float64 { return 1 / x }},
	"sqrt": {math.Sqrt, func(_, fx float64) float64 { return 0.5 / fx }},
	"abs": {math.Abs, func(x, _ float64) float64 {
		switch {
		case x > 0:
			return 1
		case x < 0:
			return -1
		}
		return 0
	}},
	"sin":  {math.Sin, func(x, _ float64) float64 { return math.Cos(x) }},
	"cos":  {math.Cos, func(x, _ float64) float64 { return -math.Sin(x) }},
	"tan":  {math.Tan, func(_, fx float64) float64 { return 1 + fx*fx }},
	"tanh": {math.Tanh, func(_, fx float64) float64 { return 1 - fx*fx }},
	"sinh": {math.Sinh, func(x, _ float64) float64 { return math.Cosh(x) }},
	"cosh": {math.Cosh, func(x, _ float64) float64 { return math.Sinh(x) }},
}

func apply(u unary, a *cnode) fn {
	fa, f, df := a.f, u.f, u.df
	if !a.active() {
		return func(p point) Dual { return Dual{V: f(fa(p).V)} }
	}
	return func(p point) Dual {
		r := fa(p)
		v := f(r.V)
		return chain(v, df(r.V, v), r)
	}
}

// extreme returns min(a, b) (lower) or max(a, b), with the derivatives of
// the argument chosen (a on a tie). NaN in either gives NaN.
func extreme(a, b *cnode, lower bool) fn {
	fa, fb := a.f, b.f
	return func(p point) Dual {
		l, r := fa(p), fb(p)
		switch {
		case math.IsNaN(l.V):
			return l
		case math.IsNaN(r.V):
			return r
		case lower && r.V < l.V, !lower && r.V > l.V:
			return r
		}
		return l
	}
}
