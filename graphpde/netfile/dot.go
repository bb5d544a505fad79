package netfile

import (
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/ramify-dev/ramify/graphpde"
)

// ReadDOT reads a network from a Graphviz DOT graph (the DOT language of
// the Graphviz documentation, graphviz.org/doc/info/lang.html): graph or
// digraph, node, edge and attribute statements, subgraphs (flattened), edge
// chains a -- b -- c, default attribute lists (node [...], edge [...]),
// quoted and unquoted ids, and //, /* */ and # comments. HTML-like labels
// and ports are not supported.
//
// Node attributes are the node keys of the network file (fixed, leak,
// inject, capacity) and Graphviz's pos = "x,y" for the position; edge
// attributes are the edge keys (length, or Graphviz's len, diffusivity,
// drift, decay, source, capacity, weight, cells) and id (default
// "FROM-TO", with ".2", ".3", … for parallel edges). A value that reads as
// a number is a number; any other is kept as a string, so "25 mm" is a
// quantity and "1 + u" an expression, as in the network file. Graphviz's
// drawing attributes (label, color, shape, …) are ignored; any other
// attribute is an error with its line. Either edge operator (-- or ->)
// orients the edge from the first node to the second.
func ReadDOT(r io.Reader, name string) (*graphpde.Network, error) {
	return readDOT(r, name, nil)
}

// readDOT is ReadDOT with the options of ReadFileOptions (nil: none).
func readDOT(r io.Reader, name string, opt *Options) (*graphpde.Network, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, &Error{File: name, Msg: "cannot read: " + errMsg(err), Err: err}
	}
	p := &dotParser{name: name, src: string(data), line: 1,
		nodeIdx: map[string]int{}, nodeLine: map[string]int{}, edgeLine: map[string]int{}, edgeIDs: map[string]int{}}
	if err := p.graph(); err != nil {
		return nil, err
	}
	if len(p.nodes) == 0 {
		return nil, &Error{File: name, Msg: "the graph has no nodes"}
	}
	root := map[string]any{"node": p.nodes, "edge": p.edges}
	if p.title != "" {
		root["network"] = map[string]any{"name": p.title}
	}
	nl := make([]int, len(p.nodes))
	for i, nd := range p.nodes {
		nl[i] = p.nodeLine[nd["id"].(string)]
	}
	el := make([]int, len(p.edges))
	for i, e := range p.edges {
		el[i] = p.edgeLine[e["id"].(string)]
	}
	rd := &reader{file: name, opt: opt, loc: lineLocator(p.nodes, p.edges, nl, el)}
	return rd.network(root)
}

// Graphviz attributes that only affect drawing: ignored.
var dotDrawing = []string{"label", "xlabel", "color", "fillcolor", "fontcolor", "fontname", "fontsize", "shape", "style",
	"penwidth", "width", "height", "arrowhead", "arrowtail", "arrowsize", "dir", "tooltip", "URL", "href", "target",
	"class", "group", "rank", "rankdir", "size", "ratio", "splines", "overlap", "layout", "bgcolor", "margin", "nodesep",
	"ranksep", "constraint", "minlen", "headlabel", "taillabel", "labelfontsize", "peripheries", "fixedsize", "image",
	"orientation", "sides", "skew", "distortion", "regular", "concentrate", "compound", "dpi", "center", "charset", "K"}

var (
	dotNodeKeys = []string{"fixed", "leak", "inject", "capacity"}
	dotEdgeKeys = []string{"length", "diffusivity", "drift", "decay", "source", "capacity", "weight", "cells"}
)

type dotParser struct {
	name  string
	src   string
	pos   int
	line  int
	title string

	nodeDef, edgeDef map[string]string
	nodes, edges     []map[string]any
	nodeIdx          map[string]int
	nodeLine         map[string]int
	edgeLine         map[string]int
	edgeIDs          map[string]int
}

func (p *dotParser) fail(line int, msg string) error {
	return &Error{File: p.name, Line: line, Msg: msg}
}

// skip passes over white space and comments.
func (p *dotParser) skip() {
	for p.pos < len(p.src) {
		c := p.src[p.pos]
		switch {
		case c == '\n':
			p.line++
			p.pos++
		case c == ' ' || c == '\t' || c == '\r':
			p.pos++
		case strings.HasPrefix(p.src[p.pos:], "//"), c == '#' && p.lineStart():
			for p.pos < len(p.src) && p.src[p.pos] != '\n' {
				p.pos++
			}
		case strings.HasPrefix(p.src[p.pos:], "/*"):
			end := strings.Index(p.src[p.pos+2:], "*/")
			if end < 0 {
				p.pos = len(p.src)
				return
			}
			p.line += strings.Count(p.src[p.pos:p.pos+2+end], "\n")
			p.pos += end + 4
		default:
			return
		}
	}
}

// lineStart reports whether only blanks precede pos on its line.
func (p *dotParser) lineStart() bool {
	i := strings.LastIndexByte(p.src[:p.pos], '\n')
	return strings.TrimSpace(p.src[i+1:p.pos]) == ""
}

