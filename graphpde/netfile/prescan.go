package netfile

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"
)

// A network file is read in two passes. The first, prescan, is a cheap
// lexical pass over the text (strings, comments, brackets and table headers;
// no values are decoded) that
//
//   - refuses values nested deeper than MaxNesting before the TOML library
//     sees them: the format never needs more than an array of inline tables
//     (depth 2), and the library's cost, and the line scanner's, grows with
//     the square of the depth (a file of 10 000 nested inline tables took
//     19 s and 3.9 GB);
//   - finds the top-level [[node]] and [[edge]] tables, so that the second
//     pass can decode them one at a time instead of building one map of the
//     whole file (which took about 25 times the file's size at its peak).
//
// Files with any other table header than [network], [parameters],
// [defaults], [[node]] and [[edge]] (sub-tables such as [node.split], quoted
// or dotted headers) are decoded whole, as the TOML library defines them.

// MaxNesting is the deepest nesting of arrays and inline tables in one value
// that Read accepts.
const MaxNesting = 4

// section is one top-level [[node]] or [[edge]] table of a file: its text is
// src[start:end] and its header is on line line.
type section struct {
	start, end, line int32 // a file is at most maxText bytes
}

// maxText is the size of the largest network file read: sections hold
// their offsets and lines in 32 bits (12 bytes a table instead of 24, a
// sixth of a large file's size less at the reading's peak). Such a file
// would build a network of about 4 GB.
const maxText = math.MaxInt32

// layout is what prescan finds in a file.
type layout struct {
	nodes, edges []section
	// simple is false when a table header other than the five of the format
	// occurs: the file must then be decoded whole.
	simple bool
}

// nestingError reports a value nested deeper than MaxNesting.
func nestingError(file string, line int) *Error {
	return &Error{File: file, Line: line, Msg: fmt.Sprintf("arrays or inline tables nested more than %d deep: a network file never needs that many", MaxNesting)}
}

// prescan runs the lexical pass over src. It fails only on nesting deeper
// than MaxNesting; any other syntax error is left to the TOML library. Cost
// O(len(src)), memory O(tables).
func prescan(src, file string) (*layout, error) {
	if len(src) > maxText {
		return nil, &Error{File: file, Msg: fmt.Sprintf("the file is %d bytes: network files over %d bytes (2 GiB) are not read; write the network as an edge list (CSV), which is read row by row", len(src), maxText)}
	}
	// Room for the tables a file written by Write has (a hint: a header
	// inside a string counts too).
	lay := &layout{simple: true,
		nodes: make([]section, 0, strings.Count(src, "[[node]]")),
		edges: make([]section, 0, strings.Count(src, "[[edge]]"))}
	var cur *[]section // the array whose last section is open
	closeSection := func(at int) {
		if cur != nil {
			(*cur)[len(*cur)-1].end = int32(at)
			cur = nil
		}
	}
	pos, line, depth := 0, 1, 0
	lineStart := true // at the start of a line, outside any value
	if strings.HasPrefix(src, "\uFEFF") {
		pos = len("\uFEFF")
	}
	n := len(src)
	for pos < n {
		c := src[pos]
		switch {
		case c == '\n':
			line++
			pos++
			if depth == 0 {
				lineStart = true
			}
			continue
		case c == ' ' || c == '\t' || c == '\r':
			pos++
			continue
		case c == '#':
			if i := strings.IndexByte(src[pos:], '\n'); i >= 0 {
				pos += i
			} else {
				pos = n
			}
			continue
		case c == '"' || c == '\'':
			pos, line = skipString(src, pos, line)
			lineStart = false
			continue
		}
		if lineStart && c == '[' {
			// A table header: up to the end of the line.
			start := pos
			end := strings.IndexByte(src[pos:], '\n')
			if end < 0 {
				end = n
			} else {
				end += pos
			}
			closeSection(lineStartOf(src, start))
			switch kind := headerKind(src[start:end]); kind {
			case "node", "edge":
				arr := &lay.nodes
				if kind == "edge" {
					arr = &lay.edges
				}
				*arr = append(*arr, section{start: int32(lineStartOf(src, start)), end: int32(n), line: int32(line)})
				cur = arr
			case "network", "parameters", "defaults":
			default:
				lay.simple = false
			}
			pos = end
			continue
		}
		lineStart = false
		if !prescanSpecial[c] {
			// A run of bytes that change nothing here (most of a file):
			// skipped in a tight loop.
			for pos++; pos < n && !prescanSpecial[src[pos]]; pos++ {
			}
			continue
		}
		switch c {
		case '[', '{':
			depth++
			if depth > MaxNesting {
				return nil, nestingError(file, line)
			}
		case ']', '}':
			if depth > 0 {
				depth--
			}
		}
		pos++
	}
	closeSection(n)
	return lay, nil
}

