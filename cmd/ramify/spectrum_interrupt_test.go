package main

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"sync/atomic"
	"testing"
	"time"
)

// laterCtx is a context whose Err reports cancellation from its (n+1)-th
// call on; its Done channel is nil, so the file is read without a watcher
// and the stop lands inside the eigenvalue search, deterministically.
type laterCtx struct {
	calls atomic.Int64
	n     int64
}

func (c *laterCtx) Deadline() (time.Time, bool) { return time.Time{}, false }
func (c *laterCtx) Done() <-chan struct{}       { return nil }
func (c *laterCtx) Value(any) any               { return nil }
func (c *laterCtx) Err() error {
	if c.calls.Add(1) > c.n {
		return context.Canceled
	}
	return nil
}

// TestSpectrumInterrupted: Ctrl-C during the eigenvalue search keeps the
// eigenvalues bracketed before it, says so, and exits 130 (it exited 0 with
// status "iteration limit", as if the search had simply run out). The kept
// values are those of one edge of length 1, a = 1, held at both ends:
// λ_k = (kπ)², derived (sin(kπx) solves u” = −λu with u(0) = u(1) = 0).
func TestSpectrumInterrupted(t *testing.T) {
	f := writeFile(t, "rod.toml", `
[[node]]
id = "a"
fixed = 0
[[node]]
id = "b"
fixed = 0
[[edge]]
id = "rod"
from = "a"
to = "b"
length = 1
diffusivity = 1
`)
	// relTol: the exact count brackets each eigenvalue to about 1e-12
	// (the error column); 1e-9 leaves room.
	const relTol = 1e-9
	// The reader and the solvers look at the context too: count the looks
	// of a whole run, and stop a few before its end, inside the search.
	full := &laterCtx{n: math.MaxInt64}
	if code, _, errs := runCLI(t, full, "spectrum", f, "--count", "50"); code != 0 {
		t.Fatalf("uninterrupted run: exit %d: %s", code, errs)
	}
	looks := full.calls.Load()
	for _, asJSON := range []bool{false, true} {
		args := []string{"spectrum", f, "--count", "50"}
		if asJSON {
			args = append(args, "--json")
		}
		code, out, errs := runCLI(t, &laterCtx{n: looks - 5}, args...)
		if code != exitInterrupted {
			t.Fatalf("json %v: exit %d, want %d (stderr %q)", asJSON, code, exitInterrupted, errs)
		}
		if !strings.Contains(errs, "interrupted") {
			t.Errorf("json %v: stderr %q does not say the run was interrupted", asJSON, errs)
		}
		if !asJSON {
			if !strings.Contains(out, "interrupted (Ctrl-C)") {
				t.Errorf("text output does not say it was interrupted:\n%s", out)
			}
			continue
		}
		var got struct {
			Status      string
			Eigenvalues []struct{ Value float64 }
		}
		if err := json.Unmarshal([]byte(out), &got); err != nil {
			t.Fatal(err)
		}
		if got.Status != "interrupted" || len(got.Eigenvalues) >= 50 || len(got.Eigenvalues) == 0 {
			t.Errorf("status %q with %d eigenvalues, want interrupted with some but fewer than 50", got.Status, len(got.Eigenvalues))
		}
		for k, e := range got.Eigenvalues {
			want := math.Pow(float64(k+1)*math.Pi, 2)
			if math.Abs(e.Value-want) > relTol*want {
				t.Errorf("λ_%d = %.12g, want %.12g", k+1, e.Value, want)
			}
		}
	}
}
