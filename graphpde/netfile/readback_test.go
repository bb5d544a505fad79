package netfile

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde/gen"
)

// A file (or text in memory) is scanned a chunk at a time and its tables
// read back from it (prescanReader, text.view); a pipe is read whole and
// scanned at once (prescan). These tests check that the two ways find the
// same layout and head, and read the same network or error, for chunks
// so small that every string, comment and header falls across their ends.

// wholeHeadText is the head text computed from the whole text, as Read did
// before the text was read back in pieces (oracle for headText).
func wholeHeadText(src string, lay *layout) string {
	var b strings.Builder
	at, run := 0, 0
	put := func(end int) {
		b.WriteString(strings.Repeat("\n", strings.Count(src[run:at], "\n")))
		b.WriteString(src[at:end])
		run = end
	}
	for n, e := 0, 0; n < len(lay.nodes) || e < len(lay.edges); {
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

// readBackChunks are the chunk sizes the comparison scans with.
var readBackChunks = []int{1, 2, 3, 4, 5, 7, 16, 64 << 10}

// readBackSame checks that scanning src a chunk at a time finds what
// scanning it whole finds (sections, text outside them, whether it is
// simple, or the error), that the head text is the one cut from the whole
// text, and that reading it back from memory gives the network, or the
// error, of reading it whole.
func readBackSame(t *testing.T, src []byte) {
	t.Helper()
	want, werr := prescan(string(src), "f.toml")
	if werr == nil {
		head, err := headText(&text{s: string(src)}, want)
		if err != nil || head != wholeHeadText(string(src), want) {
			t.Fatalf("head text %q (%v), want %q\n%s", head, err, wholeHeadText(string(src), want), src)
		}
	}
	defer func(c int) { prescanChunk = c }(prescanChunk)
	for _, c := range readBackChunks {
		prescanChunk = c
		got, gerr := prescanReader(bytes.NewReader(src), int64(len(src)), "f.toml", nil)
		if fmt.Sprint(gerr) != fmt.Sprint(werr) {
			t.Fatalf("chunks of %d: error %v, want %v\n%s", c, gerr, werr, src)
		}
		if werr == nil && !reflect.DeepEqual(got, want) {
			t.Fatalf("chunks of %d: layout %#v, want %#v\n%s", c, got, want, src)
		}
	}
	prescanChunk = 5
	net, err := Read(bytes.NewReader(src), "f.toml")
	readBack = false
	wnet, werr2 := Read(bytes.NewReader(src), "f.toml")
	readBack = true
	switch {
	case fmt.Sprint(err) != fmt.Sprint(werr2):
		t.Fatalf("read back: %v; whole: %v\n%s", err, werr2, src)
	case err == nil:
		if d := diffNetworks(net, wnet, 0); d != "" {
			t.Fatalf("networks differ: %s\n%s", d, src)
		}
	}
}

// TestReadBackSameAsWhole runs readBackSame on every network file of the
// project, a generated mesh of many batches, the odd forms of the direct
// reading's tests, early and late, and texts made to end chunks inside
// strings, comments, headers and a byte-order mark.
func TestReadBackSameAsWhole(t *testing.T) {
	var paths []string
	for _, dir := range []string{testdata, "../../examples"} {
		p, err := filepath.Glob(filepath.Join(dir, "*.toml"))
		if err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p...)
	}
	if len(paths) < 10 {
		t.Fatalf("found only %d network files", len(paths))
	}
	for _, p := range paths {
		src, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		t.Run(filepath.Base(p), func(t *testing.T) { readBackSame(t, src) })
	}
	var buf bytes.Buffer
	if err := Write(&buf, gen.SquareMesh(12, 12)); err != nil {
		t.Fatal(err)
	}
	t.Run("mesh", func(t *testing.T) { readBackSame(t, buf.Bytes()) })
	odd := []string{
		"", "length = 3\n", "source = \"1\\q\"\n", "weights = [\n1,\n2]\n", "# [[node]]\n",
		"source = \"\"\"\n[[node]]\nid = 'zz'\n\"\"\"\n", "source = '''\n[[edge]]\n''''\n",
		"source = \"1\n", "\ufeff\n", "[defaults]\ncells = 4\n", "[network]\nname = \"y\"\n",
		"[node.split]\nx = 1\n", "x = [[[[[1]]]]]\n", "s = \"\"\"a\\\n[[node]]\"\"\"\"\"\n",
		"  [[node]]  # indented\nid = \"late\"\n", "[[edge]]", "# no line break at the end",
	}
	for i, o := range odd {
		for _, crlf := range []bool{false, true} {
			src := bigFile(40, 35, o)
			if crlf {
				src = strings.ReplaceAll(src, "\n", "\r\n")
			}
			t.Run(fmt.Sprintf("late%d-crlf%v", i, crlf), func(t *testing.T) { readBackSame(t, []byte(src)) })
			t.Run(fmt.Sprintf("head%d", i), func(t *testing.T) { readBackSame(t, []byte(o+src)) })
			t.Run(fmt.Sprintf("tail%d", i), func(t *testing.T) { readBackSame(t, []byte(src+o)) })
		}
	}
	for i, s := range []string{
		"\ufeff[[node]]\nid = \"a\"\nfixed = 1\n",
		"\ufeff# c\n[[node]]\nid = \"a\"\nfixed = 1\n[network]\nname = \"n\"\n",
		"[network]\nname = \"n\" # [[edge]]\n[[node]]\nid = \"a\"\nfixed = 1\n\n\n[parameters]\nk = 1\n\n[[node]]\nid = \"b\"\n",
		"[[node]]\nid = \"a\"\nfixed = 1\nx = \"\"\"\n\"\"\"\n[[edge]]\nid = 'e'\nfrom = 'a'\nto = 'a'\n",
		"[[node]]\nid = \"a\"\nfixed = 1\nxy = [1, {a = [2]}]\n",
		"[[node]]\nid = \"a\"\nfixed = 1\nxy = [1, {a = [[[2]]]}]\n",
		"[[node]]\r\nid = \"a\"\r\nfixed = 1\r\n",
		"'", "\"\"", "\"\"\"", "[", "[[node", "#",
	} {
		t.Run(fmt.Sprintf("small%d", i), func(t *testing.T) { readBackSame(t, []byte(s)) })
	}
}

// shortReaderAt is a file cut short after it was scanned: it has only the
// first n bytes of its text.
type shortReaderAt struct {
	s string
	n int
}

func (r shortReaderAt) ReadAt(p []byte, off int64) (int, error) {
	return strings.NewReader(r.s[:r.n]).ReadAt(p, off)
}

// TestReadBackCutShort: a file that shrinks between the scan and the
// reading of its tables gives a one-line *Error saying it cannot be read,
// not a panic or a network of part of it.
func TestReadBackCutShort(t *testing.T) {
	src := bigFile(2000, 0, "")
	lay, err := prescan(src, "f.toml")
	if err != nil {
		t.Fatal(err)
	}
	for _, n := range []int{10, len(src) / 2, len(src) - 3} {
		net, done, err := readSections(&text{r: shortReaderAt{src, n}, file: "f.toml"}, "f.toml", nil, lay)
		var fe *Error
		if !done || net != nil || !errors.As(err, &fe) || !strings.Contains(err.Error(), "cannot read") || !errors.Is(err, io.ErrUnexpectedEOF) {
			t.Errorf("cut at %d: done %v, network %v, error %v; want a cannot-read error", n, done, net != nil, err)
		}
	}
}

// TestReadFileFromOffset: a file handed to Read after some of it was read
// (its offset moved) is read from there, as a pipe would be.
func TestReadFileFromOffset(t *testing.T) {
	junk := "this line was read by someone else\n"
	src := bigFile(300, 0, "")
	path := filepath.Join(t.TempDir(), "f.toml")
	if err := os.WriteFile(path, []byte(junk+src), 0o600); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := f.Seek(int64(len(junk)), io.SeekStart); err != nil {
		t.Fatal(err)
	}
	got, err := Read(f, "f.toml")
	if err != nil {
		t.Fatal(err)
	}
	want, err := Read(strings.NewReader(src), "f.toml")
	if err != nil {
		t.Fatal(err)
	}
	if d := diffNetworks(got, want, 0); d != "" {
		t.Errorf("networks differ: %s", d)
	}
	if ra, _ := readerAt(f); ra == nil {
		t.Errorf("a regular file is not read back in pieces")
	}
}
