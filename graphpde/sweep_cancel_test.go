package graphpde

import (
	"context"
	"sync/atomic"
	"testing"
)

// lookCounter is a context that is cancelled from its n-th look at Err on.
type lookCounter struct {
	context.Context
	left atomic.Int64
}

func (c *lookCounter) Err() error {
	if c.left.Add(-1) < 0 {
		return context.Canceled
	}
	return nil
}

// TestSweepStopsInsideCorrector checks that SweepSettings.Context reaches
// the Newton correctors after the first point: stopped at looks spread over
// a whole sweep, the sweep ends SweepInterrupted without error, with the
// first point and never more points than the full sweep; the stops that
// fall inside a corrector (most looks are there: every evaluation looks)
// are what the earlier between-points check could not do.
func TestSweepStopsInsideCorrector(t *testing.T) {
	net, m := bratuParamNet(t, 1, 32)
	set := func(ctx context.Context) *SweepSettings {
		return &SweepSettings{Probes: []Point{{Node: m, Edge: -1}}, Context: ctx}
	}
	live := &lookCounter{Context: context.Background()}
	live.left.Store(1 << 40)
	full, err := Sweep(net, "lambda", 2, set(live))
	if err != nil || full.Status != SweepReached {
		t.Fatalf("full sweep: %v, %v", full, err)
	}
	looks := 1<<40 - live.left.Load()
	between := int64(len(full.Points)) // one look per point in the loop
	if looks < 3*between {
		t.Fatalf("%d looks for %d points: the correctors do not look", looks, len(full.Points))
	}
	for k := int64(1); k < looks; k += max(1, looks/25) {
		c := &lookCounter{Context: context.Background()}
		c.left.Store(k)
		res, err := Sweep(net, "lambda", 2, set(c))
		if err != nil {
			t.Fatalf("stopped at look %d of %d: %v", k, looks, err)
		}
		if res.Status != SweepInterrupted || len(res.Points) < 1 || len(res.Points) > len(full.Points) {
			t.Fatalf("stopped at look %d of %d: status %v with %d points (full sweep %d)", k, looks, res.Status, len(res.Points), len(full.Points))
		}
	}
}
