package netfile

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/BurntSushi/toml"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/formula"
	"github.com/ramify-dev/ramify/graphpde/units"
	"github.com/ramify-dev/ramify/vertex"
)

// Keys accepted in each table, in the order the documentation lists them.
var (
	networkKeys  = []string{"name", "description", "objective"}
	nodeKeys     = []string{"id", "xy", "fixed", "leak", "inject", "capacity", "split", "loss", "law", "initial", "controls"}
	edgeKeys     = []string{"id", "from", "to", "length", "diffusivity", "drift", "decay", "source", "capacity", "weight", "weights", "cells", "equation", "initial"}
	defaultsKeys = edgeKeys[3:]
	topKeys      = []string{"network", "parameters", "defaults", "node", "edge"}
)

// ReadFile reads the network in path, choosing the format by the extension:
// ".toml" for a network file (Read), ".csv" for an edge list (ReadCSV),
// ".json" for the JSON form of a network file or a GeoJSON document
// (ReadJSON), ".geojson" (ReadGeoJSON), ".swc" (ReadSWC), ".dot" or ".gv"
// (ReadDOT). The path is used as the file name in errors.
func ReadFile(path string) (*graphpde.Network, error) {
	return ReadFileOptions(path, nil)
}

// ReadFileOptions is ReadFile with options (nil: none): a context that
// stops the reading, and a record of the lines where nodes and edges are
// defined.
func ReadFileOptions(path string, opt *Options) (*graphpde.Network, error) {
	if err := opt.stopped(path); err != nil {
		return nil, err
	}
	ext := strings.ToLower(filepath.Ext(path))
	read, ok := readers[ext]
	if !ok {
		return nil, &Error{File: path, Msg: fmt.Sprintf("unknown file type %q: want %s", ext, readerList)}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, &Error{File: path, Msg: "cannot open: " + errMsg(err), Err: err}
	}
	defer f.Close()
	return read(f, path, opt)
}

