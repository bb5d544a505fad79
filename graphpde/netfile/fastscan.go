package netfile

import (
	"math"
	"strconv"
	"strings"
)

// The [[node]] and [[edge]] tables of a large file are nearly all of its
// text and nearly all alike: a header and a few lines of the form
// key = value, with a number, a string or a one-line array of those. The
// TOML library decodes them at about 10 MB/s; fastSection reads that
// simple form directly, at several times the speed, into typed key-value
// lists, from which the reader adds plain nodes and edges at once
// (direct.go) and builds the library's map for any other table (fastMap). It accepts only text whose meaning under TOML 1.0 it is
// sure of and declines (returns ok = false) on anything else: multi-line
// strings and arrays, inline tables, dotted or quoted keys, dates, hex,
// octal and binary integers, escapes other than \b \t \n \f \r \" \\,
// control characters, bytes outside ASCII, a key given twice, any syntax
// error. A batch it declines is decoded by the library, so that what the
// reader accepts, the values it builds and every error message and line
// are those of the library (TestFastTablesSameAsLibrary,
// FuzzFastTables).

// fastTables switches the direct reading of simple [[node]] and [[edge]]
// tables (tests compare it with the library's decoding).
var fastTables = true

// fastBatch reads the [[kind]] sections secs[i:j], adjacent in the file and
// whose text is src (from the start of secs[i]), in the
// simple form, returning the keys and values of each table in file order,
// or ok = false if any of them is not in that form.
// The tables are slices of one array, held with the array of tables in a
// fastBuf: buf is given for reuse (that of the previous batch, no longer
// needed) and returned with them, so that a file's batches reuse two of
// them instead of leaving one of each per batch to the collector.
func fastBatch(src, kind string, secs []section, i, j int, buf fastBuf) (kvs [][]fastKV, _ fastBuf, ok bool) {
	kvs, all := buf.kvs[:0], buf.all[:0]
	if cap(all) == 0 {
		// About one key per 16 bytes of text (a key, " = ", a value and a
		// line break take more), so that the array rarely grows.
		all = make([]fastKV, 0, (secs[j-1].end-secs[i].start)/16+8)
	}
	for n := i; n < j; n++ {
		from := len(all)
		if all, ok = fastSection(src[secs[n].start-secs[i].start:secs[n].end-secs[i].start], kind, all); !ok {
			return nil, fastBuf{all, kvs[:0], buf.text}, false
		}
		kvs = append(kvs, all[from:len(all):len(all)])
	}
	return kvs, fastBuf{all, kvs, buf.text}, true
}

// fastBuf holds the arrays of a batch read by fastBatch, for reuse.
type fastBuf struct {
	all []fastKV   // the keys and values of every table
	kvs [][]fastKV // each table's, slices of all
	// The batch's text, when read back from the file: its keys and
	// strings are views of it (strings kept are copied).
	text []byte
}

// fastMap returns the table of a key-value list, as the library decodes it,
// and its keys in file order (keys and strings copied from the text).
func fastMap(kv []fastKV) (map[string]any, []string) {
	m := make(map[string]any, len(kv))
	order := make([]string, len(kv))
	for n := range kv {
		k := strings.Clone(kv[n].k)
		m[k] = kv[n].val()
		order[n] = k
	}
	return m, order
}

// fastKV is one key and its value: a string, an integer or a float held
// as such (no boxing, for the direct reading of direct.go), or a boolean
// or an array as the library decodes it.
type fastKV struct {
	k   string
	typ fastType
	ln  int32 // line breaks before the key in its section (the header's line is 0)
	s   string
	f   float64
	i   int64
	v   any

	f2   float64 // the second number of a fastPair
	ints [2]bool // which numbers of a fastPair are integers
}

type fastType uint8

const (
	fastString fastType = iota
	fastInt
	fastFloat
	fastPair  // an array of two numbers: f, f2 (ints says which are integers)
	fastOther // v
)

// val returns the value as the library decodes it (a string copied).
func (x *fastKV) val() any {
	switch x.typ {
	case fastString:
		return strings.Clone(x.s)
	case fastInt:
		return x.i
	case fastFloat:
		return x.f
	case fastPair:
		out := make([]any, 2)
		for k, f := range [2]float64{x.f, x.f2} {
			if x.ints[k] {
				out[k] = int64(f)
			} else {
				out[k] = f
			}
		}
		return out
	}
	return x.v
}

