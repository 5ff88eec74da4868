// Package merge combines the outputs of a sharded run (gridstage run
// --shard I/N, one folder per shard) into the output of the whole run.
//
// Shard I of N holds jobs I-1, I-1+N, I-1+2N, … (package shard), so each
// process's sweep points are dealt round-robin across the shards and each
// shard holds its points in increasing order. Merging is a streaming k-way
// merge by (point, age) of the shards' sets, written through the same
// formats.Writer as a single-machine run: the merged files hold the same
// rows in the same order, hence the same content hashes, spec digests and
// chain hashes.
//
// Memory does not grow with the number of points or of shards: at most
// FanIn sets are read at once. With more shards than that, groups of FanIn
// are first merged into temporary sets (Arrow IPC in small batches, in a
// hidden folder inside the output folder, removed at the end), and those
// are merged in turn; each such level reads and writes every chain once
// more, so time is linear in the data with ⌈log_FanIn N⌉ passes. The run
// records are merged job by job, never held whole.
//
// Before writing anything Merge checks that the folders are every shard of
// one run, each once (their shard stamps and run records), and that the
// sets agree on their headers; while merging, the formats reader re-checks
// every chain hash, so a damaged shard file stops the merge. The merged
// folder gets the run record of the whole run, as a single-machine run
// writes it.
package merge

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"gridstage/batch/shard"
	"gridstage/formats"
)

// Result describes a merge.
type Result struct {
	// Shards is the number of shard folders merged.
	Shards int
	// Jobs is the number of jobs of the whole run.
	Jobs int
	// Sets lists the merged sets in process-name order.
	Sets []formats.Result
}

// InputError reports shard folders that do not form one complete run.
type InputError struct {
	Dir     string // the folder concerned, "" when about the whole set
	Problem string
}

func (e *InputError) Error() string {
	if e.Dir == "" {
		return "merge: " + e.Problem
	}
	return "merge: " + e.Dir + ": " + e.Problem
}

// FanIn is the largest number of sets merged at once; a merge of more
// shards goes through intermediate sets. Each open set costs a few
// megabytes of buffers (the Parquet pages of its current row group).
var FanIn = 8

// Merge combines the shard folders into folder out, which is created if
// needed and must not be one of them, and writes there the run record
// (run.json) of the whole run. Files of a set appear in out only when the
// whole set is written.
func Merge(dirs []string, out string) (*Result, error) {
	byIndex, jobs, err := checkStamps(dirs)
	if err != nil {
		return nil, err
	}
	n := len(byIndex)
	absOut, err := filepath.Abs(out)
	if err != nil {
		return nil, err
	}
	for _, d := range dirs {
		if a, _ := filepath.Abs(d); a == absOut {
			return nil, &InputError{Dir: d, Problem: "the output folder is one of the shard folders"}
		}
	}
	groups, order, err := collectSets(dirs)
	if err != nil {
		return nil, err
	}
	// Check the run records before writing anything; the merged record
	// needs the merged files, so it is written after them.
	if err := checkRecords(byIndex, jobs); err != nil {
		return nil, err
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, fmt.Errorf("merge: cannot create output folder %s: %w", out, err)
	}
	tmp, err := os.MkdirTemp(out, ".merge-*")
	if err != nil {
		return nil, fmt.Errorf("merge: %w", err)
	}
	defer os.RemoveAll(tmp)
	res := &Result{Shards: n, Jobs: jobs}
	points := 0
	for _, process := range order {
		r, err := mergeSet(groups[process], out, tmp)
		if err != nil {
			return nil, err
		}
		points += len(r.Points)
		res.Sets = append(res.Sets, r)
	}
	if points != jobs {
		return nil, &InputError{Problem: fmt.Sprintf("the shards hold %d jobs, their stamps say the run has %d", points, jobs)}
	}
	if err := writeRecord(byIndex, jobs, res.Sets, out); err != nil {
		return nil, err
	}
	return res, nil
}

