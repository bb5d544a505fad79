package graphpde

import (
	"syscall"
	"time"
)

// threadCPU returns the CPU time consumed so far by the calling OS thread
// (getrusage RUSAGE_THREAD), and true. Benchmarks lock the goroutine to its
// thread around a measurement: on a loaded machine the thread's CPU time
// leaves out the time spent waiting for a core, which wall-clock time
// includes.
func threadCPU() (time.Duration, bool) {
	const rusageThread = 1 // RUSAGE_THREAD, Linux
	var ru syscall.Rusage
	if err := syscall.Getrusage(rusageThread, &ru); err != nil {
		return 0, false
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano()), true
}
