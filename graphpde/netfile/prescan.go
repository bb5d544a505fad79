package netfile

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"unsafe"

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
	// gaps is the text outside those sections (other tables; what comes
	// before the first section), with the line each piece starts on.
	gaps []section
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
		return nil, tooLarge(file, int64(len(src)))
	}
	// Room for the tables a file written by Write has (a hint: a header
	// inside a string counts too).
	p := newPrescanner(file, strings.Count(src, "[[node]]"), strings.Count(src, "[[edge]]"))
	if _, err := p.scan(src, 0, true); err != nil {
		return nil, err
	}
	return p.finish(len(src)), nil
}

// prescanChunk is how much text prescanReader reads at a time (tests set
// it small, so that constructs fall across the chunks' ends).
var prescanChunk = 64 << 10

// prescanReader runs the lexical pass over the size bytes of r a chunk at
// a time, so that the text is never held whole: a chunk is scanned up to
// the start of the first construct (string, comment, table header) that
// may go on in the next one, which is kept and scanned again with more
// text (the chunk grows for a construct longer than itself). It finds what
// prescan finds on the whole text. The context of opt is looked at
// between chunks.
func prescanReader(r io.Reader, size int64, file string, opt *Options) (*layout, error) {
	if size > maxText {
		return nil, tooLarge(file, size)
	}
	p := newPrescanner(file, 0, 0)
	buf := make([]byte, max(prescanChunk, 1))
	base, have := 0, 0 // buf[:have] is the text from offset base on
	for {
		if err := opt.stopped(file); err != nil {
			return nil, err
		}
		if have == len(buf) {
			buf = append(buf, make([]byte, len(buf))...)
		}
		k, err := io.ReadFull(r, buf[have:])
		have += k
		eof := false
		switch {
		case err == io.EOF || err == io.ErrUnexpectedEOF:
			eof = true
		case err != nil:
			return nil, &Error{File: file, Msg: "cannot read: " + errMsg(err), Err: err}
		}
		if int64(base)+int64(have) > maxText {
			return nil, tooLarge(file, max(size, int64(base)+int64(have)))
		}
		// A view of buf, not a copy: scan keeps no part of it.
		w := ""
		if have > 0 {
			w = unsafe.String(&buf[0], have)
		}
		used, err := p.scan(w, base, eof)
		if err != nil {
			return nil, err
		}
		if eof {
			return p.finish(base + have), nil
		}
		copy(buf, buf[used:have])
		base, have = base+used, have-used
	}
}

// tooLarge refuses a file of size bytes over maxText.
func tooLarge(file string, size int64) *Error {
	return &Error{File: file, Msg: fmt.Sprintf("the file is %d bytes: network files over %d bytes (2 GiB) are not read; write the network as an edge list (CSV), which is read row by row", size, maxText)}
}

// prescanner is the state of the lexical pass between two pieces of text.
type prescanner struct {
	file      string
	lay       *layout
	cur       *[]section // the array whose last section is open
	line      int        // of the next byte
	depth     int        // of arrays and inline tables
	lineStart bool       // at the start of a line, outside any value
	lineAt    int        // offset of the start of the current line
	gapAt     int        // offset where the text outside sections began (-1: in a section)
	gapLine   int        // its line
}

func newPrescanner(file string, nodes, edges int) *prescanner {
	return &prescanner{file: file, line: 1, lineStart: true, gapLine: 1,
		lay: &layout{simple: true, nodes: make([]section, 0, nodes), edges: make([]section, 0, edges)}}
}

// boundary ends the open section, or the text outside sections, at the
// start of the line of a table header, at offset at; a [[node]] or
// [[edge]] header (kind) opens a section there, any other opens or goes
// on with text outside sections.
func (p *prescanner) boundary(at int, kind string) {
	if p.cur != nil {
		(*p.cur)[len(*p.cur)-1].end = int32(at)
		p.cur = nil
		p.gapAt, p.gapLine = at, p.line
	}
	if kind != "node" && kind != "edge" {
		return
	}
	if p.gapAt >= 0 && at > p.gapAt {
		p.lay.gaps = append(p.lay.gaps, section{start: int32(p.gapAt), end: int32(at), line: int32(p.gapLine)})
	}
	p.gapAt = -1
	arr := &p.lay.nodes
	if kind == "edge" {
		arr = &p.lay.edges
	}
	*arr = append(*arr, section{start: int32(at), line: int32(p.line)})
	p.cur = arr
}

