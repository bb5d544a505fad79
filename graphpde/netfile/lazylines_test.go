package netfile

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde/gen"
)

// bigChain returns a chain of n edges as a network file (written by
// Write), long enough that its [[node]] and [[edge]] tables are decoded in
// many batches, so that lines asked for late belong to batches long gone.
func bigChain(t *testing.T, n int) string {
	t.Helper()
	var buf bytes.Buffer
	if err := Write(&buf, gen.Chain(n)); err != nil {
		t.Fatal(err)
	}
	if buf.Len() < 4*batchBytes {
		t.Fatalf("test file of %d bytes is not several batches", buf.Len())
	}
	return buf.String()
}

// idLines finds, by plain text search, the line of the id key of every
// [[node]] and [[edge]] table of a file as Write lays it out (the
// independent answer the reader's lazily found lines must match).
func idLines(t *testing.T, src string) (nodes, edges map[string]int) {
	t.Helper()
	nodes, edges = map[string]int{}, map[string]int{}
	var cur map[string]int
	sc := bufio.NewScanner(strings.NewReader(src))
	for ln := 1; sc.Scan(); ln++ {
		s := strings.TrimSpace(sc.Text())
		switch {
		case s == "[[node]]":
			cur = nodes
		case s == "[[edge]]":
			cur = edges
		case strings.HasPrefix(s, "["):
			cur = nil
		case cur != nil && strings.HasPrefix(s, "id = "):
			var id string
			if _, err := fmt.Sscanf(strings.TrimPrefix(s, "id = "), "%q", &id); err != nil {
				t.Fatalf("line %d: %v", ln, err)
			}
			cur[id] = ln
		}
	}
	return nodes, edges
}

// TestLazyLinesRecord: the line record of a many-batch file, whose lines
// are looked up only when asked for (here in the order of the ids in a
// map, so batches are rescanned out of order), is the line of every id
// key, read table by table and whole; an unknown id has line 0.
func TestLazyLinesRecord(t *testing.T) {
	src := bigChain(t, 3000)
	wantN, wantE := idLines(t, src)
	for _, whole := range []bool{false, true} {
		decodeWhole = whole
		var lines Lines
		_, err := readTOML(strings.NewReader(src), "chain.toml", &Options{Lines: &lines})
		decodeWhole = false
		if err != nil {
			t.Fatal(err)
		}
		if len(wantN) != 3001 || len(wantE) != 3000 {
			t.Fatalf("text search found %d nodes, %d edges", len(wantN), len(wantE))
		}
		// Every 10th id: each lookup out of order rescans a batch.
		k := 0
		for id, ln := range wantN {
			if k++; k%10 != 0 {
				continue
			}
			if got := lines.Node(id); got != ln {
				t.Fatalf("whole=%v: node %q at line %d, want %d", whole, id, got, ln)
			}
		}
		for id, ln := range wantE {
			if k++; k%10 != 0 {
				continue
			}
			if got := lines.Edge(id); got != ln {
				t.Fatalf("whole=%v: edge %q at line %d, want %d", whole, id, got, ln)
			}
		}
		if got := lines.Node("nowhere"); got != 0 {
			t.Fatalf("whole=%v: unknown node at line %d", whole, got)
		}
	}
}

// TestLazyLinesLateErrors: errors found after the batch of the table they
// name has been dropped still carry that table's exact line.
func TestLazyLinesLateErrors(t *testing.T) {
	src := bigChain(t, 3000)
	nodes, edges := idLines(t, src)
	lines := strings.Count(src, "\n")
	firstEdge, firstNode := "", ""
	for id, ln := range edges {
		if firstEdge == "" || ln < edges[firstEdge] {
			firstEdge = id
		}
	}
	for id, ln := range nodes {
		if firstNode == "" || ln < nodes[firstNode] {
			firstNode = id
		}
	}
	cases := []struct {
		name, add string
		line      int    // of the error
		msg       string // in the error
	}{
		// The duplicate is met in the last batch; the first use is in the first.
		{"duplicate edge id", fmt.Sprintf("[[edge]]\nid = %q\nfrom = %q\nto = %q\nlength = 1.0\n", firstEdge, firstNode, firstNode),
			lines + 2, fmt.Sprintf("duplicate id (first used at line %d)", edges[firstEdge])},
		{"duplicate node id", fmt.Sprintf("[[node]]\nid = %q\n", firstNode),
			lines + 2, fmt.Sprintf("duplicate id (first used at line %d)", nodes[firstNode])},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			for _, whole := range []bool{false, true} {
				decodeWhole = whole
				_, err := Read(strings.NewReader(src+c.add), "chain.toml")
				decodeWhole = false
				var e *Error
				if !errors.As(err, &e) {
					t.Fatalf("whole=%v: error %v, want an *Error", whole, err)
				}
				if e.Line != c.line || !strings.Contains(e.Msg, c.msg) {
					t.Fatalf("whole=%v: %v; want line %d and %q", whole, err, c.line, c.msg)
				}
			}
		})
	}
}

// TestLinesRecordKeepsNoText: the line record of a network file holds the
// lines (four bytes per node and edge) and the network, not the file's
// text: after reading a file of many batches from disk, what the network
// and its record hold together exceeds the network alone by far less than
// the file's size (a record that kept the text would add all of it), and
// the record still gives every line.
func TestLinesRecordKeepsNoText(t *testing.T) {
	src := bigChain(t, 3000)
	wantN, wantE := idLines(t, src)
	path := filepath.Join(t.TempDir(), "chain.toml")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	src = "" // the test's own copy is not counted
	live := func() float64 {
		runtime.GC()
		s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
		metrics.Read(s)
		return float64(s[0].Value.Uint64())
	}
	base := live()
	net, err := ReadFileOptions(path, nil)
	if err != nil {
		t.Fatal(err)
	}
	alone := live() - base
	runtime.KeepAlive(net)
	net = nil
	base = live()
	var lines Lines
	net, err = ReadFileOptions(path, &Options{Lines: &lines})
	if err != nil {
		t.Fatal(err)
	}
	withLines := live() - base
	st, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	size := float64(st.Size())
	// 6001 lines of 4 bytes are 0.04 of this file; a quarter leaves room
	// for the runtime's own allocations between the two measurements.
	if extra := withLines - alone; extra > size/4 {
		t.Errorf("the line record adds %.0f bytes to the network's %.0f: more than a quarter of the file's %.0f (its text kept?)", extra, alone, size)
	}
	for id, ln := range wantN {
		if got := lines.Node(id); got != ln {
			t.Fatalf("node %q at line %d, want %d", id, got, ln)
		}
	}
	for id, ln := range wantE {
		if got := lines.Edge(id); got != ln {
			t.Fatalf("edge %q at line %d, want %d", id, got, ln)
		}
	}
	runtime.KeepAlive(net)
}
