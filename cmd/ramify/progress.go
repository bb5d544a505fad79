package main

import (
	"fmt"
	"io"
	"strings"
	"sync"
	"time"
)

// progressBar draws a one-line bar with rate and time left on a terminal. It
// satisfies montecarlo.Recorder and is safe for concurrent use.
type progressBar struct {
	mu    sync.Mutex
	w     io.Writer
	label string
	start time.Time
	last  time.Time
	drawn bool
	unit  string // of the rate; "" means walkers/s
}

func newProgressBar(w io.Writer, label string) *progressBar {
	return &progressBar{w: w, label: label, start: time.Now()}
}

// Progress redraws the bar at most five times a second.
func (p *progressBar) Progress(done, total int64) {
	p.mu.Lock()
	defer p.mu.Unlock()
	now := time.Now()
	if done < total && now.Sub(p.last) < 200*time.Millisecond {
		return
	}
	p.last = now
	frac := 0.0
	if total > 0 {
		frac = float64(done) / float64(total)
	}
	const width = 30
	n := int(frac * width)
	bar := strings.Repeat("=", n) + strings.Repeat(" ", width-n)
	el := now.Sub(p.start).Seconds()
	rate := 0.0
	if el > 0 {
		rate = float64(done) / el
	}
	left := "?"
	if rate > 0 {
		left = (time.Duration(float64(total-done) / rate * float64(time.Second))).Round(time.Second).String()
	}
	unit := p.unit
	if unit == "" {
		unit = "walkers/s"
	}
	fmt.Fprintf(p.w, "\r%s [%s] %3.0f%%  %.3g %s  %s left ", p.label, bar, 100*frac, rate, unit, left)
	p.drawn = true
}

// Done clears the bar's line.
func (p *progressBar) Done() {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.drawn {
		fmt.Fprintf(p.w, "\r%s\r", strings.Repeat(" ", 79))
	}
}
