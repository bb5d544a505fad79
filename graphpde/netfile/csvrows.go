package netfile

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"io"
	"slices"
	"unsafe"
)

// rowReader reads the records of an edge list as an encoding/csv Reader
// set up by readCSV would (comma, '#' comments, leading spaces trimmed,
// records reused, the field count fixed by the first record), and gives
// the same records, errors and lines. Simple lines (ASCII, no quote, no
// carriage return; most lines of most edge lists) it splits on the commas
// itself, at a fraction of encoding/csv's cost; at the first other line
// it hands that line and the rest of the input to an encoding/csv Reader,
// which reads on from there (quoted fields, which may span lines, and
// everything else it defines). TestRowReaderSameAsEncodingCSV and
// FuzzReadCSV compare the two.
type rowReader struct {
	br     *bufio.Reader
	rec    []string
	fields int   // the field count of every record, once the first is read
	line   int   // line of the last record read
	next   int   // line of the next line to read
	offset int64 // bytes read so far

	cr      *csv.Reader // once a line was not simple
	lineOff int         // lines before the csv.Reader's first
	offOff  int64       // bytes before it
}

// simpleCSV switches the direct splitting of simple lines (tests compare
// it with encoding/csv).
var simpleCSV = true

func newRowReader(r io.Reader) *rowReader {
	rr := &rowReader{br: bufio.NewReaderSize(r, 1<<16), next: 1}
	if !simpleCSV {
		rr.handOver(nil)
	}
	return rr
}

// handOver makes an encoding/csv Reader read on from line (the start of
// the next line, already taken from the buffered reader).
func (r *rowReader) handOver(line []byte) {
	cr := csv.NewReader(io.MultiReader(bytes.NewReader(slices.Clone(line)), r.br))
	cr.Comment = '#'
	cr.ReuseRecord = true
	cr.TrimLeadingSpace = true
	cr.FieldsPerRecord = r.fields
	r.cr, r.lineOff, r.offOff = cr, r.next-1, r.offset
}

// Read returns the next record, valid until the next call: its slice, as
// csv.Reader.Read's with ReuseRecord, and here its strings too.
func (r *rowReader) Read() ([]string, error) {
	if r.cr != nil {
		return r.readCSV()
	}
	for {
		line, err := r.br.ReadSlice('\n')
		switch {
		case err == io.EOF && len(line) == 0:
			return nil, io.EOF
		case err != nil && err != io.EOF:
			if err == bufio.ErrBufferFull {
				// A line longer than the buffer: encoding/csv reads it.
				r.handOver(line)
				return r.readCSV()
			}
			return nil, err
		}
		content := line
		if n := len(content); n > 0 && content[n-1] == '\n' {
			content = content[:n-1]
		}
		switch {
		case len(content) == 0 && len(line) > 0 || len(content) > 0 && content[0] == '#':
			// An empty line or a comment: skipped, as encoding/csv skips them.
			r.next++
			r.offset += int64(len(line))
			continue
		case !simpleCSVLine(content):
			r.handOver(line)
			return r.readCSV()
		}
		r.line = r.next
		r.next++
		r.offset += int64(len(line))
		// The fields are views of the buffered reader's bytes, valid until
		// the next Read (encoding/csv copies each record into a new
		// string): the reader keeps none of them past its row (ids and
		// every string it stores are cloned; errors quote them), which
		// TestRowFieldsNotKept checks over many refills of the buffer.
		r.split(unsafe.String(unsafe.SliceData(content), len(content)))
		if r.fields == 0 {
			r.fields = len(r.rec)
		} else if len(r.rec) != r.fields {
			return r.rec, &csv.ParseError{StartLine: r.line, Line: r.line, Column: 1, Err: csv.ErrFieldCount}
		}
		return r.rec, nil
	}
}

// readCSV reads a record with the encoding/csv Reader, its lines counted
// from the start of the input.
func (r *rowReader) readCSV() ([]string, error) {
	rec, err := r.cr.Read()
	if r.fields == 0 {
		r.fields = r.cr.FieldsPerRecord
	}
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		e := *pe
		e.StartLine += r.lineOff
		e.Line += r.lineOff
		err = &e
	}
	return rec, err
}

// simpleCSVLine reports whether a line (without its '\n') holds only
// ASCII other than quotes and carriage returns.
func simpleCSVLine(b []byte) bool {
	for _, c := range b {
		if c >= 0x80 || c == '"' || c == '\r' {
			return false
		}
	}
	return true
}

// split splits a simple line at its commas into r.rec, trimming the
// spaces (unicode.IsSpace, which in ASCII here is ' ', '\t', '\v' and
// '\f') that lead each field.
func (r *rowReader) split(s string) {
	r.rec = r.rec[:0]
	for {
		i := 0
		for i < len(s) && (s[i] == ' ' || s[i] == '\t' || s[i] == '\v' || s[i] == '\f') {
			i++
		}
		s = s[i:]
		j := 0
		for j < len(s) && s[j] != ',' {
			j++
		}
		r.rec = append(r.rec, s[:j])
		if j == len(s) {
			return
		}
		s = s[j+1:]
	}
}

// FieldPos returns the line of field i of the last record read (and, once
// encoding/csv reads, its column; 0 before).
func (r *rowReader) FieldPos(i int) (line, column int) {
	if r.cr != nil {
		line, column = r.cr.FieldPos(i)
		return line + r.lineOff, column
	}
	return r.line, 0
}

// InputOffset returns the bytes of input read so far.
func (r *rowReader) InputOffset() int64 {
	if r.cr != nil {
		return r.offOff + r.cr.InputOffset()
	}
	return r.offset
}

// FieldsPerRecord returns the field count that every record must have (0
// before the first record).
func (r *rowReader) FieldsPerRecord() int { return r.fields }
