package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// leakyDrift has a leaky node with capacity and an edge with drift and a
// diffusivity that varies along it (time-stepping), so that a run has
// killed walkers, steps of every kind, and, at a short time cap, censored
// ones.
const leakyDrift = `[[node]]
id = "hub"
leak = 0.2
capacity = 0.3

[[node]]
id = "a"
fixed = 1

[[node]]
id = "b"
fixed = 0

[[edge]]
id = "ha"
from = "hub"
to = "a"
length = 1
diffusivity = "1 + 0.5*x"
drift = 0.4

[[edge]]
id = "hb"
from = "hub"
to = "b"
length = 0.8
diffusivity = 0.5
`

// TestShardsInProcesses runs walks split into parts, each in its own
// process of the built binary, merges the parts with ramify merge, and
// requires the merged JSON to equal the unsharded run's with the same seed,
// every field but the elapsed seconds, as text (the same digits). The cases
// cover an exact walk, a time-stepping one with killing, one with censored
// walkers (bounds, null estimates and quantiles beyond the cap), and more
// parts than blocks (empty parts).
func TestShardsInProcesses(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "ramify")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	ramify := func(args ...string) ([]byte, string, error) {
		var out, errb bytes.Buffer
		cmd := exec.Command(bin, args...)
		cmd.Stdout, cmd.Stderr = &out, &errb
		err := cmd.Run()
		return out.Bytes(), errb.String(), err
	}
	drift := writeFile(t, "drift.toml", leakyDrift)
	fork := filepath.Join("..", "..", "examples", "fork.toml")
	for _, c := range []struct {
		name  string
		args  []string
		parts int
	}{
		{"exact", []string{"walk", fork, "--from", "fork", "--particles", "30000", "--seed", "9"}, 3},
		{"time stepping", []string{"walk", drift, "--from", "ha@0.3", "--particles", "5000", "--seed", "4", "--step", "0.005"}, 2},
		{"censored", []string{"walk", drift, "--from", "hub", "--particles", "9000", "--seed", "4", "--step", "0.002", "--time-cap", "0.3"}, 2},
		{"empty parts", []string{"walk", fork, "--from", "fork", "--particles", "5000", "--seed", "2"}, 4},
	} {
		t.Run(c.name, func(t *testing.T) {
			// A sharded walk makes no bias pass; the unsharded run is
			// compared without one too.
			whole, stderr, err := ramify(append(c.args, "--json", "--bias-pass=false")...)
			if err != nil {
				t.Fatalf("unsharded: %v: %s", err, stderr)
			}
			var files []string
			for i := c.parts; i >= 1; i-- {
				out, stderr, err := ramify(append(c.args, "--json", "--shard", fmt.Sprintf("%d/%d", i, c.parts))...)
				if err != nil {
					t.Fatalf("part %d: %v: %s", i, err, stderr)
				}
				f := filepath.Join(t.TempDir(), fmt.Sprintf("part%d.json", i))
				if err := os.WriteFile(f, out, 0o644); err != nil {
					t.Fatal(err)
				}
				files = append(files, f)
			}
			merged, stderr, err := ramify(append([]string{"merge", "--json"}, files...)...)
			if err != nil {
				t.Fatalf("merge: %v: %s", err, stderr)
			}
			a, b := withoutSeconds(t, whole), withoutSeconds(t, merged)
			if a != b {
				t.Errorf("merged differs from the unsharded run:\n%s\n%s", b, a)
			}
			if c.name == "censored" && strings.Contains(a, `"censored": 0,`) {
				t.Errorf("the censored case has no censored walker: %s", a)
			}
		})
	}

	// Refusals: each a one-line error and exit status 1 (2 for flags).
	walk := []string{"walk", drift, "--from", "hub", "--particles", "2000", "--step", "0.01"}
	base := slices.Concat(walk, []string{"--seed", "3", "--json"})
	part := func(name string, args ...string) string {
		out, stderr, err := ramify(args...)
		if err != nil {
			t.Fatalf("%s: %v: %s", name, err, stderr)
		}
		f := filepath.Join(dir, name+".json")
		os.WriteFile(f, out, 0o644)
		return f
	}
	p1 := part("p1", slices.Concat(base, []string{"--shard", "1/2"})...)
	p2 := part("p2", slices.Concat(base, []string{"--shard", "2/2"})...)
	other := writeFile(t, "other.toml", strings.Replace(leakyDrift, "leak = 0.2", "leak = 0.25", 1))
	q2 := part("q2", "walk", other, "--from", "hub", "--particles", "2000", "--step", "0.01", "--seed", "3", "--json", "--shard", "2/2")
	s2 := part("s2", slices.Concat(walk, []string{"--seed", "4", "--json", "--shard", "2/2"})...)
	t2 := part("t2", slices.Concat(base, []string{"--shard", "2/2", "--step", "0.02"})...)
	whole := part("whole", base...)
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"merge", p1}, 1, "part 2 of 2 missing"},
		{[]string{"merge", p1, p2, p2}, 1, p2 + " and " + p2 + " are both part 2/2"}, // naming the files
		{[]string{"merge", p1, q2}, 1, "network files differ"},
		{[]string{"merge", p1, s2}, 1, "--seed 3 and 4"},
		{[]string{"merge", p1, t2}, 1, "--step 0.01 and 0.02"},
		{[]string{"merge", p1, whole}, 1, "not a part of a sharded walk"},
		{[]string{"merge", p1, drift}, 1, "not JSON"},
		{[]string{"merge"}, 2, "need the part files"},
		{slices.Concat(walk, []string{"--shard", "1/2"}), 2, "needs --json"},
		{slices.Concat(base, []string{"--shard", "3/2"}), 2, "1 ≤ I ≤ N"},
	} {
		_, stderr, err := ramify(c.args...)
		code := 0
		if ee, ok := err.(*exec.ExitError); ok {
			code = ee.ExitCode()
		}
		if code != c.code || !strings.Contains(stderr, c.want) || strings.Count(stderr, "\n") != 1 {
			t.Errorf("%v: exit %d, stderr %q; want exit %d and one line containing %q", c.args[1:], code, stderr, c.code, c.want)
		}
	}
}

// withoutSeconds returns the JSON of a walk without its elapsed seconds,
// indented the same way.
func withoutSeconds(t *testing.T, b []byte) string {
	t.Helper()
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	delete(m, "seconds")
	out, _ := json.MarshalIndent(m, "", " ")
	return string(out)
}

// TestVecRoundTrip checks that the part files' vectors come back bit for
// bit, dense and sparse, with negative zero, infinities and NaN.
func TestVecRoundTrip(t *testing.T) {
	nan := math.NaN()
	sparse := make(vec, 1000)
	sparse[3], sparse[500], sparse[999] = 1.5, math.Copysign(0, -1), math.Inf(1)
	for _, x := range []vec{{}, {1, 2, 3}, {0, nan, math.Inf(-1), 1e-300}, sparse} {
		b, err := json.Marshal(x)
		if err != nil {
			t.Fatal(err)
		}
		var y vec
		if err := json.Unmarshal(b, &y); err != nil {
			t.Fatalf("%s: %v", b, err)
		}
		if len(y) != len(x) {
			t.Fatalf("%d entries back, want %d", len(y), len(x))
		}
		for i := range x {
			if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
				t.Errorf("entry %d: %v back, want %v", i, y[i], x[i])
			}
		}
		if len(x) == 1000 && len(b) > 200 {
			t.Errorf("a vector with 3 non-zeros in 1000 takes %d bytes: not sparse", len(b))
		}
	}
}
