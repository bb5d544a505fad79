package netfile

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/formula"
	"github.com/ramify-dev/ramify/graphpde/units"
	"github.com/ramify-dev/ramify/vertex"
)

// This file reads the values of the file that may be expressions: edge
// coefficients, edge equations and initial fields, and node fixed values,
// injections, losses, general laws and initial values.

// maxEdgeKeys bounds the number of edge keys (defaultsKeys) for the arrays
// of edgeVals.
const maxEdgeKeys = 16

// Variables each expression-valued key may use (besides parameters).
var (
	edgeExprVars = map[string]formula.Var{
		"diffusivity": formula.X | formula.U | formula.T,
		"drift":       formula.X | formula.U | formula.T,
		"decay":       formula.X | formula.U | formula.T,
		"source":      formula.X | formula.U | formula.T,
		"capacity":    formula.X | formula.T,
		"equation":    formula.X | formula.U | formula.UX | formula.UXX,
		"initial":     formula.X,
	}
	nodeExprVars = map[string]formula.Var{
		"fixed":   formula.T,
		"inject":  formula.T,
		"loss":    formula.U,
		"law":     formula.U | formula.D,
		"initial": 0,
	}
	// The rule a coefficient's values must obey.
	coefRules = map[string]rule{"diffusivity": positive, "drift": finite, "decay": nonNeg, "source": finite, "capacity": positive, "initial": finite}
)

// exprString reports whether v is a string holding an expression: a string
// that is not a quantity "NUMBER UNIT" (those are numbers, package units).
func exprString(v any) (string, bool) {
	s, ok := v.(string)
	if !ok || units.LooksLikeQuantity(s) {
		return "", false
	}
	return s, true
}

// compile compiles the expression src given for key.
func (t *tbl) compile(key, src string, vars formula.Var, ends []string) (*formula.Expr, error) {
	e, err := formula.Compile(src, formula.Spec{Vars: vars, Params: t.rd.params, Ends: ends})
	if err != nil {
		fe := t.fail(key, fmt.Sprintf("%s = %s: %s", key, quote(src), err.Error()))
		fe.Err = err // a *formula.Error
		return nil, fe
	}
	return e, nil
}

// edgeExpr reads the expression given for edge key k into ev. A constant
// expression is stored as the number it is.
func (t *tbl) edgeExpr(k, src string, ev *edgeVals) error {
	vars, ok := edgeExprVars[k]
	if !ok {
		return t.fail(k, fmt.Sprintf("%s must be a number, not %s (expressions are allowed for diffusivity, drift, decay, source, capacity, equation and initial)", k, typeName(t.m[k])))
	}
	if k == "equation" {
		if _, isStr := t.m[k].(string); !isStr {
			return t.fail(k, fmt.Sprintf("equation must be a string holding an expression in x, u, ux, uxx and parameters, not %s", typeName(t.m[k])))
		}
	}
	e, err := t.compile(k, src, vars, nil)
	if err != nil {
		return err
	}
	i := slices.Index(defaultsKeys, k)
	if v, isConst := e.Const(); isConst && k != "equation" {
		if reason := check(v, coefRules[k]); reason != "" {
			return t.bad(k, k, reason)
		}
		*ev.plain(k) = v
		return nil
	}
	ev.ex[i] = e
	*ev.plain(k) = 0
	return nil
}

// plain returns the plain field of edge key k.
func (ev *edgeVals) plain(k string) *float64 {
	switch k {
	case "diffusivity":
		return &ev.a
	case "drift":
		return &ev.b
	case "decay":
		return &ev.c
	case "source":
		return &ev.f
	case "capacity":
		return &ev.rho
	case "initial":
		return &ev.initial
	}
	return new(float64) // equation: no plain field
}

