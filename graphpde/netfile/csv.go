package netfile

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"
	"strconv"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/units"
	"github.com/ramify-dev/ramify/vertex"
)

// CSV columns. The header names them, in any order; see the package
// documentation for their meaning.
const (
	colKind = iota
	colID
	colFrom
	colTo
	colLength
	colDiffusivity
	colDrift
	colDecay
	colSource
	colCapacity
	colWeight
	colWeightFrom
	colWeightTo
	colCells
	colFixed
	colLeak
	colInject
	colX
	colY
	numCols
)

var csvNames = [numCols]string{
	colKind: "kind", colID: "id", colFrom: "from", colTo: "to", colLength: "length",
	colDiffusivity: "diffusivity", colDrift: "drift", colDecay: "decay", colSource: "source",
	colCapacity: "capacity", colWeight: "weight", colWeightFrom: "weight_from", colWeightTo: "weight_to",
	colCells: "cells", colFixed: "fixed", colLeak: "leak", colInject: "inject", colX: "x", colY: "y",
}

// Columns used only by edge rows, and only by node rows. id and capacity
// serve both (capacity is ρ on an edge row, ρ_v on a node row).
var (
	csvEdgeOnly = []int{colFrom, colTo, colLength, colDiffusivity, colDrift, colDecay, colSource, colWeight, colWeightFrom, colWeightTo, colCells}
	csvNodeOnly = []int{colFixed, colLeak, colInject, colX, colY}
	csvRequired = []int{colID, colFrom, colTo, colLength, colDiffusivity}
)

// csvReader holds the state of one ReadCSV.
type csvReader struct {
	file       string
	cr         *rowReader
	col        [numCols]int // index of each column in a record, -1 if absent
	rec        []string
	net        *graphpde.Network
	edgeRow    []int // line of each edge's row
	nodeRow    []int // line of each node's own row, 0 if created by an edge
	cells      int64
	edgesSized bool   // presize saw edge rows
	rowKind    string // "edge" or "node": the current row, for errors
	rowID      string // its id once checked, else ""
	last       [2]int // node named last by the from and to columns (nodeFor)
}

// ReadCSV reads a network from an edge list in CSV (RFC 4180, comma
// separated, '#' starts a comment line). The first record is a header naming
// the columns in any order; the columns are listed in the package
// documentation. Every row is an edge unless a kind column says "node".
// Nodes named by edges are created as they first appear, as balance nodes
// with no leak, injection or capacity; a node row sets the condition of its
// node, before or after the edges that use it. name is the file name used in
// errors, which are *Error values carrying the row's line.
//
// ReadCSV streams the input: it holds one record at a time, and its cost is
// linear in the number of rows. When the size of r is known (a *bytes.Reader,
// *strings.Reader or regular *os.File) it extrapolates the number of rows
// from the first ones and allocates the network's slices once.
func ReadCSV(r io.Reader, name string) (*graphpde.Network, error) {
	return readCSV(r, name, nil)
}

// readCSV is ReadCSV with the options of ReadFileOptions (nil: none).
func readCSV(r io.Reader, name string, opt *Options) (*graphpde.Network, error) {
	cr := newRowReader(r)
	c := &csvReader{file: name, cr: cr, net: &graphpde.Network{}}
	if err := c.header(); err != nil {
		return nil, err
	}
	size := inputSize(r)
	edgesFrom := int64(-1) // input offset before the first edge row
	for rows := 0; ; rows++ {
		if rows == presizeAfter && size > 0 {
			c.presize(size)
		}
		if size > 0 && len(c.net.Edges) == presizeAfter && rows > presizeAfter && !c.edgesSized {
			// Edge rows after many node rows: the first presize saw
			// none. Extrapolate from the bytes of the first edges.
			c.presizeEdges(size, edgesFrom)
		}
		at := cr.InputOffset()
		if rows%stopEvery == 0 {
			if err := opt.stopped(name); err != nil {
				return nil, err
			}
		}
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil && !errors.Is(err, csv.ErrFieldCount) {
			return nil, c.csvError(err)
		}
		if err != nil {
			line, _ := cr.FieldPos(0)
			return nil, &Error{File: name, Line: line, Msg: fmt.Sprintf("row has %d fields but the header has %d", len(rec), cr.FieldsPerRecord()), Err: err}
		}
		c.rec = rec
		switch kind := strings.ToLower(c.field(colKind)); kind {
		case "", "edge":
			if edgesFrom < 0 {
				edgesFrom = at
			}
			err = c.edge()
		case "node":
			err = c.node()
		default:
			c.rowID = ""
			err = c.fail(colKind, fmt.Sprintf("kind %q must be edge or node", kind))
		}
		if err != nil {
			return nil, err
		}
	}
	if len(c.net.Nodes) == 0 {
		// A header and no rows (or only comments): nothing to solve.
		return nil, &Error{File: name, Msg: "the edge list has no rows after its header"}
	}
	if opt != nil && opt.Lines != nil {
		opt.Lines.reset()
		for i, ln := range c.nodeRow {
			if ln > 0 {
				opt.Lines.Nodes[c.net.Nodes[i].ID] = ln
			}
		}
		for i, ln := range c.edgeRow {
			opt.Lines.Edges[c.net.Edges[i].ID] = ln
		}
	}
	return c.net, nil
}

