package batch

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/hex"
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
	// AutoStates is the number of states chosen by states: auto (the
	// spec holds it); absent when the manifest gave the number.
	AutoStates int `json:"auto_states,omitempty"`
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
	// Bytes is the SHA-256 of the file's bytes (docs/HASHES.md).
	Bytes string `json:"bytes_sha256"`
}

// RunRecord lists what a run did. It holds no times or cache statistics, so
// that the same manifest gives the same record whatever the machine.
type RunRecord struct {
	Run          string `json:"run"`
	Manifest     string `json:"manifest"`
	ManifestHash string `json:"manifest_hash"`
	Tool         string `json:"tool_version"`
	// Numeric is the numeric version the chains were solved under
	// (internal/version.Numeric); every spec hash binds it.
	Numeric   string       `json:"numeric_version"`
	Shard     string       `json:"shard"`
	Succeeded bool         `json:"succeeded"`
	Jobs      []JobRecord  `json:"jobs"`
	Files     []FileRecord `json:"files"`
	// RecordHash is the SHA-256 of run.json's bytes before the field itself
	// (docs/HASHES.md, "Record hash"); ReadRecord checks it. WriteRecord
	// sets it.
	RecordHash string `json:"record_hash"`
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
			out = append(out, FileRecord{Path: filepath.Base(f.Path), Table: f.Table, Rows: f.Rows, ContentHash: f.ContentHash, Bytes: f.Bytes})
		}
	}
	return out
}

// WriteRecord writes the record into dir atomically (temporary file, fsync,
// rename), one job at a time, so that no record is held as one buffer. The
// bytes are those of json.MarshalIndent(r, "", "  ") (with empty lists
// written as [] even when nil), with r.RecordHash set to the hash of the
// bytes before it.
func WriteRecord(dir string, r *RunRecord) error {
	return writeRecord(dir, r, func(w *bufio.Writer) error {
		for i := range r.Jobs {
			if err := writeElement(w, i, r.Jobs[i]); err != nil {
				return err
			}
		}
		return nil
	}, len(r.Jobs))
}

// writeRecord writes r's head and files, with the jobs list's elements
// supplied by jobs (n of them).
func writeRecord(dir string, r *RunRecord, jobs func(*bufio.Writer) error, n int) error {
	return atomicfile.Write(filepath.Join(dir, RecordFile), 0o666, func(f io.Writer) error {
		sum := sha256.New()
		w := io.MultiWriter(f, sum)
		head, err := json.MarshalIndent(recordHead{r.Run, r.Manifest, r.ManifestHash, r.Tool, r.Numeric, r.Shard, r.Succeeded}, "", "  ")
		if err != nil {
			return err
		}
		bw := bufio.NewWriterSize(w, 1<<16)
		bw.Write(head[:len(head)-len("\n}")])
		bw.WriteString(",\n  \"jobs\": [")
		if err := jobs(bw); err != nil {
			return err
		}
		closeList(bw, n)
		bw.WriteString(",\n  \"files\": [")
		for i := range r.Files {
			if err := writeElement(bw, i, r.Files[i]); err != nil {
				return err
			}
		}
		closeList(bw, len(r.Files))
		if err := bw.Flush(); err != nil {
			return err
		}
		r.RecordHash = hex.EncodeToString(sum.Sum(nil))
		_, err = io.WriteString(f, recordHashLead+r.RecordHash+recordHashTail)
		return err
	})
}

// run.json ends with its record hash: the SHA-256 of every byte before
// recordHashLead.
const (
	recordHashLead = ",\n  \"record_hash\": \""
	recordHashTail = "\"\n}\n"
)

// checkRecordHash checks the record hash at the end of run.json's bytes.
func checkRecordHash(b []byte) error {
	if !bytes.HasSuffix(b, []byte(recordHashTail)) {
		return fmt.Errorf("it does not end with its record hash (truncated, edited, or written by an older gridstage)")
	}
	i := bytes.LastIndex(b, []byte(recordHashLead))
	if i < 0 || i+len(recordHashLead) > len(b)-len(recordHashTail) {
		return fmt.Errorf("it has no record hash (edited, or written by an older gridstage)")
	}
	got := b[i+len(recordHashLead) : len(b)-len(recordHashTail)]
	sum := sha256.Sum256(b[:i])
	if want := hex.EncodeToString(sum[:]); string(got) != want {
		return fmt.Errorf("its bytes hash to %s but its record_hash says %s: it changed after the run wrote it", want[:16], shorten(string(got), 64))
	}
	return nil
}

