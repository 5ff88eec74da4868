package merge

import (
	"errors"
	"fmt"
	"io"

	"gridstage/batch"
	"gridstage/batch/shard"
	"gridstage/formats"
)

// checkRecords reads the shards' run records (byIndex: the folders in
// shard order) job by job and checks that each says its shard succeeded,
// under the same numeric version and manifest, and lists exactly its
// shard's jobs in order, so that together they list jobs 0..jobs-1 once.
func checkRecords(byIndex []string, jobs int) error {
	n := len(byIndex)
	var first *batch.RunRecord
	listed := 0
	for i, d := range byIndex {
		r, err := batch.OpenJobs(d)
		if err != nil {
			return &InputError{Dir: d, Problem: "its run record cannot be read: " + err.Error()}
		}
		err = checkRecord(r, d, byIndex[0], first, i, n, jobs, &listed)
		if first == nil {
			head := r.Head
			first = &head
		}
		r.Close()
		if err != nil {
			return err
		}
	}
	if listed != jobs {
		return &InputError{Problem: fmt.Sprintf("the shards' run records list %d jobs, their stamps say %d", listed, jobs)}
	}
	return nil
}

// checkRecord checks the record of shard i+1 of n against the first one.
func checkRecord(r *batch.JobReader, dir, firstDir string, first *batch.RunRecord, i, n, jobs int, listed *int) error {
	h := r.Head
	switch {
	case !h.Succeeded:
		return &InputError{Dir: dir, Problem: "its run record says the shard did not succeed"}
	case first != nil && h.Numeric != first.Numeric:
		return &InputError{Dir: dir, Problem: fmt.Sprintf("its run record says numeric version %s, %s says %s", orNone(h.Numeric), firstDir, orNone(first.Numeric))}
	case first != nil && h.ManifestHash != first.ManifestHash:
		return &InputError{Dir: dir, Problem: "its run record names another manifest"}
	}
	want := i // shard i+1 holds jobs i, i+n, i+2n, … (package shard)
	for {
		j, err := r.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return &InputError{Dir: dir, Problem: "its run record cannot be read: " + err.Error()}
		}
		*listed++
		if j.Index != want || want >= jobs {
			return &InputError{Problem: fmt.Sprintf("the shards' run records do not list job %d exactly once (%s lists job %d where shard %s holds job %d)",
				min(want, j.Index), dir, j.Index, shard.Shard{Index: i + 1, Count: n}, want)}
		}
		want += n
	}
	if want < jobs {
		return &InputError{Problem: fmt.Sprintf("the shards' run records do not list job %d exactly once (%s stops before it)", want, dir)}
	}
	return nil
}

// writeRecord writes the run record of the whole run into out: every job
// in manifest order, taken in turn from the shards' records (job k from
// shard k mod N + 1), the merged files, and shard "1/1", as a
// single-machine run of the manifest records. checkRecords has passed.
func writeRecord(byIndex []string, jobs int, sets []formats.Result, out string) error {
	readers := make([]*batch.JobReader, len(byIndex))
	defer func() {
		for _, r := range readers {
			if r != nil {
				r.Close()
			}
		}
	}()
	for i, d := range byIndex {
		r, err := batch.OpenJobs(d)
		if err != nil {
			return &InputError{Dir: d, Problem: "its run record cannot be read: " + err.Error()}
		}
		readers[i] = r
	}
	h := readers[0].Head
	rec := &batch.RunRecord{Run: h.Run, Manifest: h.Manifest, ManifestHash: h.ManifestHash, Tool: h.Tool,
		Numeric: h.Numeric, Shard: shard.All.String(), Succeeded: true, Files: batch.FileRecords(sets)}
	k := 0
	next := func() (batch.JobRecord, error) {
		j, err := readers[k%len(readers)].Next()
		if err == nil && j.Index != k {
			err = fmt.Errorf("job %d where job %d was expected", j.Index, k)
		}
		if err != nil {
			return j, &InputError{Dir: byIndex[k%len(readers)], Problem: "its run record changed during the merge: " + err.Error()}
		}
		k++
		return j, nil
	}
	return batch.WriteRecordJobs(out, rec, jobs, next)
}