// prescanSpecial marks the bytes prescan must look at once a line has
// begun: line breaks, comments, quotes and brackets.
var prescanSpecial = [256]bool{'\n': true, '#': true, '"': true, '\'': true, '[': true, ']': true, '{': true, '}': true}

// lineStartOf returns the offset of the start of the line holding pos.
func lineStartOf(src string, pos int) int {
	return strings.LastIndexByte(src[:pos], '\n') + 1
}

// skipString skips the basic, literal or multi-line string that starts at
// pos and returns the position after it and the line it ends on. An
// unterminated string runs to the end of its line (single-line) or of the
// file (multi-line); the TOML library reports it.
func skipString(src string, pos, line int) (int, int) {
	q := src[pos]
	n := len(src)
	if pos+2 < n && src[pos+1] == q && src[pos+2] == q {
		pos += 3
		for pos < n {
			switch {
			case src[pos] == '\\' && q == '"':
				if pos+1 < n && src[pos+1] == '\n' {
					line++
				}
				pos += 2
			case src[pos] == q && pos+2 < n && src[pos+1] == q && src[pos+2] == q:
				pos += 3
				// Up to two more quotes belong to the string's content.
				for k := 0; k < 2 && pos < n && src[pos] == q; k++ {
					pos++
				}
				return pos, line
			case src[pos] == q && pos+2 == n && src[pos+1] == q:
				return n, line
			default:
				if src[pos] == '\n' {
					line++
				}
				pos++
			}
		}
		return pos, line
	}
	pos++
	for pos < n {
		switch src[pos] {
		case '\\':
			if q == '"' {
				pos++
			}
		case '\n':
			return pos, line
		case q:
			return pos + 1, line
		}
		pos++
	}
	return pos, line
}

// headerKind returns "node" or "edge" for a header [[node]] or [[edge]],
// "network", "parameters" or "defaults" for those tables, and "" for any
// other header (spaces inside the brackets and a comment after them are
// allowed).
func headerKind(h string) string {
	if i := strings.IndexByte(h, '#'); i >= 0 {
		h = h[:i]
	}
	h = strings.TrimSpace(h)
	if strings.HasPrefix(h, "[[") && strings.HasSuffix(h, "]]") {
		switch k := strings.TrimSpace(h[2 : len(h)-2]); k {
		case "node", "edge":
			return k
		}
		return ""
	}
	if strings.HasPrefix(h, "[") && strings.HasSuffix(h, "]") && !strings.HasPrefix(h, "[[") {
		switch k := strings.TrimSpace(h[1 : len(h)-1]); k {
		case "network", "parameters", "defaults":
			return k
		}
	}
	return ""
}

// headText returns src with the text of the [[node]] and [[edge]] sections
// taken out but their line breaks kept, so that what is left decodes to the
// other tables with the lines of the whole file. The line breaks of
// sections after the last other text are left out too: the head of a large
// file is then its first lines only, not a line break per line of it.
func headText(src string, lay *layout) string {
	var b strings.Builder
	at, run := 0, 0        // text before at is handled; src[run:at] is sections not yet written as line breaks
	put := func(end int) { // the other text src[at:end]
		b.WriteString(strings.Repeat("\n", strings.Count(src[run:at], "\n")))
		b.WriteString(src[at:end])
		run = end
	}
	for n, e := 0, 0; n < len(lay.nodes) || e < len(lay.edges); { // both in file order: merged
		var s section
		if e == len(lay.edges) || n < len(lay.nodes) && lay.nodes[n].start < lay.edges[e].start {
			s, n = lay.nodes[n], n+1
		} else {
			s, e = lay.edges[e], e+1
		}
		if int(s.start) > at {
			put(int(s.start))
		}
		at = int(s.end)
	}
	if at < len(src) {
		put(len(src))
	}
	return b.String()
}

// batchBytes is about the most text of [[node]] or [[edge]] tables decoded
// at once: large enough that the TOML library's cost per call does not
// count, small enough that the decoded maps stay far below the file's size.
const batchBytes = 64 << 10

