//go:build unix

package atomicfile

import "syscall"

// umask is the process's file mode creation mask, read once when the
// program starts (reading it means setting it, so it is not re-read while
// other goroutines may be creating files).
var umask = func() uint32 {
	m := syscall.Umask(0)
	syscall.Umask(m)
	return uint32(m)
}()