// fastSection reads one section, the header [[kind]] and its key = value
// lines, appending its keys and values to kv.
func fastSection(s, kind string, kv []fastKV) ([]fastKV, bool) {
	p := fastParser{s: s}
	if !p.header(kind) {
		return kv, false
	}
	first := len(kv)
	lines, counted := 0, 0 // line breaks in s[:counted]
	for {
		p.blank()
		if p.eof() {
			return kv, true
		}
		switch c := p.s[p.pos]; {
		case c == '\n':
			p.pos++
			continue
		case c == '\r' && p.pos+1 < len(p.s) && p.s[p.pos+1] == '\n':
			p.pos += 2
			continue
		case c == '#':
			if !p.comment() {
				return kv, false
			}
			continue
		}
		k, ok := p.key()
		if !ok {
			return kv, false
		}
		for _, x := range kv[first:] {
			if x.k == k {
				return kv, false // the library words the error
			}
		}
		p.blank()
		if p.eof() || p.s[p.pos] != '=' {
			return kv, false
		}
		p.pos++
		p.blank()
		lines += strings.Count(s[counted:p.pos], "\n")
		counted = p.pos
		x := fastKV{k: k, ln: int32(lines)}
		if !p.value(&x, true) || !p.lineEnd() {
			return kv, false
		}
		kv = append(kv, x)
	}
}

// fastParser reads one section's text.
type fastParser struct {
	s   string
	pos int
}

func (p *fastParser) eof() bool { return p.pos >= len(p.s) }

// blank skips spaces and tabs.
func (p *fastParser) blank() {
	for p.pos < len(p.s) && (p.s[p.pos] == ' ' || p.s[p.pos] == '\t') {
		p.pos++
	}
}

// comment skips a comment up to its line's end (not consumed); it declines
// control characters and bytes outside ASCII.
func (p *fastParser) comment() bool {
	for p.pos < len(p.s) {
		c := p.s[p.pos]
		switch {
		case c == '\n':
			return true
		case c == '\r':
			return p.pos+1 < len(p.s) && p.s[p.pos+1] == '\n' && p.next()
		case c == '\t':
		case c < 0x20 || c >= 0x7f:
			return false
		}
		p.pos++
	}
	return true
}

// next consumes one byte and reports true.
func (p *fastParser) next() bool {
	p.pos++
	return true
}

// lineEnd consumes blanks, an optional comment and the line break (or the
// end of the text) after a value.
func (p *fastParser) lineEnd() bool {
	p.blank()
	if p.eof() {
		return true
	}
	switch p.s[p.pos] {
	case '#':
		if !p.comment() {
			return false
		}
		if p.eof() {
			return true
		}
		p.pos++ // the '\n' comment stopped at
		return true
	case '\r':
		if p.pos+1 < len(p.s) && p.s[p.pos+1] == '\n' {
			p.pos += 2
			return true
		}
		return false
	case '\n':
		p.pos++
		return true
	}
	return false
}

// header reads the line "[[kind]]", with blanks before it and an optional
// comment after it.
func (p *fastParser) header(kind string) bool {
	p.blank()
	h := "[[" + kind + "]]"
	if !strings.HasPrefix(p.s[p.pos:], h) {
		return false
	}
	p.pos += len(h)
	return p.lineEnd()
}

// key reads a bare key.
func (p *fastParser) key() (string, bool) {
	start := p.pos
	for p.pos < len(p.s) && isBare(p.s[p.pos]) {
		p.pos++
	}
	if p.pos == start {
		return "", false
	}
	return p.s[start:p.pos], true
}

// value reads a string, number, boolean or (when top) a one-line array of
// those into x.
func (p *fastParser) value(x *fastKV, top bool) bool {
	if !p.eof() && p.s[p.pos] == '[' {
		return top && p.array(x)
	}
	return p.scalar(x)
}

