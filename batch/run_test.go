package batch

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"gridstage/batch/cache"
	"gridstage/batch/shard"
	"gridstage/formats"
	"gridstage/manifests"
)

const sweepManifest = `run: batch-test
processes:
  - name: persistent
    kind: ar1
    rho: 0.9
    sigma: 0.1
    states: 7
    sweep:
      vary:
        rho: [0.5, 0.7, 0.9, 0.95]
        sigma: [0.1, 0.2]
  - name: returns
    kind: iid
    distribution: {law: lognormal, log_mean: 0.03, log_sd: 0.15}
    states: 5
`

func parse(t *testing.T, text string) *manifests.Manifest {
	t.Helper()
	m, err := manifests.Parse(strings.NewReader(text), "test.yaml", t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// readAll returns every file of an output folder by name.
func readAll(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		out[e.Name()] = b
	}
	return out
}

// The same manifest gives byte-identical files with 1 or 4 workers, with
// or without a (warm) cache, and the warm run solves nothing.
func TestRunDeterministicAcrossWorkersAndCache(t *testing.T) {
	m := parse(t, sweepManifest)
	c, err := cache.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	var outputs []map[string][]byte
	for k, opt := range []Options{{Workers: 1}, {Workers: 4, Cache: c}, {Workers: 2, Cache: c}} {
		opt.Out = t.TempDir()
		res, err := Run(context.Background(), m, opt)
		if err != nil {
			t.Fatalf("run %d: %v", k, err)
		}
		if k == 2 && (res.Solved != 0 || res.Cached != len(m.Jobs)) {
			t.Errorf("warm run solved %d and took %d from the cache, want 0 and %d", res.Solved, res.Cached, len(m.Jobs))
		}
		if _, err := formats.Verify(opt.Out); err != nil {
			t.Errorf("run %d: verify: %v", k, err)
		}
		outputs = append(outputs, readAll(t, opt.Out))
	}
	if len(outputs[0]) != 13 { // 6 tables × 2 processes + run.json
		t.Errorf("%d files written, want 13", len(outputs[0]))
	}
	for k := 1; k < len(outputs); k++ {
		for name, b := range outputs[0] {
			if !bytes.Equal(b, outputs[k][name]) {
				t.Errorf("run %d: %s differs from the single-worker run", k, name)
			}
		}
	}
}

// Shards together cover every job once and leave a stamp; the run record
// lists only the shard's jobs.
func TestRunShards(t *testing.T) {
	m := parse(t, sweepManifest)
	seen := map[string]int{}
	for i := 1; i <= 3; i++ {
		dir := t.TempDir()
		res, err := Run(context.Background(), m, Options{Out: dir, Shard: shard.Shard{Index: i, Count: 3}})
		if err != nil {
			t.Fatal(err)
		}
		rec, err := ReadRecord(dir)
		if err != nil || res.Jobs != len(rec.Jobs) {
			t.Fatalf("shard %d: record of %d jobs for %d run, %v", i, len(rec.Jobs), res.Jobs, err)
		}
		for _, j := range rec.Jobs {
			seen[j.SpecHash]++
		}
		if _, _, err := shard.ReadStamp(dir); err != nil {
			t.Errorf("shard %d: %v", i, err)
		}
	}
	if len(seen) != len(m.Jobs) {
		t.Errorf("shards covered %d of %d jobs", len(seen), len(m.Jobs))
	}
	for h, n := range seen {
		if n != 1 {
			t.Errorf("job %s ran %d times", h, n)
		}
	}
}

// A run canceled before it finishes leaves no output set under its final
// names; running again completes it.
func TestRunCanceledLeavesNothingThatLooksComplete(t *testing.T) {
	// Enough jobs that most are still unsolved when the run is canceled.
	m := parse(t, strings.Replace(sweepManifest, "sigma: [0.1, 0.2]", "sigma: {from: 0.05, to: 1, count: 40}", 1))
	dir := t.TempDir()
	ctx, cancel := context.WithCancel(context.Background())
	calls := 0
	_, err := Run(ctx, m, Options{Out: dir, Workers: 1, Progress: func(int) {
		if calls++; calls == 3 {
			cancel()
		}
	}})
	if err == nil {
		t.Fatal("canceled run reported success")
	}
	sets, _ := formats.FindSets(dir)
	if len(sets) != 0 {
		t.Errorf("canceled run left %d sets that look complete", len(sets))
	}
	rec, err := ReadRecord(dir)
	if err != nil || rec.Succeeded {
		t.Errorf("run record after cancel: %+v, %v", rec, err)
	}
	if _, err := Run(context.Background(), m, Options{Out: dir}); err != nil {
		t.Fatal(err)
	}
	if _, err := formats.Verify(dir); err != nil {
		t.Errorf("after the rerun: %v", err)
	}
}

// The streamed run record has the bytes json.MarshalIndent gives, with or
// without jobs and files, and reads back equal.
func TestWriteRecordMatchesMarshalIndent(t *testing.T) {
	recs := []*RunRecord{
		{Run: "r", Manifest: "m.yaml", ManifestHash: "ab", Tool: "t", Shard: "1/1", Jobs: []JobRecord{}, Files: []FileRecord{}},
		{Run: "r", Manifest: "m.yaml", ManifestHash: "ab", Tool: "t", Shard: "2/3", Succeeded: true,
			Jobs: []JobRecord{
				{Index: 0, Process: "p", Point: 0, Params: Params{{Name: "rho", Value: 0.9}, {Name: "sigma", Value: 0.1}}, SpecHash: "s", ChainHash: "c", Status: "done"},
				{Index: 3, Process: "p", Point: 1, SpecHash: "s2", Status: "failed", Error: "x \"quoted\""},
			},
			Files: []FileRecord{{Path: "p.points.parquet", Table: "points", Rows: 2, ContentHash: "h"}}},
	}
	for _, r := range recs {
		dir := t.TempDir()
		if err := WriteRecord(dir, r); err != nil {
			t.Fatal(err)
		}
		got, _ := os.ReadFile(filepath.Join(dir, RecordFile))
		want, _ := json.MarshalIndent(r, "", "  ")
		if want = append(want, '\n'); !bytes.Equal(got, want) {
			t.Errorf("streamed record differs:\n%s\nwant:\n%s", got, want)
		}
		back, err := ReadRecord(dir)
		if err != nil || len(back.Jobs) != len(r.Jobs) {
			t.Fatalf("read back: %v", err)
		}
		for i := range r.Jobs {
			if !slices.Equal(back.Jobs[i].Params, r.Jobs[i].Params) {
				t.Errorf("job %d params %v, want %v", i, back.Jobs[i].Params, r.Jobs[i].Params)
			}
		}
	}
}

// A second run into a folder holding this manifest's complete output does
// nothing; a missing file or --force makes it write again.
func TestRunUpToDate(t *testing.T) {
	m := parse(t, sweepManifest)
	dir := t.TempDir()
	if _, err := Run(context.Background(), m, Options{Out: dir}); err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), m, Options{Out: dir})
	if err != nil || !res.UpToDate || res.Solved != 0 {
		t.Fatalf("second run: up to date %v, solved %d, err %v", res.UpToDate, res.Solved, err)
	}
	if err := os.Remove(filepath.Join(dir, "returns.states.parquet")); err != nil {
		t.Fatal(err)
	}
	res, err = Run(context.Background(), m, Options{Out: dir})
	if err != nil || res.UpToDate || res.Solved != len(m.Jobs) {
		t.Fatalf("after a file was removed: up to date %v, solved %d, err %v", res.UpToDate, res.Solved, err)
	}
	if res, err = Run(context.Background(), m, Options{Out: dir, Force: true}); err != nil || res.UpToDate {
		t.Fatalf("forced run: up to date %v, err %v", res.UpToDate, err)
	}
	if _, err := formats.Verify(dir); err != nil {
		t.Error(err)
	}
}

// The run record of a canceled run lists every job once, in order, with
// what became of it.
func TestRunRecordAfterCancelListsEveryJob(t *testing.T) {
	m := parse(t, strings.Replace(sweepManifest, "sigma: [0.1, 0.2]", "sigma: {from: 0.05, to: 1, count: 40}", 1))
	dir := t.TempDir()
	ctx, cancel := context.WithCancel(context.Background())
	calls := 0
	Run(ctx, m, Options{Out: dir, Workers: 1, Progress: func(int) {
		if calls++; calls == 5 {
			cancel()
		}
	}})
	rec, err := ReadRecord(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Jobs) != len(m.Jobs) {
		t.Fatalf("record lists %d jobs, want %d", len(rec.Jobs), len(m.Jobs))
	}
	done := 0
	for i, j := range rec.Jobs {
		if j.Index != i {
			t.Fatalf("job %d recorded as %d", i, j.Index)
		}
		if j.Status == "done" {
			done++
		}
	}
	if done < 5 || done == len(m.Jobs) {
		t.Errorf("%d of %d jobs recorded done after a cancel at the fifth", done, len(m.Jobs))
	}
}