// presizeAfter is the number of rows after which ReadCSV, when it knows the
// input's size, estimates the number of rows and grows its slices once
// instead of by repeated doubling.
const presizeAfter = 256

// inputSize returns the size in bytes of r when it is known, else -1.
func inputSize(r io.Reader) int64 {
	switch x := r.(type) {
	case interface{ Size() int64 }: // *bytes.Reader, *strings.Reader, *io.SectionReader
		return x.Size()
	case *os.File:
		if fi, err := x.Stat(); err == nil && fi.Mode().IsRegular() {
			return fi.Size()
		}
	}
	return -1
}

// presize grows the edge and node slices and indices to the counts extrapolated from
// the rows read so far to an input of size bytes (plus 1/16 for variation).
func (c *csvReader) presize(size int64) {
	read := c.cr.InputOffset()
	if read <= 0 || size <= read {
		return
	}
	scale := float64(size) / float64(read) * (1 + 1.0/16)
	grow := func(n int) int { return int(min(float64(n)*scale, 1e9)) - n }
	c.edgesSized = len(c.net.Edges) > 0
	ge, gn := max(grow(len(c.net.Edges)), 0), max(grow(len(c.net.Nodes)), 0)
	if !c.edgesSized {
		// Node rows only so far (a file that lists its nodes first): the
		// edge rows to come are not among them, so extrapolating would
		// reserve room for every row of the file as a node (three times
		// the nodes of a mesh). A connected network whose nodes all have
		// rows has at least as many edges as nodes less one, so about
		// half the rows at most are node rows (derived): room for that
		// many, once (growing by appending instead copies the nodes
		// several times, which costs more than the spare room's zeroing);
		// presizeEdges sizes the edges once their rows begin.
		gn = max(int(min(float64(len(c.net.Nodes))*scale/2, 1e9))-len(c.net.Nodes), 0)
	}
	c.net.Reserve(gn, ge)
	c.edgeRow = slices.Grow(c.edgeRow, ge)
	c.nodeRow = slices.Grow(c.nodeRow, gn)
}

// presizeEdges grows the edge slices to the edge rows that the rest of an
// input of size bytes holds if it is all edge rows like the first
// presizeAfter ones, which began at offset from (plus 1/16).
func (c *csvReader) presizeEdges(size, from int64) {
	read := c.cr.InputOffset()
	per := float64(read-from) / float64(len(c.net.Edges))
	if per <= 0 || size <= read {
		return
	}
	g := int(min(float64(size-read)/per*(1+1.0/16), 1e9))
	if g > cap(c.net.Edges)-len(c.net.Edges) {
		c.net.Reserve(0, g)
		c.edgeRow = slices.Grow(c.edgeRow, g)
	}
}

func (c *csvReader) csvError(err error) error {
	e := &Error{File: c.file, Msg: err.Error(), Err: err}
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		e.Line = pe.Line
		e.Msg = pe.Err.Error()
	} else {
		e.Msg = "cannot read: " + errMsg(err)
	}
	return e
}

func (c *csvReader) header() error {
	rec, err := c.cr.Read()
	if err == io.EOF {
		return &Error{File: c.file, Msg: "empty file: the first line must be a header naming the columns (id,from,to,length,diffusivity,...)"}
	}
	if err != nil {
		return c.csvError(err)
	}
	line, _ := c.cr.FieldPos(0)
	for i := range c.col {
		c.col[i] = -1
	}
	for i, h := range rec {
		h = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\uFEFF")))
		k := -1
		for j, n := range csvNames {
			if n == h {
				k = j
			}
		}
		switch {
		case k < 0:
			return &Error{File: c.file, Line: line, Msg: "header: " + strings.Replace(unknownKey(h, csvNames[:]), "key", "column", 1)}
		case c.col[k] >= 0:
			return &Error{File: c.file, Line: line, Msg: fmt.Sprintf("header: column %q appears twice", h)}
		}
		c.col[k] = i
	}
	for _, k := range csvRequired {
		if c.col[k] < 0 {
			return &Error{File: c.file, Line: line, Msg: fmt.Sprintf("header: missing column %q (required: id,from,to,length,diffusivity)", csvNames[k])}
		}
	}
	if c.col[colKind] < 0 {
		for _, k := range csvNodeOnly {
			if c.col[k] >= 0 {
				return &Error{File: c.file, Line: line, Msg: fmt.Sprintf("header: column %q is for node rows, which need a kind column", csvNames[k])}
			}
		}
	}
	return nil
}