// scalar reads a string, number or boolean into x (apart from value, so
// that array's elements, which it reads, stay on its stack).
func (p *fastParser) scalar(x *fastKV) bool {
	if p.eof() {
		return false
	}
	var ok bool
	switch c := p.s[p.pos]; {
	case c == '"':
		if strings.HasPrefix(p.s[p.pos:], `"""`) {
			return false
		}
		x.typ = fastString
		x.s, ok = p.basic()
		return ok
	case c == '\'':
		if strings.HasPrefix(p.s[p.pos:], `'''`) {
			return false
		}
		x.typ = fastString
		x.s, ok = p.literal()
		return ok
	case c == 't' || c == 'f':
		for _, w := range [...]string{"true", "false"} {
			if strings.HasPrefix(p.s[p.pos:], w) {
				p.pos += len(w)
				x.typ, x.v = fastOther, w == "true"
				return p.valueEnd()
			}
		}
		return false
	}
	return p.number(x)
}

// valueEnd reports whether the byte at pos may follow a value.
func (p *fastParser) valueEnd() bool {
	if p.eof() {
		return true
	}
	switch p.s[p.pos] {
	case ' ', '\t', '\n', '\r', '#', ',', ']':
		return true
	}
	return false
}

// basic reads a one-line basic string with the escapes \b \t \n \f \r \"
// and \\. Without escapes it is a part of the file's text: whatever keeps
// it beyond the reading copies it (fastKV.val, directNode, directEdge), so
// that the network keeps no reference to the text.
func (p *fastParser) basic() (string, bool) {
	p.pos++ // opening quote
	start := p.pos
	var b []byte // set once an escape is met
	for p.pos < len(p.s) {
		c := p.s[p.pos]
		switch {
		case c == '"':
			var s string
			if b == nil {
				s = p.s[start:p.pos]
			} else {
				s = string(append(b, p.s[start:p.pos]...))
			}
			p.pos++
			return s, true
		case c == '\\':
			if p.pos+1 >= len(p.s) {
				return "", false
			}
			var r byte
			switch p.s[p.pos+1] {
			case 'b':
				r = '\b'
			case 't':
				r = '\t'
			case 'n':
				r = '\n'
			case 'f':
				r = '\f'
			case 'r':
				r = '\r'
			case '"':
				r = '"'
			case '\\':
				r = '\\'
			default:
				return "", false
			}
			b = append(append(b, p.s[start:p.pos]...), r)
			p.pos += 2
			start = p.pos
			continue
		case c == '\t':
		case c < 0x20 || c >= 0x7f:
			return "", false
		}
		p.pos++
	}
	return "", false
}

// literal reads a one-line literal string.
func (p *fastParser) literal() (string, bool) {
	p.pos++
	start := p.pos
	for p.pos < len(p.s) {
		c := p.s[p.pos]
		switch {
		case c == '\'':
			s := p.s[start:p.pos]
			p.pos++
			return s, true
		case c == '\t':
		case c < 0x20 || c >= 0x7f:
			return "", false
		}
		p.pos++
	}
	return "", false
}

// array reads a one-line array of strings, numbers and booleans (a
// trailing comma allowed) into x: a pair of numbers (a position, a pair of
// weights: most arrays of a large file) held in place as fastPair,
// anything else as the library decodes it.
func (p *fastParser) array(x *fastKV) bool {
	p.pos++
	var pair [2]fastKV // the first two elements
	var out []any      // all of them, once there are more than two
	n := 0
	for {
		p.blank()
		if p.eof() {
			return false
		}
		if p.s[p.pos] == ']' {
			p.pos++
			break
		}
		var e fastKV
		if !p.scalar(&e) {
			return false
		}
		switch {
		case n < 2:
			pair[n] = e
		case n == 2:
			out = append(out, pair[0].val(), pair[1].val(), e.val())
		default:
			out = append(out, e.val())
		}
		n++
		p.blank()
		if p.eof() {
			return false
		}
		if p.s[p.pos] == ',' {
			p.pos++
			continue
		}
		if p.s[p.pos] == ']' {
			p.pos++
			break
		}
		return false
	}
	if n == 2 {
		if a, aInt, ok := pairNumber(&pair[0]); ok {
			if b, bInt, ok := pairNumber(&pair[1]); ok {
				x.typ, x.f, x.f2, x.ints = fastPair, a, b, [2]bool{aInt, bInt}
				return true
			}
		}
	}
	if n <= 2 {
		out = make([]any, n)
		for k := range n {
			out[k] = pair[k].val()
		}
	}
	x.typ, x.v = fastOther, out
	return true
}

