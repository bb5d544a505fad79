package netfile

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// readers maps a file extension to its reader.
var readers = map[string]func(io.Reader, string, *Options) (*graphpde.Network, error){
	".toml":    readTOML,
	".csv":     readCSV,
	".json":    whole(ReadJSON),
	".geojson": whole(ReadGeoJSON),
	".swc":     readSWC,
	".dot":     readDOT,
	".gv":      readDOT,
}

// whole adapts a reader that takes no options (JSON and GeoJSON, which
// have no lines of nodes to record): the context is looked at before and
// after it reads.
func whole(read func(io.Reader, string) (*graphpde.Network, error)) func(io.Reader, string, *Options) (*graphpde.Network, error) {
	return func(r io.Reader, name string, opt *Options) (*graphpde.Network, error) {
		net, err := read(r, name)
		if stop := opt.stopped(name); stop != nil {
			return nil, stop
		}
		if opt != nil && opt.Lines != nil {
			opt.Lines.reset()
		}
		return net, err
	}
}

const readerList = ".toml (network file), .csv (edge list), .json (network or GeoJSON), .geojson, .swc (neuron morphology) or .dot/.gv (Graphviz)"

// ReadJSON reads the JSON form of a network file (the same tables and keys
// as the TOML file, as JSON objects and arrays: {"network": {...},
// "node": [...], "edge": [...]}; WriteJSON writes it), or, when the document
// is a GeoJSON FeatureCollection, a GeoJSON line network (ReadGeoJSON).
// Errors carry no line numbers, since the JSON decoder gives none for keys.
func ReadJSON(r io.Reader, name string) (*graphpde.Network, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, &Error{File: name, Msg: "cannot read: " + errMsg(err), Err: err}
	}
	var root map[string]any
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	if err := dec.Decode(&root); err != nil {
		return nil, &Error{File: name, Msg: "invalid JSON: " + err.Error(), Err: err}
	}
	if t, _ := root["type"].(string); t == "FeatureCollection" || t == "Feature" {
		return ReadGeoJSON(bytes.NewReader(data), name)
	}
	root = fromJSON(root).(map[string]any)
	rd := &reader{file: name, loc: locate("")}
	return rd.network(root)
}

// fromJSON turns decoded JSON into the value types the TOML decoder gives:
// integers as int64, other numbers as float64, arrays of objects as
// []map[string]any.
func fromJSON(v any) any {
	switch x := v.(type) {
	case json.Number:
		if i, err := strconv.ParseInt(string(x), 10, 64); err == nil {
			return i
		}
		f, _ := strconv.ParseFloat(string(x), 64)
		return f
	case map[string]any:
		for k, e := range x {
			x[k] = fromJSON(e)
		}
		return x
	case []any:
		allMaps := len(x) > 0
		for i, e := range x {
			x[i] = fromJSON(e)
			if _, ok := x[i].(map[string]any); !ok {
				allMaps = false
			}
		}
		if allMaps {
			out := make([]map[string]any, len(x))
			for i, e := range x {
				out[i] = e.(map[string]any)
			}
			return out
		}
		return x
	}
	return v
}

