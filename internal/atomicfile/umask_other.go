//go:build !unix

package atomicfile

// umask is zero where the system has none.
var umask uint32
