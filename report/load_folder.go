package report

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"

	"gridstage/batch"
	"gridstage/batch/runner"
	"gridstage/formats"
	"gridstage/internal/plural"
	"gridstage/manifests"
	"gridstage/report/figures"
	"gridstage/solver"
)

// loadFolder reads every set of an output folder written by `gridstage
// run`, after verifying the folder (content hashes, chain hashes, row
// sums). A verification failure is kept as a failed Check, so the report
// can warn; files that cannot be read at all are an *InputError.
func loadFolder(path string) (Run, error) {
	refs, err := formats.FindSets(path)
	if err != nil {
		return Run{}, badInput(path, "cannot be read: %v", err)
	}
	if len(refs) == 0 {
		return Run{}, badInput(path, "is not gridstage output: the folder holds no <process>.points.parquet or .points.arrow file")
	}
	return loadSets(path, refs)
}

// loadFolderFile reads the set that one output file belongs to.
func loadFolderFile(path string) (Run, error) {
	ref, ok := formats.RefOf(path)
	if !ok {
		return Run{}, badInput(path, "is not gridstage output: want a file named <process>.<table>.parquet or .arrow, table one of points, transitions, states, diagnostics, summary")
	}
	return loadSets(path, []formats.SetRef{ref})
}

func loadSets(path string, refs []formats.SetRef) (Run, error) {
	run := Run{Source: path}
	hashes := map[string][]File{}
	verifyPath := path
	if len(refs) == 1 && filepath.Ext(path) != "" {
		verifyPath = refs[0].Dir // a file was named: check its whole set's folder
	}
	// One pass reads the numbers and verifies them: the jobs are built from
	// the records verification reads, and kept only if it succeeds.
	wanted := map[formats.SetRef]bool{}
	for _, ref := range refs {
		wanted[ref] = true
	}
	builders := map[formats.SetRef]*jobBuilder{}
	visit := func(ref formats.SetRef, rec formats.Record) error {
		if !wanted[ref] {
			return nil
		}
		b := builders[ref]
		if b == nil {
			b = &jobBuilder{}
			builders[ref] = b
		}
		if err := b.add(rec); err != nil {
			return fmt.Errorf("%s: %w", ref.Path(formats.TablePoints), err)
		}
		return nil
	}
	// Every value is verified; the check that each file's bytes are
	// gridstage's own encoding of them (a full re-encoding, the costliest
	// check) is left to `gridstage verify`, and the page says so.
	files := formats.VerifyOptions{SkipStructure: true, Visit: visit}
	// With a run record beside the sets, verify against it as
	// `gridstage verify` does (record hash, jobs against points, byte
	// digests); without one (sets written by hand), the sets alone.
	var rep *formats.Report
	var err error
	against := ""
	if _, statErr := os.Stat(filepath.Join(refs[0].Dir, batch.RecordFile)); statErr == nil {
		var full *batch.VerifyReport
		full, err = batch.Verify(verifyPath, batch.VerifyOptions{Files: files})
		rep = full.Report
		against = "; files and jobs agree with " + batch.RecordFile + " and have the bytes it records"
	} else {
		rep, err = formats.VerifyWith(verifyPath, files)
	}
	verified := err == nil
	switch {
	case formats.IsNotOutput(err):
		return Run{}, badInput(path, "%v", err)
	case err != nil:
		run.Checks = append(run.Checks, Check{Subject: verifyPath, Detail: err.Error()})
	default:
		run.Checks = append(run.Checks, Check{Subject: verifyPath, OK: true,
			Detail: fmt.Sprintf("%s verified: metadata complete, content and chain hashes recompute, every transition row sums to one%s (gridstage verify also checks that each file's bytes are gridstage's encoding of its values)", plural.Count(len(rep.Files), "file", "files"), against)})
	}
	if rep != nil {
		for _, w := range rep.Warnings {
			run.Checks = append(run.Checks, Check{Subject: verifyPath, OK: true, Detail: "note: " + w})
		}
		for _, f := range rep.Files {
			process, table, _, ok := formats.ParseFileName(f.Path)
			if ok {
				hashes[process] = append(hashes[process], File{Name: filepath.Base(f.Path), Table: table, ContentHash: f.ContentHash})
			}
		}
	}
	run.Checks = append(run.Checks, runRecordChecks(&run, refs[0].Dir)...)
	for _, ref := range refs {
		b := builders[ref]
		if !verified || b == nil {
			// Verification stopped early: read what the files hold, so the
			// page can still show it under the warning.
			set, err := formats.Read(ref, nil)
			if err != nil {
				if formats.IsNotOutput(err) {
					return Run{}, badInput(path, "%v", err)
				}
				// Gridstage output that fails to read (damaged, or
				// rewritten by another writer) is a failed check, not bad
				// input: the command exits 1.
				return Run{}, fmt.Errorf("%s: cannot be read: %w", path, err)
			}
			b = &jobBuilder{}
			for _, rec := range set.Records {
				if err := b.add(rec); err != nil {
					return Run{}, badInput(ref.Path(formats.TablePoints), "%v", err)
				}
			}
		}
		r, err := formats.Open(ref, nil)
		if err != nil {
			return Run{}, fmt.Errorf("%s: cannot be read: %w", path, err)
		}
		h := r.Header
		r.Close()
		b.finish()
		job := b.job
		job.Process, job.Kind, job.Method, job.Dim = h.Process, h.Kind, h.Method, h.Dim
		job.Params = append([]string(nil), h.Params...)
		sort.Strings(job.Params)
		job.Files = hashes[ref.Process]
		sort.Slice(job.Files, func(i, j int) bool { return job.Files[i].Name < job.Files[j].Name })
		run.Jobs = append(run.Jobs, job)
		if run.Name == "" {
			run.Name, run.Tool, run.ManifestHash = h.Run, h.Tool, h.ManifestHash
		}
	}
	return run, nil
}

