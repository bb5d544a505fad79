package netfile

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
)

// csvRecords reads every record of data with read and next (and the line
// of each record), stopping at the first error, and describes them.
func csvRecords(data []byte, simple bool) string {
	var b strings.Builder
	var read func() ([]string, error)
	var pos func(int) (int, int)
	if simple {
		r := newRowReader(bytes.NewReader(data))
		read, pos = r.Read, r.FieldPos
	} else {
		cr := csv.NewReader(bytes.NewReader(data))
		cr.Comment, cr.ReuseRecord, cr.TrimLeadingSpace = '#', true, true
		read, pos = cr.Read, cr.FieldPos
	}
	for {
		rec, err := read()
		if err == io.EOF {
			return b.String()
		}
		line := 0
		if len(rec) > 0 {
			line, _ = pos(0)
		}
		fmt.Fprintf(&b, "%d %q", line, rec)
		if err != nil {
			fmt.Fprintf(&b, " error %v", err)
			if !strings.Contains(err.Error(), "wrong number of fields") {
				return b.String()
			}
		}
		b.WriteByte('\n')
	}
}

// csvCases are edge lists and pieces of them for the row reader: simple
// lines, and lines that go to encoding/csv (quotes, fields spanning lines,
// bare quotes, carriage returns, bytes outside ASCII, a wrong field count).
var csvCases = []string{
	"id,from,to\ne,a,b\n",
	"id,from,to\ne,a,b",
	"id, from ,\tto\n\n# comment, \"quoted\" é\ne,  a,b  \n\n",
	"id,from,to\ne,a\n",
	"id,from,to\ne,a,b,c\nf,a,b\n",
	"id,from,to\n\"e\",a,b\nf,a,b\n",
	"id,from,to\n\"e\nx\",a,b\nf,a,b\n",
	"id,from,to\ne\"x,a,b\n",
	"id,from,to\r\ne,a,b\r\n",
	"id,from,to\ne,a\rb,c\n",
	"\ufeffid,from,to\ne,a,b\n",
	"id,from,to\ne,é,b\nf,a,b\n",
	"id,from,to\n,,\n , , \n\v,\f,x\n",
	"#only a comment\n",
	"",
	"\n\n",
	"id\n" + strings.Repeat("x", 70000) + "\ny\n",
}

// TestRowReaderSameAsEncodingCSV: the row reader gives encoding/csv's
// records, errors and lines, on the cases above, on every edge list of the
// test data and on a long chain.
func TestRowReaderSameAsEncodingCSV(t *testing.T) {
	inputs := slices.Clone(csvCases)
	paths, _ := filepath.Glob(filepath.Join(testdata, "*.csv"))
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		inputs = append(inputs, string(data))
	}
	chain, err := io.ReadAll(chainCSV(3000))
	if err != nil {
		t.Fatal(err)
	}
	inputs = append(inputs, string(chain))
	for i, in := range inputs {
		got, want := csvRecords([]byte(in), true), csvRecords([]byte(in), false)
		if got != want {
			t.Errorf("input %d (%.60q): row reader\n%s\nencoding/csv\n%s", i, in, got, want)
		}
	}
}

// readCSVBothWays reads data with the row reader's direct splitting and
// with encoding/csv alone and reports any difference in the network or
// the error.
func readCSVBothWays(t *testing.T, data []byte) {
	t.Helper()
	simpleCSV = false
	want, werr := ReadCSV(bytes.NewReader(data), "f.csv")
	simpleCSV = true
	got, gerr := ReadCSV(bytes.NewReader(data), "f.csv")
	switch {
	case (gerr == nil) != (werr == nil):
		t.Fatalf("direct: %v; encoding/csv: %v", gerr, werr)
	case gerr != nil:
		if gerr.Error() != werr.Error() {
			t.Fatalf("errors differ\ndirect:       %v\nencoding/csv: %v", gerr, werr)
		}
	default:
		if d := diffNetworks(got, want, 0); d != "" {
			t.Fatalf("networks differ: %s", d)
		}
	}
}

// TestCSVPresizeEdgesAfterNodes: an edge list whose node rows all come
// first (as WriteCSV writes them) sizes its edge array from its first edge
// rows, once, instead of growing it by doubling (which would leave up to
// twice the room, and copy it all on the way).
func TestCSVPresizeEdgesAfterNodes(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteCSV(&buf, gen.SquareMesh(40, 40)); err != nil {
		t.Fatal(err)
	}
	net, err := ReadCSV(bytes.NewReader(buf.Bytes()), "mesh.csv")
	if err != nil {
		t.Fatal(err)
	}
	n := len(net.Edges)
	if c := cap(net.Edges); c < n || c > n+n/4 {
		t.Errorf("capacity %d for %d edges, want within 1/4 above", c, n)
	}
	// The node rows are not extrapolated to the whole file (which would
	// reserve room for every row as a node, three times the mesh's
	// nodes): about half the rows as the node rows' bytes extrapolate
	// them (shorter than an edge row's: here 2/3 of the rows; all of them,
	// 1/16 more, before).
	rows := len(net.Nodes) + n
	if c := cap(net.Nodes); c < len(net.Nodes) || c > rows*3/4 {
		t.Errorf("capacity %d for %d nodes (%d rows), want at most 3/4 of the rows", c, len(net.Nodes), rows)
	}
}

// TestRowFieldsNotKept: the fields of a simple line are views of the
// buffered reader's bytes, overwritten when it refills; every id of a
// network read from a file many times the buffer's size (node rows, then
// edge rows naming nodes of the first rows) must still be the one written,
// as encoding/csv's copies give it, and so must the line record.
func TestRowFieldsNotKept(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteCSV(&buf, gen.SquareMesh(120, 120)); err != nil {
		t.Fatal(err)
	}
	if buf.Len() < 8<<16 {
		t.Fatalf("test file of %d bytes is not many buffers", buf.Len())
	}
	read := func(simple bool) (*graphpde.Network, *Lines) {
		simpleCSV = simple
		defer func() { simpleCSV = true }()
		var lines Lines
		net, err := readCSV(bytes.NewReader(buf.Bytes()), "mesh.csv", &Options{Lines: &lines})
		if err != nil {
			t.Fatal(err)
		}
		return net, &lines
	}
	fast, fl := read(true)
	slow, sl := read(false)
	if len(fast.Nodes) != len(slow.Nodes) || len(fast.Edges) != len(slow.Edges) {
		t.Fatalf("%d nodes, %d edges; encoding/csv: %d, %d", len(fast.Nodes), len(fast.Edges), len(slow.Nodes), len(slow.Edges))
	}
	for i := range fast.Nodes {
		if fast.Nodes[i].ID != slow.Nodes[i].ID || fl.Node(fast.Nodes[i].ID) != sl.Node(slow.Nodes[i].ID) {
			t.Fatalf("node %d: %q at line %d; encoding/csv: %q at %d", i, fast.Nodes[i].ID, fl.Node(fast.Nodes[i].ID), slow.Nodes[i].ID, sl.Node(slow.Nodes[i].ID))
		}
	}
	for i := range fast.Edges {
		a, b := &fast.Edges[i], &slow.Edges[i]
		if a.ID != b.ID || a.From != b.From || a.To != b.To || fl.Edge(a.ID) != sl.Edge(b.ID) {
			t.Fatalf("edge %d: %q %d–%d; encoding/csv: %q %d–%d", i, a.ID, a.From, a.To, b.ID, b.From, b.To)
		}
	}
}
