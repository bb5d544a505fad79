package main

import (
	"io"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// csvRows writes CSV rows of ids and numbers as encoding/csv's Writer
// writes them (comma, "\n" line ends, quotes where it would put them),
// byte for byte, but formatting every number with strconv.AppendFloat
// into one reused buffer: no string per number, no slice per row. It is
// meant for long outputs (the field along every edge, snapshots of it in
// time) written into a buffered writer. The first error sticks.
type csvRows struct {
	w     io.Writer
	b     []byte
	start bool // at the start of a row
	err   error
}

func newCSVRows(w io.Writer) *csvRows {
	return &csvRows{w: w, b: make([]byte, 0, 1<<15), start: true}
}

func (c *csvRows) sep() {
	if !c.start {
		c.b = append(c.b, ',')
	}
	c.start = false
}

// str appends a text field, quoted when encoding/csv would quote it.
func (c *csvRows) str(s string) {
	c.sep()
	c.b = appendCSVField(c.b, s)
}

// raw appends a field formatted by appendCSVField.
func (c *csvRows) raw(f []byte) {
	c.sep()
	c.b = append(c.b, f...)
}

// appendCSVField appends s as a CSV field, quoted when encoding/csv would
// quote it.
func appendCSVField(b []byte, s string) []byte {
	if !csvNeedsQuotes(s) {
		return append(b, s...)
	}
	b = append(b, '"')
	b = append(b, strings.ReplaceAll(s, `"`, `""`)...)
	return append(b, '"')
}

// num appends a number in strconv's 'g' format with the given digits.
func (c *csvRows) num(v float64, digits int) {
	c.sep()
	c.b = strconv.AppendFloat(c.b, v, 'g', digits, 64)
}

// end ends the row, writing the buffer out when it is nearly full.
func (c *csvRows) end() {
	c.b = append(c.b, '\n')
	c.start = true
	if len(c.b) > cap(c.b)-256 {
		c.flush()
	}
}

// flush writes out what is buffered and returns the first error.
func (c *csvRows) flush() error {
	if c.err == nil && len(c.b) > 0 {
		_, c.err = c.w.Write(c.b)
	}
	c.b = c.b[:0]
	return c.err
}

// csvNeedsQuotes is encoding/csv's rule for the comma delimiter: a field
// is quoted if it holds the delimiter, a quote or a line break, begins with
// a space, or is `\.`; the empty field is not.
func csvNeedsQuotes(s string) bool {
	if s == "" {
		return false
	}
	if s == `\.` || strings.ContainsAny(s, ",\"\r\n") {
		return true
	}
	r, _ := utf8.DecodeRuneInString(s)
	return unicode.IsSpace(r)
}
