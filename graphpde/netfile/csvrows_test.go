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
	// reserve about three times the mesh's nodes): the nodes grow by
	// appending, which leaves at most 1/4 spare room at this size (Go's
	// growth of large slices, 1.25 ×, and rounding to a size class).
	if c, n := cap(net.Nodes), len(net.Nodes); c > n+n/3 {
		t.Errorf("capacity %d for %d nodes, want at most 1/3 above", c, n)
	}
}
