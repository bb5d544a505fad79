package main

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestFlagErrors checks that every command-line error prints one line that
// names the problem and points to the command's help, and exits 2.
func TestFlagErrors(t *testing.T) {
	fork := "../../examples/fork.toml"
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"float particles", []string{"walk", fork, "--from", "fork", "--particles", "1.5"}, "whole number"},
		{"huge particles", []string{"walk", fork, "--from", "fork", "--particles", "1e30"}, "out of range"},
		{"times not numbers", []string{"exit", fork, "--from", "fork", "--times", "abc"}, `"abc"`},
		{"negative seed", []string{"walk", fork, "--from", "fork", "--seed", "-1"}, "--seed"},
		{"unknown flag", []string{"solve", fork, "--bogus"}, "--bogus"},
		{"bool flag value", []string{"solve", fork, "--json=maybe"}, "maybe"},
		{"flag of another command", []string{"demo", "--json"}, "--json"},
		{"no file", []string{"solve"}, "network file"},
		{"two files", []string{"solve", fork, fork}, "2 arguments"},
		{"no start", []string{"walk", fork}, "--from"},
		{"negative time cap", []string{"walk", fork, "--from", "fork", "--time-cap", "-1"}, "--time-cap"},
		{"negative step", []string{"crosscheck", fork, "--from", "fork", "--step", "-1"}, "--step"},
		{"star fraction above 1", []string{"walk", fork, "--from", "fork", "--star-fraction", "2"}, "--star-fraction"},
		{"zero particles", []string{"walk", fork, "--from", "fork", "--particles", "0"}, "--particles 0"},
		{"bad method", []string{"exit", fork, "--from", "fork", "--method", "magic"}, "magic"},
		{"bad level", []string{"crosscheck", fork, "--from", "fork", "--level", "2"}, "level"},
		{"unknown command", []string{"frobnicate"}, "frobnicate"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, out, errs := runCLI(t, context.Background(), c.args...)
			if code != exitUsage {
				t.Errorf("exit %d, want %d", code, exitUsage)
			}
			if out != "" {
				t.Errorf("printed on stdout: %q", out)
			}
			lines := strings.Split(strings.TrimRight(errs, "\n"), "\n")
			if len(lines) != 1 || errs == "" {
				t.Errorf("want one line on stderr, got %d:\n%s", len(lines), errs)
			}
			if !strings.Contains(errs, c.want) || !strings.Contains(errs, "help") {
				t.Errorf("stderr %q does not name %s and point to the help", errs, c.want)
			}
		})
	}
}

// TestParticlesAsFloat checks that --particles takes 2e4 as 20000.
func TestParticlesAsFloat(t *testing.T) {
	code, out, errs := runCLI(t, context.Background(), "walk", "../../examples/fork.toml", "--from", "fork", "--particles", "2e4", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, `"particles": 20000`) {
		t.Errorf("2e4 not read as 20000:\n%s", out)
	}
}

// failWriter fails every write, like a full disk.
type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errors.New("no space left on device") }

// TestStdoutWriteError checks that lost output is an error in text and in
// JSON mode (`ramify solve … > /dev/full` used to exit 0).
func TestStdoutWriteError(t *testing.T) {
	for _, args := range [][]string{
		{"solve", "../../examples/fork.toml"},
		{"solve", "../../examples/fork.toml", "--json"},
		{"exit", "../../examples/fork.toml", "--from", "fork"},
		{"walk", "../../examples/fork.toml", "--from", "fork", "--particles", "1000"},
	} {
		var errb bytes.Buffer
		code := run(context.Background(), args, failWriter{}, &errb)
		if code == 0 {
			t.Errorf("%v: exit 0 although nothing could be written", args)
		}
		if !strings.Contains(errb.String(), "no space left") {
			t.Errorf("%v: stderr does not say why: %q", args, errb.String())
		}
	}
}

// TestOutputFiles checks the output file rules: an input file is never
// overwritten (by name, through a symlink or a hard link), a missing
// directory is reported before computing, a file is replaced whole through
// a temporary file (a symlink at the target is replaced, its target left
// alone), and stderr says what was written.
func TestOutputFiles(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "in.toml")
	src := mustRead(t, "../../examples/fork.toml")
	if err := os.WriteFile(in, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.csv")
	if err := os.Symlink(in, link); err != nil {
		t.Fatal(err)
	}
	hard := filepath.Join(dir, "hard.csv")
	if err := os.Link(in, hard); err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	for _, args := range [][]string{
		{"solve", in, "--field", in},
		{"solve", in, "--field", link},
		{"solve", in, "--field", hard},
		{"walk", in, "--from", "fork", "--samples", in},
		{"crosscheck", in, "--from", "fork", "--samples", link},
		{"crosscheck", in, "--from", "fork", "--plot", in},
	} {
		code, _, errs := runCLI(t, ctx, args...)
		if code != exitUsage || !strings.Contains(errs, "never overwrites its input") {
			t.Errorf("%v: exit %d, %q; want a refusal", args, code, errs)
		}
	}
	if got := mustRead(t, in); got != src {
		t.Fatalf("the input file was changed")
	}

	// A missing directory is reported before the walkers run: 10¹⁵ walkers
	// would take years.
	code, _, errs := runCLI(t, ctx, "walk", in, "--from", "fork", "--particles", "1e15", "--samples", filepath.Join(dir, "nodir", "s.csv"))
	if code != exitUsage || !strings.Contains(errs, "no such directory") {
		t.Errorf("missing directory: exit %d, %q", code, errs)
	}

	// Replacing: a symlink at the target is replaced by the new file.
	other := filepath.Join(dir, "other.txt")
	if err := os.WriteFile(other, []byte("keep me"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "field.csv")
	if err := os.Symlink(other, out); err != nil {
		t.Fatal(err)
	}
	code, _, errs = runCLI(t, ctx, "solve", in, "--field", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(errs, "replaced "+out) {
		t.Errorf("stderr does not say what was written: %q", errs)
	}
	if got := mustRead(t, other); got != "keep me" {
		t.Errorf("the symlink's target was overwritten")
	}
	if st, err := os.Lstat(out); err != nil || !st.Mode().IsRegular() {
		t.Errorf("the field file is not a regular file: %v %v", st, err)
	} else if !strings.HasPrefix(mustRead(t, out), "edge,x,u\n") {
		t.Errorf("field file has no header")
	}
	ents, _ := os.ReadDir(dir)
	for _, e := range ents {
		if strings.HasPrefix(e.Name(), ".") {
			t.Errorf("temporary file left behind: %s", e.Name())
		}
	}
}
