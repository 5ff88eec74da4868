package report

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// InputError reports a path that is not gridstage output, or a selection
// that matches nothing: bad input, not a failure of the tool.
type InputError struct {
	Path   string
	Reason string
}

func (e *InputError) Error() string { return e.Path + ": " + e.Reason }

func badInput(path, format string, args ...any) error {
	return &InputError{Path: path, Reason: fmt.Sprintf(format, args...)}
}

// Load reads a gridstage output: an output folder, one of its files, or the
// JSON that `gridstage discretize ... --json` prints. A path that is none of
// these gives an *InputError.
func Load(path string) (Run, error) {
	info, err := os.Stat(path)
	if errors.Is(err, os.ErrNotExist) {
		return Run{}, badInput(path, "no such file or folder")
	}
	if err != nil {
		return Run{}, badInput(path, "cannot be read: %v", err)
	}
	if info.IsDir() {
		return loadFolder(path)
	}
	switch strings.ToLower(filepath.Ext(path)) {
	case ".json":
		return loadJSON(path)
	case ".parquet", ".arrow":
		return loadFolderFile(path)
	}
	return Run{}, badInput(path, "is not gridstage output (want an output folder, a .parquet or .arrow file it wrote, or the JSON of `gridstage discretize --json`)")
}