// field returns the trimmed value of column k in the current record, or ""
// when the column is absent.
func (c *csvReader) field(k int) string {
	if i := c.col[k]; i >= 0 {
		return strings.TrimSpace(c.rec[i])
	}
	return ""
}

// fail reports an error in column k of the current row.
func (c *csvReader) fail(k int, msg string) *Error {
	i := c.col[k]
	if i < 0 {
		i = 0
	}
	line, _ := c.cr.FieldPos(i)
	var obj string
	if c.rowID != "" {
		obj = c.rowKind + " " + strconv.Quote(c.rowID)
	}
	return &Error{File: c.file, Line: line, Object: obj, Msg: msg}
}

// number parses column k; ok is false for an empty field.
func (c *csvReader) number(k int, r rule) (v float64, ok bool, err error) {
	s := c.field(k)
	if s == "" {
		return 0, false, nil
	}
	var exact bool
	var perr error
	if v, exact = exactDecimal(s); !exact {
		v, perr = strconv.ParseFloat(s, 64)
	}
	if perr != nil && units.LooksLikeQuantity(s) {
		// "NUMBER UNIT", as in the network file: length must be a length,
		// the other columns are converted to SI.
		q, qerr := units.Parse(s)
		if qerr == nil && k == colLength && q.Unit.Dim != units.DimLength {
			_, qerr = units.Convert(s, units.DimLength)
		}
		if qerr != nil {
			return 0, false, c.fail(k, csvNames[k]+" = "+qerr.Error())
		}
		v, perr = q.SI(), nil
	}
	if perr != nil && !errors.Is(perr, strconv.ErrRange) {
		return 0, false, c.fail(k, fmt.Sprintf("%s = %q is not a number", csvNames[k], s))
	}
	if reason := check(v, r); reason != "" {
		return 0, false, c.fail(k, csvNames[k]+" "+reason)
	}
	return v, true, nil
}

// unused reports a non-empty field in one of cols, which this kind of row
// does not use.
func (c *csvReader) unused(cols []int, kind string) error {
	for _, k := range cols {
		if c.field(k) != "" {
			return c.fail(k, fmt.Sprintf("column %s is not used on %s rows; leave it empty", csvNames[k], kind))
		}
	}
	return nil
}

// readID reads and checks the id column, and names the row's object for
// errors.
func (c *csvReader) readID(kind string) (string, error) {
	c.rowKind, c.rowID = kind, ""
	id := c.field(colID)
	if id == "" {
		return "", c.fail(colID, kind+" row without an id")
	}
	if !graphpde.ValidID(id) {
		return "", c.fail(colID, fmt.Sprintf("%s id %q must be letters, digits, '_', '-' or '.'", kind, id))
	}
	c.rowID = id
	return id, nil
}

// nodeFor returns the index of node id, creating a balance node if needed.
func (c *csvReader) nodeFor(k int) (int, error) {
	id := c.field(k)
	if id == "" {
		return 0, c.fail(k, fmt.Sprintf("missing %s", csvNames[k]))
	}
	// Generated edge lists name their nodes in runs (a chain's next node,
	// a mesh's next row): the node after the one this column named last,
	// or that one again, is tried before the index (an id names one node
	// only, so a match is the answer).
	last := &c.last[0]
	if k == colTo {
		last = &c.last[1]
	}
	for _, v := range [2]int{*last + 1, *last} {
		if v < len(c.net.Nodes) && c.net.Nodes[v].ID == id {
			*last = v
			return v, nil
		}
	}
	if v, ok := c.net.NodeIndex(id); ok {
		*last = v
		return v, nil
	}
	if !graphpde.ValidID(id) {
		return 0, c.fail(k, fmt.Sprintf("%s: node id %q must be letters, digits, '_', '-' or '.'", csvNames[k], id))
	}
	v, err := c.net.AddNode(graphpde.Node{ID: strings.Clone(id)})
	if err != nil {
		e := c.fail(k, err.Error())
		e.Err = err
		return 0, e
	}
	c.nodeRow = append(c.nodeRow, 0)
	*last = v
	return v, nil
}

