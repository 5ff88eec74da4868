package batch

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"sort"

	"gridstage/batch/runner"
	"gridstage/formats"
)

// VerifyOptions choose what Verify checks beyond formats.Verify.
type VerifyOptions struct {
	// ValuesOnly skips the byte digests, for files re-encoded on purpose
	// (by another Parquet or Arrow writer): values, content hashes and the
	// run record are still checked.
	ValuesOnly bool
	// Files passes options to the check of the files themselves
	// (formats.VerifyWith): skipping their structure check, or visiting
	// their records as they are read.
	Files formats.VerifyOptions
}

// VerifyReport is what Verify checked.
type VerifyReport struct {
	*formats.Report
	// Record is the run record checked against the files, or nil when
	// there was none (a single file verified on its own).
	Record *RunRecord
	// BytesChecked counts the files whose byte digest was compared.
	BytesChecked int
}

// RecordMismatchError reports output that disagrees with its run record,
// or a folder whose record is missing or damaged.
type RecordMismatchError struct {
	Path    string
	Problem string
}

func (e *RecordMismatchError) Error() string { return e.Path + ": " + e.Problem }

// BytesChangedError reports a file whose values still hash to the
// recorded content hash but whose bytes differ from those the run wrote:
// something a reader relies on besides the values (footer, page headers,
// types, statistics) changed, or the file was re-encoded.
type BytesChangedError struct {
	Path          string
	Recorded, Now string
}

func (e *BytesChangedError) Error() string {
	return fmt.Sprintf("%s: its bytes changed since the run wrote it (SHA-256 %s, %s records %s) although its values still match their content hash: "+
		"metadata or structure that readers rely on was altered, or the file was re-encoded (if on purpose, check with --values-only)",
		e.Path, e.Now[:16], RecordFile, e.Recorded[:min(16, len(e.Recorded))])
}

// Verify checks an output file or folder as formats.Verify does, and
// against the run record beside it: run.json's own record hash; that the
// folder holds exactly the files the record lists (no set left by another
// run); that every set carries the record's manifest hash; that every
// successful job's spec hash, chain hash and swept values are those of its
// point in the files and every point is a successful job's; that each
// file's content hash and (unless opt.ValuesOnly) byte digest are those
// recorded. A folder needs its run record; a single file is checked
// against the record beside it when that record lists it.
func Verify(path string, opt VerifyOptions) (*VerifyReport, error) {
	fi, statErr := os.Stat(path)
	rep := &VerifyReport{}
	if statErr == nil && fi.IsDir() {
		// A damaged record fails first, before the files are read.
		var damaged *RecordDamagedError
		if _, err := ReadRecord(path); errors.As(err, &damaged) {
			return rep, err
		}
	}
	var err error
	rep.Report, err = formats.VerifyWith(path, opt.Files)
	if err != nil {
		return rep, err
	}
	if statErr != nil {
		return rep, statErr
	}
	if !fi.IsDir() {
		return rep, verifyFileRecord(path, opt, rep)
	}
	return rep, verifyFolderRecord(path, opt, rep)
}

func verifyFileRecord(path string, opt VerifyOptions, rep *VerifyReport) error {
	dir := filepath.Dir(path)
	rec, err := ReadRecord(dir)
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	name := filepath.Base(path)
	for _, f := range rec.Files {
		if f.Path == name {
			rep.Record = rec
			return checkFile(dir, f, rep.Files[0], opt, rep)
		}
	}
	rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s is not listed in %s beside it: checked on its own", path, filepath.Join(dir, RecordFile)))
	return nil
}

// checkFile compares a verified file with its line in the record.
func checkFile(dir string, want FileRecord, got formats.File, opt VerifyOptions, rep *VerifyReport) error {
	path := filepath.Join(dir, want.Path)
	if got.ContentHash != want.ContentHash || got.Rows != want.Rows || got.Table != want.Table {
		return &RecordMismatchError{Path: path, Problem: fmt.Sprintf("its content hash %s (%d rows) differs from the one %s records (%s, %d rows): the file was replaced",
			got.ContentHash[:16], got.Rows, RecordFile, shortHash(want.ContentHash), want.Rows)}
	}
	if opt.ValuesOnly {
		return nil
	}
	rep.BytesChecked++
	if got.Bytes != want.Bytes {
		return &BytesChangedError{Path: path, Recorded: want.Bytes, Now: got.Bytes}
	}
	return nil
}

func shortHash(h string) string {
	if len(h) > 16 {
		return h[:16]
	}
	return fmt.Sprintf("%q", h)
}

