//go:build !linux

package graphpde

import "time"

// threadClock is not available here: benchmarks report wall-clock time
// only.
func threadClock() (time.Duration, bool) { return 0, false }
