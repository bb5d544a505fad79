package netfile

import (
	"bufio"
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
)

// Controls in the network file (docs/controls.md, docs/file-format.md):
// [network] objective = "min" | "max"; an edge's controls = [ { drift = … },
// … ], each entry overriding any of diffusivity, drift, decay and source;
// a node's controls = [ { EDGE = weight, … }, … ], the end weights of the
// edges at the node.

// controlKeys are the keys of one edge control.
var controlKeys = []string{"diffusivity", "drift", "decay", "source"}

// edgeOnlyKeys are the keys of an [[edge]] table: edgeKeys and those that
// [defaults] cannot give.
var edgeOnlyKeys = append(slices.Clip(edgeKeys), "controls")

// controlList returns the entries of t's controls key, or an error naming
// the line for anything but a non-empty array of inline tables.
func (t *tbl) controlList(what string) ([]map[string]any, error) {
	v := t.m["controls"]
	arr, ok := v.([]map[string]any)
	if !ok {
		if xs, isArr := v.([]any); isArr {
			arr = make([]map[string]any, len(xs))
			for i, x := range xs {
				m, isTbl := x.(map[string]any)
				if !isTbl {
					return nil, t.fail("controls", fmt.Sprintf("controls entry %d must be an inline table of %s, not %s", i, what, typeName(x)))
				}
				arr[i] = m
			}
			ok = true
		}
	}
	if !ok {
		return nil, t.fail("controls", fmt.Sprintf("controls must be a list of inline tables of %s, e.g. controls = [ { … }, { … } ], not %s", what, typeName(v)))
	}
	if len(arr) == 0 {
		return nil, t.fail("controls", "controls is empty: give at least one alternative (or remove the key)")
	}
	return arr, nil
}

// controlsGiveDiffusivity reports whether every control of an edge table
// sets the diffusivity (then the edge itself need not).
func (t *tbl) controlsGiveDiffusivity() bool {
	if _, ok := t.m["controls"]; !ok {
		return false // and no error built (its line is costly to find)
	}
	arr, err := t.controlList("")
	if err != nil {
		return false
	}
	for _, m := range arr {
		if _, ok := m["diffusivity"]; !ok {
			return false
		}
	}
	return true
}

// edgeControls reads an edge's controls into e, filling the keys an entry
// does not give from the edge's own coefficients.
func (t *tbl) edgeControls(e *graphpde.Edge, ev *edgeVals) error {
	if _, ok := t.m["controls"]; !ok {
		return nil
	}
	arr, err := t.controlList("diffusivity, drift, decay and source")
	if err != nil {
		return err
	}
	if !ev.given[slices.Index(defaultsKeys, "diffusivity")] {
		// Every control gives it (checked by the caller): the edge's own
		// diffusivity, used for its default end weights, is control 0's.
		a, _ := toFloat(arr[0]["diffusivity"])
		e.A = a
	}
	var alt []graphpde.EdgeControl
	for i, m := range arr {
		c := &tbl{rd: t.rd, obj: t.object(), kind: t.kind, id: t.id, path: append(slices.Clip(t.path), "controls"), m: m}
		if len(m) == 0 {
			return t.fail("controls", fmt.Sprintf("controls entry %d is empty: give any of diffusivity, drift, decay and source", i))
		}
		for _, k := range c.keys() {
			if !slices.Contains(controlKeys, k) {
				return t.fail("controls", fmt.Sprintf("controls entry %d: %s (an edge control overrides diffusivity, drift, decay or source)", i, unknownKey(k, controlKeys)))
			}
			if _, isExpr := exprString(m[k]); isExpr {
				return t.fail("controls", fmt.Sprintf("controls entry %d: %s must be a number (controls take constant coefficients)", i, k))
			}
		}
		ctl := graphpde.EdgeControl{A: e.A, B: e.B, C: e.C, F: e.F}
		for _, k := range c.keys() {
			v, err := c.number(k)
			if err != nil {
				return err
			}
			fin := !math.IsNaN(v) && !math.IsInf(v, 0)
			switch k {
			case "diffusivity":
				if !fin || v <= 0 {
					return t.fail("controls", fmt.Sprintf("controls entry %d: diffusivity = %g must be a finite number > 0: under this control the edge equation would not be elliptic", i, v))
				}
				ctl.A = v
			case "drift":
				ctl.B = v
			case "decay":
				if !fin || v < 0 {
					return t.fail("controls", fmt.Sprintf("controls entry %d: decay = %g must be a finite number ≥ 0", i, v))
				}
				ctl.C = v
			case "source":
				ctl.F = v
			}
			if !fin {
				return t.fail("controls", fmt.Sprintf("controls entry %d: %s = %g must be a finite number", i, k, v))
			}
		}
		alt = append(alt, ctl)
	}
	e.Controls = &graphpde.EdgeControls{Alt: alt}
	return nil
}