// shorten cuts s to at most n bytes for an error message, marking the cut.
func shorten(s string, n int) string {
	if len(s) <= n {
		return fmt.Sprintf("%q", s)
	}
	return fmt.Sprintf("%q… (%d bytes)", s[:n], len(s))
}

// writeElement writes element i of a list as json.MarshalIndent would
// inside an object at the top level.
func writeElement(w *bufio.Writer, i int, v any) error {
	b, err := json.MarshalIndent(v, "    ", "  ")
	if err != nil {
		return err
	}
	if i > 0 {
		w.WriteByte(',')
	}
	w.WriteString("\n    ")
	w.Write(b)
	return nil
}

func closeList(w *bufio.Writer, n int) {
	if n > 0 {
		w.WriteString("\n  ")
	}
	w.WriteByte(']')
}

// jobLog collects the run record's job entries in a temporary file as jobs
// finish, in job order.
type jobLog struct {
	f *os.File
	w *bufio.Writer
	n int
}

func newJobLog(dir string) (*jobLog, error) {
	f, err := os.CreateTemp(dir, "."+RecordFile+".jobs-*")
	if err != nil {
		return nil, err
	}
	return &jobLog{f: f, w: bufio.NewWriterSize(f, 1<<16)}, nil
}

func (l *jobLog) add(r JobRecord) error {
	if err := writeElement(l.w, l.n, r); err != nil {
		return err
	}
	l.n++
	return nil
}

// writeRecord writes the run record with the collected jobs.
func (l *jobLog) writeRecord(dir string, r *RunRecord) error {
	if err := l.w.Flush(); err != nil {
		return err
	}
	if _, err := l.f.Seek(0, io.SeekStart); err != nil {
		return err
	}
	return writeRecord(dir, r, func(w *bufio.Writer) error {
		_, err := io.Copy(w, l.f)
		return err
	}, l.n)
}

// discard removes the temporary file.
func (l *jobLog) discard() {
	l.f.Close()
	os.Remove(l.f.Name())
}

// recordHead holds the fields of RunRecord that precede its lists, in the
// same order and with the same names.
type recordHead struct {
	Run          string `json:"run"`
	Manifest     string `json:"manifest"`
	ManifestHash string `json:"manifest_hash"`
	Tool         string `json:"tool_version"`
	Numeric      string `json:"numeric_version"`
	Shard        string `json:"shard"`
	Succeeded    bool   `json:"succeeded"`
}

// RecordDamagedError reports a run.json that cannot be trusted: unreadable
// as JSON, or changed since the run wrote it (its record hash differs).
type RecordDamagedError struct {
	Path    string
	Problem string
}

func (e *RecordDamagedError) Error() string { return e.Path + " is damaged: " + e.Problem }

// ReadRecord reads the run record in dir and checks its record hash. The
// error is a *RecordDamagedError when the file exists but cannot be
// trusted, and wraps fs.ErrNotExist when there is none.
func ReadRecord(dir string) (*RunRecord, error) {
	path := filepath.Join(dir, RecordFile)
	fi, err := os.Stat(path)
	if err != nil {
		return nil, err
	}
	if !fi.Mode().IsRegular() {
		return nil, &RecordDamagedError{Path: path, Problem: "it is not a regular file"}
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return parseRecord(path, b)
}

// parseRecord checks and decodes the bytes of a run record.
func parseRecord(path string, b []byte) (*RunRecord, error) {
	if err := checkRecordHash(b); err != nil {
		return nil, &RecordDamagedError{Path: path, Problem: err.Error()}
	}
	var r RunRecord
	if err := json.Unmarshal(b, &r); err != nil {
		return nil, &RecordDamagedError{Path: path, Problem: "not valid JSON: " + err.Error()}
	}
	return &r, nil
}