// errMsg strips the path that *os.PathError repeats.
func errMsg(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// Read parses a network file (TOML 1.0, keys in the package documentation)
// and returns the network it describes. name is the file name used in error
// messages. Every error is an *Error carrying the line of the offending key.
// Values nested deeper than MaxNesting are refused before anything is
// decoded. Read decodes the [[node]] and [[edge]] tables a batch at a time
// (files with other sub-tables are decoded whole). When r is a regular
// file (or a *strings.Reader or *bytes.Reader) it is scanned in chunks and
// each batch read back from it, so that Read's memory is the network it
// builds plus a batch; from any other reader the text is held whole while
// reading. Its cost is linear in the file size.
func Read(r io.Reader, name string) (*graphpde.Network, error) {
	return readTOML(r, name, nil)
}

// readTOML is Read with the options of ReadFileOptions (nil: none).
func readTOML(r io.Reader, name string, opt *Options) (*graphpde.Network, error) {
	net, err := read(r, name, opt)
	if err == nil && len(net.Nodes) == 0 {
		// Nothing to solve: an empty file, or one with only [network]
		// or [defaults]. Every command would report "0 nodes; converged".
		return nil, &Error{File: name, Msg: "the file defines no nodes (add [[node]] tables)"}
	}
	return net, err
}

// read is Read without the check for an empty network.
func read(r io.Reader, name string, opt *Options) (*graphpde.Network, error) {
	if ra, size := readerAt(r); ra != nil {
		// A file (or text in memory): the first pass reads it a chunk at
		// a time and the tables are read back from it, so that its text
		// is never held whole, unless it must be decoded whole.
		lay, err := prescanReader(io.NewSectionReader(ra, 0, size), size, name, opt)
		if err != nil {
			return nil, err
		}
		if net, done, err := readSections(&text{r: ra, file: name}, name, opt, lay); done {
			return net, err
		}
		r = io.NewSectionReader(ra, 0, size)
	}
	var b strings.Builder
	if size := inputSize(r); size > 0 {
		b.Grow(int(size))
	}
	if _, err := io.Copy(&b, r); err != nil {
		return nil, &Error{File: name, Msg: "cannot read: " + errMsg(err), Err: err}
	}
	src := b.String()
	if err := opt.stopped(name); err != nil {
		return nil, err
	}
	lay, err := prescan(src, name)
	if err != nil {
		return nil, err
	}
	if net, done, err := readSections(&text{s: src, file: name}, name, opt, lay); done {
		return net, err
	}
	var root map[string]any
	if _, err := toml.Decode(src, &root); err != nil {
		return nil, tomlError(src, name, err)
	}
	rd := &reader{file: name, opt: opt}
	rd.loc = locate(src)
	return rd.network(root)
}

// readerAt returns r as an io.ReaderAt over its size bytes from its
// current offset when it is a regular file or text in memory that can be
// read back so (else nil).
func readerAt(r io.Reader) (io.ReaderAt, int64) {
	switch x := r.(type) {
	case *os.File:
		fi, err := x.Stat()
		if err != nil || !fi.Mode().IsRegular() {
			return nil, 0
		}
		off, err := x.Seek(0, io.SeekCurrent)
		if err != nil || off > fi.Size() {
			return nil, 0
		}
		return io.NewSectionReader(x, off, fi.Size()-off), fi.Size() - off
	case *strings.Reader:
		if !readBack {
			return nil, 0
		}
		// Its unread part: a string is never changed.
		n := x.Len()
		return io.NewSectionReader(x, x.Size()-int64(n), int64(n)), int64(n)
	case *bytes.Reader:
		if !readBack {
			return nil, 0
		}
		// Its unread part, which is not changed while Read runs.
		n := x.Len()
		return io.NewSectionReader(x, x.Size()-int64(n), int64(n)), int64(n)
	}
	return nil, 0
}

// readBack makes Read read text in a *strings.Reader back from it as it
// reads a file, as in use; tests turn it off to compare with the reading
// of the whole text.
var readBack = true

// readSections reads the network of a file whose layout is lay one table
// at a time: the head (every other table) whole, each [[node]] and
// [[edge]] when it is read, from txt. done is false when the file must be
// decoded whole instead (other table headers, no tables, node = [...]
// beside [[node]]).
func readSections(txt *text, name string, opt *Options, lay *layout) (net *graphpde.Network, done bool, err error) {
	if !lay.simple || len(lay.nodes)+len(lay.edges) == 0 || decodeWhole {
		return nil, false, nil
	}
	head, err := headText(txt, lay)
	if err != nil {
		return nil, true, err
	}
	var root map[string]any
	if _, err := toml.Decode(head, &root); err != nil {
		return nil, true, tomlError(head, name, err)
	}
	_, hasNodes := root["node"]
	_, hasEdges := root["edge"]
	if hasNodes || hasEdges {
		// node = [...] beside [[node]]: let the library say what is wrong.
		return nil, false, nil
	}
	rd := &reader{file: name, opt: opt}
	rd.loc = locate(head)
	rd.sections = newSectionIndex(txt, name, lay)
	net, err = rd.network(root)
	return net, true, err
}

// decodeWhole makes Read decode every file whole, as files with other
// table headers are (tests compare the two ways).
var decodeWhole = false

// reader holds the state of one Read.
type reader struct {
	file     string
	opt      *Options // context and line record (nil: none)
	loc      *locator
	sections *sectionIndex     // when [[node]] and [[edge]] are decoded one at a time
	net      *graphpde.Network // being built: node and edge i come from the i-th [[node]] and [[edge]] table (nodeLineOf gives the line)
	cells    int64             // cells so far, for the memory guard

	// The line of each node's and edge's id key (of its table's header
	// if it has none), indexed like the network's nodes and edges, when
	// Options.Lines asks for them: recorded while the text is at hand, so
	// that the record needs no text afterwards.
	nodeLines, edgeLines []int32

	params *graphpde.Params // the [parameters] table (nil: none)
	laws   []lawSpec        // general node laws, compiled once the edges are known
	ph     *physState       // physical models met so far (models.go)
}

// tbl is one table of the file being read: [network], [defaults], one
// [[node]] or one [[edge]].
type tbl struct {
	rd   *reader
	obj  string   // as printed in errors ("": object gives it)
	kind string   // "node" or "edge" for a *graphpde.ModelError, else ""
	id   string   // the object's id, once known
	path []string // locator path of the table
	m    map[string]any

	at    int      // index among the [[node]] or [[edge]] tables
	pk    string   // pathKey(path), set by line
	order []string // keys in file order, set by keys (or given by the decoder)
}

// object names the table in errors: obj if set, else the node's or edge's
// id once it is known, else its number ("edge #3"). Named on demand: a
// name per table costs as much as reading the table.
func (t *tbl) object() string {
	switch {
	case t.obj != "" || t.kind == "":
		return t.obj
	case t.id != "":
		return fmt.Sprintf("%s %q", t.kind, t.id)
	}
	return fmt.Sprintf("%s #%d", t.kind, t.at+1)
}

// line returns the line of key (a path below the table) or, failing that,
// of its nearest recorded parent; line() is the table's own line.
func (t *tbl) line(key ...string) int {
	if t.pk == "" && len(t.path) > 0 {
		t.pk = pathKey(t.path)
	}
	loc := t.rd.loc
	if t.rd.sections != nil {
		if l := t.rd.sections.locatorFor(t.path); l != nil {
			loc = l
		}
	}
	if len(key) > 0 {
		if ln, ok := loc.lines[join(t.pk, key...)]; ok {
			return ln
		}
	}
	return loc.lineOf(append(slices.Clip(t.path), key...)...)
}

// fail returns an *Error at the line of key (the table header if key is "").
func (t *tbl) fail(key, msg string) *Error {
	var ln int
	if key == "" {
		ln = t.line()
	} else {
		ln = t.line(key)
	}
	return &Error{File: t.rd.file, Line: ln, Object: t.object(), Msg: msg}
}

// bad reports an inadmissible value of field given by key, wrapping a
// *graphpde.ModelError for nodes and edges. reason begins with "= value".
func (t *tbl) bad(key, field, reason string) *Error {
	e := t.fail(key, field+" "+reason)
	if t.kind != "" {
		e.Err = &graphpde.ModelError{Object: t.kind, ID: t.id, Field: field, Reason: reason}
	}
	return e
}

// keys returns the table's keys in file order (by line, then name). The
// result is computed once and shared.
func (t *tbl) keys() []string {
	if t.order != nil || len(t.m) == 0 {
		return t.order
	}
	type kl struct {
		k    string
		line int
	}
	ks := make([]kl, 0, len(t.m))
	for k := range t.m {
		ks = append(ks, kl{k, t.line(k)})
	}
	slices.SortFunc(ks, func(a, b kl) int {
		if a.line != b.line {
			return a.line - b.line
		}
		return strings.Compare(a.k, b.k)
	})
	t.order = make([]string, len(ks))
	for i, x := range ks {
		t.order[i] = x.k
	}
	return t.order
}

// checkKeys reports the first key (in file order) not in known, adding
// hint(key) to the message when hint is not nil.
func (t *tbl) checkKeys(known []string, hint func(string) string) error {
	for _, k := range t.keys() {
		if !slices.Contains(known, k) {
			msg := unknownKey(k, known)
			if hint != nil {
				msg += hint(k)
			}
			return t.fail(k, msg)
		}
	}
	return nil
}

// typeName describes a decoded TOML value for "must be a number, not ...".
func typeName(v any) string {
	switch v.(type) {
	case string:
		return "a string"
	case bool:
		return "a boolean"
	case int64:
		return "an integer"
	case float64:
		return "a float"
	case []any, []map[string]any:
		return "an array"
	case map[string]any:
		return "a table"
	case time.Time:
		return "a date or time"
	}
	return fmt.Sprintf("%T", v)
}

func (t *tbl) str(key string) (string, error) {
	s, ok := t.m[key].(string)
	if !ok {
		return "", t.fail(key, fmt.Sprintf("%s must be a string, not %s", key, typeName(t.m[key])))
	}
	return s, nil
}

// toFloat converts a decoded TOML number.
func toFloat(v any) (float64, bool) {
	switch x := v.(type) {
	case int64:
		return float64(x), true
	case float64:
		return x, true
	}
	return 0, false
}

func (t *tbl) number(key string) (float64, error) {
	if s, isStr := t.m[key].(string); isStr && units.LooksLikeQuantity(s) {
		return t.quantity(key, s)
	}
	v, ok := toFloat(t.m[key])
	if !ok {
		return 0, t.fail(key, fmt.Sprintf("%s must be a number, not %s", key, typeName(t.m[key])))
	}
	return v, nil
}

// Rules for numeric values.
type rule int

const (
	finite   rule = iota // any finite number
	nonNeg               // finite and ≥ 0
	positive             // finite and > 0
)

// check returns "" if v obeys r, else the reason, beginning "= v".
func check(v float64, r rule) string {
	fin := !math.IsNaN(v) && !math.IsInf(v, 0)
	switch r {
	case finite:
		if !fin {
			return fmt.Sprintf("= %g must be a finite number", v)
		}
	case nonNeg:
		if !fin || v < 0 {
			return fmt.Sprintf("= %g must be a finite number ≥ 0", v)
		}
	case positive:
		if !fin || v <= 0 {
			return fmt.Sprintf("= %g must be a finite number > 0", v)
		}
	}
	return ""
}

// ruled reads key as a number obeying r.
func (t *tbl) ruled(key string, r rule) (float64, error) {
	v, err := t.number(key)
	if err != nil {
		return 0, err
	}
	if reason := check(v, r); reason != "" {
		return 0, t.bad(key, key, reason)
	}
	return v, nil
}

// pair reads key as an array of two numbers obeying r.
func (t *tbl) pair(key string, r rule, what string) ([2]float64, error) {
	var out [2]float64
	var elems []any
	switch x := t.m[key].(type) {
	case []any:
		elems = x
	default:
		return out, t.fail(key, fmt.Sprintf("%s must be an array of two numbers %s, not %s", key, what, typeName(t.m[key])))
	}
	if len(elems) != 2 {
		plural := "s"
		if len(elems) == 1 {
			plural = ""
		}
		return out, t.fail(key, fmt.Sprintf("%s must be an array of two numbers %s, but has %d value%s", key, what, len(elems), plural))
	}
	for i, e := range elems {
		v, ok := toFloat(e)
		if !ok {
			return out, t.fail(key, fmt.Sprintf("%s must be an array of two numbers %s, but element %d is %s", key, what, i+1, typeName(e)))
		}
		out[i] = v
	}
	for _, v := range out {
		if check(v, r) != "" {
			reason := strings.TrimPrefix(check(v, r), fmt.Sprintf("= %g ", v))
			return out, t.bad(key, key, fmt.Sprintf("= [%g, %g]: both values %s", out[0], out[1], strings.Replace(reason, "must be a finite number", "must be finite numbers", 1)))
		}
	}
	return out, nil
}

// cellCount checks a cells value read from a file or a CSV field.
func cellCount(v int64) string {
	switch {
	case v < 1:
		return fmt.Sprintf("= %d must be an integer ≥ 1", v)
	case v > MaxCellsPerEdge:
		return fmt.Sprintf("= %d is over the limit of %d cells on one edge", v, MaxCellsPerEdge)
	}
	return ""
}

func (t *tbl) cells(key string) (int, error) {
	v, ok := t.m[key].(int64)
	if !ok {
		if f, isF := t.m[key].(float64); isF && f == math.Trunc(f) && math.Abs(f) < 1e18 {
			v = int64(f)
		} else {
			return 0, t.fail(key, fmt.Sprintf("cells must be an integer, not %s", typeName(t.m[key])))
		}
	}
	if reason := cellCount(v); reason != "" {
		return 0, t.bad(key, "cells", reason)
	}
	return int(v), nil
}

// tableArray returns the elements of an array of tables.
func tableArray(v any) ([]map[string]any, bool) {
	switch x := v.(type) {
	case []map[string]any:
		return x, true
	case []any:
		out := make([]map[string]any, len(x))
		for i, e := range x {
			m, ok := e.(map[string]any)
			if !ok {
				return nil, false
			}
			out[i] = m
		}
		return out, true
	}
	return nil, false
}

// edgeVals collects the values of an edge: from [defaults], then its own.
type edgeVals struct {
	length, a, b, c, f, rho float64
	w                       [2]float64 // 0: default weight
	cells                   int
	initial                 float64
	from                    [maxEdgeKeys]*tbl          // table each of defaultsKeys was given in (its line is looked up on error only)
	given                   [maxEdgeKeys]bool          // whether each of defaultsKeys was given
	ex                      [maxEdgeKeys]*formula.Expr // the expression given for a key, if any (netfile/expr.go)
}

// lineOf returns the line edge key k was given on, 0 if not given.
func (ev *edgeVals) lineOf(k string) int {
	if i := slices.Index(defaultsKeys, k); i >= 0 {
		if ev.from[i] != nil {
			return ev.from[i].line(k)
		}
	}
	return 0
}

// edgeValue reads one edge key other than id, from and to into ev.
func (t *tbl) edgeValue(key string, ev *edgeVals) error {
	k := key
	var err error
	if i := slices.Index(defaultsKeys, k); i >= 0 {
		ev.ex[i] = nil
	}
	if src, isExpr := exprString(t.m[k]); isExpr || k == "equation" {
		err = t.edgeExpr(k, src, ev)
		k = "" // read
	}
	switch k {
	case "":
	case "length":
		ev.length, err = t.ruled(k, positive)
	case "diffusivity":
		ev.a, err = t.ruled(k, positive)
	case "drift":
		ev.b, err = t.ruled(k, finite)
	case "decay":
		ev.c, err = t.ruled(k, nonNeg)
	case "source":
		ev.f, err = t.ruled(k, finite)
	case "capacity":
		ev.rho, err = t.ruled(k, positive)
	case "weight":
		var w float64
		w, err = t.ruled(k, positive)
		ev.w = [2]float64{w, w}
		ev.given[slices.Index(defaultsKeys, "weights")] = false
	case "weights":
		ev.w, err = t.pair(k, positive, "[from, to]")
		ev.given[slices.Index(defaultsKeys, "weight")] = false
	case "cells":
		ev.cells, err = t.cells(k)
	case "initial":
		ev.initial, err = t.ruled(k, finite)
	default:
		panic("netfile: edgeValue of " + k)
	}
	if err != nil {
		return err
	}
	i := slices.Index(defaultsKeys, key)
	ev.from[i], ev.given[i] = t, true
	return nil
}

// edgeValues reads the edge keys of t (which must be known) into ev.
func (t *tbl) edgeValues(ev *edgeVals) error {
	if _, w := t.m["weight"]; w {
		if _, ws := t.m["weights"]; ws {
			k := "weights"
			if t.line("weight") > t.line("weights") {
				k = "weight"
			}
			return t.fail(k, "give weight (both ends) or weights = [from, to], not both")
		}
	}
	for _, k := range t.keys() {
		switch k {
		case "id", "from", "to", "controls":
		default:
			if err := t.edgeValue(k, ev); err != nil {
				return err
			}
		}
	}
	return nil
}

// tables are the [[node]] or [[edge]] tables of a file: n of them, the i-th
// decoded by get(i) (at once, or only when it is read).
type tables struct {
	n   int
	get func(i int) (map[string]any, []string, error) // the table, and its keys in file order if known (else nil)
}

// splitSpec is a node's split table, checked once the edges are known.
type splitSpec struct {
	t    *tbl
	node int
	m    map[string]any
}

func (rd *reader) network(root map[string]any) (*graphpde.Network, error) {
	top := &tbl{rd: rd, m: root}
	for _, k := range top.keys() {
		if slices.Contains(topKeys, k) {
			continue
		}
		if _, isTable := root[k].(map[string]any); isTable {
			return nil, top.fail(k, fmt.Sprintf("unknown table [%s] (the tables are [network], [parameters], [defaults], [[node]] and [[edge]])", k))
		}
		return nil, top.fail(k, unknownKey(k, topKeys)+" at the top level (the tables are [network], [parameters], [defaults], [[node]] and [[edge]])")
	}
	net := &graphpde.Network{}
	rd.net = net
	objLine := 0
	if v, ok := root["network"]; ok {
		m, isTable := v.(map[string]any)
		if !isTable {
			return nil, top.fail("network", "network must be a table [network], not "+typeName(v))
		}
		t := &tbl{rd: rd, obj: "[network]", path: []string{"network"}, m: m}
		if err := t.checkKeys(networkKeys, nil); err != nil {
			return nil, err
		}
		var err error
		if _, ok := m["name"]; ok {
			if net.Name, err = t.str("name"); err != nil {
				return nil, err
			}
		}
		if _, ok := m["description"]; ok {
			if net.Description, err = t.str("description"); err != nil {
				return nil, err
			}
		}
		if _, ok := m["objective"]; ok {
			s, err := t.str("objective")
			if err != nil {
				return nil, err
			}
			if net.Objective, err = graphpde.ParseObjective(s); err != nil {
				return nil, t.fail("objective", err.Error())
			}
			objLine = t.line("objective")
		}
	}
	if err := rd.parameters(top, root, net); err != nil {
		return nil, err
	}
	def := edgeVals{rho: 1}
	if v, ok := root["defaults"]; ok {
		m, isTable := v.(map[string]any)
		if !isTable {
			return nil, top.fail("defaults", "defaults must be a table [defaults], not "+typeName(v))
		}
		t := &tbl{rd: rd, obj: "[defaults]", path: []string{"defaults"}, m: m}
		hint := func(k string) string {
			if slices.Contains(nodeKeys, k) || slices.Contains(edgeKeys, k) {
				return " ([defaults] holds edge values other than id, from and to)"
			}
			return ""
		}
		if err := t.checkKeys(defaultsKeys, hint); err != nil {
			return nil, err
		}
		if err := t.edgeValues(&def); err != nil {
			return nil, err
		}
	}
	var nodes, edges tables
	for _, sec := range []struct {
		key string
		dst *tables
	}{{"node", &nodes}, {"edge", &edges}} {
		if rd.sections != nil {
			kind := sec.key
			*sec.dst = tables{n: len(rd.sections.sections(kind)), get: func(i int) (map[string]any, []string, error) {
				return rd.sections.table(kind, i)
			}}
			continue
		}
		v, ok := root[sec.key]
		if !ok {
			continue
		}
		arr, isArr := tableArray(v)
		if !isArr {
			return nil, top.fail(sec.key, fmt.Sprintf("%s must be an array of tables: write [[%s]] before each one", sec.key, sec.key))
		}
		*sec.dst = tables{n: len(arr), get: func(i int) (map[string]any, []string, error) { return arr[i], nil, nil }}
	}
	net.Reserve(nodes.n, edges.n)
	if rd.opt != nil && rd.opt.Lines != nil {
		rd.nodeLines, rd.edgeLines = make([]int32, 0, nodes.n), make([]int32, 0, edges.n)
	}
	var splits []splitSpec
	for i := range nodes.n {
		if i%stopEvery == 0 {
			if err := rd.opt.stopped(rd.file); err != nil {
				return nil, err
			}
		}
		if rd.sections != nil {
			if kv := rd.sections.simple("node", i); kv != nil && rd.directNode(net, kv) {
				rd.opt.countDirect()
				rd.recordLine("node", i)
				continue
			}
		}
		m, order, err := nodes.get(i)
		if err != nil {
			return nil, err
		}
		t := &tbl{rd: rd, kind: "node", at: i, path: []string{"node", index(i)}, m: m, order: order}
		nd, split, err := rd.node(t)
		if err != nil {
			return nil, err
		}
		v, err := net.AddNode(nd)
		if err != nil {
			return nil, rd.modelError(t, err, func(field string) int { return t.line(field) })
		}
		if split != nil {
			splits = append(splits, splitSpec{t: t, node: v, m: split})
		}
		rd.recordLine("node", i)
	}
	direct := rd.sections != nil && plainDefaults(&def)
	for i := range edges.n {
		if i%stopEvery == 0 {
			if err := rd.opt.stopped(rd.file); err != nil {
				return nil, err
			}
		}
		if direct {
			if kv := rd.sections.simple("edge", i); kv != nil && rd.directEdge(net, kv, &def) {
				rd.opt.countDirect()
				rd.recordLine("edge", i)
				continue
			}
		}
		m, order, err := edges.get(i)
		if err != nil {
			return nil, err
		}
		t := &tbl{rd: rd, kind: "edge", at: i, path: []string{"edge", index(i)}, m: m, order: order}
		if err := rd.edge(net, t, &def); err != nil {
			return nil, err
		}
		rd.recordLine("edge", i)
	}
	for _, s := range splits {
		if err := rd.split(net, s); err != nil {
			return nil, err
		}
	}
	if err := rd.generalLaws(net); err != nil {
		return nil, err
	}
	if err := rd.checkControls(net, objLine); err != nil {
		return nil, err
	}
	if err := rd.physical(net); err != nil {
		return nil, err
	}
	if rd.opt != nil && rd.opt.Lines != nil {
		// The record holds the network and the lines, not the reader (nor
		// the file's text).
		nodeLines, edgeLines := rd.nodeLines, rd.edgeLines
		rd.opt.Lines.reset()
		rd.opt.Lines.find = func(kind, id string) int {
			lines, i, ok := nodeLines, 0, false
			if kind == "node" {
				i, ok = net.NodeIndex(id)
			} else {
				lines = edgeLines
				i, ok = net.EdgeIndex(id)
			}
			if !ok || i >= len(lines) {
				return 0
			}
			return int(lines[i])
		}
	}
	return net, nil
}

// recordLine records the line of the i-th [[kind]] table's id key, just
// added as the network's i-th node or edge, when Options.Lines asks for
// lines: from the directly read keys when its batch was read so (no
// scan), else by the line scanner.
func (rd *reader) recordLine(kind string, i int) {
	if rd.opt == nil || rd.opt.Lines == nil {
		return
	}
	ln := 0
	if rd.sections != nil {
		if b := rd.sections.cache[kind]; b != nil && b.kvs != nil && i >= b.lo && i < b.hi {
			ln = int(rd.sections.sections(kind)[i].line)
			for _, x := range b.kvs[i-b.lo] {
				if x.k == "id" {
					ln += int(x.ln)
					break
				}
			}
		}
	}
	if ln == 0 {
		ln = rd.tableLine(kind, i)
	}
	if kind == "node" {
		rd.nodeLines = append(rd.nodeLines, int32(ln))
	} else {
		rd.edgeLines = append(rd.edgeLines, int32(ln))
	}
}

// modelError wraps an error of AddNode or AddEdge (which the reader's own
// checks should have caught first) with the line of its field.
func (rd *reader) modelError(t *tbl, err error, line func(field string) int) error {
	e := &Error{File: rd.file, Line: t.line(), Object: t.object(), Msg: err.Error(), Err: err}
	var me *graphpde.ModelError
	if errors.As(err, &me) {
		e.Msg = me.Reason
		if me.Field != "" {
			e.Msg = me.Field + " " + me.Reason
			if ln := line(me.Field); ln > 0 {
				e.Line = ln
			}
		}
	}
	return e
}

// tableLine returns the line of the id key of the i-th [[kind]] table (of
// the table's header if it has none). Lines are looked up only when they
// are needed (for an error or the line record): scanning for them costs
// as much as decoding.
func (rd *reader) tableLine(kind string, i int) int {
	t := &tbl{rd: rd, path: []string{kind, index(i)}}
	return t.line("id")
}

// nodeLineOf returns the line of node id's id key, 0 if it is unknown.
func (rd *reader) nodeLineOf(id string) int {
	if rd.net == nil {
		return 0
	}
	if i, ok := rd.net.NodeIndex(id); ok {
		return rd.tableLine("node", i)
	}
	return 0
}

// edgeLineOf returns the line of edge id's id key, 0 if it is unknown.
func (rd *reader) edgeLineOf(id string) int {
	if rd.net == nil {
		return 0
	}
	if i, ok := rd.net.EdgeIndex(id); ok {
		return rd.tableLine("edge", i)
	}
	return 0
}

// id reads and checks the id of a node or edge table (which names it in
// errors from then on); seen gives the index of an id met before (the
// network's index: table i is node or edge i).
func (rd *reader) id(t *tbl, seen func(string) (int, bool)) error {
	if _, ok := t.m["id"]; !ok {
		return t.fail("", `missing key "id"`)
	}
	id, err := t.str("id")
	if err != nil {
		return err
	}
	if !graphpde.ValidID(id) {
		return t.fail("id", fmt.Sprintf("id %q must be letters, digits, '_', '-' or '.'", id))
	}
	t.id = id
	if first, dup := seen(id); dup {
		return &Error{File: rd.file, Line: t.line("id"), Object: t.object(),
			Msg: fmt.Sprintf("duplicate id (first used at line %d)", rd.tableLine(t.kind, first)),
			Err: &graphpde.ModelError{Object: t.kind, ID: id, Reason: "duplicate id"}}
	}
	return nil
}

// node reads one [[node]] table.
func (rd *reader) node(t *tbl) (graphpde.Node, map[string]any, error) {
	nd := graphpde.Node{}
	if err := rd.id(t, rd.net.NodeIndex); err != nil {
		return nd, nil, err
	}
	nd.ID = t.id
	if err := rd.nodeElement(t); err != nil {
		return nd, nil, err
	}
	if err := t.checkKeys(nodeKeys, nil); err != nil {
		return nd, nil, err
	}
	_, fixed := t.m["fixed"]
	if fixed {
		nd.Law.Kind = vertex.Fixed
	}
	var split map[string]any
	if err := t.nodeExclusions(fixed); err != nil {
		return nd, nil, err
	}
	for _, k := range t.keys() {
		var err error
		if src, isExpr := exprString(t.m[k]); isExpr && (k == "fixed" || k == "inject") || k == "loss" || k == "law" || k == "initial" {
			if err := t.nodeExpr(rd, k, src, &nd); err != nil {
				return nd, nil, err
			}
			continue
		}
		switch k {
		case "id":
		case "xy":
			var xy [2]float64
			xy, err = t.pair(k, finite, "[x, y]")
			nd.XY = &xy
		case "fixed":
			nd.Law.Value, err = t.ruled(k, finite)
		case "controls":
			err = t.nodeControls(&nd)
		case "leak", "inject", "capacity", "split":
			if fixed {
				return nd, nil, t.fail(k, k+" is not allowed on a fixed node (it has no balance law; remove fixed or "+k+")")
			}
			switch k {
			case "leak":
				nd.Law.Leak, err = t.ruled(k, nonNeg)
			case "inject":
				nd.Law.Inject, err = t.ruled(k, finite)
			case "capacity":
				nd.Law.Capacity, err = t.ruled(k, nonNeg)
			case "split":
				var ok bool
				if split, ok = t.m[k].(map[string]any); !ok {
					err = t.fail(k, "split must be a table of edge ids and probabilities, e.g. split = { arm1 = 0.5, arm2 = 0.5 }, not "+typeName(t.m[k]))
				}
			}
		}
		if err != nil {
			return nd, nil, err
		}
	}
	return nd, split, nil
}

// edge reads one [[edge]] table and adds it to net.
func (rd *reader) edge(net *graphpde.Network, t *tbl, def *edgeVals) error {
	if err := rd.id(t, rd.net.EdgeIndex); err != nil {
		return err
	}
	if err := rd.edgeModel(t); err != nil {
		return err
	}
	if err := t.checkKeys(edgeOnlyKeys, nil); err != nil {
		return err
	}
	ev := *def
	var ends [2]int
	for s, k := range []string{"from", "to"} {
		if _, ok := t.m[k]; !ok {
			return t.fail("", fmt.Sprintf("missing key %q", k))
		}
		id, err := t.str(k)
		if err != nil {
			return err
		}
		v, ok := net.NodeIndex(id)
		if !ok {
			return t.fail(k, fmt.Sprintf("%s: no node %q", k, id))
		}
		ends[s] = v
	}
	if err := t.edgeValues(&ev); err != nil {
		return err
	}
	if err := t.equationRules(&ev); err != nil {
		return err
	}
	for _, k := range []string{"length", "diffusivity"} {
		if k == "diffusivity" && (ev.ex[slices.Index(defaultsKeys, "equation")] != nil || t.controlsGiveDiffusivity()) {
			continue
		}
		if !ev.given[slices.Index(defaultsKeys, k)] {
			return t.fail("", fmt.Sprintf("missing key %q (give it here or in [defaults])", k))
		}
	}
	if ev.cells > 0 {
		rd.cells += int64(ev.cells)
		if rd.cells > MemoryLimit/BytesPerCell {
			return &Error{File: rd.file, Line: ev.lineOf("cells"), Object: t.object(), Msg: tooManyCells(rd.cells)}
		}
	}
	e := graphpde.Edge{ID: t.id, From: ends[0], To: ends[1], Length: ev.length, A: ev.a, B: ev.b, C: ev.c, F: ev.f, Rho: ev.rho, Weight: ev.w, Cells: ev.cells}
	if err := t.edgeLaws(&e, &ev); err != nil {
		return err
	}
	if err := t.edgeControls(&e, &ev); err != nil {
		return err
	}
	if _, err := net.AddEdge(e); err != nil {
		return rd.modelError(t, err, func(field string) int {
			if field == "weight" && ev.given[slices.Index(defaultsKeys, "weights")] {
				return ev.lineOf("weights")
			}
			return ev.lineOf(field)
		})
	}
	return nil
}

func tooManyCells(total int64) string {
	return fmt.Sprintf("cells: the grid would need %d cells in all, about %.3g GiB at %d bytes per cell, over the %d GiB limit",
		total, float64(total)*BytesPerCell/(1<<30), BytesPerCell, MemoryLimit>>30)
}

// split checks and normalises a node's split table.
func (rd *reader) split(net *graphpde.Network, s splitSpec) error {
	t := s.t
	st := &tbl{rd: rd, obj: t.object(), kind: "node", id: t.id, path: append(slices.Clip(t.path), "split"), m: s.m}
	p := make(map[string]float64, len(s.m))
	var sum float64
	for _, k := range st.keys() {
		e, ok := net.EdgeIndex(k)
		if !ok {
			return st.fail(k, fmt.Sprintf("split: no edge %q", k))
		}
		if from, to := net.EdgeNodes(e); from != s.node && to != s.node {
			return st.fail(k, fmt.Sprintf("split: edge %q does not touch this node", k))
		}
		v, ok := toFloat(s.m[k])
		if !ok {
			return st.fail(k, fmt.Sprintf("split: %s must be a number, not %s", strconv.Quote(k), typeName(s.m[k])))
		}
		if reason := check(v, nonNeg); reason != "" {
			return st.bad(k, "split "+strconv.Quote(k), reason)
		}
		p[k] = v
		sum += v
	}
	if !(sum > 0) || math.IsInf(sum, 0) {
		return st.fail("", fmt.Sprintf("split: the values sum to %g; they must have a finite sum > 0", sum))
	}
	for k := range p {
		p[k] /= sum
	}
	net.Nodes[s.node].Split = p
	return nil
}
