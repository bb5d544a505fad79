package graphpde

import (
	"syscall"
	"time"
	"unsafe"
)

// threadClock returns the CPU time of the calling OS thread from
// clock_gettime(CLOCK_THREAD_CPUTIME_ID), which counts in nanoseconds
// (getrusage, behind threadCPU, advances in scheduler ticks of several
// milliseconds: too coarse for a steady solve of a few milliseconds).
func threadClock() (time.Duration, bool) {
	const clockThreadCPUTime = 3 // CLOCK_THREAD_CPUTIME_ID, Linux
	var ts syscall.Timespec
	if _, _, e := syscall.Syscall(syscall.SYS_CLOCK_GETTIME, clockThreadCPUTime, uintptr(unsafe.Pointer(&ts)), 0); e != 0 {
		return 0, false
	}
	return time.Duration(ts.Nano()), true
}