// pairNumber returns a number element of an array as a float64 and whether
// it is an integer, if it is a float or an integer that a float64 holds
// exactly (|i| ≤ 2⁵³).
func pairNumber(e *fastKV) (float64, bool, bool) {
	switch e.typ {
	case fastFloat:
		return e.f, false, true
	case fastInt:
		if e.i >= -1<<53 && e.i <= 1<<53 {
			return float64(e.i), true, true
		}
	}
	return 0, false, false
}

// digits reads DIGIT *( DIGIT / "_" DIGIT ) and reports whether it read
// any and whether it held an underscore.
func (p *fastParser) digits() (ok, under bool) {
	if p.eof() || !isDigit(p.s[p.pos]) {
		return false, false
	}
	p.pos++
	for p.pos < len(p.s) {
		c := p.s[p.pos]
		switch {
		case isDigit(c):
			p.pos++
		case c == '_' && p.pos+1 < len(p.s) && isDigit(p.s[p.pos+1]):
			under = true
			p.pos += 2
		default:
			return true, under
		}
	}
	return true, under
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

// number reads a decimal integer (as int64) or a float, inf or nan (as
// float64), as TOML 1.0 writes them.
func (p *fastParser) number(x *fastKV) bool {
	start := p.pos
	if p.s[p.pos] == '+' || p.s[p.pos] == '-' {
		p.pos++
	}
	for _, w := range [...]string{"inf", "nan"} {
		if strings.HasPrefix(p.s[p.pos:], w) {
			neg := p.s[start] == '-'
			p.pos += 3
			if !p.valueEnd() {
				return false
			}
			v := math.Inf(1)
			if w == "nan" {
				v = math.NaN()
			}
			if neg {
				v = math.Copysign(v, -1)
			}
			x.typ, x.f = fastFloat, v
			return true
		}
	}
	intStart := p.pos
	ok, under := p.digits()
	if !ok || p.s[intStart] == '0' && p.pos-intStart > 1 {
		return false // no digits, or a leading zero
	}
	float := false
	if p.pos < len(p.s) && p.s[p.pos] == '.' {
		p.pos++
		ok, u := p.digits()
		if !ok {
			return false
		}
		float, under = true, under || u
	}
	if p.pos < len(p.s) && (p.s[p.pos] == 'e' || p.s[p.pos] == 'E') {
		p.pos++
		if p.pos < len(p.s) && (p.s[p.pos] == '+' || p.s[p.pos] == '-') {
			p.pos++
		}
		ok, u := p.digits()
		if !ok {
			return false
		}
		float, under = true, under || u
	}
	if !p.valueEnd() {
		return false
	}
	text := p.s[start:p.pos]
	if under {
		text = strings.ReplaceAll(text, "_", "")
	}
	if float {
		if v, ok := exactDecimal(text); ok {
			x.typ, x.f = fastFloat, v
			return true
		}
		v, err := strconv.ParseFloat(text, 64)
		if err != nil {
			return false // out of range: the library words the error
		}
		x.typ, x.f = fastFloat, v
		return true
	}
	v, err := strconv.ParseInt(text, 10, 64)
	if err != nil {
		return false
	}
	x.typ, x.i = fastInt, v
	return true
}

// pow10 are the powers of ten that a float64 holds exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// exactDecimal converts a number written [+-]digits[.digits] with at most
// 15 digits in all (most numbers of a network file) faster than
// strconv.ParseFloat and to the same value: the digits as an integer and
// the power of ten are both exact in a float64, so their quotient is the
// correctly rounded value (Clinger's fast path; W. D. Clinger, "How to
// read floating point numbers accurately", PLDI 1990, §5). Other forms
// report false.
func exactDecimal(s string) (float64, bool) {
	neg := false
	if s != "" && (s[0] == '+' || s[0] == '-') {
		neg = s[0] == '-'
		s = s[1:]
	}
	var mant int64
	digits, frac := 0, -1
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c >= '0' && c <= '9':
			mant = mant*10 + int64(c-'0')
			digits++
			if frac >= 0 {
				frac++
			}
		case c == '.' && frac < 0:
			frac = 0
		default:
			return 0, false
		}
	}
	if digits == 0 || digits > 15 || frac == 0 {
		return 0, false // no digits, too many, or none after the point
	}
	frac = max(frac, 0)
	v := float64(mant) / pow10[frac]
	if neg {
		v = -v
	}
	return v, true
}