// batch returns the end of the run of sections starting at secs[i] that are
// adjacent in the file and hold at most about batchBytes of text.
func batch(secs []section, i int) int {
	j := i + 1
	for j < len(secs) && secs[j].start == secs[j-1].end && secs[j].end-secs[i].start <= batchBytes {
		j++
	}
	return j
}

// decodeBatch decodes the [[kind]] sections secs[i:j] (adjacent in src) and
// returns their tables and, for each, its keys in file order (from the
// order in which the library met them, so that no line lookup is needed
// to sort them). Errors carry the line in the whole file.
func decodeBatch(src, file, kind string, secs []section, i, j int) ([]map[string]any, [][]string, error) {
	text := src[secs[i].start:secs[j-1].end]
	var root map[string]any
	md, err := toml.Decode(text, &root)
	if err != nil {
		e := tomlError(text, file, err)
		if e.Line > 0 {
			e.Line += int(secs[i].line) - 1
		}
		return nil, nil, e
	}
	arr, ok := root[kind].([]map[string]any)
	if !ok || len(arr) != j-i || len(root) != 1 {
		return nil, nil, &Error{File: file, Line: int(secs[i].line), Msg: "invalid TOML: [[" + kind + "]] tables not understood"}
	}
	// Each [[kind]] header is the key [kind]; the keys below it are
	// [kind, key, ...]. A key's first mention is where it is defined
	// (a dotted key x.y defines x).
	orders := make([][]string, 0, len(arr))
	var cur []string
	for _, k := range md.Keys() {
		switch {
		case len(k) == 1:
			if len(orders) > 0 {
				orders[len(orders)-1] = cur
			}
			orders = append(orders, nil)
			cur = make([]string, 0, len(arr[len(orders)-1]))
		case len(orders) > 0 && !slices.Contains(cur, k[1]):
			cur = append(cur, k[1])
		}
	}
	if len(orders) > 0 {
		orders[len(orders)-1] = cur
	}
	if len(orders) != len(arr) {
		return nil, nil, &Error{File: file, Line: int(secs[i].line), Msg: "invalid TOML: [[" + kind + "]] tables not understood"}
	}
	for n, o := range orders {
		if len(o) != len(arr[n]) {
			return nil, nil, &Error{File: file, Line: int(secs[i].line), Msg: "invalid TOML: [[" + kind + "]] tables not understood"}
		}
	}
	return arr, orders, nil
}

// tomlError turns an error of the TOML library on text into an *Error with
// the line it is on.
func tomlError(text, file string, err error) *Error {
	e := &Error{File: file, Msg: "invalid TOML: " + err.Error(), Err: err}
	var pe toml.ParseError
	if errors.As(err, &pe) {
		// The library counts a newline it failed at as the next line;
		// counting up to the error's byte offset gives the line it is on.
		e.Line = pe.Position.Line
		if st := pe.Position.Start; st >= 0 && st <= len(text) {
			e.Line = 1 + strings.Count(text[:st], "\n")
		}
		e.Msg = "invalid TOML: " + pe.Message
	}
	return e
}

// sectionIndex decodes the [[node]] and [[edge]] sections and gives their
// line locators on demand, a batch of adjacent sections at a time, keeping
// the last batch of each (tables are read in order).
type sectionIndex struct {
	src, file    string
	nodes, edges []section
	cache        map[string]*sectionBatch // by kind: tables
	locs         map[string]*sectionBatch // by kind: line locator
	spare        map[string]fastBuf       // by kind: arrays for a batch's keys and values, free for reuse
	ahead        map[string]*prefetch     // by kind: the next batch, being read ahead
}

// sectionBatch is the decoded tables, or the locator, of sections [lo, hi).
type sectionBatch struct {
	lo, hi int
	tables []map[string]any
	orders [][]string // keys of each table in file order
	kvs    [][]fastKV // instead of tables and orders: each table's keys and values in file order (fastscan.go)
	buf    fastBuf    // the arrays kvs is and its elements are slices of
	loc    *locator
}

func newSectionIndex(src, file string, lay *layout) *sectionIndex {
	return &sectionIndex{src: src, file: file, nodes: lay.nodes, edges: lay.edges,
		cache: make(map[string]*sectionBatch), locs: make(map[string]*sectionBatch),
		spare: make(map[string]fastBuf), ahead: make(map[string]*prefetch)}
}