// finish ends the pass at the end of the text, offset n.
func (p *prescanner) finish(n int) *layout {
	if p.cur != nil {
		(*p.cur)[len(*p.cur)-1].end = int32(n)
		p.cur = nil
	} else if p.gapAt >= 0 && n > p.gapAt {
		p.lay.gaps = append(p.lay.gaps, section{start: int32(p.gapAt), end: int32(n), line: int32(p.gapLine)})
	}
	fit := func(s []section) []section { // grown by appends: cut to size
		if cap(s) > len(s)+len(s)/16 {
			return slices.Clone(s)
		}
		return s
	}
	p.lay.nodes, p.lay.edges = fit(p.lay.nodes), fit(p.lay.edges)
	return p.lay
}

// scan runs the pass over w, the text from offset base of the file on.
// When eof (w runs to the end of the file) it scans all of w; else it
// stops before a string, comment or table header that may go on after w
// and returns the offset in w to go on from with more text.
func (p *prescanner) scan(w string, base int, eof bool) (int, error) {
	pos, n := 0, len(w)
	if base == 0 {
		if !eof && n < len("\uFEFF") {
			return 0, nil
		}
		if strings.HasPrefix(w, "\uFEFF") {
			pos = len("\uFEFF")
		}
	}
	for pos < n {
		c := w[pos]
		switch {
		case c == '\n':
			p.line++
			pos++
			p.lineAt = base + pos
			if p.depth == 0 {
				p.lineStart = true
			}
			continue
		case c == ' ' || c == '\t' || c == '\r':
			pos++
			continue
		case c == '#':
			if i := strings.IndexByte(w[pos:], '\n'); i >= 0 {
				pos += i
			} else if eof {
				pos = n
			} else {
				return pos, nil
			}
			continue
		case c == '"' || c == '\'':
			end, line := skipString(w, pos, p.line)
			if !eof && end+4 > n {
				// skipString looks up to three bytes past a string's
				// end: it may end differently with more text.
				return pos, nil
			}
			pos, p.line = end, line
			p.lineStart = false
			continue
		}
		if p.lineStart && c == '[' {
			// A table header: up to the end of the line.
			end := strings.IndexByte(w[pos:], '\n')
			if end < 0 {
				if !eof {
					return pos, nil
				}
				end = n
			} else {
				end += pos
			}
			// Only blanks since the last line break: this line starts at lineAt.
			switch kind := headerKind(w[pos:end]); kind {
			case "node", "edge", "network", "parameters", "defaults":
				p.boundary(p.lineAt, kind)
			default:
				p.boundary(p.lineAt, "")
				p.lay.simple = false
			}
			pos = end
			continue
		}
		p.lineStart = false
		if !prescanSpecial[c] {
			// A run of bytes that change nothing here (most of a file):
			// skipped in a tight loop.
			for pos++; pos < n && !prescanSpecial[w[pos]]; pos++ {
			}
			continue
		}
		switch c {
		case '[', '{':
			p.depth++
			if p.depth > MaxNesting {
				return 0, nestingError(p.file, p.line)
			}
		case ']', '}':
			if p.depth > 0 {
				p.depth--
			}
		}
		pos++
	}
	return n, nil
}

// prescanSpecial marks the bytes prescan must look at once a line has
// begun: line breaks, comments, quotes and brackets.
var prescanSpecial = [256]bool{'\n': true, '#': true, '"': true, '\'': true, '[': true, ']': true, '{': true, '}': true}

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

// headText returns the text of the file with the text of the [[node]] and
// [[edge]] sections taken out but their line breaks kept, so that what is
// left decodes to the other tables with the lines of the whole file. The
// line breaks of sections after the last other text are left out too: the
// head of a large file is then its first lines only, not a line break per
// line of it.
func headText(t *text, lay *layout) (string, error) {
	var b strings.Builder
	line := 1 // of the end of b
	for _, g := range lay.gaps {
		b.WriteString(strings.Repeat("\n", max(int(g.line)-line, 0)))
		s, err := t.copy(g.start, g.end)
		if err != nil {
			return "", err
		}
		b.WriteString(s)
		line = int(g.line) + strings.Count(s, "\n")
	}
	return b.String(), nil
}