// equationRules checks an edge with an equation: it must not also give the
// coefficients it replaces, and it must give its end weights.
func (t *tbl) equationRules(ev *edgeVals) error {
	ieq := slices.Index(defaultsKeys, "equation")
	if ev.ex[ieq] == nil {
		return nil
	}
	for _, k := range []string{"diffusivity", "drift", "decay", "source"} {
		if _, here := t.m[k]; here {
			return t.fail(k, fmt.Sprintf("%s is not allowed with equation, which replaces diffusivity, drift, decay and source", k))
		}
	}
	// Defaults of the replaced coefficients do not apply to this edge.
	for _, k := range []string{"diffusivity", "drift", "decay", "source"} {
		ev.ex[slices.Index(defaultsKeys, k)] = nil
		*ev.plain(k) = 0
	}
	if ev.w == [2]float64{} {
		return &Error{File: t.rd.file, Line: ev.lineOf("equation"), Object: t.object(),
			Msg: "an edge with an equation must give weight or weights = [from, to] (the end weights α of its node balances)"}
	}
	return nil
}

// profileSamples is the number of intervals at which a coefficient that
// varies along the edge is checked when the file is read.
const profileSamples = 64

// edgeLaws moves the expressions of ev into e: coefficients that depend on u
// or t, or on parameters only, into e.Law; coefficients that depend on x
// (and parameters) into e.Profile, which every linear engine reads; the
// equation and the initial field into e.Law.
func (t *tbl) edgeLaws(e *graphpde.Edge, ev *edgeVals) error {
	if ev.ex == ([maxEdgeKeys]*formula.Expr{}) && !ev.given[slices.Index(defaultsKeys, "initial")] {
		return nil // plain numbers only: no law, no profile
	}
	law := &graphpde.EdgeLaw{}
	prof := &graphpde.Profile{}
	usedLaw, usedProf := false, false
	for _, c := range []struct {
		key   string
		plain *float64
		law   **graphpde.Coef
		prof  *func(float64) float64
		src   *string
	}{
		{"diffusivity", &e.A, &law.A, &prof.A, &prof.SrcA},
		{"drift", &e.B, &law.B, &prof.B, &prof.SrcB},
		{"decay", &e.C, &law.C, &prof.C, &prof.SrcC},
		{"source", &e.F, &law.F, &prof.F, &prof.SrcF},
		{"capacity", &e.Rho, &law.Rho, &prof.Rho, &prof.SrcRho},
	} {
		x := ev.ex[slices.Index(defaultsKeys, c.key)]
		if x == nil {
			continue
		}
		line := ev.lineOf(c.key)
		uses := x.Uses()
		switch {
		case uses&(formula.U|formula.T) != 0:
			*c.law, *c.plain, usedLaw = x.Coef(), 0, true
		case uses&formula.X != 0:
			if err := t.checkProfile(c.key, line, x, e.Length); err != nil {
				return err
			}
			fn := x.Coef().Fn
			*c.prof = func(x float64) float64 { v, _ := fn(x, 0, 0); return v }
			*c.src, usedProf = x.Src(), true
			*c.plain = (*c.prof)(0) // unused beside the profile; valid for AddEdge's checks
		default: // parameters only
			v := x.Value(0, 0, 0, 0, 0)
			if reason := check(v, coefRules[c.key]); reason != "" {
				return t.atLine(line, c.key+" "+reason+" (with the parameters of the file)")
			}
			*c.law, *c.plain, usedLaw = x.Coef(), v, true
		}
	}
	if x := ev.ex[slices.Index(defaultsKeys, "equation")]; x != nil {
		law.Equation, usedLaw = x.Equation(), true
	}
	if ev.given[slices.Index(defaultsKeys, "initial")] {
		if x := ev.ex[slices.Index(defaultsKeys, "initial")]; x != nil {
			if err := t.checkProfile("initial", ev.lineOf("initial"), x, e.Length); err != nil {
				return err
			}
			law.Initial = x.Coef()
		} else {
			v := ev.initial
			law.Initial = &graphpde.Coef{Fn: func(x, u, t float64) (float64, float64) { return v, 0 }, Src: num(v)}
		}
		usedLaw = true
	}
	if usedLaw {
		e.Law = law
	}
	if usedProf {
		e.Profile = prof
	}
	return nil
}

