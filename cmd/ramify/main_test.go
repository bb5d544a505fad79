package main

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// runCLI runs the program in-process and returns its exit status and output.
func runCLI(t *testing.T, ctx context.Context, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(ctx, args, &out, &errb)
	return code, out.String(), errb.String()
}

func writeFile(t *testing.T, name, body string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// TestSolveDendrite checks `ramify solve --json` on the shipped dendrite
// example against Rall's equivalent cylinder: with the 3/2-power rule and equal
// electrotonic lengths the tree is one sealed cable of length X = 1, so
// V(branch)/V0 = cosh(0.5)/cosh(1) = 0.7307628 and V(tip)/V0 = 1/cosh(1) =
// 0.6480543 (docs/references.md C3; Rall 1962, from memory). The exact elements are
// exact, so the tolerance is the 1e-6 rounding of the example's lengths.
func TestSolveDendrite(t *testing.T) {
	code, out, errs := runCLI(t, context.Background(), "solve", "--json", "--probe", "trunk@0.025", "../../examples/dendrite.toml")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Nodes []struct {
			ID string
			U  float64
		}
		Probes []struct {
			At string
			U  float64
		}
		Caution string
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	want := map[string]float64{"soma": 1, "branch": 0.7307628, "tip-a": 0.6480543, "tip-b": 0.6480543}
	for _, n := range got.Nodes {
		if math.Abs(n.U-want[n.ID]) > 1e-6 {
			t.Errorf("node %s: u = %.8f, want %.7f", n.ID, n.U, want[n.ID])
		}
	}
	// Half-way along the trunk, X = 0.25: cosh(0.75)/cosh(1).
	if p := got.Probes[0].U; math.Abs(p-math.Cosh(0.75)/math.Cosh(1)) > 1e-6 {
		t.Errorf("probe: %.8f, want %.8f", p, math.Cosh(0.75)/math.Cosh(1))
	}
	// A dimensionless cable (no physical model) is no heat or current
	// load: no safety caution.
	if got.Caution != "" {
		t.Errorf("JSON output of a neuron model carries the safety caution")
	}
}

// TestErrorsAreOneLine checks that bad input gives one clear line on stderr
// and a non-zero exit, naming the offending line, node or edge.
func TestErrorsAreOneLine(t *testing.T) {
	bad := writeFile(t, "bad.toml", "[[node]]\nid = \"a\"\nfixed = 0.0\n\n[[node]]\nid = \"b\"\n\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"c\"\nlength = 1.0\ndiffusivity = 1.0\n")
	floating := writeFile(t, "float.toml", "[[node]]\nid = \"a\"\n[[node]]\nid = \"b\"\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1.0\ndiffusivity = 1.0\n")
	good := "../../examples/fork.toml"
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"unknown node", []string{"solve", bad}, `"c"`},
		{"missing file", []string{"solve", "nope.toml"}, "nope.toml"},
		{"unanchored", []string{"solve", floating}, "a"},
		{"start off the network", []string{"walk", good, "--from", "l@3"}, "l@3"},
		{"unknown start node", []string{"exit", good, "--from", "hub"}, "hub"},
		{"bad method", []string{"solve", "--method", "magic", good}, "magic"},
		{"no start", []string{"crosscheck", good}, "--from"},
		{"bad particles", []string{"walk", good, "--from", "fork", "--particles", "0"}, "particles"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, _, errs := runCLI(t, context.Background(), c.args...)
			if code == 0 {
				t.Fatalf("exit 0, want failure")
			}
			lines := strings.Split(strings.TrimRight(errs, "\n"), "\n")
			if len(lines) != 1 {
				t.Errorf("want one line on stderr, got %d:\n%s", len(lines), errs)
			}
			if !strings.Contains(errs, c.want) {
				t.Errorf("stderr %q does not name %s", errs, c.want)
			}
		})
	}
}

