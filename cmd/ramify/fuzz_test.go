package main

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/graphpde/netfile"
)

// FuzzPipeline runs the whole command line on arbitrary network files:
// solve, exit and a short walk (200 walkers, time cap 10, stopped after
// 2 s). Whatever the file, no command may panic, the exit status is 0, 1
// (bad input or a failed computation, with exactly one line on stderr), or
// 130 (stopped), and a successful --json run prints one valid JSON object.
// Files asking for more than 10⁵ grid cells are skipped (they are legal, and
// only slow). CI runs it briefly (.ci/run); the seeds are the examples and
// the files of the reliability issue.
func FuzzPipeline(f *testing.F) {
	paths, _ := filepath.Glob("../../examples/*.toml")
	for _, p := range paths {
		if data, err := os.ReadFile(p); err == nil {
			f.Add(data)
		}
	}
	f.Add([]byte(starFile))
	f.Add([]byte("[[node]]\nid = \"n0\"\nfixed = 1\n[[node]]\nid = \"n1\"\n[[edge]]\nid = \"e1\"\nfrom = \"n1\"\nto = \"n0\"\nlength = 0.1\ndiffusivity = 0.001\ndrift = -0.3\n[[edge]]\nid = \"loop\"\nfrom = \"n1\"\nto = \"n1\"\nlength = 0.1\ndiffusivity = 1\ndrift = 10\n"))
	f.Add([]byte("[[node]]\nid = \"a\"\nfixed = 0\n[[node]]\nid = \"b\"\nfixed = 1\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 5e-324\ndiffusivity = 1\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) > 8<<10 {
			return
		}
		net, err := netfile.Read(bytes.NewReader(data), "fuzz.toml")
		if err == nil {
			cells := 0
			for _, e := range net.Edges {
				cells += e.Cells
			}
			if cells > 100_000 {
				return
			}
		}
		file := filepath.Join(t.TempDir(), "fuzz.toml")
		if err := os.WriteFile(file, data, 0o644); err != nil {
			t.Fatal(err)
		}
		runs := [][]string{{"solve", file, "--json"}, {"solve", file}}
		if err == nil && len(net.Nodes) > 0 {
			from := net.Nodes[0].ID
			runs = append(runs,
				[]string{"exit", file, "--from", from, "--json"},
				[]string{"walk", file, "--from", from, "--particles", "200", "--workers", "1", "--time-cap", "10", "--json"})
		}
		for _, args := range runs {
			ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
			var out, errb bytes.Buffer
			done := make(chan int, 1)
			go func() { done <- run(ctx, args, &out, &errb) }()
			var code int
			select {
			case code = <-done:
			case <-time.After(10 * time.Second):
				t.Fatalf("%v: still running 8 s after it was told to stop", args[0])
			}
			cancel()
			switch code {
			case 0:
				if args[len(args)-1] == "--json" && !json.Valid(out.Bytes()) {
					t.Fatalf("%v: output is not JSON:\n%s", args[0], out.String())
				}
			case 1:
				if lines := strings.Split(strings.TrimRight(errb.String(), "\n"), "\n"); len(lines) != 1 || errb.Len() == 0 {
					t.Fatalf("%v: want one line on stderr, got %q", args[0], errb.String())
				}
			case exitInterrupted:
			default:
				t.Fatalf("%v: exit %d: %s", args[0], code, errb.String())
			}
		}
	})
}