// token returns the next token: an id (unquoted or quoted, unquoted), a
// punctuation mark or an edge operator; quoted reports a quoted id.
func (p *dotParser) token() (tok string, quoted bool, err error) {
	p.skip()
	if p.pos >= len(p.src) {
		return "", false, nil
	}
	c := p.src[p.pos]
	switch {
	case strings.HasPrefix(p.src[p.pos:], "--"), strings.HasPrefix(p.src[p.pos:], "->"):
		p.pos += 2
		return p.src[p.pos-2 : p.pos], false, nil
	case strings.ContainsRune("{}[];,=:", rune(c)):
		p.pos++
		return string(c), false, nil
	case c == '"':
		var b strings.Builder
		p.pos++
		for p.pos < len(p.src) {
			c := p.src[p.pos]
			switch {
			case c == '\\' && p.pos+1 < len(p.src) && p.src[p.pos+1] == '"':
				b.WriteByte('"')
				p.pos += 2
			case c == '\\' && p.pos+1 < len(p.src) && p.src[p.pos+1] == '\n':
				p.pos += 2
				p.line++
			case c == '"':
				p.pos++
				return b.String(), true, nil
			default:
				if c == '\n' {
					p.line++
				}
				b.WriteByte(c)
				p.pos++
			}
		}
		return "", false, p.fail(p.line, "unterminated quoted string")
	case c == '<':
		return "", false, p.fail(p.line, "HTML-like ids (<...>) are not supported")
	}
	start := p.pos
	for p.pos < len(p.src) {
		r, n := utf8.DecodeRuneInString(p.src[p.pos:])
		if !(unicode.IsLetter(r) || unicode.IsDigit(r) || r == '_' || r == '.' || (r == '-' && !strings.HasPrefix(p.src[p.pos:], "--") && !strings.HasPrefix(p.src[p.pos:], "->"))) {
			break
		}
		p.pos += n
	}
	if p.pos == start {
		return "", false, p.fail(p.line, fmt.Sprintf("unexpected %q", string(c)))
	}
	return p.src[start:p.pos], false, nil
}

func (p *dotParser) peek() string {
	pos, line := p.pos, p.line
	tok, _, _ := p.token()
	p.pos, p.line = pos, line
	return tok
}

func (p *dotParser) expect(want string) error {
	tok, _, err := p.token()
	if err != nil {
		return err
	}
	if tok == "" && p.pos >= len(p.src) {
		// The file ended: name the line of its last text, not the empty
		// line after a final newline.
		last := strings.Count(strings.TrimRight(p.src, " \t\r\n"), "\n") + 1
		return p.fail(last, fmt.Sprintf("want %q, but the file ends here (an unclosed list or graph?)", want))
	}
	if tok != want {
		return p.fail(p.line, fmt.Sprintf("want %q, got %q", want, tok))
	}
	return nil
}

func (p *dotParser) graph() error {
	p.nodeDef, p.edgeDef = map[string]string{}, map[string]string{}
	tok, _, err := p.token()
	if err != nil {
		return err
	}
	if strings.EqualFold(tok, "strict") {
		if tok, _, err = p.token(); err != nil {
			return err
		}
	}
	if !strings.EqualFold(tok, "graph") && !strings.EqualFold(tok, "digraph") {
		return p.fail(p.line, fmt.Sprintf("a DOT file starts with graph or digraph, not %q", tok))
	}
	if t := p.peek(); t != "{" {
		p.title, _, _ = p.token()
	}
	if err := p.expect("{"); err != nil {
		return err
	}
	if err := p.stmts(); err != nil {
		return err
	}
	if t := p.peek(); t != "" {
		return p.fail(p.line, fmt.Sprintf("unexpected %q after the graph", t))
	}
	return nil
}

// stmts reads statements up to the closing brace.
func (p *dotParser) stmts() error {
	for {
		p.skip()
		line := p.line
		tok, quoted, err := p.token()
		if err != nil {
			return err
		}
		switch {
		case tok == "" && !quoted:
			return p.fail(p.line, "missing \"}\"")
		case tok == "}" && !quoted:
			return nil
		case tok == ";" && !quoted:
			continue
		case (tok == "{" || strings.EqualFold(tok, "subgraph")) && !quoted:
			if tok != "{" {
				if p.peek() != "{" {
					p.token() // the subgraph's name
				}
				if err := p.expect("{"); err != nil {
					return err
				}
			}
			if err := p.stmts(); err != nil {
				return err
			}
			continue
		case !quoted && (strings.EqualFold(tok, "graph") || strings.EqualFold(tok, "node") || strings.EqualFold(tok, "edge")):
			attrs, err := p.attrs()
			if err != nil {
				return err
			}
			switch strings.ToLower(tok) {
			case "node":
				for k, v := range attrs {
					p.nodeDef[k] = v
				}
			case "edge":
				for k, v := range attrs {
					p.edgeDef[k] = v
				}
			}
			continue
		}
		// An id: a graph attribute (ID = ID), a node or an edge chain.
		if p.peek() == "=" {
			p.token()
			v, _, err := p.token()
			if err != nil {
				return err
			}
			if tok == "label" {
				p.title = v
			}
			continue
		}
		chain := []string{tok}
		for {
			op := p.peek()
			if op != "--" && op != "->" {
				break
			}
			p.token()
			next, _, err := p.token()
			if err != nil {
				return err
			}
			if next == "{" || strings.EqualFold(next, "subgraph") {
				return p.fail(p.line, "an edge to a subgraph is not supported: list the edges one by one")
			}
			chain = append(chain, next)
		}
		if p.peek() == ":" {
			return p.fail(p.line, "ports (node:port) are not supported")
		}
		attrs := map[string]string{}
		if p.peek() == "[" {
			if attrs, err = p.attrs(); err != nil {
				return err
			}
		}
		if len(chain) == 1 {
			if err := p.node(chain[0], attrs, line); err != nil {
				return err
			}
			continue
		}
		for i := 0; i+1 < len(chain); i++ {
			for _, id := range chain[i : i+2] {
				if err := p.node(id, nil, line); err != nil {
					return err
				}
			}
			if err := p.edge(chain[i], chain[i+1], attrs, line); err != nil {
				return err
			}
		}
	}
}

