package netfile

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"
)

// countdown is a context that reports itself cancelled from its n-th look
// on, so that a test stops a reader in the middle without timing.
type countdown struct {
	context.Context
	left atomic.Int64
}

func (c *countdown) Err() error {
	if c.left.Add(-1) < 0 {
		return context.Canceled
	}
	return nil
}

// bigFiles writes a chain of n edges as a network file and as an edge list
// and returns their paths.
func bigFiles(t *testing.T, n int) (tomlPath, csvPath string) {
	var tb, cb strings.Builder
	cb.WriteString("id,from,to,length,diffusivity\n")
	tb.WriteString("[defaults]\ndiffusivity = 1\n\n[[node]]\nid = \"n0\"\nfixed = 0\n")
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&tb, "\n[[node]]\nid = \"n%d\"\n", i)
		fmt.Fprintf(&cb, "e%d,n%d,n%d,1,1\n", i, i-1, i)
	}
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&tb, "\n[[edge]]\nid = \"e%d\"\nfrom = \"n%d\"\nto = \"n%d\"\nlength = 1\n", i, i-1, i)
	}
	dir := t.TempDir()
	tomlPath, csvPath = filepath.Join(dir, "chain.toml"), filepath.Join(dir, "chain.csv")
	if err := os.WriteFile(tomlPath, []byte(tb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(csvPath, []byte(cb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return tomlPath, csvPath
}

// TestReadCancelled checks Options.Context on the two streaming readers: a
// context that runs out at any of its looks stops the reading with an
// *Error naming the file and wrapping context.Canceled, and no network;
// the looks are spread over the tables or rows (several thousand of them,
// so the reader looks at least once per stopEvery), not only at the start
// and end.
func TestReadCancelled(t *testing.T) {
	const n = 5000
	tomlPath, csvPath := bigFiles(t, n)
	for _, path := range []string{tomlPath, csvPath} {
		live := &countdown{Context: context.Background()}
		live.left.Store(1 << 40)
		net, err := ReadFileOptions(path, &Options{Context: live})
		if err != nil || len(net.Edges) != n {
			t.Fatalf("%s with a live context: %v", path, err)
		}
		looks := 1<<40 - live.left.Load()
		if looks < n/stopEvery {
			t.Errorf("%s: %d looks at the context for %d edges, want at least %d", path, looks, n, n/stopEvery)
		}
		for k := int64(0); k < looks; k++ {
			c := &countdown{Context: context.Background()}
			c.left.Store(k)
			net, err := ReadFileOptions(path, &Options{Context: c})
			var fe *Error
			if net != nil || !errors.As(err, &fe) || fe.File != path || !errors.Is(err, context.Canceled) {
				t.Fatalf("%s stopped at look %d of %d: network %v, error %v; want an *Error wrapping context.Canceled", path, k, looks, net != nil, err)
			}
		}
	}
}

// TestReadLines checks Options.Lines: the line of each node's and edge's
// id key in a network file, of each row in an edge list (a node named only
// by edges has none), counted by hand in the files written here.
func TestReadLines(t *testing.T) {
	tomlPath, csvPath := bigFiles(t, 3)
	// chain.toml: [defaults] on lines 1–2, n0 at 5, n1 at 9, n2 at 12,
	// n3 at 15; edges from line 17 on, four lines apiece after a blank.
	var lines Lines
	if _, err := ReadFileOptions(tomlPath, &Options{Lines: &lines}); err != nil {
		t.Fatal(err)
	}
	for id, want := range map[string]int{"n0": 5, "n1": 9, "n2": 12, "n3": 15} {
		if got := lines.Node(id); got != want {
			t.Errorf("toml node %s: line %d, want %d", id, got, want)
		}
	}
	for id, want := range map[string]int{"e1": 18, "e2": 24, "e3": 30} {
		if got := lines.Edge(id); got != want {
			t.Errorf("toml edge %s: line %d, want %d", id, got, want)
		}
	}
	if _, err := ReadFileOptions(csvPath, &Options{Lines: &lines}); err != nil {
		t.Fatal(err)
	}
	for id, want := range map[string]int{"e1": 2, "e2": 3, "e3": 4} {
		if got := lines.Edge(id); got != want {
			t.Errorf("csv edge %s: line %d, want %d", id, got, want)
		}
	}
	if got := lines.Node("n1"); got != 0 {
		t.Errorf("csv node n1 (no row of its own): line %d, want 0", got)
	}
	if got := (*Lines)(nil).Node("n1"); got != 0 {
		t.Errorf("nil Lines: %d", got)
	}
}

// TestReadLinesDOT checks that Options.Lines also records the lines of a
// DOT file (the node's first statement, the edge's statement), counted by
// hand in the file below.
func TestReadLinesDOT(t *testing.T) {
	const src = `// a feeder with a tap
graph feeder {
  edge [diffusivity = 2]
  feed [fixed = 1]
  feed -- mid [length = 3, id = run]
  tap [leak = 0.25]
  mid -- tap [length = 1, id = drop]
}
`
	path := filepath.Join(t.TempDir(), "feeder.dot")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	var lines Lines
	if _, err := ReadFileOptions(path, &Options{Lines: &lines}); err != nil {
		t.Fatal(err)
	}
	for id, want := range map[string]int{"feed": 4, "mid": 5, "tap": 6} {
		if got := lines.Node(id); got != want {
			t.Errorf("node %s: line %d, want %d", id, got, want)
		}
	}
	for id, want := range map[string]int{"run": 5, "drop": 7} {
		if got := lines.Edge(id); got != want {
			t.Errorf("edge %s: line %d, want %d", id, got, want)
		}
	}
}
