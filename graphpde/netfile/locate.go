package netfile

import (
	"strconv"
	"strings"
)

// The TOML library reports the line of a syntax error but not the line of a
// key it decoded, so the reader runs this small scanner over the source once
// the library has accepted it, and records the line of every table header and
// every key. Paths name a key as the decoded maps do, with array elements
// written "#i": the length of the third [[edge]] is {"edge", "#2", "length"}.
//
// The scanner trusts that the library has already checked the syntax; on
// input it does not understand it skips ahead and never panics.

// locator maps key paths to 1-based line numbers.
type locator struct {
	src    string
	pos    int
	line   int
	lines  map[string]int // pathKey(path) → line of first mention
	arrays map[string]int // pathKey(array-of-tables path) → elements so far
}

// locate scans src and returns the line index of its keys and headers.
func locate(src string) *locator {
	l := &locator{src: src, line: 1, lines: make(map[string]int), arrays: make(map[string]int)}
	if strings.HasPrefix(src, "\uFEFF") {
		l.pos = len("\uFEFF") // a byte-order mark, which the library skips too
	}
	l.scan()
	return l
}

func pathKey(p []string) string { return strings.Join(p, "\x00") }

func index(i int) string { return "#" + strconv.Itoa(i) }

// lineOf returns the line of path, or of its longest recorded prefix (the
// enclosing table's header when a key is missing), or 0 if nothing is known.
func (l *locator) lineOf(path ...string) int {
	for n := len(path); n > 0; n-- {
		if ln, ok := l.lines[pathKey(path[:n])]; ok {
			return ln
		}
	}
	return 0
}

// record notes line for every prefix of p longer than from elements that has
// no line yet (a dotted key defines its parents where it first appears).
func (l *locator) record(p []string, from, line int) {
	for n := from + 1; n <= len(p); n++ {
		k := pathKey(p[:n])
		if _, ok := l.lines[k]; !ok {
			l.lines[k] = line
		}
	}
}

func (l *locator) eof() bool { return l.pos >= len(l.src) }

func (l *locator) peek(k int) byte {
	if l.pos+k < len(l.src) {
		return l.src[l.pos+k]
	}
	return 0
}

// next consumes one byte, counting lines.
func (l *locator) next() {
	if l.src[l.pos] == '\n' {
		l.line++
	}
	l.pos++
}

// skipBlank skips spaces and tabs, and with newlines also line breaks and
// comments.
func (l *locator) skipBlank(newlines bool) {
	for !l.eof() {
		switch c := l.src[l.pos]; {
		case c == ' ' || c == '\t' || c == '\r':
			l.pos++
		case newlines && c == '\n':
			l.next()
		case newlines && c == '#':
			l.skipLine()
		default:
			return
		}
	}
}

// skipLine moves to the next newline (not consumed).
func (l *locator) skipLine() {
	for !l.eof() && l.src[l.pos] != '\n' {
		l.pos++
	}
}

func (l *locator) scan() {
	var prefix string // pathKey of the current table
	for {
		l.skipBlank(true)
		if l.eof() {
			return
		}
		start := l.pos
		line := l.line
		if l.src[l.pos] == '[' {
			arr := l.peek(1) == '['
			l.pos++
			if arr {
				l.pos++
			}
			p := l.resolve(l.key(), arr)
			l.record(p, 0, line)
			prefix = pathKey(p)
			l.skipLine()
			continue
		}
		keys := l.key()
		l.skipBlank(false)
		if len(keys) > 0 && l.peek(0) == '=' {
			l.pos++
			full := l.recordKey(prefix, keys, line)
			l.skipBlank(false)
			l.value(full)
		}
		l.skipLine()
		if l.pos == start && !l.eof() {
			l.next()
		}
	}
}

// join appends path elements to a path key.
func join(prefix string, keys ...string) string {
	if prefix == "" {
		return pathKey(keys)
	}
	return prefix + "\x00" + pathKey(keys)
}

// recordKey records the (possibly dotted) key keys under the table or
// value whose path key is prefix, with its parents, and returns its path key.
func (l *locator) recordKey(prefix string, keys []string, line int) string {
	full := prefix
	for _, k := range keys {
		full = join(full, k)
		if _, ok := l.lines[full]; !ok {
			l.lines[full] = line
		}
	}
	return full
}

