//go:build !linux

package graphpde

import "time"

// threadCPU is not available here: benchmarks report wall-clock time only.
func threadCPU() (time.Duration, bool) { return 0, false }
