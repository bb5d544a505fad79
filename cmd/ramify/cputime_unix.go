//go:build unix

package main

import (
	"syscall"
	"time"
)

// processCPU returns the CPU time (user and system) the process has used
// so far, all threads together (the collector and helper goroutines
// included), and true.
func processCPU() (time.Duration, bool) {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0, false
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano()), true
}