// resolve turns a header's key into a path: components that name an array of
// tables refer to its last element, and an array header adds a new element.
func (l *locator) resolve(keys []string, arr bool) []string {
	var p []string
	for i, k := range keys {
		p = append(p, k)
		pk := pathKey(p)
		if arr && i == len(keys)-1 {
			n := l.arrays[pk]
			l.arrays[pk] = n + 1
			p = append(p, index(n))
		} else if n, ok := l.arrays[pk]; ok && n > 0 {
			p = append(p, index(n-1))
		}
	}
	return p
}

// key reads a possibly dotted, possibly quoted key.
func (l *locator) key() []string {
	var keys []string
	for {
		l.skipBlank(false)
		if l.eof() {
			return keys
		}
		switch c := l.src[l.pos]; c {
		case '"':
			start := l.pos
			l.basicString()
			raw := l.src[start:l.pos]
			if s, err := strconv.Unquote(raw); err == nil {
				keys = append(keys, s)
			} else {
				keys = append(keys, strings.Trim(raw, `"`))
			}
		case '\'':
			start := l.pos
			l.literalString()
			keys = append(keys, strings.Trim(l.src[start:l.pos], "'"))
		default:
			start := l.pos
			for !l.eof() && isBare(l.src[l.pos]) {
				l.pos++
			}
			if l.pos == start {
				return keys
			}
			keys = append(keys, l.src[start:l.pos])
		}
		l.skipBlank(false)
		if l.peek(0) != '.' {
			return keys
		}
		l.pos++
	}
}

func isBare(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '-'
}

// value skips one value, recording the keys of inline tables and the start
// lines of array elements under the path key pk.
func (l *locator) value(pk string) {
	if l.eof() {
		return
	}
	switch l.src[l.pos] {
	case '"':
		l.basicString()
	case '\'':
		l.literalString()
	case '[':
		l.pos++
		for i := 0; ; i++ {
			l.skipBlank(true)
			if l.eof() {
				return
			}
			if l.src[l.pos] == ']' {
				l.pos++
				return
			}
			start := l.pos
			l.value(l.recordKey(pk, []string{index(i)}, l.line))
			l.skipBlank(true)
			if l.peek(0) == ',' {
				l.pos++
			} else if l.pos == start {
				l.next()
			}
		}
	case '{':
		l.pos++
		for {
			l.skipBlank(true)
			if l.eof() {
				return
			}
			if l.src[l.pos] == '}' {
				l.pos++
				return
			}
			start := l.pos
			line := l.line
			keys := l.key()
			l.skipBlank(false)
			if len(keys) > 0 && l.peek(0) == '=' {
				l.pos++
				full := l.recordKey(pk, keys, line)
				l.skipBlank(false)
				l.value(full)
			}
			l.skipBlank(true)
			if l.peek(0) == ',' {
				l.pos++
			} else if l.pos == start {
				l.next()
			}
		}
	default:
		for !l.eof() {
			switch l.src[l.pos] {
			case ' ', '\t', '\r', '\n', ',', ']', '}', '#':
				return
			}
			l.pos++
		}
	}
}

// basicString skips a "..." or """...""" string starting at pos.
func (l *locator) basicString() {
	if strings.HasPrefix(l.src[l.pos:], `"""`) {
		l.pos += 3
		for !l.eof() {
			switch {
			case l.src[l.pos] == '\\':
				l.next()
				if !l.eof() {
					l.next()
				}
			case strings.HasPrefix(l.src[l.pos:], `"""`):
				l.pos += 3
				// Up to two more quotes belong to the content.
				for k := 0; k < 2 && l.peek(0) == '"'; k++ {
					l.pos++
				}
				return
			default:
				l.next()
			}
		}
		return
	}
	l.pos++
	for !l.eof() {
		switch l.src[l.pos] {
		case '\\':
			l.pos++
			if !l.eof() && l.src[l.pos] != '\n' {
				l.pos++
			}
		case '"':
			l.pos++
			return
		case '\n':
			return
		default:
			l.pos++
		}
	}
}

// literalString skips a literal string (single- or triple-quoted) at pos.
func (l *locator) literalString() {
	if strings.HasPrefix(l.src[l.pos:], `'''`) {
		l.pos += 3
		for !l.eof() {
			if strings.HasPrefix(l.src[l.pos:], `'''`) {
				l.pos += 3
				for k := 0; k < 2 && l.peek(0) == '\''; k++ {
					l.pos++
				}
				return
			}
			l.next()
		}
		return
	}
	l.pos++
	for !l.eof() {
		switch l.src[l.pos] {
		case '\'':
			l.pos++
			return
		case '\n':
			return
		}
		l.pos++
	}
}
