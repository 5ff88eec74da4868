//go:build unix

package lineage

import (
	"os"
	"syscall"
)

// lockDir takes an exclusive advisory lock on the folder dir itself, so
// that no lock file is left behind, and returns the function that releases
// it.
func lockDir(dir string) (func(), error) {
	f, err := os.Open(dir)
	if err != nil {
		return nil, err
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX); err != nil {
		f.Close()
		return nil, err
	}
	return func() {
		_ = syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
		f.Close()
	}, nil
}
