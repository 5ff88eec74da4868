package formats

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"hash"
	"os"
	"path/filepath"

	"gridstage/internal/atomicfile"
)

// tempFile is a file written under a hidden temporary name in the folder of
// its final path, renamed into place only once complete. A crash before the
// rename leaves only the hidden ".<name>.tmp-*" file, which never matches a
// gridstage file name.
type tempFile struct {
	*os.File
	final string
	// bytes hashes everything written, for the file's byte digest.
	bytes hash.Hash
}

// Write writes to the file and to its byte digest.
func (t *tempFile) Write(b []byte) (int, error) {
	n, err := t.File.Write(b)
	t.bytes.Write(b[:n])
	return n, err
}

// digest returns the SHA-256 of the bytes written, in hex.
func (t *tempFile) digest() string { return hex.EncodeToString(t.bytes.Sum(nil)) }

func createTemp(final string) (*tempFile, error) {
	dir, base := filepath.Split(final)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return nil, fmt.Errorf("formats: create %s: %w", final, err)
	}
	return &tempFile{File: f, final: final, bytes: sha256.New()}, nil
}

// finish makes the file readable by others, flushes it to stable storage
// and closes it; it is still under its temporary name.
func (t *tempFile) finish() error {
	if err := t.Chmod(atomicfile.Mode(0o666)); err != nil {
		t.Close()
		return fmt.Errorf("formats: %s: %w", t.final, err)
	}
	if err := t.Sync(); err != nil {
		t.Close()
		return fmt.Errorf("formats: sync %s: %w", t.final, err)
	}
	if err := t.Close(); err != nil {
		return fmt.Errorf("formats: close %s: %w", t.final, err)
	}
	return nil
}

// commit renames the finished file into place. The caller syncs the folder.
func (t *tempFile) commit() error {
	if err := os.Rename(t.Name(), t.final); err != nil {
		return fmt.Errorf("formats: rename into %s: %w", t.final, err)
	}
	return nil
}

// discard closes (if still open) and removes the temporary file.
func (t *tempFile) discard() {
	t.Close()
	os.Remove(t.Name())
}

// syncDir flushes a folder's entries, so that renames into it survive a
// crash.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("formats: sync folder %s: %w", dir, err)
	}
	defer d.Close()
	if err := d.Sync(); err != nil {
		return fmt.Errorf("formats: sync folder %s: %w", dir, err)
	}
	return nil
}