// atLine returns an error at the given line of the table's object.
func (t *tbl) atLine(line int, msg string) *Error {
	if line == 0 {
		line = t.line()
	}
	return &Error{File: t.rd.file, Line: line, Object: t.object(), Msg: msg}
}

// checkProfile checks a coefficient that varies along an edge at
// profileSamples+1 evenly spaced points (ends included): a cheap guard
// against a law that is plainly out of its range, not a proof.
func (t *tbl) checkProfile(key string, line int, x *formula.Expr, length float64) error {
	r := coefRules[key]
	for k := 0; k <= profileSamples; k++ {
		at := length * float64(k) / profileSamples
		v := x.Value(at, 0, 0, 0, 0)
		if reason := check(v, r); reason != "" {
			msg := fmt.Sprintf("%s = %s is %g at x = %g: %s", key, quote(x.Src()), v, at, strings.TrimPrefix(reason, fmt.Sprintf("= %g ", v)))
			if why := x.Explain(at, 0, 0, 0, 0, nil); why != "" && !formula.Finite(v) {
				msg += " (" + why + ")"
			}
			return t.atLine(line, msg)
		}
	}
	return nil
}

// nodeExclusions checks the combinations of node keys that exclude each
// other: loss and law replace leak and inject, and need a balance node.
func (t *tbl) nodeExclusions(fixed bool) error {
	for _, k := range []string{"loss", "law"} {
		if _, ok := t.m[k]; !ok {
			continue
		}
		if fixed {
			return t.fail(k, k+" is not allowed on a fixed node (it has no balance law; remove fixed or "+k+")")
		}
		for _, other := range []string{"leak", "inject", "loss", "law"} {
			if _, both := t.m[other]; both && other != k {
				if other == "loss" || other == "law" {
					return t.fail(k, "give loss or law, not both")
				}
				return t.fail(other, other+" is not allowed with "+k+", which replaces leak and inject")
			}
		}
	}
	return nil
}

// nodeExpr reads node key k (fixed, inject, loss, law or initial), whose
// value is the expression src or, for loss and initial, possibly a number.
func (t *tbl) nodeExpr(rd *reader, k, src string, nd *graphpde.Node) error {
	fixed := nd.Law.Kind == vertex.Fixed
	if k == "inject" && fixed {
		return t.fail(k, "inject is not allowed on a fixed node (it has no balance law; remove fixed or inject)")
	}
	if _, isStr := t.m[k].(string); !isStr || !isExprOK(t.m[k]) {
		switch k {
		case "law":
			return t.fail(k, fmt.Sprintf("law must be a string holding an expression in u, d.EDGE and parameters, not %s", typeName(t.m[k])))
		case "loss":
			v, err := t.ruled(k, finite)
			if err != nil {
				return err
			}
			nd.Law.Inject = -v // a constant loss is an injection of −loss
			return nil
		case "initial":
			v, err := t.ruled(k, finite)
			if err != nil {
				return err
			}
			nd.Initial = &v
			return nil
		}
	}
	if k == "law" {
		// Compiled once the edges that meet the node are known.
		rd.laws = append(rd.laws, lawSpec{t: t, id: nd.ID, src: src})
		return nil
	}
	e, err := t.compile(k, src, nodeExprVars[k], nil)
	if err != nil {
		return err
	}
	c, isConst := e.Const()
	switch k {
	case "initial":
		v := e.Value(0, 0, 0, 0, 0)
		if reason := check(v, finite); reason != "" {
			return t.bad(k, k, reason)
		}
		nd.Initial = &v
	case "loss":
		if isConst {
			nd.Law.Inject = -c
			return nil
		}
		nd.Nonlinear = &graphpde.NodeNonlinear{Loss: e.OfU(), Src: src}
	case "fixed", "inject":
		v := e.Value(0, 0, 0, 0, 0)
		if reason := check(v, finite); reason != "" {
			msg := fmt.Sprintf("%s = %s is %g at t = 0: must be a finite number", k, quote(src), v)
			if why := e.Explain(0, 0, 0, 0, 0, nil); why != "" {
				msg += " (" + why + ")"
			}
			return t.fail(k, msg)
		}
		if k == "fixed" {
			nd.Law.Value = v
		} else {
			nd.Law.Inject = v
		}
		if isConst {
			return nil
		}
		tm := &graphpde.NodeTime{UsesT: e.Uses()&formula.T != 0, Src: src}
		if k == "fixed" {
			tm.Fixed = e.OfT()
		} else {
			tm.Inject = e.OfT()
		}
		nd.Time = tm
	}
	return nil
}

