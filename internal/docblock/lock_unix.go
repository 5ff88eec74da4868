//go:build unix

package docblock

import (
	"os"
	"syscall"
	"testing"
)

// lockDir holds an exclusive advisory lock on the folder dir itself while
// a block is rewritten, so that tests of two packages run with -update at
// once (go test ./... -update) do not lose each other's edits to one file.
func lockDir(t testing.TB, dir string) func() {
	t.Helper()
	f, err := os.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX); err != nil {
		f.Close()
		t.Fatal(err)
	}
	return func() {
		_ = syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
		f.Close()
	}
}
