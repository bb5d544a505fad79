package main

import (
	"bytes"
	"context"
	"strings"
	"testing"
)

// TestBenchScale runs the scale figures of ramify bench at their small size
// and checks that the sharded run merged to the same numbers and that every
// figure was printed.
func TestBenchScale(t *testing.T) {
	if testing.Short() {
		t.Skip("about ten seconds")
	}
	var b bytes.Buffer
	if err := benchScale(context.Background(), &b, "small"); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{"merged numbers identical: true", "tables built on first visit", "growth exponent"} {
		if !strings.Contains(out, want) {
			t.Errorf("bench output lacks %q:\n%s", want, out)
		}
	}
	t.Log(out)
}
