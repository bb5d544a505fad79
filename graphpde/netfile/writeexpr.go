package netfile

import (
	"bufio"
	"fmt"
	"strconv"

	"github.com/ramify-dev/ramify/graphpde"
)

// The writer's side of parameters and expressions (netfile/expr.go reads
// them).

// writeParams writes the [parameters] table, if there are parameters.
func writeParams(b *bufio.Writer, p *graphpde.Params) {
	if p == nil || len(p.Names) == 0 {
		return
	}
	b.WriteString("[parameters]\n")
	for i, n := range p.Names {
		fmt.Fprintf(b, "%s = %s\n", n, num(p.Values[i]))
	}
	b.WriteString("\n")
}

// writeNodeLaw writes a node's loss or general law.
func writeNodeLaw(b *bufio.Writer, nl *graphpde.NodeNonlinear) {
	switch {
	case nl == nil:
	case nl.Loss != nil:
		fmt.Fprintf(b, "loss = %s\n", quote(nl.Src))
	case nl.General != nil:
		fmt.Fprintf(b, "law = %s\n", quote(nl.Src))
	}
}

// lawEquation returns the source of the edge's equation, or "".
func lawEquation(e *graphpde.Edge) string {
	if e.Law != nil && e.Law.Equation != nil {
		return e.Law.Equation.Src
	}
	return ""
}

// coefOf returns the law, the profile function and the profile's source of
// the coefficient given by its key.
func coefOf(e *graphpde.Edge, key string) (law *graphpde.Coef, prof func(float64) float64, src string) {
	var l graphpde.EdgeLaw
	if e.Law != nil {
		l = *e.Law
	}
	var p graphpde.Profile
	if e.Profile != nil {
		p = *e.Profile
	}
	switch key {
	case "diffusivity":
		return l.A, p.A, p.SrcA
	case "drift":
		return l.B, p.B, p.SrcB
	case "decay":
		return l.C, p.C, p.SrcC
	case "source":
		return l.F, p.F, p.SrcF
	case "capacity":
		return l.Rho, p.Rho, p.SrcRho
	}
	panic("netfile: coefOf " + key)
}

// coefSrc returns the expression of a coefficient given by a law or a
// profile, or "" for a plain constant.
func coefSrc(e *graphpde.Edge, key string) string {
	law, prof, src := coefOf(e, key)
	if law != nil {
		return law.Src
	}
	if prof != nil {
		return src
	}
	return ""
}

// exprOrNumber writes an initial field: a number as a TOML number, an
// expression as a string.
func exprOrNumber(src string) string {
	if v, err := strconv.ParseFloat(src, 64); err == nil && isFinite(v) {
		return num(v)
	}
	return quote(src)
}

func isFinite(v float64) bool { return v-v == 0 }

// nodeLawsWritable returns why a node's laws cannot be written, or "".
func nodeLawsWritable(nd *graphpde.Node) string {
	if nd.Nonlinear != nil && nd.Nonlinear.Src == "" {
		return "cannot write a nonlinear node law that was not given as an expression"
	}
	if nd.Time != nil && nd.Time.Src == "" {
		return "cannot write a time-dependent node value that was not given as an expression"
	}
	if nd.Initial != nil && !isFinite(*nd.Initial) {
		return "cannot write a non-finite initial value"
	}
	return ""
}

// profileMsg returns why an edge's profile cannot be written, or "".
func profileMsg(e *graphpde.Edge) string {
	p := e.Profile
	if p == nil {
		return ""
	}
	for _, f := range []struct {
		fn  func(float64) float64
		src string
	}{{p.A, p.SrcA}, {p.B, p.SrcB}, {p.C, p.SrcC}, {p.F, p.SrcF}, {p.Rho, p.SrcRho}} {
		if f.fn != nil && f.src == "" {
			return "cannot write coefficient profiles that were not given as expressions"
		}
	}
	return ""
}

// edgeLawMsg returns why an edge's laws cannot be written, or "".
func edgeLawMsg(e *graphpde.Edge) string {
	l := e.Law
	if l == nil {
		return ""
	}
	for _, c := range []*graphpde.Coef{l.A, l.B, l.C, l.F, l.Rho, l.Initial} {
		if c != nil && c.Src == "" {
			return "cannot write a coefficient law that was not given as an expression"
		}
	}
	if l.Equation != nil && l.Equation.Src == "" {
		return "cannot write an equation that was not given as an expression"
	}
	return ""
}
