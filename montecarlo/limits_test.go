package montecarlo_test

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// TestHugeParticleCount checks that a particle count near 2⁶³ does not
// overflow the block count (it used to give "finished 0", not partial): the
// run walks until cancelled and reports a partial result of the blocks that
// finished.
func TestHugeParticleCount(t *testing.T) {
	net := interval(tEdge{L: 1, a: 0.5}, 0, 1)
	// Cancelled once the first walkers are done (not after a fixed time,
	// which on a loaded machine could come before any block finished).
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	rec := &cancelAfter{cancel: cancel}
	res, err := montecarlo.Run(ctx, net, onEdge(0, 0.3), &montecarlo.Settings{Particles: math.MaxInt64 - 100, Seed: 1, Recorder: rec})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != montecarlo.Cancelled || res.Finished <= 0 || res.Finished%montecarlo.BlockSize != 0 {
		t.Errorf("status %v, finished %d: want a cancelled run of whole blocks", res.Status, res.Finished)
	}
	if p := res.Hit[1].Mean; !(p > 0 && p < 1) {
		t.Errorf("hit probability %g from %d walkers", p, res.Finished)
	}
}

// TestMemoryErrorNoOverflow checks that the refusal of kept samples states
// a positive byte count even when particles·16 overflows int64 (it used to
// say "needs -16 bytes").
func TestMemoryErrorNoOverflow(t *testing.T) {
	net := interval(tEdge{L: 1, a: 0.5}, 0, 1)
	for _, n := range []int64{1 << 40, math.MaxInt64} {
		_, err := montecarlo.Run(context.Background(), net, onEdge(0, 0.3), &montecarlo.Settings{Particles: n, KeepSamples: true})
		var me *montecarlo.MemoryError
		if !errors.As(err, &me) {
			t.Fatalf("%d walkers: error %v, want a MemoryError", n, err)
		}
		if me.Bytes <= 0 || strings.Contains(err.Error(), "-") {
			t.Errorf("%d walkers: %v (Bytes %d)", n, err, me.Bytes)
		}
	}
}

// TestCancelInsideWalker checks that a cancellation stops walkers that are
// still out, not only between walkers: a node whose leak is 1e−300 keeps
// every walker for about 1e300 time units, so before the stop flag was read
// inside the walk, Run never returned. It must return a partial result with
// nothing finished. The bound of 10 s is a hang detector, generous for a
// loaded machine; the measured delay is logged.
func TestCancelInsideWalker(t *testing.T) {
	n := &tNet{}
	v := n.node(vertex.Law{Kind: vertex.Balance, Leak: 1e-300})
	n.edge(tEdge{from: v, to: v, L: 1, a: 1})
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan time.Time, 1)
	var res *montecarlo.Result
	var err error
	go func() {
		res, err = montecarlo.Run(ctx, n, vertex.AtNode(v), &montecarlo.Settings{Particles: 10, Seed: 1, TimeCap: 1e300})
		done <- time.Now()
	}()
	time.Sleep(100 * time.Millisecond)
	cancel()
	t0 := time.Now()
	select {
	case t1 := <-done:
		t.Logf("Run returned %v after the cancellation", t1.Sub(t0))
	case <-time.After(10 * time.Second):
		t.Fatal("Run did not return within 10 s of the cancellation")
	}
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != montecarlo.Cancelled || res.Finished != 0 {
		t.Errorf("status %v, finished %d; want cancelled with nothing finished", res.Status, res.Finished)
	}
}