// TestWalkReproducible checks that the same seed gives the same estimates
// with one and with three workers, and that the fork's hitting probability
// 1/3 (docs/exit-statistics.md §5: (α_r/L_r)/Σ(α/L) = 1/(2+1)) is within 5 standard errors.
func TestWalkReproducible(t *testing.T) {
	var outs [2]map[string]any
	for i, w := range []string{"1", "3"} {
		code, out, errs := runCLI(t, context.Background(), "walk", "../../examples/fork.toml", "--from", "fork",
			"--particles", "20000", "--seed", "5", "--workers", w, "--json")
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		if err := json.Unmarshal([]byte(out), &outs[i]); err != nil {
			t.Fatal(err)
		}
	}
	a, _ := json.Marshal(outs[0]["exit"])
	b, _ := json.Marshal(outs[1]["exit"])
	if !bytes.Equal(a, b) {
		t.Errorf("workers 1 and 3 differ:\n%s\n%s", a, b)
	}
	hit := outs[0]["exit"].(map[string]any)["hit"].(map[string]any)["right"].(map[string]any)
	p, se := hit["p"].(float64), hit["stderr"].(float64)
	if math.Abs(p-1.0/3) > 5*se {
		t.Errorf("P(right) = %.4f ± %.4f, want 1/3", p, se)
	}
}

// TestWalkInterrupted checks that a run cancelled while the walkers run
// still prints the estimates of those that finished, marked partial, and
// exits with the status of an interrupted program; and that one cancelled
// before anything finished says so and exits the same way.
// The run is cancelled after 3 s, not sooner: on a machine loaded by other
// work the first block of walkers may take longer than a fraction of a second,
// and the test must see some walkers finished (a 300 ms timeout flaked).
func TestWalkInterrupted(t *testing.T) {
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Second)
	defer cancel()
	code, out, errs := runCLI(t, ctx, "walk", "../../examples/fork.toml", "--from", "fork", "--particles", "1e12", "--json")
	if code != exitInterrupted {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Partial             bool
		Finished, Particles int64
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if !got.Partial || got.Finished <= 0 || got.Finished >= got.Particles {
		t.Errorf("cancelled run: partial %v, %d of %d finished", got.Partial, got.Finished, got.Particles)
	}

	ctx, cancel = context.WithCancel(context.Background())
	cancel()
	code, out, errs = runCLI(t, ctx, "walk", "../../examples/fork.toml", "--from", "fork", "--particles", "1000000", "--json")
	if code != exitInterrupted || out != "" || !strings.Contains(errs, "interrupted") {
		t.Errorf("cancelled at once: exit %d, stdout %q, stderr %q", code, out, errs)
	}
}

// TestCrosscheckVerdicts runs the cross-check on the fork with walkers that
// obey the weights (agree) and with walkers told to split 50/50 against
// weights that imply 2/3 : 1/3 (disagree).
func TestCrosscheckVerdicts(t *testing.T) {
	split := writeFile(t, "split.toml", strings.Replace(mustRead(t, "../../examples/fork.toml"),
		"[[node]]\nid = \"fork\"\n", "[[node]]\nid = \"fork\"\nsplit = { l = 0.5, r = 0.5 }\n", 1))
	for _, c := range []struct {
		file, want string
	}{{"../../examples/fork.toml", "agree"}, {split, "disagree"}} {
		code, out, errs := runCLI(t, context.Background(), "crosscheck", c.file, "--from", "fork", "--particles", "50000", "--seed", "2", "--json")
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		var got struct{ Verdict, Explanation string }
		if err := json.Unmarshal([]byte(out), &got); err != nil {
			t.Fatal(err)
		}
		if got.Verdict != c.want {
			t.Errorf("%s: verdict %s, want %s (%s)", c.file, got.Verdict, c.want, got.Explanation)
		}
	}
}

func mustRead(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// TestDemo runs the demo end to end with a small walker count and checks
// that every step printed its part.
func TestDemo(t *testing.T) {
	code, out, errs := runCLI(t, context.Background(), "demo", "--particles", "20000")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"1. Steady field", "2. First passage", "3. 20000 random walkers", "verdict:"} {
		if !strings.Contains(out, want) {
			t.Errorf("demo output lacks %q", want)
		}
	}
}

// TestHelp checks that every command answers --help with exit 0.
func TestHelp(t *testing.T) {
	for _, c := range commands() {
		code, out, errs := runCLI(t, context.Background(), c.name, "--help")
		if code != 0 {
			t.Errorf("%s --help: exit %d", c.name, code)
		}
		// 'ramify help COMMAND' is the same text (it printed the general
		// usage instead).
		code2, out2, errs2 := runCLI(t, context.Background(), "help", c.name)
		if code2 != 0 || out2 != out || errs2 != errs {
			t.Errorf("help %s: exit %d and a text unlike %s --help's", c.name, code2, c.name)
		}
	}
}