func verifyFolderRecord(dir string, opt VerifyOptions, rep *VerifyReport) error {
	recPath := filepath.Join(dir, RecordFile)
	rec, err := ReadRecord(dir)
	if errors.Is(err, fs.ErrNotExist) {
		return &RecordMismatchError{Path: dir, Problem: "has no " + RecordFile + ": the run that wrote it did not finish (a run removes the previous record before it writes), or the record was deleted, so its files cannot be vouched for as one run's output"}
	}
	if err != nil {
		return err
	}
	rep.Record = rec
	if !rec.Succeeded {
		return &RecordMismatchError{Path: recPath, Problem: "says the run did not succeed: its output is incomplete (see the jobs' status)"}
	}
	// The folder holds exactly the recorded files.
	listed := map[string]FileRecord{}
	for _, f := range rec.Files {
		listed[f.Path] = f
	}
	for _, f := range rep.Files {
		name := filepath.Base(f.Path)
		want, ok := listed[name]
		if !ok {
			return &RecordMismatchError{Path: f.Path, Problem: "is not listed in " + RecordFile + ": it was left by another run (delete it, or run again into an empty folder)"}
		}
		delete(listed, name)
		if err := checkFile(dir, want, f, opt, rep); err != nil {
			return err
		}
	}
	if len(listed) > 0 {
		names := make([]string, 0, len(listed))
		for n := range listed {
			names = append(names, n)
		}
		sort.Strings(names)
		return &RecordMismatchError{Path: filepath.Join(dir, names[0]), Problem: "is listed in " + RecordFile + " but missing"}
	}
	return checkJobs(recPath, rec, rep.SetPoints)
}

// checkJobs checks that the sets' points are the record's successful jobs.
func checkJobs(recPath string, rec *RunRecord, sets []formats.SetPoints) error {
	type key struct {
		process string
		point   int
	}
	points := map[key]formats.VerifiedPoint{}
	for _, s := range sets {
		if s.Header.ManifestHash != rec.ManifestHash {
			return &RecordMismatchError{Path: s.Ref.Path(formats.TablePoints),
				Problem: fmt.Sprintf("carries manifest hash %s but %s records %s: the folder mixes the output of two runs", shortHash(s.Header.ManifestHash), RecordFile, shortHash(rec.ManifestHash))}
		}
		for _, p := range s.Points {
			points[key{s.Header.Process, p.Point}] = p
		}
	}
	for _, j := range rec.Jobs {
		if j.Status != runner.Done.String() {
			continue
		}
		k := key{j.Process, j.Point}
		p, ok := points[k]
		if !ok {
			return &RecordMismatchError{Path: recPath, Problem: fmt.Sprintf("job %d (process %s, point %d) succeeded but no set holds its point", j.Index, j.Process, j.Point)}
		}
		delete(points, k)
		if p.SpecHash != j.SpecHash || p.ChainHash != j.ChainHash {
			return &RecordMismatchError{Path: recPath, Problem: fmt.Sprintf("job %d (process %s, point %d) records spec hash %s and chain hash %s, the files hold %s and %s",
				j.Index, j.Process, j.Point, shortHash(j.SpecHash), shortHash(j.ChainHash), shortHash(p.SpecHash), shortHash(p.ChainHash))}
		}
		if len(j.Params) != len(p.Params) {
			return &RecordMismatchError{Path: recPath, Problem: fmt.Sprintf("job %d (process %s, point %d) records %d swept values, the files hold %d", j.Index, j.Process, j.Point, len(j.Params), len(p.Params))}
		}
		for _, x := range j.Params {
			if v, ok := p.Params[x.Name]; !ok || math.Float64bits(v) != math.Float64bits(x.Value) {
				return &RecordMismatchError{Path: recPath, Problem: fmt.Sprintf("job %d (process %s, point %d) records %s = %g, the files hold %g", j.Index, j.Process, j.Point, shorten(x.Name, 40), x.Value, v)}
			}
		}
	}
	if len(points) > 0 {
		keys := make([]key, 0, len(points))
		for k := range points {
			keys = append(keys, k)
		}
		sort.Slice(keys, func(a, b int) bool {
			if keys[a].process != keys[b].process {
				return keys[a].process < keys[b].process
			}
			return keys[a].point < keys[b].point
		})
		k := keys[0]
		return &RecordMismatchError{Path: recPath, Problem: fmt.Sprintf("the files hold point %d of process %s, which no successful job in the record produced", k.point, k.process)}
	}
	return nil
}