// text gives pieces of a file's text: from the whole text in memory, or
// read back from the file (ReadAt) when it was scanned a chunk at a time.
type text struct {
	s    string      // the whole text, when r is nil
	r    io.ReaderAt // the file
	file string      // its name, for errors
}

// view returns the text at [start, end): a part of the text in memory, or
// read from the file into buf (grown if need be; returned), a view of buf
// valid until buf is used again.
func (t *text) view(start, end int32, buf []byte) (string, []byte, error) {
	if t.r == nil {
		return t.s[start:end], buf, nil
	}
	m := int(end - start)
	if cap(buf) < m {
		buf = make([]byte, 0, max(m, batchBytes+batchBytes/4))
	}
	buf = buf[:m]
	if m <= 0 {
		return "", buf, nil
	}
	k, err := t.r.ReadAt(buf, int64(start))
	if k < m {
		if err == nil || err == io.EOF {
			err = io.ErrUnexpectedEOF // the file was cut short while read
		}
		return "", buf, &Error{File: t.file, Msg: "cannot read: " + errMsg(err), Err: err}
	}
	return unsafe.String(&buf[0], m), buf, nil
}

// copy returns the text at [start, end) as a string of its own (a part of
// the text in memory).
func (t *text) copy(start, end int32) (string, error) {
	s, _, err := t.view(start, end, nil)
	return s, err
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

// decodeBatch decodes the [[kind]] sections secs[i:j], whose text is text, and
// returns their tables and, for each, its keys in file order (from the
// order in which the library met them, so that no line lookup is needed
// to sort them). Errors carry the line in the whole file.
func decodeBatch(text, file, kind string, secs []section, i, j int) ([]map[string]any, [][]string, error) {
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
	txt          *text
	file         string
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

func newSectionIndex(txt *text, file string, lay *layout) *sectionIndex {
	return &sectionIndex{txt: txt, file: file, nodes: lay.nodes, edges: lay.edges,
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
			nb.kvs, nb.buf, ok = x.fastBatch(kind, secs, nb.lo, nb.hi, x.spare[kind])
			x.spare[kind] = fastBuf{}
		}
		if !ok {
			x.spare[kind], nb.kvs, nb.buf = nb.buf, nil, fastBuf{}
			bt, err := x.txt.copy(secs[nb.lo].start, secs[nb.hi-1].end)
			if err != nil {
				return nil, err
			}
			if nb.tables, nb.orders, err = decodeBatch(bt, x.file, kind, secs, nb.lo, nb.hi); err != nil {
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
			p.kvs, p.buf, p.ok = x.fastBatch(kind, secs, p.lo, p.hi, buf)
		}()
	}
	return nb, nil
}

// fastBatch reads the text of the sections secs[i:j] into buf.text (or
// takes it from the text in memory) and reads it in the simple form
// (fastscan.go); ok = false when it cannot, also when the text cannot be
// read (the library's reading then reports why).
func (x *sectionIndex) fastBatch(kind string, secs []section, i, j int, buf fastBuf) ([][]fastKV, fastBuf, bool) {
	s, t, err := x.txt.view(secs[i].start, secs[j-1].end, buf.text)
	buf.text = t
	if err != nil {
		return nil, buf, false
	}
	return fastBatch(s, kind, secs, i, j, buf)
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
		bt, err := x.txt.copy(secs[i].start, secs[j-1].end)
		if err != nil {
			return nil // the text cannot be read back: lines of the head only
		}
		l := &locator{src: bt, line: int(secs[i].line), lines: make(map[string]int), arrays: map[string]int{kind: i}}
		if strings.HasPrefix(l.src, "\uFEFF") {
			l.pos = len("\uFEFF") // the first table right after a byte-order mark
		}
		l.scan()
		b = &sectionBatch{lo: i, hi: j, loc: l}
		x.locs[kind] = b
	}
	return b.loc
}
