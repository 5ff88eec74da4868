package pipeline

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"

	"gridstage/plugin"
)

// estimateFile is the JSON layout of <out>/estimates/<id>.json.
type estimateFile struct {
	ID           string               `json:"id"`
	Pipeline     string               `json:"pipeline"`
	Stage        string               `json:"stage"`
	StageVersion string               `json:"stage_version"`
	Model        string               `json:"model"`
	Params       map[string]float64   `json:"params"`
	Chains       []plugin.ChainRef    `json:"chains"`
	Scalars      map[string]float64   `json:"scalars,omitempty"`
	Vectors      map[string][]float64 `json:"vectors,omitempty"`
}

// writeEstimate writes f as indented JSON atomically: temporary file in
// the same folder, fsync, rename.
func writeEstimate(path string, f estimateFile) error {
	b, err := json.MarshalIndent(f, "", "  ")
	if err != nil {
		return fmt.Errorf("pipeline: estimate %s: %w", f.ID, err)
	}
	return writeAtomic(path, append(b, '\n'))
}

func writeAtomic(path string, b []byte) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("pipeline: %w", err)
	}
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("pipeline: %w", err)
	}
	_, err = tmp.Write(b)
	if err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp.Name(), path)
	}
	if err != nil {
		os.Remove(tmp.Name())
		return fmt.Errorf("pipeline: write %s: %w", path, err)
	}
	return nil
}