// checkStamps reads every folder's shard stamp and checks that they are
// shards 1..N of one run, each exactly once. It returns the folders in
// shard order and the run's number of jobs.
func checkStamps(dirs []string) (byIndex []string, jobs int, err error) {
	if len(dirs) == 0 {
		return nil, 0, &InputError{Problem: "no shard folders given"}
	}
	seen := map[int]string{}
	var first shard.Stamp
	count := 0
	for i, d := range dirs {
		st, s, err := shard.ReadStamp(d)
		if err != nil {
			if errors.Is(err, shard.ErrNoStamp) {
				return nil, 0, &InputError{Dir: d, Problem: "has no " + shard.StampFile + ": its shard did not finish, or it is not the output of gridstage run --shard"}
			}
			return nil, 0, &InputError{Dir: d, Problem: err.Error()}
		}
		if i == 0 {
			first = st
			count = s.Count
		}
		switch {
		case st.Numeric != first.Numeric:
			return nil, 0, &InputError{Dir: d, Problem: fmt.Sprintf("was solved under numeric version %s, %s under %s: shards from builds that compute differently cannot be merged; run every shard with the same gridstage", orNone(st.Numeric), dirs[0], orNone(first.Numeric))}
		case st.ManifestHash != first.ManifestHash:
			return nil, 0, &InputError{Dir: d, Problem: fmt.Sprintf("comes from another manifest (hash %s, %s has %s)", st.ManifestHash, dirs[0], first.ManifestHash)}
		case s.Count != count || st.Jobs != first.Jobs:
			return nil, 0, &InputError{Dir: d, Problem: fmt.Sprintf("is shard %s of %d jobs, %s is shard %s of %d jobs", s, st.Jobs, dirs[0], first.Shard, first.Jobs)}
		}
		if other, dup := seen[s.Index]; dup {
			return nil, 0, &InputError{Dir: d, Problem: fmt.Sprintf("is shard %s, and so is %s", s, other)}
		}
		seen[s.Index] = d
	}
	if len(seen) != count {
		var missing []string
		for i := 1; i <= count; i++ {
			if _, ok := seen[i]; !ok {
				missing = append(missing, fmt.Sprintf("%d/%d", i, count))
			}
		}
		return nil, 0, &InputError{Problem: fmt.Sprintf("shard %s missing (got %d of %d shard folders)", strings.Join(missing, ", "), len(seen), count)}
	}
	byIndex = make([]string, count)
	for i, d := range seen {
		byIndex[i-1] = d
	}
	return byIndex, first.Jobs, nil
}

// collectSets finds each shard's sets and groups them by process, in
// process-name order.
func collectSets(dirs []string) (map[string][]formats.SetRef, []string, error) {
	groups := map[string][]formats.SetRef{}
	for _, d := range dirs {
		refs, err := formats.FindSets(d)
		if err != nil {
			return nil, nil, &InputError{Dir: d, Problem: err.Error()}
		}
		for _, r := range refs {
			if prev := groups[r.Process]; len(prev) > 0 && prev[len(prev)-1].Dir == d {
				return nil, nil, &InputError{Dir: d, Problem: fmt.Sprintf("holds process %s in two formats", r.Process)}
			}
			groups[r.Process] = append(groups[r.Process], r)
		}
	}
	order := make([]string, 0, len(groups))
	for p := range groups {
		order = append(order, p)
	}
	slices.Sort(order)
	return groups, order, nil
}

// source is one shard's set being read, with its next record.
type source struct {
	r    *formats.Reader
	next formats.Record
	done bool
}

func (s *source) advance() error {
	rec, err := s.r.Next()
	if err == io.EOF {
		s.done = true
		return nil
	}
	if err != nil {
		return err
	}
	s.next = rec
	return nil
}

// mergeSet merges one process's sets from the shards into out, through
// intermediate sets in tmp when there are more than FanIn.
func mergeSet(refs []formats.SetRef, out, tmp string) (formats.Result, error) {
	first, err := formats.Open(refs[0], nil)
	if err != nil {
		return formats.Result{}, fmt.Errorf("merge: %w", err)
	}
	h := first.Header
	first.Close()
	format := refs[0].Format
	for _, r := range refs {
		if r.Format != format {
			return formats.Result{}, &InputError{Dir: r.Dir, Problem: fmt.Sprintf("holds %s as %s, %s as %s", h.Process, r.Format, refs[0].Dir, format)}
		}
	}
	fanIn := max(FanIn, 2)
	level := refs
	var made []string // intermediate folders of the level being read
	for pass := 0; len(level) > fanIn; pass++ {
		var next []formats.SetRef
		var dirs []string
		for i := 0; i < len(level); i += fanIn {
			dir := filepath.Join(tmp, fmt.Sprintf("%s-%d-%d", h.Process, pass, i/fanIn))
			if err := os.Mkdir(dir, 0o755); err != nil {
				return formats.Result{}, fmt.Errorf("merge: %w", err)
			}
			opt := formats.Options{Format: formats.Arrow, BatchRows: intermediateRows}
			if _, err := mergeGroup(level[i:min(i+fanIn, len(level))], h, refs[0].Dir, dir, opt); err != nil {
				return formats.Result{}, err
			}
			next = append(next, formats.SetRef{Dir: dir, Process: h.Process, Format: formats.Arrow})
			dirs = append(dirs, dir)
		}
		for _, d := range made {
			os.RemoveAll(d)
		}
		level, made = next, dirs
	}
	defer func() {
		for _, d := range made {
			os.RemoveAll(d)
		}
	}()
	return mergeGroup(level, h, refs[0].Dir, out, formats.Options{Format: format})
}

