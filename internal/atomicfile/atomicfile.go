// Package atomicfile writes files so that a crash or a concurrent reader
// never sees one half-written: the content goes to a temporary file in the
// same folder, which is synced and renamed over the final name, and the
// folder is synced so the rename itself survives a crash.
package atomicfile

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// Write creates or replaces path with what fill writes, with permissions
// perm less the process umask, as os.Create would give (pass 0o666 for a
// data file that follows the umask). On any error the temporary file is
// removed and path is untouched.
func Write(path string, perm os.FileMode, fill func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
			err = fmt.Errorf("cannot write %s: %w", path, err)
		}
	}()
	if err = fill(tmp); err != nil {
		return err
	}
	if err = tmp.Chmod(Mode(perm)); err != nil {
		return err
	}
	if err = tmp.Sync(); err != nil {
		return err
	}
	if err = tmp.Close(); err != nil {
		return err
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return err
	}
	if d, derr := os.Open(dir); derr == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// WriteBytes is Write for content already in memory.
func WriteBytes(path string, data []byte, perm os.FileMode) error {
	return Write(path, perm, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// Mode returns perm less the process umask: the permissions a new file
// created with perm gets.
func Mode(perm os.FileMode) os.FileMode { return perm &^ os.FileMode(umask) }
