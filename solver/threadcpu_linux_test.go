package solver

import (
	"syscall"
	"time"
	"unsafe"
)

// threadCPU returns the CPU time the calling OS thread has used
// (clock_gettime with CLOCK_THREAD_CPUTIME_ID, Linux): time this thread
// waited for a core while other processes ran is not counted, so ratios
// of it stay meaningful on a loaded machine. The caller locks its
// goroutine to the thread.
func threadCPU() time.Duration {
	const clockThreadCPUTime = 3 // CLOCK_THREAD_CPUTIME_ID, linux/time.h
	var ts syscall.Timespec
	if _, _, e := syscall.Syscall(syscall.SYS_CLOCK_GETTIME, clockThreadCPUTime, uintptr(unsafe.Pointer(&ts)), 0); e != 0 {
		panic(e)
	}
	return time.Duration(ts.Nano())
}