// jobBuilder turns a set's records, in order, into a job: one Point per
// sweep point with one Chain per age.
type jobBuilder struct {
	job   Job
	worst worstPoint
}

// finish completes the job once every record was added: the grid advice
// for the point with most states that fell back.
func (b *jobBuilder) finish() {
	b.worst.finish()
	if b.worst.spec != nil {
		b.job.Advice, b.job.AdvicePoint = adviseSpec(b.worst.spec, b.worst.chains), b.worst.point
	}
}

func (b *jobBuilder) add(rec formats.Record) error {
	j := &b.job
	b.worst.note(rec)
	if rec.Chain == nil {
		return fmt.Errorf("point %d age %d has no chain", rec.Point, rec.Age)
	}
	if len(j.Points) == 0 || j.Points[len(j.Points)-1].Index != rec.Point {
		j.Points = append(j.Points, Point{Index: rec.Point, Params: rec.Params, SpecHash: rec.SpecHash, Spec: rec.Spec,
			YearsPerPeriod: yearsPerPeriod(rec.Spec)})
	}
	pt := &j.Points[len(j.Points)-1]
	if rec.Chain.Transition == nil {
		// The last age of a life cycle: a grid no transition leaves.
		pt.Final, pt.FinalAge = rec.Chain.Grid, rec.Age
		return nil
	}
	diag := rec.Diag
	if len(diag.States) != rec.Chain.States() {
		return errors.New("a chain's diagnostics do not cover its states")
	}
	// The stored moments only: what else the figures need of the law is
	// rebuilt from the spec when a chain is drawn (Point.ResolveLaws).
	law := figures.Law{Mean: diag.True.Mean, SD: diag.True.SD}
	// A life-cycle product's diagnostics describe the sum of the
	// coordinates (manifests: productAges).
	sumDiag := rec.Chain.Dim > 1 && (rec.Age > 0 || rec.Initial != nil)
	cs := figures.Case{Chain: rec.Chain, Diag: &diag, BaselineDiag: rec.Baseline, Law: law, SumDiag: sumDiag}
	pt.Chains = append(pt.Chains, Chain{Case: cs, Age: rec.Age, Initial: rec.Initial})
	return nil
}

// lawOf rebuilds the process from its canonical spec to learn what the
// figures need beyond the stored diagnostics: whether the stationary law
// is exactly normal, a vector process's stationary covariance, and the
// process itself when it is a vector one (for the checks of each
// coordinate). A spec this build cannot parse gives a law with only the
// stored moments and no process.
func lawOf(spec []byte) (figures.Law, solver.VectorTruth) {
	job, err := manifests.ParseSpec(spec)
	if err != nil {
		return figures.Law{}, nil
	}
	p, err := job.Build()
	if err != nil {
		return figures.Law{}, nil
	}
	var l figures.Law
	if ar, ok := p.Model.(solver.AR1); ok {
		l.Gaussian = ar.Shock == nil
	}
	if v, ok := p.Model.(interface {
		StationaryMean() []float64
		StationaryCov() []float64
	}); ok {
		l.MeanVec, l.Cov = v.StationaryMean(), v.StationaryCov()
		l.Gaussian = true
	}
	truth, _ := p.Model.(solver.VectorTruth)
	return l, truth
}

// runRecordChecks reads run.json, which `gridstage run` writes beside the
// sets, and turns every job that did not succeed into a failed check: a
// failed job drops its process's set, so the page must say what is
// missing. A folder without a record (a merge, files copied by hand) gives
// no checks.
func runRecordChecks(run *Run, dir string) []Check {
	rec, err := batch.ReadRecord(dir)
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return []Check{{Subject: filepath.Join(dir, batch.RecordFile), Detail: "the run record cannot be read: " + err.Error()}}
	}
	run.Manifest = rec.Manifest
	var out []Check
	failed := 0
	for _, j := range rec.Jobs {
		if j.Status == runner.Done.String() {
			continue
		}
		failed++
		if failed > 20 {
			continue
		}
		detail := "status " + j.Status
		if j.Error != "" {
			detail += ": " + j.Error
		}
		out = append(out, Check{Subject: fmt.Sprintf("job %s point %d", j.Process, j.Point), Detail: detail})
	}
	if failed > 20 {
		out = append(out, Check{Subject: batch.RecordFile, Detail: fmt.Sprintf("%d more jobs did not succeed", failed-20)})
	}
	if !rec.Succeeded && failed == 0 {
		out = append(out, Check{Subject: batch.RecordFile, Detail: "the run did not succeed (see the run record)"})
	}
	return out
}

// yearsPerPeriod reads a life cycle's years_per_period from its canonical
// spec: the process's own, or its life-cycle component's; 0 when absent.
func yearsPerPeriod(spec []byte) float64 {
	var s struct {
		Years      float64 `json:"years_per_period"`
		Components []struct {
			Years float64 `json:"years_per_period"`
		} `json:"components"`
	}
	if json.Unmarshal(spec, &s) != nil {
		return 0
	}
	for _, c := range s.Components {
		if c.Years > 0 {
			return c.Years
		}
	}
	return s.Years
}
