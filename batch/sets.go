package batch

import (
	"fmt"
	"path/filepath"

	"gridstage/formats"
	"gridstage/manifests"
	"gridstage/solver"
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
	rows   int  // rows per batch; 0 for the default
	list   bool // keep the sets' point lists
	open   map[string]*formats.Writer
	order  []string
	failed map[string]bool
}

func newSetWriter(m *manifests.Manifest, dir string, f formats.Format) *setWriter {
	return &setWriter{m: m, dir: dir, format: f, open: map[string]*formats.Writer{}, failed: map[string]bool{}}
}

// append writes one solved job, whose canonical spec is spec, and returns
// its chain hash.
func (s *setWriter) append(job manifests.Job, sol manifests.Solution, spec []byte, sens *solver.Sensitivity) (string, error) {
	if s.failed[job.Process] {
		return "", nil
	}
	w := s.open[job.Process]
	if w == nil {
		h := formats.Header{Run: s.m.Run, Process: job.Process, Kind: job.Kind, Method: sol.Method().String(),
			Dim: sol.Dim(), Params: sweptNames(s.m, job.Process), ManifestHash: s.m.Hash, Sensitivities: wantsSensitivities(s.m, job.Process)}
		var err error
		if w, err = formats.Create(s.dir, h, formats.Options{Format: s.format, BatchRows: s.rows, NoPointList: !s.list}); err != nil {
			return "", fmt.Errorf("batch: %s: %w", job.Process, err)
		}
		s.open[job.Process] = w
		s.order = append(s.order, job.Process)
	}
	recs := records(job, sol, spec)
	if sens != nil {
		recs[0].Sensitivities = sens // a time-invariant chain: one record
	}
	for _, r := range recs {
		if err := w.Append(r); err != nil {
			return "", fmt.Errorf("batch: %s point %d: %w", job.Process, job.Point, err)
		}
	}
	hash, err := w.EndPoint() // as ChainHash(job, sol)
	if err != nil {
		return "", fmt.Errorf("batch: %s point %d: %w", job.Process, job.Point, err)
	}
	return hash, nil
}

// ChainHash returns the chain hash of a solved job as a run records it in
// run.json and the points table (docs/HASHES.md, "Chain hash").
func ChainHash(job manifests.Job, sol manifests.Solution) string {
	return formats.ChainHash(records(job, sol, nil)) // the spec is not hashed
}

// records turns a solved job into the records of its output set: one
// record for a time-invariant chain; for a life cycle one per age, the
// initial distribution on age 0 and the terminal age (its grid only) last.
func records(job manifests.Job, sol manifests.Solution, spec []byte) []formats.Record {
	base := formats.Record{Point: job.Point, Params: paramMap(job.Params), SpecHash: job.SpecHash, Spec: spec}
	if sol.Ages == nil {
		r := base
		r.Chain, r.Diag, r.Baseline = sol.Chain, sol.Diagnostics, sol.BaselineDiagnostics
		if sol.Baseline != nil {
			r.BaselineTransition = sol.Baseline.Transition
		}
		if sol.Vector != nil {
			r.Vector = formats.NewVectorDiag(sol.Vector)
		}
		if sol.BaselineVector != nil {
			r.BaselineVector = formats.NewVectorDiag(sol.BaselineVector)
		}
		return []formats.Record{r}
	}
	a := sol.Ages
	out := make([]formats.Record, 0, len(a.Ages)+1)
	for t, c := range a.Ages {
		r := base
		r.Age, r.Chain, r.Diag = t, c, sol.AgeDiagnostics[t]
		if t == 0 {
			r.Initial = a.Initial
		}
		if sol.BaselineAgeDiagnostics != nil {
			r.Baseline = &sol.BaselineAgeDiagnostics[t]
			r.BaselineTransition = sol.BaselineAges.Ages[t].Transition
		}
		out = append(out, r)
	}
	final := base
	final.Age = len(a.Ages)
	dim := a.Ages[0].Dim
	final.Chain = &solver.Chain{Dim: dim, Grid: a.Final, Method: a.Method, Matched: make([]int, len(a.Final)/dim)}
	return append(out, final)
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

func wantsSensitivities(m *manifests.Manifest, process string) bool {
	for _, p := range m.Processes {
		if p.Name == process {
			return p.Sensitivities
		}
	}
	return false
}
