package batch

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"log/slog"
	"os"
	"path/filepath"
	"sync/atomic"

	"gridstage/batch/cache"
	"gridstage/batch/runner"
	"gridstage/batch/shard"
	"gridstage/formats"
	"gridstage/internal/version"
	"gridstage/manifests"
	"gridstage/solver"
)

// Options choose how a manifest is run. The zero value runs every job on
// every core, without a cache, into the manifest's output folder and
// format.
type Options struct {
	// Out overrides the manifest's output folder when non-empty.
	Out string
	// Format overrides the manifest's output format when non-nil.
	Format *formats.Format
	// Workers is the number of jobs solved at once; 0 means every core.
	Workers int
	// Cache, when non-nil, supplies solved jobs by spec hash and keeps new ones.
	Cache *cache.Cache
	// Shard selects this process's share of the jobs; the zero value is all.
	Shard shard.Shard
	// Logger receives progress and warnings; nil discards them.
	Logger *slog.Logger
	// Progress, when non-nil, is called with 1 as each job is delivered.
	Progress func(n int)
	// Force rewrites the output even when it is already up to date.
	Force bool
	// PointList keeps every point's spec and chain hashes in
	// Result.Sets[i].Points; without it they are nil (a run of a million
	// points need not hold them: run.json lists them).
	PointList bool
	// Advise computes grid advice (Result.Advice) for every process with
	// states that fell back; it solves a few chains more per such process.
	Advise bool
}

// Result is what Run did.
type Result struct {
	Record *RunRecord
	// Dir is the output folder.
	Dir string
	// Solved and Cached count the jobs computed and taken from the cache;
	// Failed the jobs that failed.
	Solved, Cached, Failed int
	// Sets lists the output sets written, with their files.
	Sets []formats.Result
	// UpToDate reports that the output folder already held this run's
	// complete output, so nothing was solved or written.
	UpToDate bool
	// Jobs counts the jobs of the run (of its shard) and FallbackJobs those
	// with states that matched fewer moments than requested; ShortJobs
	// counts those among them whose grid does not carry the moments
	// (manifests.Solution.Carries: a state holding at least 0.1 % of the
	// stationary mass fell back). Up-to-date runs leave ShortJobs 0.
	Jobs, FallbackJobs, ShortJobs int
	// Stale, when not empty, says why output of the same manifest already
	// in the folder was not taken as up to date (a file changed, the
	// record is damaged) and the run solved again.
	Stale string
	// Advice holds, when Options.Advise is set, the grid advice of every
	// process with ShortJobs, in manifest order.
	Advice []ProcessAdvice
}

// ProcessAdvice is the grid advice of one process: computed for its job
// with the most states that fell back among those whose grid does not
// carry the moments (the first such in job order).
type ProcessAdvice struct {
	Process string
	// Jobs counts the process's jobs whose grid does not carry the moments.
	Jobs int
	// Worst is that job, with States of its chain states falling back.
	Worst     manifests.Job
	Fallbacks int
	States    int
	// Text is the advice (manifests.Problem.FallbackAdvice).
	Text string
}

// solved is a job's result as it travels from a worker to the writer.
type solved struct {
	sol    manifests.Solution
	spec   []byte // the job's canonical spec, rebuilt on the worker
	cached bool
	// sens are the chain's parameter derivatives, when its process asks
	// for them (computed on the worker, never cached: they follow from
	// the spec).
	sens *solver.Sensitivity
}

