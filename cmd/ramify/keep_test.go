package main

import (
	"context"
	"errors"
	"testing"
	"time"
)

// TestInterruptibleKeep: after Ctrl-C, work that stops by itself hands over
// what it reached; work that does not look at the context (a long set-up
// or factorisation) is abandoned after stopGrace, so evolve and spectrum
// obey Ctrl-C within a second (they waited for the set-up of a large grid:
// 3.8 s on a loaded machine). The 10 s bound is a hang detector only.
func TestInterruptibleKeep(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	go func() { time.Sleep(50 * time.Millisecond); cancel() }()
	v, err := interruptibleKeep(ctx, func() (int, error) {
		<-ctx.Done()
		return 7, nil // partial result, reached before the stop
	})
	if err != nil || v != 7 {
		t.Errorf("cooperative work: %d, %v; want its result 7", v, err)
	}
	ctx2, cancel2 := context.WithCancel(context.Background())
	go func() { time.Sleep(50 * time.Millisecond); cancel2() }()
	release := make(chan struct{})
	defer close(release)
	start := time.Now()
	_, err = interruptibleKeep(ctx2, func() (int, error) {
		<-release // ignores the context
		return 1, nil
	})
	if !errors.Is(err, errInterrupted) {
		t.Errorf("deaf work: error %v, want errInterrupted", err)
	}
	if d := time.Since(start); d > 10*time.Second {
		t.Errorf("deaf work abandoned after %v", d)
	}
}
