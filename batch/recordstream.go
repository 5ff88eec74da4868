package batch

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// JobReader streams the job list of a run record, one job at a time, so
// that a record of a million jobs is never held whole (merge reads the
// records of every shard side by side).
type JobReader struct {
	// Head holds the record's fields before its job list; Jobs and Files
	// stay nil.
	Head RunRecord
	path string
	f    *os.File
	dec  *json.Decoder
	done bool
}

// OpenJobs opens the run record in dir and reads up to its job list.
// Close the reader when done.
func OpenJobs(dir string) (*JobReader, error) {
	path := filepath.Join(dir, RecordFile)
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	r := &JobReader{path: path, f: f, dec: json.NewDecoder(bufio.NewReaderSize(f, 1<<16))}
	if err := r.readHead(); err != nil {
		f.Close()
		return nil, fmt.Errorf("batch: %s: %w", path, err)
	}
	return r, nil
}

// readHead decodes the fields before "jobs" into Head and consumes the
// list's opening bracket.
func (r *JobReader) readHead() error {
	if err := r.delim('{'); err != nil {
		return err
	}
	fields := map[string]any{
		"run": &r.Head.Run, "manifest": &r.Head.Manifest, "manifest_hash": &r.Head.ManifestHash,
		"tool_version": &r.Head.Tool, "numeric_version": &r.Head.Numeric, "shard": &r.Head.Shard,
		"succeeded": &r.Head.Succeeded,
	}
	for r.dec.More() {
		tok, err := r.dec.Token()
		if err != nil {
			return err
		}
		key, _ := tok.(string)
		if key == "jobs" {
			return r.delim('[')
		}
		if dst, ok := fields[key]; ok {
			err = r.dec.Decode(dst)
		} else {
			var skip json.RawMessage
			err = r.dec.Decode(&skip)
		}
		if err != nil {
			return fmt.Errorf("field %q: %w", key, err)
		}
	}
	return fmt.Errorf("no job list")
}

func (r *JobReader) delim(want json.Delim) error {
	tok, err := r.dec.Token()
	if err != nil {
		return err
	}
	if d, ok := tok.(json.Delim); !ok || d != want {
		return fmt.Errorf("expected %q, found %v", want, tok)
	}
	return nil
}

// Next returns the next job, or io.EOF after the last.
func (r *JobReader) Next() (JobRecord, error) {
	if r.done {
		return JobRecord{}, io.EOF
	}
	if !r.dec.More() {
		r.done = true
		if err := r.delim(']'); err != nil {
			return JobRecord{}, fmt.Errorf("batch: %s: end of the job list: %w", r.path, err)
		}
		return JobRecord{}, io.EOF
	}
	var j JobRecord
	if err := r.dec.Decode(&j); err != nil {
		return JobRecord{}, fmt.Errorf("batch: %s: job list: %w", r.path, err)
	}
	return j, nil
}

// Close closes the file.
func (r *JobReader) Close() { r.f.Close() }

// WriteRecordJobs writes a run record into dir as WriteRecord does, taking
// its n jobs one at a time from next instead of from r.Jobs.
func WriteRecordJobs(dir string, r *RunRecord, n int, next func() (JobRecord, error)) error {
	return writeRecord(dir, r, func(w *bufio.Writer) error {
		for i := 0; i < n; i++ {
			j, err := next()
			if err != nil {
				return err
			}
			if err := writeElement(w, i, j); err != nil {
				return err
			}
		}
		return nil
	}, n)
}