// Run solves the manifest's jobs (those of opt.Shard) and writes one output
// set per process into the output folder, then the run record. A process
// with a failed job gets no files (its set is aborted); the other processes
// are written. The error is non-nil when anything failed; the Result is
// valid whenever the output folder could be created.
func Run(ctx context.Context, m *manifests.Manifest, opt Options) (*Result, error) {
	log := opt.Logger
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
	dir := opt.Out
	if dir == "" {
		dir = m.OutputDir("")
	}
	if err := prepareOutputFolder(dir); err != nil {
		return nil, err
	}
	format := formats.Parquet
	if m.Output.Format == manifests.FormatArrow {
		format = formats.Arrow
	}
	if opt.Format != nil {
		format = *opt.Format
	}
	sh := opt.Shard
	if sh.Count == 0 {
		sh = shard.All
	}
	jobs := sh.Jobs(len(m.Jobs))
	staleReason := ""
	if !opt.Force {
		rec, stale := upToDate(dir, m, sh, format)
		if rec != nil {
			log.Info("output is up to date (every file's bytes checked against run.json); nothing to do (use --force to rewrite it)", "folder", dir)
			res := &Result{Dir: dir, Record: rec, UpToDate: true, Jobs: len(rec.Jobs)}
			for _, j := range rec.Jobs {
				if j.Fallbacks > 0 {
					res.FallbackJobs++
				}
			}
			rec.Jobs = nil
			return res, nil
		}
		if stale != "" {
			log.Warn("the output of this manifest is not intact; solving again", "folder", dir, "reason", stale)
			staleReason = stale
		}
	}
	// The folder's previous record goes first: from here until the new
	// record is written the folder has none, so sets renamed in by this run
	// beside those of an earlier one are never vouched for by either's
	// record (verify refuses a folder without one).
	if err := removeRecord(dir); err != nil {
		return nil, fmt.Errorf("batch: output folder %s: %w", dir, err)
	}
	// The record's job list streams to a temporary file as jobs finish, so
	// memory does not grow with the number of jobs; Record.Jobs stays nil.
	res := &Result{Dir: dir, Jobs: len(jobs), Stale: staleReason, Record: &RunRecord{
		Run: m.Run, Manifest: m.File, ManifestHash: m.Hash, Tool: version.Tool, Numeric: version.Numeric, Shard: sh.String(),
	}}
	jobLog, err := newJobLog(dir)
	if err != nil {
		return nil, fmt.Errorf("batch: run record: %w", err)
	}
	defer jobLog.discard()
	recordOf := func(k int) JobRecord {
		j := m.Jobs[jobs[k]]
		return JobRecord{Index: jobs[k], Process: j.Process, Point: j.Point, Params: Params(j.Params),
			SpecHash: j.SpecHash, AutoStates: j.AutoStates, Status: runner.NotRun.String()}
	}

	var cachedCount atomic.Int64
	withSens := map[string]bool{}
	for _, p := range m.Processes {
		withSens[p.Name] = p.Sensitivities
	}
	// differentiate attaches the derivatives a process asks for.
	differentiate := func(job manifests.Job, v solved) (solved, error) {
		if !withSens[job.Process] {
			return v, nil
		}
		var err error
		if v.sens, err = job.Sensitivities(v.sol.Chain); err != nil {
			return solved{}, fmt.Errorf("sensitivities: %w", err)
		}
		return v, nil
	}
	work := func(ctx context.Context, k int) (solved, error) {
		if err := ctx.Err(); err != nil {
			return solved{}, err
		}
		job := m.Jobs[jobs[k]]
		spec, err := job.Spec()
		if err != nil {
			return solved{}, err
		}
		if opt.Cache != nil {
			var sol manifests.Solution
			hit, err := opt.Cache.Get(job.SpecHash, &sol)
			if err != nil {
				log.Warn("damaged cache entry; solving again", "process", job.Process, "point", job.Point, "error", err)
			}
			if hit {
				cachedCount.Add(1)
				return differentiate(job, solved{sol: sol, spec: spec, cached: true})
			}
		}
		prob, err := job.Build()
		if err != nil {
			return solved{}, err
		}
		sol, err := prob.Solve()
		if err != nil {
			return solved{}, err
		}
		if opt.Cache != nil {
			if err := opt.Cache.Put(job.SpecHash, &sol); err != nil {
				log.Warn("could not store in cache", "process", job.Process, "point", job.Point, "error", err)
			}
		}
		return differentiate(job, solved{sol: sol, spec: spec})
	}

	sets := newSetWriter(m, dir, format)
	sets.list = opt.PointList
	if !sh.Whole() {
		sets.rows = ShardBatchRows
	}
	defer sets.abort()
	worst := map[string]*worstJob{}
	delivered := 0
	sink := func(k int, v solved, jobErr error) error {
		job := m.Jobs[jobs[k]]
		rec := recordOf(k)
		delivered = k + 1
		if opt.Progress != nil {
			opt.Progress(1)
		}
		if jobErr != nil {
			rec.Status, rec.Error = runner.Failed.String(), jobErr.Error()
			res.Failed++
			log.Error("job failed", "process", job.Process, "point", job.Point, "error", jobErr)
			sets.fail(job.Process)
			return jobLog.add(rec)
		}
		rec.Status = runner.Done.String()
		rec.Fallbacks = v.sol.Fallbacks()
		if rec.Fallbacks > 0 {
			res.FallbackJobs++
			if !v.sol.Carries() {
				res.ShortJobs++
				if opt.Advise {
					noteWorst(worst, job, v.sol, rec.Fallbacks)
				}
			}
			log.Debug("states fell back to fewer moments", "process", job.Process, "point", job.Point,
				"states", rec.Fallbacks, "of", v.sol.States())
		}
		hash, err := sets.append(job, v.sol, v.spec, v.sens)
		if err != nil {
			return err
		}
		rec.ChainHash = hash
		return jobLog.add(rec)
	}
	report, runErr := runner.Run(ctx, len(jobs), runner.Options{Workers: opt.Workers, KeepGoing: true}, work, sink)
	// Jobs after the last one delivered never reached the sink (the run
	// stopped): record what became of them.
	for k := delivered; k < len(jobs); k++ {
		rec := recordOf(k)
		st := report.Jobs[k]
		if st.State != runner.Done {
			rec.Status = st.State.String()
		}
		if st.Err != nil {
			rec.Error = st.Err.Error()
		}
		if err := jobLog.add(rec); err != nil {
			runErr = errors.Join(runErr, err)
			break
		}
	}
	if opt.Advise {
		res.Advice = adviseWorst(m, worst)
	}
	res.Cached = int(cachedCount.Load())
	res.Solved = report.Done - res.Cached
	if runErr == nil {
		written, err := sets.close()
		res.Sets = written
		runErr = err
	}
	res.Record.Files = FileRecords(res.Sets)
	if runErr == nil && res.Failed > 0 {
		runErr = fmt.Errorf("%d of %d jobs failed (see %s)", res.Failed, len(jobs), RecordFile)
	}
	res.Record.Succeeded = runErr == nil
	if err := jobLog.writeRecord(dir, res.Record); err != nil {
		runErr = errors.Join(runErr, fmt.Errorf("batch: writing run record: %w", err))
	}
	if runErr == nil && !sh.Whole() {
		runErr = shard.WriteStamp(dir, sh, m.Hash, len(m.Jobs))
	}
	return res, runErr
}