func (x *sectionIndex) sections(kind string) []section {
	if kind == "edge" {
		return x.edges
	}
	return x.nodes
}

// load returns the batch that holds the i-th [[kind]] table, decoding it
// if it is not the last one decoded.
func (x *sectionIndex) load(kind string, i int) (*sectionBatch, error) {
	b := x.cache[kind]
	if b != nil && i >= b.lo && i < b.hi {
		return b, nil
	}
	secs := x.sections(kind)
	var nb *sectionBatch
	if p := x.ahead[kind]; p != nil {
		<-p.done
		delete(x.ahead, kind)
		if p.lo == i && p.ok {
			nb = &sectionBatch{lo: p.lo, hi: p.hi, kvs: p.kvs, buf: p.buf}
		} else {
			x.spare[kind] = p.buf
		}
	}
	if nb == nil {
		nb = &sectionBatch{lo: i, hi: batch(secs, i)}
		ok := false
		if fastTables {
			nb.kvs, nb.buf, ok = fastBatch(x.src, kind, secs, nb.lo, nb.hi, x.spare[kind])
			x.spare[kind] = fastBuf{}
		}
		if !ok {
			x.spare[kind], nb.kvs, nb.buf = nb.buf, nil, fastBuf{}
			var err error
			if nb.tables, nb.orders, err = decodeBatch(x.src, x.file, kind, secs, nb.lo, nb.hi); err != nil {
				return nil, err
			}
		}
	}
	if b != nil && b.buf.all != nil && x.spare[kind].all == nil {
		x.spare[kind] = b.buf // the tables are read in order: the last batch is done with
	}
	x.cache[kind] = nb
	if nb.kvs != nil && nb.hi < len(secs) {
		// Read the next batch while this one is used, on another core.
		p := &prefetch{lo: nb.hi, hi: batch(secs, nb.hi), done: make(chan struct{})}
		buf := x.spare[kind]
		x.spare[kind] = fastBuf{}
		x.ahead[kind] = p
		go func() {
			defer close(p.done)
			p.kvs, p.buf, p.ok = fastBatch(x.src, kind, secs, p.lo, p.hi, buf)
		}()
	}
	return nb, nil
}

// prefetch is a batch of sections being read ahead (fastBatch in a
// goroutine): its fields are set when done is closed.
type prefetch struct {
	lo, hi int
	kvs    [][]fastKV
	buf    fastBuf
	ok     bool
	done   chan struct{}
}

// table returns the i-th [[kind]] table and its keys in file order.
func (x *sectionIndex) table(kind string, i int) (map[string]any, []string, error) {
	b, err := x.load(kind, i)
	if err != nil {
		return nil, nil, err
	}
	if b.kvs != nil {
		m, order := fastMap(b.kvs[i-b.lo])
		return m, order, nil
	}
	return b.tables[i-b.lo], b.orders[i-b.lo], nil
}

// simple returns the keys and values of the i-th [[kind]] table when its
// batch is in the simple form (fastscan.go), else nil.
func (x *sectionIndex) simple(kind string, i int) []fastKV {
	b, err := x.load(kind, i)
	if err != nil || b.kvs == nil {
		return nil // an error is reported when the table is read
	}
	return b.kvs[i-b.lo]
}

// locatorFor returns the locator of the table at path (node or edge, #i),
// or nil when path is not such a table.
func (x *sectionIndex) locatorFor(path []string) *locator {
	if len(path) < 2 || !strings.HasPrefix(path[1], "#") || (path[0] != "node" && path[0] != "edge") {
		return nil
	}
	kind := path[0]
	secs := x.sections(kind)
	i, err := strconv.Atoi(path[1][1:])
	if err != nil || i < 0 || i >= len(secs) {
		return nil
	}
	b := x.locs[kind]
	if b == nil || i < b.lo || i >= b.hi {
		j := batch(secs, i)
		l := &locator{src: x.src[secs[i].start:secs[j-1].end], line: int(secs[i].line), lines: make(map[string]int), arrays: map[string]int{kind: i}}
		if strings.HasPrefix(l.src, "\uFEFF") {
			l.pos = len("\uFEFF") // the first table right after a byte-order mark
		}
		l.scan()
		b = &sectionBatch{lo: i, hi: j, loc: l}
		x.locs[kind] = b
	}
	return b.loc
}
