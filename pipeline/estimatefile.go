package pipeline

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"

	"gridstage/internal/atomicfile"
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
	Paths        string               `json:"paths"`
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
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return fmt.Errorf("pipeline: %w", err)
	}
	if err := atomicfile.WriteBytes(path, b, 0o666); err != nil {
		return fmt.Errorf("pipeline: %w", err)
	}
	return nil
}
