package cache

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"
)

// tempPrefix starts the names of files being written; Prune removes the
// ones a killed process left behind.
const tempPrefix = ".put-"

// writeAtomic writes data to path through a temporary file in the same
// folder: write, close, rename. With durable set it also fsyncs the file
// before the rename and the folder after it, so that the entry survives a
// crash of the machine.
func writeAtomic(path string, data []byte, durable bool) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("cache: cannot create folder %s: %w", dir, pathErr(err))
	}
	f, err := os.CreateTemp(dir, tempPrefix+filepath.Base(path)+".*")
	if err != nil {
		return fmt.Errorf("cache: cannot create a file in %s: %w", dir, pathErr(err))
	}
	tmp := f.Name()
	fail := func(err error) error {
		f.Close()
		os.Remove(tmp)
		return fmt.Errorf("cache: write %s: %w", path, pathErr(err))
	}
	if _, err := f.Write(data); err != nil {
		return fail(err)
	}
	if err := f.Chmod(0o644); err != nil {
		return fail(err)
	}
	if durable {
		if err := f.Sync(); err != nil {
			return fail(err)
		}
	}
	if err := f.Close(); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("cache: write %s: %w", path, pathErr(err))
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("cache: write %s: %w", path, pathErr(err))
	}
	if durable {
		return syncDir(dir)
	}
	return nil
}

// syncDir makes a rename in dir durable. File systems that cannot sync a
// folder (some network ones) report EINVAL; the rename is still atomic
// there, so that error is ignored.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return nil
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !isUnsupported(err) {
		return fmt.Errorf("cache: sync folder %s: %w", dir, pathErr(err))
	}
	return nil
}

// Prune removes temporary files older than age, left behind by processes
// killed in the middle of a Put, and returns how many it removed. An age of
// an hour or more is safe while other processes write: no Put takes that
// long.
func (c *Cache) Prune(age time.Duration) (int, error) {
	removed := 0
	subs, err := os.ReadDir(c.dir)
	if err != nil {
		return 0, fmt.Errorf("cache: read %s: %w", c.dir, pathErr(err))
	}
	cutoff := time.Now().Add(-age)
	for _, s := range subs {
		if !s.IsDir() || len(s.Name()) != 2 {
			continue
		}
		dir := filepath.Join(c.dir, s.Name())
		files, err := os.ReadDir(dir)
		if err != nil {
			continue // another process may be creating or removing it
		}
		for _, f := range files {
			if !strings.HasPrefix(f.Name(), tempPrefix) {
				continue
			}
			info, err := f.Info()
			if err != nil || info.ModTime().After(cutoff) {
				continue
			}
			if os.Remove(filepath.Join(dir, f.Name())) == nil {
				removed++
			}
		}
	}
	return removed, nil
}
