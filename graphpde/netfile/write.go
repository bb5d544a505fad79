package netfile

import (
	"bufio"
	"fmt"
	"io"
	"maps"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// Write writes net as a network file that Read turns back into the same
// network: the same nodes and edges in the same order with the same values
// (numbers are written in the shortest form that reads back exactly). Keys
// at their default value are left out. Edge weights are written as the
// weights in effect (Edge.EndWeight), so an edge whose Weight is [2, 0] comes
// back as [2, a]; the network is the same. Split values are written
// normalised. An empty split is left out, as are the balance fields of a
// fixed node (which its law ignores).
//
// Laws compiled from expressions (Edge.Law, Edge.Profile functions with
// their sources, Node.Nonlinear, Node.Time) are written as the expressions
// they came from, and net.Params as a [parameters] table, so a file read
// with expressions reads back to the same laws.
//
// Write returns an *Error, before writing anything, if net holds what the file
// cannot express: coefficient profiles or laws without an expression
// (Edge.Profile functions set in Go), a node kind other than fixed and
// balance, non-finite values or invalid ids. Its cost is linear in the size
// of the network.
func Write(w io.Writer, net *graphpde.Network) error {
	if err := writable(net); err != nil {
		return err
	}
	b := bufio.NewWriter(w)
	if net.Name != "" || net.Description != "" || net.Objective != graphpde.NoObjective {
		b.WriteString("[network]\n")
		if net.Name != "" {
			fmt.Fprintf(b, "name = %s\n", quote(net.Name))
		}
		if net.Description != "" {
			fmt.Fprintf(b, "description = %s\n", quote(net.Description))
		}
		if net.Objective != graphpde.NoObjective {
			fmt.Fprintf(b, "objective = %s\n", quote(net.Objective.String()))
		}
		b.WriteString("\n")
	}
	writeParams(b, net.Params)
	for _, nd := range net.Nodes {
		fmt.Fprintf(b, "[[node]]\nid = %s\n", quote(nd.ID))
		if nd.XY != nil {
			fmt.Fprintf(b, "xy = [%s, %s]\n", num(nd.XY[0]), num(nd.XY[1]))
		}
		l := nd.Law
		switch l.Kind {
		case vertex.Fixed:
			if nd.Time != nil {
				fmt.Fprintf(b, "fixed = %s\n", quote(nd.Time.Src))
			} else {
				fmt.Fprintf(b, "fixed = %s\n", num(l.Value))
			}
		case vertex.Balance:
			for _, kv := range []struct {
				k string
				v float64
			}{{"leak", l.Leak}, {"inject", l.Inject}, {"capacity", l.Capacity}} {
				if kv.k == "inject" && nd.Time != nil {
					fmt.Fprintf(b, "inject = %s\n", quote(nd.Time.Src))
				} else if kv.v != 0 || math.Signbit(kv.v) {
					fmt.Fprintf(b, "%s = %s\n", kv.k, num(kv.v))
				}
			}
			writeNodeLaw(b, nd.Nonlinear)
		}
		if nd.Initial != nil {
			fmt.Fprintf(b, "initial = %s\n", num(*nd.Initial))
		}
		if len(nd.Split) > 0 {
			keys := slices.Sorted(maps.Keys(nd.Split))
			parts := make([]string, len(keys))
			for i, k := range keys {
				parts[i] = bareOrQuoted(k) + " = " + num(nd.Split[k])
			}
			fmt.Fprintf(b, "split = { %s }\n", strings.Join(parts, ", "))
		}
		writeNodeControls(b, nd.Controls)
		b.WriteString("\n")
	}
	for _, e := range net.Edges {
		fmt.Fprintf(b, "[[edge]]\nid = %s\nfrom = %s\nto = %s\nlength = %s\n",
			quote(e.ID), quote(net.Nodes[e.From].ID), quote(net.Nodes[e.To].ID), num(e.Length))
		if eq := lawEquation(&e); eq != "" {
			fmt.Fprintf(b, "equation = %s\n", quote(eq))
		} else if src := coefSrc(&e, "diffusivity"); src != "" {
			fmt.Fprintf(b, "diffusivity = %s\n", quote(src))
		} else {
			fmt.Fprintf(b, "diffusivity = %s\n", num(e.A))
		}
		for _, kv := range []struct {
			k    string
			v    float64
			zero float64
		}{{"drift", e.B, 0}, {"decay", e.C, 0}, {"source", e.F, 0}, {"capacity", e.Rho, 1}} {
			if src := coefSrc(&e, kv.k); src != "" {
				fmt.Fprintf(b, "%s = %s\n", kv.k, quote(src))
				continue
			}
			if lawEquation(&e) != "" && kv.k != "capacity" {
				continue
			}
			if kv.v != kv.zero || (kv.zero == 0 && math.Signbit(kv.v)) {
				if kv.k == "capacity" && kv.v == 0 {
					continue // AddEdge stores 0 as 1; nothing to write
				}
				fmt.Fprintf(b, "%s = %s\n", kv.k, num(kv.v))
			}
		}
		if e.Weight != [2]float64{} {
			wf, wt := e.EndWeight(0), e.EndWeight(1)
			if wf == wt {
				fmt.Fprintf(b, "weight = %s\n", num(wf))
			} else {
				fmt.Fprintf(b, "weights = [%s, %s]\n", num(wf), num(wt))
			}
		}
		if e.Cells > 0 {
			fmt.Fprintf(b, "cells = %d\n", e.Cells)
		}
		if e.Law != nil && e.Law.Initial != nil {
			fmt.Fprintf(b, "initial = %s\n", exprOrNumber(e.Law.Initial.Src))
		}
		writeEdgeControls(b, e.ControlSet())
		b.WriteString("\n")
	}
	return b.Flush()
}

// writable checks that net can be written as a file that reads back.
func writable(net *graphpde.Network) error {
	fin := func(vs ...float64) bool {
		for _, v := range vs {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return false
			}
		}
		return true
	}
	for i, nd := range net.Nodes {
		obj := fmt.Sprintf("node %q", nd.ID)
		if !graphpde.ValidID(nd.ID) {
			return &Error{Object: fmt.Sprintf("node #%d", i+1), Msg: fmt.Sprintf("cannot write id %q", nd.ID)}
		}
		if nd.Law.Kind != vertex.Fixed && nd.Law.Kind != vertex.Balance {
			return &Error{Object: obj, Msg: fmt.Sprintf("cannot write node kind %v", nd.Law.Kind)}
		}
		if err := nd.Law.Validate(); err != nil {
			return &Error{Object: obj, Msg: "cannot write: " + err.Error(), Err: err}
		}
		if msg := nodeLawsWritable(&nd); msg != "" {
			return &Error{Object: obj, Msg: msg}
		}
		if nd.XY != nil && !fin(nd.XY[0], nd.XY[1]) {
			return &Error{Object: obj, Msg: "cannot write a non-finite xy"}
		}
		if len(nd.Split) > 0 && nd.Law.Kind == vertex.Fixed {
			return &Error{Object: obj, Msg: "cannot write a split on a fixed node"}
		}
		var sum float64
		for k, p := range nd.Split {
			e, ok := net.EdgeIndex(k)
			if !ok || !fin(p) || p < 0 {
				return &Error{Object: obj, Msg: fmt.Sprintf("cannot write split %q = %g", k, p)}
			}
			if from, to := net.EdgeNodes(e); from != i && to != i {
				return &Error{Object: obj, Msg: fmt.Sprintf("cannot write split %q: the edge does not touch this node", k)}
			}
			sum += p
		}
		if len(nd.Split) > 0 && !(sum > 0) {
			return &Error{Object: obj, Msg: "cannot write a split whose values sum to 0"}
		}
	}
	for i, e := range net.Edges {
		obj := fmt.Sprintf("edge %q", e.ID)
		switch {
		case !graphpde.ValidID(e.ID):
			return &Error{Object: fmt.Sprintf("edge #%d", i+1), Msg: fmt.Sprintf("cannot write id %q", e.ID)}
		case profileMsg(&e) != "":
			return &Error{Object: obj, Msg: profileMsg(&e)}
		case edgeLawMsg(&e) != "":
			return &Error{Object: obj, Msg: edgeLawMsg(&e)}
		case e.From < 0 || e.From >= len(net.Nodes) || e.To < 0 || e.To >= len(net.Nodes):
			return &Error{Object: obj, Msg: "cannot write: unknown node"}
		case !fin(e.Length, e.A, e.B, e.C, e.F, e.Rho, e.Weight[0], e.Weight[1]):
			return &Error{Object: obj, Msg: "cannot write non-finite values"}
		case e.Cells < 0 || e.Cells > MaxCellsPerEdge:
			return &Error{Object: obj, Msg: fmt.Sprintf("cannot write cells = %d", e.Cells)}
		}
	}
	return nil
}

// num formats a finite float as a TOML float that reads back exactly.
func num(v float64) string {
	s := strconv.FormatFloat(v, 'g', -1, 64)
	if !strings.ContainsAny(s, ".e") {
		s += ".0"
	}
	return s
}

// quote writes s as a TOML basic string.
func quote(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for len(s) > 0 {
		r, size := utf8.DecodeRuneInString(s)
		s = s[size:]
		switch {
		case r == '"':
			b.WriteString(`\"`)
		case r == '\\':
			b.WriteString(`\\`)
		case r == '\n':
			b.WriteString(`\n`)
		case r == '\t':
			b.WriteString(`\t`)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(&b, `\u%04X`, r)
		default:
			b.WriteRune(r) // invalid UTF-8 becomes U+FFFD
		}
	}
	b.WriteByte('"')
	return b.String()
}

// bareOrQuoted writes an id as a TOML key: bare unless it holds a '.'.
func bareOrQuoted(id string) string {
	if strings.Contains(id, ".") || id == "" {
		return quote(id)
	}
	return id
}