// WriteJSON writes net as the JSON form of its network file: the document
// Write produces, as one JSON object (tables as objects, arrays of tables
// as arrays, in the same order). ReadJSON reads it back to the same
// network. It fails where Write fails.
func WriteJSON(w io.Writer, net *graphpde.Network) error {
	var buf bytes.Buffer
	if err := Write(&buf, net); err != nil {
		return err
	}
	var root map[string]any
	if _, err := toml.Decode(buf.String(), &root); err != nil {
		return fmt.Errorf("netfile: WriteJSON: the written file does not read back: %w", err)
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", " ")
	return enc.Encode(root)
}

// WriteCSV writes net as a CSV edge list with a kind column: one row per
// node, then one per edge, in index order, values in the shortest form that
// reads back exactly. ReadCSV reads it back to the same nodes and edges
// (the name and description, which the CSV form has no place for, are
// written as "#" comment lines and not read back). A network with what the
// CSV form cannot hold (parameters, laws or expressions, splits) is refused
// with an *Error naming it.
func WriteCSV(w io.Writer, net *graphpde.Network) error {
	if net.Params != nil {
		return &Error{Msg: "the CSV form has no [parameters]; convert to toml or json"}
	}
	if graphpde.Controlled(net) {
		return &Error{Msg: "the CSV form has no controls; convert to toml or json"}
	}
	for _, nd := range net.Nodes {
		switch {
		case nd.Split != nil:
			return &Error{Object: fmt.Sprintf("node %q", nd.ID), Msg: "the CSV form has no split; convert to toml or json"}
		case nd.Nonlinear != nil || nd.Time != nil || nd.Initial != nil:
			return &Error{Object: fmt.Sprintf("node %q", nd.ID), Msg: "the CSV form has no laws or initial values; convert to toml or json"}
		case nd.Law.Kind != vertex.Fixed && nd.Law.Kind != vertex.Balance:
			return &Error{Object: fmt.Sprintf("node %q", nd.ID), Msg: "the CSV form has only fixed and balance nodes"}
		}
	}
	for i := range net.Edges {
		if e := &net.Edges[i]; e.Law != nil || !e.Constant() {
			return &Error{Object: fmt.Sprintf("edge %q", e.ID), Msg: "the CSV form has only constant coefficients; convert to toml or json"}
		}
	}
	for _, line := range []string{net.Name, net.Description} {
		for _, l := range strings.Split(line, "\n") {
			if l != "" {
				if _, err := io.WriteString(w, "# "+l+"\n"); err != nil {
					return err
				}
			}
		}
	}
	cw := csv.NewWriter(w)
	header := []string{"kind", "id", "from", "to", "length", "diffusivity", "drift", "decay", "source", "capacity", "weight_from", "weight_to", "cells", "fixed", "leak", "inject", "x", "y"}
	cw.Write(header)
	col := func(name string) int { return slices.Index(header, name) }
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for _, nd := range net.Nodes {
		row := make([]string, len(header))
		row[0], row[1] = "node", nd.ID
		if nd.Law.Kind == vertex.Fixed {
			row[col("fixed")] = f(nd.Law.Value)
		} else {
			if nd.Law.Leak != 0 {
				row[col("leak")] = f(nd.Law.Leak)
			}
			if nd.Law.Inject != 0 {
				row[col("inject")] = f(nd.Law.Inject)
			}
			if nd.Law.Capacity != 0 {
				row[col("capacity")] = f(nd.Law.Capacity)
			}
		}
		if nd.XY != nil {
			row[col("x")], row[col("y")] = f(nd.XY[0]), f(nd.XY[1])
		}
		cw.Write(row)
	}
	for i := range net.Edges {
		e := &net.Edges[i]
		row := make([]string, len(header))
		row[0], row[1], row[2], row[3] = "edge", e.ID, net.Nodes[e.From].ID, net.Nodes[e.To].ID
		row[col("length")], row[col("diffusivity")] = f(e.Length), f(e.A)
		for _, kv := range []struct {
			k string
			v float64
		}{{"drift", e.B}, {"decay", e.C}, {"source", e.F}} {
			if kv.v != 0 {
				row[col(kv.k)] = f(kv.v)
			}
		}
		if e.Rho != 1 {
			row[col("capacity")] = f(e.Rho)
		}
		if w0, w1 := e.EndWeight(0), e.EndWeight(1); w0 != e.A || w1 != e.A {
			row[col("weight_from")], row[col("weight_to")] = f(w0), f(w1)
		}
		if e.Cells > 0 {
			row[col("cells")] = strconv.Itoa(e.Cells)
		}
		cw.Write(row)
	}
	cw.Flush()
	return cw.Error()
}

// lineLocator returns a locator that places the i-th node table (and all its
// keys) at nodeLines[i] and the i-th edge table at edgeLines[i], for readers
// of other formats that build the tables themselves.
func lineLocator(nodes, edges []map[string]any, nodeLines, edgeLines []int) *locator {
	l := locate("")
	for _, sec := range []struct {
		name  string
		tabs  []map[string]any
		lines []int
	}{{"node", nodes, nodeLines}, {"edge", edges, edgeLines}} {
		for i, m := range sec.tabs {
			if i >= len(sec.lines) {
				break
			}
			p := []string{sec.name, index(i)}
			l.lines[pathKey(p)] = sec.lines[i]
			for k, v := range m {
				l.lines[pathKey(append(p, k))] = sec.lines[i]
				if sub, ok := v.(map[string]any); ok {
					for k2 := range sub {
						l.lines[pathKey(append(p, k, k2))] = sec.lines[i]
					}
				}
			}
		}
	}
	return l
}
