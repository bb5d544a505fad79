package formula

import (
	"fmt"
	"math"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
)

// Var is a set of variables, used both for what an expression may use
// (Spec.Vars) and for what it does use (Expr.Uses).
type Var uint8

// The variables of an expression.
const (
	X   Var = 1 << iota // distance along the edge from its from node
	U                   // the field
	UX                  // ∂u/∂x along the edge's orientation
	UXX                 // ∂²u/∂x²
	T                   // time
	D                   // the derivatives d.EDGE of a node law
)

var varNames = [...]string{"x", "u", "ux", "uxx", "t", "d"}

// String lists the variables of v, e.g. "x, u, t", or "none".
func (v Var) String() string {
	var parts []string
	for i, n := range varNames {
		if v&(1<<i) != 0 {
			parts = append(parts, n)
		}
	}
	if len(parts) == 0 {
		return "none"
	}
	return strings.Join(parts, ", ")
}

// Spec says what an expression may use.
type Spec struct {
	// Vars are the variables the expression may use.
	Vars Var
	// Params are the named parameters the expression may use (nil: none).
	// Compiled expressions keep the pointer and read Params.Values at every
	// evaluation.
	Params *graphpde.Params
	// Ends are the names a node law may write after "d." (edge ids, in the
	// order of the d slice given to EvalLaw). Used only when Vars has D.
	Ends []string
}

// Dual is a value with its partial derivatives in u, ux and uxx. For a node
// law (EvalLaw) DUX holds the derivative in the seeded d.
type Dual struct {
	V, DU, DUX, DUXX float64
}

// Expr is a compiled expression. Its methods are safe for concurrent use
// (parameters are read, never written).
type Expr struct {
	src    string
	spec   Spec
	uses   Var
	params []int // indices of the parameters used
	root   *cnode
	law    *lawState // for a node law (Spec.Vars has D); nil otherwise
}

// Src returns the expression as written.
func (e *Expr) Src() string { return e.src }

// Uses returns the variables the expression uses.
func (e *Expr) Uses() Var { return e.uses }

// UsesParams reports whether the expression reads a parameter.
func (e *Expr) UsesParams() bool { return len(e.params) > 0 }

// Params returns the indices (into Spec.Params) of the parameters the
// expression reads, in order of first use. The slice is shared.
func (e *Expr) Params() []int { return e.params }

// Const returns the value of an expression that uses no variable and no
// parameter, and whether it is such a constant.
func (e *Expr) Const() (float64, bool) {
	if e.root.konst {
		return e.root.c, true
	}
	return 0, false
}

// Value returns the value of the expression at the given point, ignoring the
// variables it does not use. For a node law use EvalLaw (Value and Eval see
// its d.EDGE as NaN).
func (e *Expr) Value(x, u, ux, uxx, t float64) float64 {
	return e.Eval(x, u, ux, uxx, t).V
}

// Eval returns the value of the expression and its partial derivatives in
// u, ux and uxx at the given point. It allocates nothing.
func (e *Expr) Eval(x, u, ux, uxx, t float64) Dual {
	if e.root.konst {
		return Dual{V: e.root.c}
	}
	if e.law != nil {
		e.law.mu.Lock()
		defer e.law.mu.Unlock()
	}
	return e.root.f(point{x: x, u: u, ux: ux, uxx: uxx, t: t})
}

// EvalLaw evaluates a node law G(u, d_1, …, d_k) with d[j] the derivative
// named Spec.Ends[j]. It writes ∂G/∂d_j into dd[j] and returns G and ∂G/∂u.
// It panics if len(d) or len(dd) differs from len(Spec.Ends). Its cost is k
// evaluations of the expression (one forward sweep per d). Evaluations of
// the same node law are serialised (a lock held during the call).
func (e *Expr) EvalLaw(u float64, d, dd []float64) (g, du float64) {
	k := len(e.spec.Ends)
	if len(d) != k || len(dd) != k {
		panic(fmt.Sprintf("formula: EvalLaw with %d values and %d derivatives for a law of %d ends", len(d), len(dd), k))
	}
	if e.root.konst {
		clear(dd)
		return e.root.c, 0
	}
	if e.law == nil || e.uses&D == 0 {
		clear(dd)
		r := e.Eval(0, u, 0, 0, 0)
		return r.V, r.DU
	}
	st := e.law
	st.mu.Lock()
	defer st.mu.Unlock()
	st.d = d
	var r Dual
	for j := range k {
		st.dir = j
		r = e.root.f(point{u: u})
		dd[j] = r.DUX
	}
	st.d, st.dir = nil, -1
	return r.V, r.DU
}

