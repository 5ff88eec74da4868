package batch

import (
	"fmt"
	"path/filepath"

	"gridstage/formats"
	"gridstage/manifests"
)

// setWriter streams solved jobs into one output set per process. Jobs arrive
// in manifest order, so each process's set is opened at its first job and
// closed once a later process starts — except that sets are only renamed
// into place at the end of the run, so an interrupted run leaves nothing
// that looks complete.
type setWriter struct {
	m      *manifests.Manifest
	dir    string
	format formats.Format
	open   map[string]*formats.Writer
	order  []string
	failed map[string]bool
}

func newSetWriter(m *manifests.Manifest, dir string, f formats.Format) *setWriter {
	return &setWriter{m: m, dir: dir, format: f, open: map[string]*formats.Writer{}, failed: map[string]bool{}}
}

// append writes one solved job and returns its chain hash.
func (s *setWriter) append(job manifests.Job, sol manifests.Solution) (string, error) {
	if s.failed[job.Process] {
		return "", nil
	}
	w := s.open[job.Process]
	if w == nil {
		h := formats.Header{Run: s.m.Run, Process: job.Process, Kind: job.Kind, Method: sol.Chain.Method.String(),
			Dim: sol.Chain.Dim, Params: sweptNames(s.m, job.Process), ManifestHash: s.m.Hash}
		var err error
		if w, err = formats.Create(s.dir, h, formats.Options{Format: s.format}); err != nil {
			return "", fmt.Errorf("batch: %s: %w", job.Process, err)
		}
		s.open[job.Process] = w
		s.order = append(s.order, job.Process)
	}
	recs := records(job, sol)
	for _, r := range recs {
		if err := w.Append(r); err != nil {
			return "", fmt.Errorf("batch: %s point %d: %w", job.Process, job.Point, err)
		}
	}
	return formats.ChainHash(recs), nil
}

// records turns a solved job into the records of its output set.
func records(job manifests.Job, sol manifests.Solution) []formats.Record {
	return []formats.Record{{
		Point: job.Point, Params: paramMap(job.Params), SpecHash: job.SpecHash, Spec: job.Canonical,
		Chain: sol.Chain, Diag: sol.Diagnostics, Baseline: sol.BaselineDiagnostics,
	}}
}

// fail drops a process's set: one of its jobs failed.
func (s *setWriter) fail(process string) {
	s.failed[process] = true
	if w := s.open[process]; w != nil {
		w.Abort()
		delete(s.open, process)
	}
}

// close finishes every set in manifest order.
func (s *setWriter) close() ([]formats.Result, error) {
	var out []formats.Result
	for _, p := range s.order {
		w := s.open[p]
		if w == nil {
			continue
		}
		delete(s.open, p)
		r, err := w.Close()
		if err != nil {
			return out, fmt.Errorf("batch: closing %s: %w", filepath.Join(s.dir, p), err)
		}
		out = append(out, r)
	}
	return out, nil
}

// abort discards every set still open.
func (s *setWriter) abort() {
	for p, w := range s.open {
		w.Abort()
		delete(s.open, p)
	}
}

func sweptNames(m *manifests.Manifest, process string) []string {
	for _, p := range m.Processes {
		if p.Name == process {
			return p.Swept
		}
	}
	return nil
}
