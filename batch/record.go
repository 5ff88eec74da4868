package batch

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"gridstage/formats"
	"gridstage/internal/atomicfile"
	"gridstage/manifests"
)

// RecordFile is the name of the run record in the output folder.
const RecordFile = "run.json"

// JobRecord is one job's line in the run record.
type JobRecord struct {
	Index     int    `json:"job"`
	Process   string `json:"process"`
	Point     int    `json:"point"`
	Params    Params `json:"params,omitempty"`
	SpecHash  string `json:"spec_hash"`
	ChainHash string `json:"chain_hash,omitempty"`
	Status    string `json:"status"`
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

// Params are a job's swept values, sorted by name. They are kept as a slice
// (a map per job would cost ten times the memory in a 100,000-point sweep)
// and read and written as a JSON object.
type Params []manifests.Param

// Map returns the values by name.
func (p Params) Map() map[string]float64 {
	m := make(map[string]float64, len(p))
	for _, x := range p {
		m[x.Name] = x.Value
	}
	return m
}

// MarshalJSON writes {"name": value, ...} in name order.
func (p Params) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, x := range p {
		if i > 0 {
			b.WriteByte(',')
		}
		k, _ := json.Marshal(x.Name)
		v, err := json.Marshal(x.Value)
		if err != nil {
			return nil, err
		}
		b.Write(k)
		b.WriteByte(':')
		b.Write(v)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// UnmarshalJSON reads an object of values, sorting the names.
func (p *Params) UnmarshalJSON(b []byte) error {
	var m map[string]float64
	if err := json.Unmarshal(b, &m); err != nil {
		return err
	}
	*p = (*p)[:0]
	for k, v := range m {
		*p = append(*p, manifests.Param{Name: k, Value: v})
	}
	slices.SortFunc(*p, func(a, b manifests.Param) int { return strings.Compare(a.Name, b.Name) })
	return nil
}

// FileRecords lists the files of written sets, by name within the output
// folder.
func FileRecords(sets []formats.Result) []FileRecord {
	var out []FileRecord
	for _, s := range sets {
		for _, f := range s.Files {
			out = append(out, FileRecord{Path: filepath.Base(f.Path), Table: f.Table, Rows: f.Rows, ContentHash: f.ContentHash})
		}
	}
	return out
}

// WriteRecord writes the record into dir atomically (temporary file, fsync,
// rename), one job at a time, so that a record of 100,000 jobs is never
// held as one buffer. The bytes are those of json.MarshalIndent(r, "", "  ")
// (with empty lists written as [] even when nil).
func WriteRecord(dir string, r *RunRecord) error {
	return atomicfile.Write(filepath.Join(dir, RecordFile), 0o644, func(w io.Writer) error {
		head, err := json.MarshalIndent(recordHead{r.Run, r.Manifest, r.ManifestHash, r.Tool, r.Shard, r.Succeeded}, "", "  ")
		if err != nil {
			return err
		}
		bw := bufio.NewWriterSize(w, 1<<16)
		bw.Write(head[:len(head)-len("\n}")])
		if err := writeList(bw, "jobs", len(r.Jobs), func(i int) any { return r.Jobs[i] }); err != nil {
			return err
		}
		if err := writeList(bw, "files", len(r.Files), func(i int) any { return r.Files[i] }); err != nil {
			return err
		}
		bw.WriteString("\n}\n")
		return bw.Flush()
	})
}

// recordHead holds the fields of RunRecord that precede its lists, in the
// same order and with the same names.
type recordHead struct {
	Run          string `json:"run"`
	Manifest     string `json:"manifest"`
	ManifestHash string `json:"manifest_hash"`
	Tool         string `json:"tool_version"`
	Shard        string `json:"shard"`
	Succeeded    bool   `json:"succeeded"`
}

// writeList writes `,\n  "name": [ ... ]` with each element indented as
// json.MarshalIndent would.
func writeList(w *bufio.Writer, name string, n int, at func(int) any) error {
	fmt.Fprintf(w, ",\n  %q: [", name)
	if n == 0 {
		w.WriteString("]")
		return nil
	}
	for i := 0; i < n; i++ {
		b, err := json.MarshalIndent(at(i), "    ", "  ")
		if err != nil {
			return err
		}
		if i > 0 {
			w.WriteByte(',')
		}
		w.WriteString("\n    ")
		w.Write(b)
	}
	w.WriteString("\n  ]")
	return nil
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