// nodeControls reads a node's controls (end weights by edge id) into nd;
// the ids are checked against the edges by checkControls.
func (t *tbl) nodeControls(nd *graphpde.Node) error {
	if _, ok := t.m["controls"]; !ok {
		return nil
	}
	if _, fixed := t.m["fixed"]; fixed {
		return t.fail("controls", "controls are not allowed on a fixed node (it has no balance to choose weights for)")
	}
	for _, k := range []string{"loss", "law"} {
		if _, ok := t.m[k]; ok {
			return t.fail("controls", "controls are not allowed together with "+k)
		}
	}
	arr, err := t.controlList("end weights by edge id")
	if err != nil {
		return err
	}
	for i, m := range arr {
		if len(m) == 0 {
			return t.fail("controls", fmt.Sprintf("controls entry %d is empty: give the end weight of at least one edge at the node", i))
		}
		c := &tbl{rd: t.rd, obj: t.object(), kind: t.kind, id: t.id, path: append(slices.Clip(t.path), "controls"), m: m}
		w := make(map[string]float64, len(m))
		for _, k := range c.keys() {
			v, ok := toFloat(m[k])
			if !ok {
				return t.fail("controls", fmt.Sprintf("controls entry %d: weight of %s must be a number, not %s", i, k, typeName(m[k])))
			}
			if math.IsNaN(v) || math.IsInf(v, 0) || v <= 0 {
				return t.fail("controls", fmt.Sprintf("controls entry %d: weight of %s = %g must be a finite number > 0 (the balance would not be monotone)", i, k, v))
			}
			w[k] = v
		}
		nd.Controls = append(nd.Controls, graphpde.NodeControl{Weights: w})
	}
	return nil
}

// checkControls checks what needs the whole file: node controls that name
// edges at the node, and an objective exactly when there are controls.
func (rd *reader) checkControls(net *graphpde.Network, objLine int) error {
	for v := range net.Nodes {
		nd := &net.Nodes[v]
		for i, c := range nd.Controls {
			for id := range c.Weights {
				e, ok := net.EdgeIndex(id)
				if !ok || (net.Edges[e].From != v && net.Edges[e].To != v) {
					return &Error{File: rd.file, Line: rd.nodeLineOf(nd.ID), Object: fmt.Sprintf("node %q", nd.ID),
						Msg: fmt.Sprintf("controls entry %d: %q is not an edge at this node", i, id)}
				}
			}
		}
	}
	ctl := graphpde.Controlled(net)
	switch {
	case ctl && net.Objective == graphpde.NoObjective:
		obj, line := rd.firstControlled(net)
		return &Error{File: rd.file, Line: line, Object: obj,
			Msg: `has controls but the network has no objective: add objective = "min" or "max" to [network]`}
	case !ctl && net.Objective != graphpde.NoObjective:
		return &Error{File: rd.file, Line: objLine, Object: "[network]",
			Msg: "objective is given but no edge or node has controls"}
	}
	return nil
}

// firstControlled names the first node or edge with controls and gives
// the line where it is defined.
func (rd *reader) firstControlled(net *graphpde.Network) (object string, line int) {
	for v := range net.Nodes {
		if len(net.Nodes[v].Controls) > 0 {
			return fmt.Sprintf("node %q", net.Nodes[v].ID), rd.nodeLineOf(net.Nodes[v].ID)
		}
	}
	for e := range net.Edges {
		if len(net.Edges[e].ControlSet()) > 0 {
			return fmt.Sprintf("edge %q", net.Edges[e].ID), rd.edgeLineOf(net.Edges[e].ID)
		}
	}
	return "[network]", 0
}

// writeEdgeControls writes an edge's controls, every coefficient of every
// entry (so that they read back whatever the edge's own values).
func writeEdgeControls(b *bufio.Writer, cs []graphpde.EdgeControl) {
	if len(cs) == 0 {
		return
	}
	parts := make([]string, len(cs))
	for i, c := range cs {
		parts[i] = fmt.Sprintf("{ diffusivity = %s, drift = %s, decay = %s, source = %s }", num(c.A), num(c.B), num(c.C), num(c.F))
	}
	fmt.Fprintf(b, "controls = [ %s ]\n", strings.Join(parts, ", "))
}

// writeNodeControls writes a node's controls (weights by edge id, sorted).
func writeNodeControls(b *bufio.Writer, cs []graphpde.NodeControl) {
	if len(cs) == 0 {
		return
	}
	parts := make([]string, len(cs))
	for i, c := range cs {
		keys := slices.Sorted(maps.Keys(c.Weights))
		kv := make([]string, len(keys))
		for j, k := range keys {
			kv[j] = bareOrQuoted(k) + " = " + num(c.Weights[k])
		}
		parts[i] = "{ " + strings.Join(kv, ", ") + " }"
	}
	fmt.Fprintf(b, "controls = [ %s ]\n", strings.Join(parts, ", "))
}
