//go:build !unix

package main

import "time"

// processCPU is not available here: the bench reports wall-clock times only.
func processCPU() (time.Duration, bool) { return 0, false }
