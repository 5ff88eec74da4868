//go:build !linux

package solver

import "time"

var wallStart = time.Now()

// threadCPU falls back to the wall clock where the thread's CPU clock is
// not read (see threadcpu_linux_test.go).
func threadCPU() time.Duration { return time.Since(wallStart) }