// isExprOK reports whether v is a string that is not a quantity.
func isExprOK(v any) bool {
	_, ok := exprString(v)
	return ok
}

// lawSpec is a general node law, compiled once the edges are known.
type lawSpec struct {
	t   *tbl
	id  string
	src string
}

// endNames returns the names by which a node law refers to the ends at node
// v, in Incident order: the edge id, or ID.from and ID.to for the two ends
// of a self-loop.
func endNames(net *graphpde.Network, v int) []string {
	inc := net.Incident(v)
	names := make([]string, len(inc))
	for j, end := range inc {
		ed := &net.Edges[end.Edge]
		names[j] = ed.ID
		if ed.From == ed.To {
			names[j] += [2]string{".from", ".to"}[end.Side]
		}
	}
	return names
}

// generalLaws compiles the general node laws against the edges that meet
// their nodes.
func (rd *reader) generalLaws(net *graphpde.Network) error {
	for _, l := range rd.laws {
		v, _ := net.NodeIndex(l.id)
		ends := endNames(net, v)
		e, err := l.t.compile("law", l.src, nodeExprVars["law"], ends)
		if err != nil {
			return err
		}
		net.Nodes[v].Nonlinear = &graphpde.NodeNonlinear{General: e.EvalLaw, Src: l.src}
	}
	return nil
}

// parameters reads the optional [parameters] table: names of letters,
// digits and '_' (not starting with a digit, not a variable or function of
// the expressions), each a finite number.
func (rd *reader) parameters(top *tbl, root map[string]any, net *graphpde.Network) error {
	v, ok := root["parameters"]
	if !ok {
		return nil
	}
	m, isTable := v.(map[string]any)
	if !isTable {
		return top.fail("parameters", "parameters must be a table [parameters], not "+typeName(v))
	}
	t := &tbl{rd: rd, obj: "[parameters]", path: []string{"parameters"}, m: m}
	p := &graphpde.Params{}
	for _, k := range t.keys() {
		if !paramName(k) {
			return t.fail(k, fmt.Sprintf("parameter name %s must be letters, digits and '_', not starting with a digit", strconv.Quote(k)))
		}
		if formula.Reserved(k) {
			return t.fail(k, fmt.Sprintf("parameter name %q is taken by the expressions (variables x u ux uxx t d, functions %s)", k, strings.Join(formula.Functions(), " ")))
		}
		if _, isStr := m[k].(string); isStr && !units.LooksLikeQuantity(m[k].(string)) {
			return t.fail(k, fmt.Sprintf("parameter %s must be a number, not an expression", k))
		}
		val, err := t.ruled(k, finite)
		if err != nil {
			return err
		}
		p.Names = append(p.Names, k)
		p.Values = append(p.Values, val)
	}
	rd.params = p
	net.Params = p
	return nil
}

// paramName reports whether s is a name an expression can use.
func paramName(s string) bool {
	if s == "" {
		return false
	}
	for i, r := range s {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r == '_':
		case r >= '0' && r <= '9' && i > 0:
		default:
			return false
		}
	}
	return true
}
