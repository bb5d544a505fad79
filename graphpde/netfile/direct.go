package netfile

import (
	"math"
	"slices"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/formula"
	"github.com/ramify-dev/ramify/vertex"
)

// Most tables of a large file are plain: a node with an id, a position, a
// fixed value or a leak, injection and capacity; an edge with its ends and
// numbers. directNode and directEdge add such a table's node or edge from
// the keys and values read by fastSection, without building the table's
// map and without the general reading's bookkeeping. They take only tables
// whose every key is one of those and whose every value is a number (or
// pair of numbers) that passes the general reading's checks, and leave
// anything else, changing nothing, to the general reading: so whatever is
// wrong with a table is reported by the general reading, with its words
// and lines (TestFastTablesSameAsLibrary compares the two).

// plainNumber returns a number value that obeys r.
func plainNumber(v any, r rule) (float64, bool) {
	var x float64
	switch n := v.(type) {
	case int64:
		x = float64(n)
	case float64:
		x = n
	default:
		return 0, false // a string may be a quantity or an expression
	}
	return x, check(x, r) == ""
}

// kvNumber returns a number value that obeys r.
func kvNumber(x *fastKV, r rule) (float64, bool) {
	switch x.typ {
	case fastInt:
		return float64(x.i), check(float64(x.i), r) == ""
	case fastFloat:
		return x.f, check(x.f, r) == ""
	}
	return 0, false
}

// kvPair returns an array of two numbers that obey r.
func kvPair(x *fastKV, r rule) ([2]float64, bool) {
	if x.typ != fastPair {
		return plainPair(x.v, r)
	}
	return [2]float64{x.f, x.f2}, check(x.f, r) == "" && check(x.f2, r) == ""
}

// plainPair returns an array of two numbers that obey r.
func plainPair(v any, r rule) ([2]float64, bool) {
	var out [2]float64
	arr, ok := v.([]any)
	if !ok || len(arr) != 2 {
		return out, false
	}
	for i, e := range arr {
		if out[i], ok = plainNumber(e, r); !ok {
			return out, false
		}
	}
	return out, true
}

// directNode adds the node of a plain [[node]] table and reports whether
// it did.
func (rd *reader) directNode(net *graphpde.Network, kv []fastKV) bool {
	var nd graphpde.Node
	var fixed, balance, ok bool
	for n := range kv {
		x := &kv[n]
		switch x.k {
		case "id":
			if x.typ != fastString {
				return false
			}
			nd.ID, ok = strings.Clone(x.s), true
		case "xy":
			var xy [2]float64
			xy, ok = kvPair(x, finite)
			nd.XY = &xy
		case "fixed":
			nd.Law.Kind, fixed = vertex.Fixed, true
			nd.Law.Value, ok = kvNumber(x, finite)
		case "leak":
			nd.Law.Leak, ok = kvNumber(x, nonNeg)
			balance = true
		case "inject":
			nd.Law.Inject, ok = kvNumber(x, finite)
			balance = true
		case "capacity":
			nd.Law.Capacity, ok = kvNumber(x, nonNeg)
			balance = true
		default:
			return false
		}
		if !ok {
			return false
		}
	}
	if nd.ID == "" || fixed && balance {
		return false
	}
	_, err := net.AddNode(nd) // refuses a bad or repeated id, changing nothing
	return err == nil
}

// plainDefaults reports whether [defaults] holds numbers only (no
// expression, equation or initial value), so that directEdge may start
// from its values.
func plainDefaults(def *edgeVals) bool {
	return def.ex == ([maxEdgeKeys]*formula.Expr{}) && !def.given[slices.Index(defaultsKeys, "initial")] &&
		!def.given[slices.Index(defaultsKeys, "equation")]
}

// directEdge adds the edge of a plain [[edge]] table, with the values of
// [defaults] (which must be plain) for the keys it does not give, and
// reports whether it did.
func (rd *reader) directEdge(net *graphpde.Network, kv []fastKV, def *edgeVals) bool {
	e := graphpde.Edge{From: -1, To: -1, Length: def.length, A: def.a, B: def.b, C: def.c, F: def.f, Rho: def.rho, Weight: def.w, Cells: def.cells}
	hasLength := def.given[slices.Index(defaultsKeys, "length")]
	hasA := def.given[slices.Index(defaultsKeys, "diffusivity")]
	var weight, weights, ok bool
	for n := range kv {
		x := &kv[n]
		switch x.k {
		case "id":
			if x.typ != fastString {
				return false
			}
			e.ID, ok = strings.Clone(x.s), true
		case "from", "to":
			if x.typ != fastString {
				return false
			}
			var v int
			if v, ok = net.NodeIndex(x.s); ok {
				if x.k == "from" {
					e.From = v
				} else {
					e.To = v
				}
			}
		case "length":
			e.Length, ok = kvNumber(x, positive)
			hasLength = true
		case "diffusivity":
			e.A, ok = kvNumber(x, positive)
			hasA = true
		case "drift":
			e.B, ok = kvNumber(x, finite)
		case "decay":
			e.C, ok = kvNumber(x, nonNeg)
		case "source":
			e.F, ok = kvNumber(x, finite)
		case "capacity":
			e.Rho, ok = kvNumber(x, positive)
		case "weight":
			var w float64
			w, ok = kvNumber(x, positive)
			e.Weight, weight = [2]float64{w, w}, true
		case "weights":
			e.Weight, ok = kvPair(x, positive)
			weights = true
		case "cells":
			var n int64
			switch x.typ {
			case fastInt:
				n, ok = x.i, true
			case fastFloat:
				n, ok = int64(x.f), x.f == math.Trunc(x.f) && math.Abs(x.f) < 1e18
			}
			ok = ok && cellCount(n) == ""
			e.Cells = int(n)
		default:
			return false
		}
		if !ok {
			return false
		}
	}
	if e.ID == "" || e.From < 0 || e.To < 0 || !hasLength || !hasA || weight && weights {
		return false
	}
	if e.Cells > 0 && rd.cells+int64(e.Cells) > MemoryLimit/BytesPerCell {
		return false
	}
	if _, err := net.AddEdge(e); err != nil { // a bad or repeated id: nothing changed
		return false
	}
	rd.cells += int64(e.Cells)
	return true
}