// intermediateRows is the batch size of intermediate sets: small, as they
// are read FanIn at a time.
const intermediateRows = 4096

// mergeGroup k-way merges sets of one process, which must all describe
// header h (read from folder from), into a set in folder out.
func mergeGroup(refs []formats.SetRef, h formats.Header, from, out string, opt formats.Options) (formats.Result, error) {
	var srcs []*source
	defer func() {
		for _, s := range srcs {
			s.r.Close()
		}
	}()
	for _, ref := range refs {
		r, err := formats.Open(ref, nil)
		if err != nil {
			return formats.Result{}, fmt.Errorf("merge: %w", err)
		}
		srcs = append(srcs, &source{r: r})
		if err := sameHeader(h, from, r); err != nil {
			return formats.Result{}, err
		}
		if err := srcs[len(srcs)-1].advance(); err != nil {
			return formats.Result{}, fmt.Errorf("merge: %w", err)
		}
	}
	w, err := formats.Create(out, h, opt)
	if err != nil {
		return formats.Result{}, fmt.Errorf("merge: %w", err)
	}
	for {
		// The source whose next record has the lowest (point, age); a
		// linear scan, as at most FanIn sets are open.
		var best *source
		for _, s := range srcs {
			if s.done {
				continue
			}
			if best == nil || before(s.next, best.next) {
				best = s
			}
		}
		if best == nil {
			break
		}
		for _, s := range srcs {
			if s != best && !s.done && s.next.Point == best.next.Point {
				w.Abort()
				return formats.Result{}, &InputError{Problem: fmt.Sprintf("process %s point %d is in both %s and %s", h.Process, s.next.Point, origin(best.r.Ref.Dir), origin(s.r.Ref.Dir))}
			}
		}
		if err := w.Append(best.next); err != nil {
			w.Abort()
			return formats.Result{}, fmt.Errorf("merge: %s point %d from %s: %w", h.Process, best.next.Point, origin(best.r.Ref.Dir), err)
		}
		if err := best.advance(); err != nil {
			w.Abort()
			return formats.Result{}, fmt.Errorf("merge: %w", err)
		}
	}
	res, err := w.Close()
	if err != nil {
		return formats.Result{}, fmt.Errorf("merge: %w", err)
	}
	return res, nil
}

// origin names a folder read by the merge: a shard folder, or an
// intermediate set standing for several shards.
func origin(dir string) string {
	if strings.HasPrefix(filepath.Base(filepath.Dir(dir)), ".merge-") {
		return "one of the shards merged into " + filepath.Base(dir)
	}
	return dir
}

func before(a, b formats.Record) bool {
	if a.Point != b.Point {
		return a.Point < b.Point
	}
	return a.Age < b.Age
}

// sameHeader checks that a set describes the same process of the same run
// as header h, read from folder first.
func sameHeader(h formats.Header, first string, r *formats.Reader) error {
	ha, hb := h, r.Header
	diff := ""
	switch {
	case ha.Run != hb.Run:
		diff = fmt.Sprintf("run %q against %q", hb.Run, ha.Run)
	case ha.ManifestHash != hb.ManifestHash:
		diff = fmt.Sprintf("manifest hash %s against %s", hb.ManifestHash, ha.ManifestHash)
	case ha.Kind != hb.Kind || ha.Method != hb.Method || ha.Dim != hb.Dim:
		diff = fmt.Sprintf("kind %s, method %s, dimension %d against %s, %s, %d", hb.Kind, hb.Method, hb.Dim, ha.Kind, ha.Method, ha.Dim)
	case !slices.Equal(ha.Params, hb.Params):
		diff = fmt.Sprintf("swept parameters %v against %v", hb.Params, ha.Params)
	case ha.Numeric != hb.Numeric:
		diff = fmt.Sprintf("numeric version %s against %s (run every shard with the same gridstage)", hb.Numeric, ha.Numeric)
	case ha.Tool != hb.Tool:
		diff = fmt.Sprintf("tool version %s against %s (run every shard with the same gridstage)", hb.Tool, ha.Tool)
	}
	if diff != "" {
		return &InputError{Dir: r.Ref.Dir, Problem: fmt.Sprintf("process %s does not match %s: %s", ha.Process, first, diff)}
	}
	return nil
}

// orNone names a missing version (a stamp from a build before numeric
// versions were recorded).
func orNone(v string) string {
	if v == "" {
		return "(none recorded)"
	}
	return v
}