// Coef returns the expression as a graphpde coefficient of x, u and t. Its
// Fn returns the value and the derivative in u.
func (e *Expr) Coef() *graphpde.Coef {
	c := &graphpde.Coef{UsesX: e.uses&X != 0, UsesU: e.uses&U != 0, UsesT: e.uses&T != 0, UsesP: e.UsesParams(), Src: e.src,
		Why: func(x, u, t float64) string { return e.Explain(x, u, 0, 0, t, nil) }}
	if e.root.konst {
		v := e.root.c
		c.Fn = func(x, u, t float64) (float64, float64) { return v, 0 }
		return c
	}
	f := e.root.f
	c.Fn = func(x, u, t float64) (float64, float64) {
		r := f(point{x: x, u: u, t: t})
		return r.V, r.DU
	}
	return c
}

// Equation returns the expression as a fully nonlinear graphpde edge law
// E(x, u, ux, uxx).
func (e *Expr) Equation() *graphpde.Equation {
	q := &graphpde.Equation{Src: e.src, Why: func(x, u, ux, uxx float64) string { return e.Explain(x, u, ux, uxx, 0, nil) }}
	if e.root.konst {
		v := e.root.c
		q.Fn = func(x, u, ux, uxx float64) (float64, float64, float64, float64) { return v, 0, 0, 0 }
		return q
	}
	f := e.root.f
	q.Fn = func(x, u, ux, uxx float64) (float64, float64, float64, float64) {
		r := f(point{x: x, u: u, ux: ux, uxx: uxx})
		return r.V, r.DU, r.DUX, r.DUXX
	}
	return q
}

// OfU returns the expression as a function of u alone (a node loss law),
// with its derivative.
func (e *Expr) OfU() func(u float64) (v, du float64) {
	if e.root.konst {
		v := e.root.c
		return func(float64) (float64, float64) { return v, 0 }
	}
	f := e.root.f
	return func(u float64) (float64, float64) {
		r := f(point{u: u})
		return r.V, r.DU
	}
}

// OfT returns the expression as a function of t alone (a node's fixed
// value or injection).
func (e *Expr) OfT() func(t float64) float64 {
	if e.root.konst {
		v := e.root.c
		return func(float64) float64 { return v }
	}
	f := e.root.f
	return func(t float64) float64 { return f(point{t: t}).V }
}

// Explain names the innermost subexpression whose value is not finite at
// the given point while its operands are, e.g.
//
//	log(u) = NaN at u = -0.5 (column 3)
//
// It returns "" when the value of the whole expression is finite there. d
// holds a node law's derivatives (nil for other expressions). It is meant
// for error messages and is not fast.
func (e *Expr) Explain(x, u, ux, uxx, t float64, d []float64) string {
	p := point{x: x, u: u, ux: ux, uxx: uxx, t: t}
	if e.law != nil {
		e.law.mu.Lock()
		defer e.law.mu.Unlock()
		if len(d) >= len(e.spec.Ends) {
			e.law.d = d
			defer func() { e.law.d = nil }()
		}
	}
	bad := e.root.firstBad(p)
	if bad == nil {
		return ""
	}
	v := bad.eval(p)
	var at []string
	vals := map[Var]float64{X: x, U: u, UX: ux, UXX: uxx, T: t}
	for i := range 5 {
		if vr := Var(1 << i); bad.uses&vr != 0 {
			at = append(at, fmt.Sprintf("%s = %g", varNames[i], vals[vr]))
		}
	}
	if bad.uses&D != 0 && len(d) >= len(e.spec.Ends) {
		for j, n := range e.spec.Ends {
			at = append(at, fmt.Sprintf("d.%s = %g", n, d[j]))
		}
	}
	for _, i := range e.params {
		if bad.usesParam(i) {
			at = append(at, fmt.Sprintf("%s = %g", e.spec.Params.Names[i], e.spec.Params.Values[i]))
		}
	}
	s := fmt.Sprintf("%s = %g", bad.text, v)
	if len(at) > 0 {
		s += " at " + strings.Join(at, ", ")
	}
	return s + fmt.Sprintf(" (column %d)", bad.col)
}

// Finite reports whether v is neither NaN nor infinite.
func Finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
