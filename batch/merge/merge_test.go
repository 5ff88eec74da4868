package merge

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/batch"
	"gridstage/batch/shard"
	"gridstage/formats"
	"gridstage/internal/version"
	"gridstage/solver"
)

const manifestHash = "0123456789abcdef"

// job is one (process, point) of a made-up run; jobs are numbered in
// manifest order across processes, as manifests.Manifest.Jobs are.
type job struct {
	process string
	point   int
	rho     float64
}

func runJobs() []job {
	var jobs []job
	for p := 0; p < 7; p++ {
		jobs = append(jobs, job{"wages", p, 0.3 + 0.09*float64(p)})
	}
	for p := 0; p < 2; p++ { // fewer points than shards: some shards lack this set
		jobs = append(jobs, job{"productivity", p, -0.4 + 0.5*float64(p)})
	}
	return jobs
}

func record(t *testing.T, j job) formats.Record {
	t.Helper()
	proc := solver.AR1{Rho: j.rho, Sigma: 0.2}
	c, err := proc.Discretize(solver.Settings{States: 5, Moments: 2})
	if err != nil {
		t.Fatal(err)
	}
	b, err := proc.Discretize(solver.Settings{States: 5, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	bd := solver.Diagnose(b, proc)
	spec := []byte(fmt.Sprintf(`{"kind":"ar1","process":%q,"rho":%v}`, j.process, j.rho))
	return formats.Record{Point: j.point, Params: map[string]float64{"rho": j.rho}, SpecHash: version.SpecHash(version.Numeric, spec),
		Spec: spec, Chain: c, Diag: solver.Diagnose(c, proc), Baseline: &bd, BaselineTransition: b.Transition}
}

func header(process string) formats.Header {
	return formats.Header{Run: "merge-test", Process: process, Kind: "ar1", Method: "maxent", Dim: 1,
		Params: []string{"rho"}, ManifestHash: manifestHash, Tool: "test"}
}

// writeRun writes the jobs owned by s into dir, one set per process, and
// stamps the folder when s is a real shard.
func writeRun(t *testing.T, dir string, s shard.Shard, format formats.Format) map[string]formats.Result {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	jobs := runJobs()
	sets := map[string]*formats.Set{}
	var order []string
	rec := &batch.RunRecord{Run: "merge-test", Manifest: "test.yaml", ManifestHash: manifestHash, Tool: "test",
		Shard: s.String(), Succeeded: true}
	for i, j := range jobs {
		if !s.Owns(i) {
			continue
		}
		rec.Jobs = append(rec.Jobs, batch.JobRecord{Index: i, Process: j.process, Point: j.point, Status: "done"})
		if sets[j.process] == nil {
			sets[j.process] = &formats.Set{Header: header(j.process)}
			order = append(order, j.process)
		}
		sets[j.process].Records = append(sets[j.process].Records, record(t, j))
	}
	out := map[string]formats.Result{}
	for _, p := range order {
		r, err := formats.Write(dir, sets[p], formats.Options{Format: format})
		if err != nil {
			t.Fatal(err)
		}
		out[p] = r
	}
	if err := batch.WriteRecord(dir, rec); err != nil {
		t.Fatal(err)
	}
	if !s.Whole() {
		if err := shard.WriteStamp(dir, s, manifestHash, len(jobs)); err != nil {
			t.Fatal(err)
		}
	}
	return out
}

func shardDirs(t *testing.T, root string, n int, format formats.Format) []string {
	var dirs []string
	for i := 1; i <= n; i++ {
		d := filepath.Join(root, fmt.Sprintf("task-%d", i))
		writeRun(t, d, shard.Shard{Index: i, Count: n}, format)
		dirs = append(dirs, d)
	}
	return dirs
}

// TestMergeEqualsSingleRun is the contract: merged files have the content
// hashes of a single-machine run, table by table, and the same per-point
// chain hashes and spec digest (exact string equality: hashes).
func TestMergeEqualsSingleRun(t *testing.T) {
	for _, format := range []formats.Format{formats.Parquet, formats.Arrow} {
		for _, n := range []int{1, 3, 4} {
			t.Run(fmt.Sprintf("%s/%d shards", format, n), func(t *testing.T) {
				root := t.TempDir()
				single := writeRun(t, filepath.Join(root, "single"), shard.All, format)
				dirs := shardDirs(t, root, n, format)
				if n == 1 {
					// One shard of one: stamp it by hand, as run does only for real shards.
					if err := shard.WriteStamp(dirs[0], shard.All, manifestHash, len(runJobs())); err != nil {
						t.Fatal(err)
					}
				}
				// Shard order on the command line does not matter.
				dirs[0], dirs[len(dirs)-1] = dirs[len(dirs)-1], dirs[0]
				res, err := Merge(dirs, filepath.Join(root, "merged"))
				if err != nil {
					t.Fatal(err)
				}
				if res.Shards != n || res.Jobs != 9 || len(res.Sets) != 2 {
					t.Fatalf("result: %d shards, %d jobs, %d sets", res.Shards, res.Jobs, len(res.Sets))
				}
				for _, got := range res.Sets {
					process := strings.SplitN(filepath.Base(got.Files[0].Path), ".", 2)[0]
					want := single[process]
					if got.SpecDigest != want.SpecDigest {
						t.Errorf("%s: spec digest %s, single run %s", process, got.SpecDigest, want.SpecDigest)
					}
					if fmt.Sprint(got.Points) != fmt.Sprint(want.Points) {
						t.Errorf("%s: point hashes differ from the single run", process)
					}
					for k, f := range got.Files {
						if f.Table != want.Files[k].Table || f.ContentHash != want.Files[k].ContentHash || f.Rows != want.Files[k].Rows {
							t.Errorf("%s %s: content hash %s (%d rows), single run %s (%d rows)", process, f.Table,
								f.ContentHash, f.Rows, want.Files[k].ContentHash, want.Files[k].Rows)
						}
					}
				}
				if _, err := formats.Verify(filepath.Join(root, "merged")); err != nil {
					t.Errorf("merged folder does not verify: %v", err)
				}
				rec, err := batch.ReadRecord(filepath.Join(root, "merged"))
				if err != nil {
					t.Fatal(err)
				}
				if rec.Shard != "1/1" || !rec.Succeeded || len(rec.Jobs) != 9 || len(rec.Files) != 12 {
					t.Fatalf("merged record: shard %s, succeeded %v, %d jobs, %d files", rec.Shard, rec.Succeeded, len(rec.Jobs), len(rec.Files))
				}
				for i, j := range rec.Jobs {
					if j.Index != i {
						t.Fatalf("merged record lists job %d at position %d", j.Index, i)
					}
				}
			})
		}
	}
}

func TestMergeRejectsIncompleteOrMixedShards(t *testing.T) {
	root := t.TempDir()
	dirs := shardDirs(t, root, 4, formats.Parquet)
	other := filepath.Join(root, "other")
	writeRun(t, other, shard.Shard{Index: 2, Count: 4}, formats.Parquet)
	if err := shard.WriteStamp(other, shard.Shard{Index: 2, Count: 4}, "feedface", 9); err != nil {
		t.Fatal(err)
	}
	failed := filepath.Join(root, "failed")
	writeRun(t, failed, shard.Shard{Index: 3, Count: 4}, formats.Parquet)
	rec, _ := batch.ReadRecord(failed)
	rec.Succeeded = false
	if err := batch.WriteRecord(failed, rec); err != nil {
		t.Fatal(err)
	}
	// A shard solved by a build under another numeric version: its stamp
	// (and files) say so; the manifest hash differs too, but the message
	// must name the numeric versions, the real cause.
	older := filepath.Join(root, "older-numerics")
	writeRun(t, older, shard.Shard{Index: 2, Count: 4}, formats.Parquet)
	stamp, err := os.ReadFile(filepath.Join(older, shard.StampFile))
	if err != nil {
		t.Fatal(err)
	}
	stamp = bytes.Replace(stamp, []byte(`"numeric_version": "`+version.Numeric+`"`), []byte(`"numeric_version": "0"`), 1)
	if err := os.WriteFile(filepath.Join(older, shard.StampFile), stamp, 0o644); err != nil {
		t.Fatal(err)
	}
	unstamped := filepath.Join(root, "unfinished")
	writeRun(t, unstamped, shard.Shard{Index: 4, Count: 4}, formats.Parquet)
	os.Remove(filepath.Join(unstamped, shard.StampFile))

	cases := []struct {
		name string
		dirs []string
		want string
	}{
		{"none", nil, "no shard folders given"},
		{"missing", dirs[:3], "shard 4/4 missing (got 3 of 4 shard folders)"},
		{"twice", []string{dirs[0], dirs[1], dirs[1], dirs[2]}, "is shard 2/4, and so is " + dirs[1]},
		{"other manifest", []string{dirs[0], other, dirs[2], dirs[3]}, "comes from another manifest"},
		{"other numerics", []string{dirs[0], older, dirs[2], dirs[3]}, "was solved under numeric version 0, " + dirs[0] + " under " + version.Numeric},
		{"unfinished", []string{dirs[0], dirs[1], dirs[2], unstamped}, "has no shard.json"},
		{"failed record", []string{dirs[0], dirs[1], failed, dirs[3]}, "did not succeed"},
		{"output is a shard", dirs, "the output folder is one of the shard folders"},
	}
	for _, c := range cases {
		out := filepath.Join(root, "merged-"+strings.ReplaceAll(c.name, " ", "-"))
		if c.name == "output is a shard" {
			out = dirs[2]
		}
		_, err := Merge(c.dirs, out)
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
		if c.name != "output is a shard" {
			if _, statErr := os.Stat(out); statErr == nil {
				t.Errorf("%s: output folder created despite the error", c.name)
			}
		}
	}
}

func TestMergeStopsOnDamagedShard(t *testing.T) {
	root := t.TempDir()
	dirs := shardDirs(t, root, 2, formats.Arrow)
	// Flip one byte in the middle of a transitions file; Arrow IPC is
	// uncompressed, so this changes a probability or its framing.
	path := filepath.Join(dirs[1], formats.FileName("wages", formats.TableTransitions, formats.Arrow))
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	b[len(b)/2] ^= 0x01
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(root, "merged")
	_, err = Merge(dirs, out)
	if err == nil {
		t.Fatal("merged a damaged shard")
	}
	t.Log(err)
	if sets, _ := formats.FindSets(out); len(sets) > 0 && sets[0].Process == "wages" {
		t.Fatal("a set of the damaged process appeared in the output")
	}
}

// TestMergeThroughIntermediateSets: with more shards than FanIn the merge
// goes through levels of intermediate sets; the result is still the single
// run's (content hashes and chain hashes, exact), and no intermediate
// folder is left in the output.
func TestMergeThroughIntermediateSets(t *testing.T) {
	defer func(f int) { FanIn = f }(FanIn)
	FanIn = 2 // 5 shards: 3 sets after one pass, 2 after the next, then the output
	root := t.TempDir()
	single := writeRun(t, filepath.Join(root, "single"), shard.All, formats.Parquet)
	dirs := shardDirs(t, root, 5, formats.Parquet)
	out := filepath.Join(root, "merged")
	res, err := Merge(dirs, out)
	if err != nil {
		t.Fatal(err)
	}
	for _, got := range res.Sets {
		process := strings.SplitN(filepath.Base(got.Files[0].Path), ".", 2)[0]
		want := single[process]
		if fmt.Sprint(got.Points) != fmt.Sprint(want.Points) || got.SpecDigest != want.SpecDigest {
			t.Errorf("%s: point hashes or spec digest differ from the single run", process)
		}
		for k, f := range got.Files {
			if f.ContentHash != want.Files[k].ContentHash {
				t.Errorf("%s %s: content hash %s, single run %s", process, f.Table, f.ContentHash, want.Files[k].ContentHash)
			}
			if b := filepath.Join(root, "single", filepath.Base(f.Path)); !bytes.Equal(readBytes(t, f.Path), readBytes(t, b)) {
				t.Errorf("%s: bytes differ from the single run's", filepath.Base(f.Path))
			}
		}
	}
	entries, err := os.ReadDir(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if e.IsDir() {
			t.Errorf("folder %s left in the output", e.Name())
		}
	}
	rec, err := batch.ReadRecord(out)
	if err != nil {
		t.Fatal(err)
	}
	for i, j := range rec.Jobs {
		if j.Index != i {
			t.Fatalf("merged record lists job %d at position %d", j.Index, i)
		}
	}
	if len(rec.Jobs) != len(runJobs()) {
		t.Fatalf("merged record lists %d jobs, want %d", len(rec.Jobs), len(runJobs()))
	}
}

// TestMergeRejectsRecordWithWrongJobs: a shard's run record that lists a
// job of another shard is refused before anything is written.
func TestMergeRejectsRecordWithWrongJobs(t *testing.T) {
	root := t.TempDir()
	dirs := shardDirs(t, root, 3, formats.Parquet)
	rec, err := batch.ReadRecord(dirs[1])
	if err != nil {
		t.Fatal(err)
	}
	rec.Jobs[0].Index = 0 // shard 2/3 holds jobs 1, 4, 7
	if err := batch.WriteRecord(dirs[1], rec); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(root, "merged")
	_, err = Merge(dirs, out)
	var ie *InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "do not list job 0 exactly once") {
		t.Fatalf("error %v, want one saying job 0 is not listed exactly once", err)
	}
	if _, statErr := os.Stat(out); statErr == nil {
		t.Error("output folder created despite the error")
	}
}

func readBytes(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
