package main

import (
	"bytes"
	"context"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/internal/testenv"
)

// TestBenchScale runs the scale figures of ramify bench at their small size
// and checks that the sharded run merged to the same numbers and that every
// figure was printed.
func TestBenchScale(t *testing.T) {
	testenv.SkipUnlessLong(t, "the bench's scale figures (about ten seconds of walkers and exit statistics)")
	var b bytes.Buffer
	if err := benchScale(context.Background(), &b, "small"); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{"merged numbers identical: true", "tables built on first visit", "growth exponent", "factorisation / that kernel"} {
		if !strings.Contains(out, want) {
			t.Errorf("bench output lacks %q:\n%s", want, out)
		}
	}
	t.Log(out)
}

// TestBenchIO runs the input and output figures of ramify bench at their
// small size (the 100×100 mesh) and checks that every figure was printed.
func TestBenchIO(t *testing.T) {
	testenv.SkipUnlessLong(t, "the bench's input and output figures (a few seconds)")
	var b bytes.Buffer
	if err := benchIO(context.Background(), &b, "small"); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{"network file", "bare decode by the TOML library", "heap while reading", "edge list (CSV)", "solve --json, whole command", "solve JSON streamed", "--field CSV streamed"} {
		if !strings.Contains(out, want) {
			t.Errorf("bench output lacks %q:\n%s", want, out)
		}
	}
	t.Log(out)
}
