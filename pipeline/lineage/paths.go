package lineage

import (
	"path/filepath"
	"strings"
)

// RelPath returns how the ledger at ledger refers to the file at path:
// relative to the ledger's folder, with forward slashes, so that a folder
// copied or moved whole (output, ledger and all) still resolves. A path
// that has no relative form (another volume) stays absolute.
func RelPath(ledger, path string) string {
	abs, err := filepath.Abs(path)
	if err != nil {
		return path
	}
	dir, err := filepath.Abs(filepath.Dir(ledger))
	if err != nil {
		return abs
	}
	rel, err := filepath.Rel(dir, abs)
	if err != nil {
		return abs
	}
	return filepath.ToSlash(rel)
}

// Resolve returns the file a ledger path names: a relative path is taken
// beneath root (the ledger's folder, or the folder given to lineage
// --root); an absolute one (ledgers of layout version 1) as it is.
func Resolve(root, path string) string {
	p := filepath.FromSlash(path)
	if filepath.IsAbs(p) || strings.HasPrefix(path, "/") {
		return p
	}
	return filepath.Join(root, p)
}