// ShardBatchRows is the row-group size of a shard's files. A merge reads
// many shards at once, each through the pages of its current row group, so
// shards are written in smaller row groups than a whole run's files (whose
// bytes a merge reproduces). Content hashes do not depend on it.
const ShardBatchRows = 4096

func paramMap(ps []manifests.Param) map[string]float64 {
	if len(ps) == 0 {
		return nil
	}
	out := make(map[string]float64, len(ps))
	for _, p := range ps {
		out[p.Name] = p.Value
	}
	return out
}

// upToDate returns the run record in dir when the folder already holds the
// complete, successful output of this manifest and shard written by this
// version of the tool in this format, every file it lists still there
// with the very bytes the run wrote (SHA-256 against the record's byte
// digests; the record's own hash is checked by ReadRecord). The manifest
// hash covers every job's spec hash, and the spec hash the solver's
// numeric version, so equal hashes mean equal numbers. When the folder
// holds this manifest's output but something in it changed, it returns
// nil and a reason.
func upToDate(dir string, m *manifests.Manifest, sh shard.Shard, f formats.Format) (*RunRecord, string) {
	rec, err := ReadRecord(dir)
	var damaged *RecordDamagedError
	if errors.As(err, &damaged) {
		return nil, damaged.Error()
	}
	if err != nil || !rec.Succeeded || rec.ManifestHash != m.Hash || rec.Tool != version.Tool || rec.Numeric != version.Numeric ||
		rec.Shard != sh.String() || len(rec.Files) == 0 {
		return nil, ""
	}
	for _, file := range rec.Files {
		if filepath.Ext(file.Path) != f.Ext() {
			return nil, ""
		}
		path := filepath.Join(dir, file.Path)
		got, err := bytesDigest(path)
		if err != nil {
			return nil, fmt.Sprintf("%s cannot be read: %v", path, err)
		}
		if got != file.Bytes {
			return nil, fmt.Sprintf("%s changed since the run wrote it (its SHA-256 differs from the one in %s)", path, RecordFile)
		}
	}
	if !sh.Whole() {
		if _, _, err := shard.ReadStamp(dir); err != nil {
			return nil, ""
		}
	}
	return rec, ""
}

// bytesDigest returns the SHA-256 of a regular file's bytes, in hex.
func bytesDigest(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	if fi, err := f.Stat(); err != nil || !fi.Mode().IsRegular() {
		return "", fmt.Errorf("not a regular file")
	}
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// removeRecord removes the run record in dir, if any, and syncs the folder
// so that the removal survives a crash before the first set is renamed in.
func removeRecord(dir string) error {
	err := os.Remove(filepath.Join(dir, RecordFile))
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	return d.Sync()
}

// OutputFolderError reports an output location that cannot hold the
// output: bad input, not a failed job.
type OutputFolderError struct {
	Dir    string
	Reason string
}

func (e *OutputFolderError) Error() string {
	return fmt.Sprintf("the output folder %s cannot be used: %s", shorten(e.Dir, 200), e.Reason)
}

// prepareOutputFolder creates dir if needed and checks that a file can be
// created in it (a regular file, a dangling link or a read-only system
// folder such as /proc/self is refused here rather than half-way).
func prepareOutputFolder(dir string) error {
	if fi, err := os.Stat(dir); err == nil && !fi.IsDir() {
		return &OutputFolderError{Dir: dir, Reason: "it exists and is not a folder"}
	} else if err != nil && !errors.Is(err, fs.ErrNotExist) {
		return &OutputFolderError{Dir: dir, Reason: "it cannot be read (" + plainReason(err) + ")"}
	}
	if fi, err := os.Lstat(dir); err == nil && fi.Mode()&fs.ModeSymlink != 0 {
		if _, err := os.Stat(dir); err != nil {
			return &OutputFolderError{Dir: dir, Reason: "it is a link to something that does not exist"}
		}
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return &OutputFolderError{Dir: dir, Reason: "it cannot be created (" + plainReason(err) + ")"}
	}
	probe, err := os.CreateTemp(dir, ".gridstage-probe-*")
	if err != nil {
		return &OutputFolderError{Dir: dir, Reason: "no file can be created in it (" + plainReason(err) + ")"}
	}
	probe.Close()
	os.Remove(probe.Name())
	return nil
}

// plainReason is the operating system's reason without the path it
// repeats ("permission denied", "not a directory").
func plainReason(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}
