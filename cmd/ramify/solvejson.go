package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
)

// streamSolveJSON selects writeSolveJSON for solve --json (tests turn it
// off to compare with writeJSON).
var streamSolveJSON = true

// writeSolveJSON writes out as writeJSON does, byte for byte, in one pass:
// the node and edge arrays (all but a few bytes of a large result) are
// written element by element as they are formatted, and only the rest of
// the document goes through encoding/json (the summary's per-edge
// extremes are written like the arrays). (writeJSON
// marshals the whole value, every number through its MarshalJSON and a
// validation pass, and then re-indents the document.) TestSolveJSONStream
// compares the two.
func writeSolveJSON(w io.Writer, out solveOut) error {
	nodes, edges, ext := out.Nodes, out.Edges, out.Summary.Extremes
	if len(nodes) == 0 && len(edges) == 0 {
		return writeJSON(w, out)
	}
	if len(ext) > 0 {
		out.Summary.Extremes = []edgeExtreme{}
	}
	// The rest of the document, with both arrays empty: "nodes": [] and
	// "edges": [] stand on lines of their own at the top level, which no
	// JSON string can span (a newline in a string is escaped).
	out.Nodes, out.Edges = []nodeOut{}, []edgeOut{}
	var rest bytes.Buffer
	if err := writeJSON(&rest, out); err != nil {
		return err
	}
	const gap = "\n \"nodes\": [],\n \"edges\": [],\n"
	head, tail, ok := bytes.Cut(rest.Bytes(), []byte(gap))
	if !ok {
		return fmt.Errorf("internal error: solve JSON layout not found")
	}
	// The summary's per-edge extremes, the first "edges" two levels down
	// after the top-level arrays (stats has no such key; the summary
	// comes before the control policy).
	var mid []byte
	if len(ext) > 0 {
		const gap2 = "\n  \"edges\": [],\n"
		mid, tail, ok = bytes.Cut(tail, []byte(gap2))
		if !ok {
			return fmt.Errorf("internal error: solve JSON summary layout not found")
		}
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	b := make([]byte, 0, 256)
	b = append(append(b, head...), "\n \"nodes\": "...)
	if nodes == nil {
		b = append(b, "null"...)
	} else if len(nodes) == 0 {
		b = append(b, "[]"...)
	} else {
		b = append(b, '[')
		for i, n := range nodes {
			if i > 0 {
				b = append(b, ',')
			}
			b = append(b, "\n  {\n   \"id\": "...)
			b = appendJSONString(b, n.ID)
			b = append(b, ",\n   \"kind\": "...)
			b = appendJSONString(b, n.Kind)
			b = append(b, ",\n   \"u\": "...)
			b = appendNum(b, n.U)
			b = append(b, ",\n   \"residual\": "...)
			b = appendNum(b, n.Residual)
			b = append(b, "\n  }"...)
			var err error
			if b, err = flushFull(bw, b); err != nil {
				return err
			}
		}
		b = append(b, "\n ]"...)
	}
	b = append(b, ",\n \"edges\": "...)
	if edges == nil {
		b = append(b, "null"...)
	} else if len(edges) == 0 {
		b = append(b, "[]"...)
	} else {
		b = append(b, '[')
		for i, e := range edges {
			if i > 0 {
				b = append(b, ',')
			}
			b = append(b, "\n  {\n   \"id\": "...)
			b = appendJSONString(b, e.ID)
			b = append(b, ",\n   \"from\": "...)
			b = appendJSONString(b, e.From)
			b = append(b, ",\n   \"to\": "...)
			b = appendJSONString(b, e.To)
			b = append(b, ",\n   \"flux\": [\n    "...)
			b = appendNum(b, e.Flux[0])
			b = append(b, ",\n    "...)
			b = appendNum(b, e.Flux[1])
			b = append(b, "\n   ]\n  }"...)
			var err error
			if b, err = flushFull(bw, b); err != nil {
				return err
			}
		}
		b = append(b, "\n ]"...)
	}
	b = append(b, ",\n"...)
	if len(ext) > 0 {
		b = append(b, mid...)
		b = append(b, "\n  \"edges\": ["...)
		for i, x := range ext {
			if i > 0 {
				b = append(b, ',')
			}
			b = append(b, "\n   {\n    \"id\": "...)
			b = appendJSONString(b, x.ID)
			b = append(b, ",\n    \"max\": "...)
			b = appendNum(b, x.Max)
			b = append(b, ",\n    \"at_max\": "...)
			b = appendNum(b, x.AtMax)
			b = append(b, ",\n    \"min\": "...)
			b = appendNum(b, x.Min)
			b = append(b, ",\n    \"at_min\": "...)
			b = appendNum(b, x.AtMin)
			b = append(b, ",\n    \"exact\": "...)
			b = strconv.AppendBool(b, x.Exact)
			b = append(b, ",\n    \"flat\": "...)
			b = strconv.AppendBool(b, x.Flat)
			b = append(b, "\n   }"...)
			var err error
			if b, err = flushFull(bw, b); err != nil {
				return err
			}
		}
		b = append(b, "\n  ],\n"...)
	}
	b = append(b, tail...)
	if _, err := bw.Write(b); err != nil {
		return err
	}
	return bw.Flush()
}

// flushFull writes b to bw once it holds more than 32 KiB and returns it
// emptied (else unchanged), so that a large array is written as it is
// formatted.
func flushFull(bw *bufio.Writer, b []byte) ([]byte, error) {
	if len(b) > 1<<15 {
		if _, err := bw.Write(b); err != nil {
			return b, err
		}
		b = b[:0]
	}
	return b, nil
}

// appendNum appends x as num's MarshalJSON writes it.
func appendNum(b []byte, x num) []byte {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return append(b, "null"...)
	}
	return appendJSONFloat(b, f)
}

// appendJSONString appends s quoted as encoding/json's Encoder writes it:
// plain printable ASCII other than '"', '\\', '<', '>' and '&' as is
// (node and edge ids are such), anything else through encoding/json.
func appendJSONString(b []byte, s string) []byte {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x7f || c == '"' || c == '\\' || c == '<' || c == '>' || c == '&' {
			q, err := json.Marshal(s)
			if err != nil { // cannot happen for a string
				return strconv.AppendQuote(b, s)
			}
			return append(b, q...)
		}
	}
	b = append(b, '"')
	b = append(b, s...)
	return append(b, '"')
}
