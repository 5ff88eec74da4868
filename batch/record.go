package batch

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
)

// RecordFile is the name of the run record in the output folder.
const RecordFile = "run.json"

// JobRecord is one job's line in the run record.
type JobRecord struct {
	Index     int                `json:"job"`
	Process   string             `json:"process"`
	Point     int                `json:"point"`
	Params    map[string]float64 `json:"params,omitempty"`
	SpecHash  string             `json:"spec_hash"`
	ChainHash string             `json:"chain_hash,omitempty"`
	Status    string             `json:"status"`
	// Fallbacks counts states that matched fewer moments than requested.
	Fallbacks int    `json:"fallback_states"`
	Error     string `json:"error,omitempty"`
}

// FileRecord is one written file.
type FileRecord struct {
	// Path is the file name, relative to the output folder.
	Path        string `json:"path"`
	Table       string `json:"table"`
	Rows        int64  `json:"rows"`
	ContentHash string `json:"content_hash"`
}

// RunRecord lists what a run did. It holds no times or cache statistics, so
// that the same manifest gives the same record whatever the machine.
type RunRecord struct {
	Run          string       `json:"run"`
	Manifest     string       `json:"manifest"`
	ManifestHash string       `json:"manifest_hash"`
	Tool         string       `json:"tool_version"`
	Shard        string       `json:"shard"`
	Succeeded    bool         `json:"succeeded"`
	Jobs         []JobRecord  `json:"jobs"`
	Files        []FileRecord `json:"files"`
}

// writeRecord writes the record atomically: temporary file, fsync, rename.
func writeRecord(dir string, r *RunRecord) error {
	b, err := json.MarshalIndent(r, "", "  ")
	if err != nil {
		return err
	}
	return writeFileAtomic(filepath.Join(dir, RecordFile), append(b, '\n'))
}

// ReadRecord reads the run record in dir.
func ReadRecord(dir string) (*RunRecord, error) {
	b, err := os.ReadFile(filepath.Join(dir, RecordFile))
	if err != nil {
		return nil, err
	}
	var r RunRecord
	if err := json.Unmarshal(b, &r); err != nil {
		return nil, fmt.Errorf("batch: %s: %w", filepath.Join(dir, RecordFile), err)
	}
	return &r, nil
}

func writeFileAtomic(path string, data []byte) error {
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name())
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Sync(); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return err
	}
	if d, err := os.Open(filepath.Dir(path)); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}