// attrs reads one or more [k = v, ...] lists.
func (p *dotParser) attrs() (map[string]string, error) {
	out := map[string]string{}
	for p.peek() == "[" {
		p.token()
		for {
			k, _, err := p.token()
			if err != nil {
				return nil, err
			}
			if k == "]" {
				break
			}
			if k == "," || k == ";" {
				continue
			}
			if err := p.expect("="); err != nil {
				return nil, err
			}
			v, _, err := p.token()
			if err != nil {
				return nil, err
			}
			out[k] = v
		}
	}
	return out, nil
}

// value turns an attribute string into a number when it reads as one.
func dotValue(v string) any {
	if i, err := strconv.ParseInt(v, 10, 64); err == nil {
		return i
	}
	if f, err := strconv.ParseFloat(strings.TrimSpace(v), 64); err == nil {
		return f
	}
	return v
}

func (p *dotParser) node(id string, attrs map[string]string, line int) error {
	i, seen := p.nodeIdx[id]
	if !seen {
		if !graphpde.ValidID(id) {
			return p.fail(line, fmt.Sprintf("node id %q must be letters, digits, '_', '-' or '.'", id))
		}
		i = len(p.nodes)
		p.nodeIdx[id] = i
		p.nodeLine[id] = line
		p.nodes = append(p.nodes, map[string]any{"id": id})
		all := map[string]string{}
		for k, v := range p.nodeDef {
			all[k] = v
		}
		for k, v := range attrs {
			all[k] = v
		}
		attrs = all
	}
	nd := p.nodes[i]
	for k, v := range attrs {
		switch {
		case k == "pos":
			xy := strings.Split(strings.TrimSuffix(v, "!"), ",")
			if len(xy) < 2 {
				return p.fail(line, fmt.Sprintf("node %q: pos = %q must be \"x,y\"", id, v))
			}
			x, err1 := strconv.ParseFloat(strings.TrimSpace(xy[0]), 64)
			y, err2 := strconv.ParseFloat(strings.TrimSpace(xy[1]), 64)
			if err1 != nil || err2 != nil {
				return p.fail(line, fmt.Sprintf("node %q: pos = %q must be \"x,y\" with two numbers", id, v))
			}
			nd["xy"] = []any{x, y}
		case slices.Contains(dotNodeKeys, k):
			nd[k] = dotValue(v)
		case slices.Contains(dotDrawing, k):
		default:
			return p.fail(line, fmt.Sprintf("node %q: unknown attribute %q (the node attributes are %s and pos)", id, k, strings.Join(dotNodeKeys, ", ")))
		}
	}
	return nil
}

func (p *dotParser) edge(from, to string, attrs map[string]string, line int) error {
	all := map[string]string{}
	for k, v := range p.edgeDef {
		all[k] = v
	}
	for k, v := range attrs {
		all[k] = v
	}
	id := all["id"]
	if id == "" {
		base := from + "-" + to
		p.edgeIDs[base]++
		id = base
		if n := p.edgeIDs[base]; n > 1 {
			id = base + "." + strconv.Itoa(n)
		}
	}
	if _, dup := p.edgeLine[id]; dup {
		return p.fail(line, fmt.Sprintf("edge id %q used twice (first at line %d)", id, p.edgeLine[id]))
	}
	p.edgeLine[id] = line
	e := map[string]any{"id": id, "from": from, "to": to}
	for k, v := range all {
		switch {
		case k == "id":
		case k == "len":
			e["length"] = dotValue(v)
		case slices.Contains(dotEdgeKeys, k):
			e[k] = dotValue(v)
		case slices.Contains(dotDrawing, k):
		default:
			return p.fail(line, fmt.Sprintf("edge %q: unknown attribute %q (the edge attributes are id, %s and len)", id, k, strings.Join(dotEdgeKeys, ", ")))
		}
	}
	p.edges = append(p.edges, e)
	return nil
}