func (c *csvReader) edge() error {
	id, err := c.readID("edge")
	if err != nil {
		return err
	}
	line, _ := c.cr.FieldPos(0)
	if e, dup := c.net.EdgeIndex(id); dup {
		return c.fail(colID, fmt.Sprintf("duplicate id (first used at line %d)", c.edgeRow[e]))
	}
	if err := c.unused(csvNodeOnly, "edge"); err != nil {
		return err
	}
	e := graphpde.Edge{ID: strings.Clone(id)}
	if e.From, err = c.nodeFor(colFrom); err != nil {
		return err
	}
	if e.To, err = c.nodeFor(colTo); err != nil {
		return err
	}
	for _, f := range []struct {
		col int
		dst *float64
		r   rule
		req bool
	}{
		{colLength, &e.Length, positive, true},
		{colDiffusivity, &e.A, positive, true},
		{colDrift, &e.B, finite, false},
		{colDecay, &e.C, nonNeg, false},
		{colSource, &e.F, finite, false},
		{colCapacity, &e.Rho, positive, false},
	} {
		v, ok, err := c.number(f.col, f.r)
		if err != nil {
			return err
		}
		if !ok && f.req {
			return c.fail(f.col, fmt.Sprintf("missing %s", csvNames[f.col]))
		}
		*f.dst = v
	}
	if w, ok, err := c.number(colWeight, positive); err != nil {
		return err
	} else if ok {
		for _, k := range []int{colWeightFrom, colWeightTo} {
			if c.field(k) != "" {
				return c.fail(k, "give weight (both ends) or weight_from and weight_to, not both")
			}
		}
		e.Weight = [2]float64{w, w}
	}
	for s, k := range []int{colWeightFrom, colWeightTo} {
		if w, ok, err := c.number(k, positive); err != nil {
			return err
		} else if ok {
			e.Weight[s] = w
		}
	}
	if s := c.field(colCells); s != "" {
		n, perr := strconv.ParseInt(s, 10, 64)
		if perr != nil && !errors.Is(perr, strconv.ErrRange) {
			return c.fail(colCells, fmt.Sprintf("cells = %q is not an integer", s))
		}
		if reason := cellCount(n); reason != "" {
			return c.fail(colCells, "cells "+reason)
		}
		c.cells += n
		if c.cells > MemoryLimit/BytesPerCell {
			return c.fail(colCells, tooManyCells(c.cells))
		}
		e.Cells = int(n)
	}
	if _, err := c.net.AddEdge(e); err != nil {
		fe := c.fail(colID, err.Error())
		var me *graphpde.ModelError
		if errors.As(err, &me) {
			fe.Msg = strings.TrimSpace(me.Field + " " + me.Reason)
		}
		fe.Err = err
		return fe
	}
	c.edgeRow = append(c.edgeRow, line)
	return nil
}

func (c *csvReader) node() error {
	id, err := c.readID("node")
	if err != nil {
		return err
	}
	line, _ := c.cr.FieldPos(0)
	if err := c.unused(csvEdgeOnly, "node"); err != nil {
		return err
	}
	nd := graphpde.Node{ID: id}
	if g, ok, err := c.number(colFixed, finite); err != nil {
		return err
	} else if ok {
		nd.Law = vertex.Law{Kind: vertex.Fixed, Value: g}
		for _, k := range []int{colLeak, colInject, colCapacity} {
			if c.field(k) != "" {
				return c.fail(k, fmt.Sprintf("%s is not allowed on a fixed node (it has no balance law); leave it empty", csvNames[k]))
			}
		}
	}
	for _, f := range []struct {
		col int
		dst *float64
		r   rule
	}{{colLeak, &nd.Law.Leak, nonNeg}, {colInject, &nd.Law.Inject, finite}, {colCapacity, &nd.Law.Capacity, nonNeg}} {
		v, _, err := c.number(f.col, f.r)
		if err != nil {
			return err
		}
		*f.dst = v
	}
	x, hasX, err := c.number(colX, finite)
	if err != nil {
		return err
	}
	y, hasY, err := c.number(colY, finite)
	if err != nil {
		return err
	}
	switch {
	case hasX && hasY:
		nd.XY = &[2]float64{x, y}
	case hasX != hasY:
		return c.fail(colX, "give both x and y, or neither")
	}
	if err := nd.Law.Validate(); err != nil {
		fe := c.fail(colID, err.Error())
		fe.Err = err
		return fe
	}
	if v, ok := c.net.NodeIndex(id); ok {
		if first := c.nodeRow[v]; first > 0 {
			return c.fail(colID, fmt.Sprintf("duplicate node row (first at line %d)", first))
		}
		nd.ID = c.net.Nodes[v].ID
		c.net.Nodes[v] = nd
		c.nodeRow[v] = line
		return nil
	}
	nd.ID = strings.Clone(id)
	if _, err := c.net.AddNode(nd); err != nil {
		fe := c.fail(colID, err.Error())
		fe.Err = err
		return fe
	}
	c.nodeRow = append(c.nodeRow, line)
	return nil
}
