package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/formats"
)

// hashes returns the recomputed content hash of every file in an output
// folder, by file name.
func hashes(t *testing.T, dir string) map[string]string {
	t.Helper()
	rep, err := formats.Verify(dir)
	if err != nil {
		t.Fatalf("verify %s: %v", dir, err)
	}
	out := map[string]string{}
	for _, f := range rep.Files {
		out[filepath.Base(f.Path)] = f.ContentHash
	}
	return out
}

// TestShardedRunMergesToSingleRun runs a manifest whole and as three shards
// sharing a cache, merges the shards, and compares content hashes file by
// file: an AR(1) sweep with a second, single-job process (so one shard has
// no job of it), and a life-cycle sweep whose points carry several ages.
func TestShardedRunMergesToSingleRun(t *testing.T) {
	for _, c := range []struct {
		manifest    string
		jobs, files int
	}{{"sweep.yaml", 13, 12}, {"lifecycle.yaml", 5, 6}} {
		t.Run(c.manifest, func(t *testing.T) {
			manifest := filepath.Join("..", "..", "testdata", "slurm", c.manifest)
			root := t.TempDir()
			cache := filepath.Join(root, "cache")
			if code, _, errOut := run(t, "run", manifest, "--out", filepath.Join(root, "single"), "--cache", "off", "--shard", "all"); code != 0 {
				t.Fatalf("single run: exit %d: %s", code, errOut)
			}
			var shards []string
			for i := 1; i <= 3; i++ {
				dir := filepath.Join(root, fmt.Sprintf("task-%d", i))
				if code, _, errOut := run(t, "run", manifest, "--out", dir, "--cache", cache, "--shard", fmt.Sprintf("%d/3", i), "--workers", "2"); code != 0 {
					t.Fatalf("shard %d: exit %d: %s", i, code, errOut)
				}
				shards = append(shards, dir)
			}
			merged := filepath.Join(root, "merged")
			code, out, errOut := run(t, append(append([]string{"merge"}, shards...), "--out", merged)...)
			if code != 0 {
				t.Fatalf("merge: exit %d: %s", code, errOut)
			}
			if !strings.Contains(out, fmt.Sprintf("merged 3 shards (%d jobs)", c.jobs)) {
				t.Errorf("merge summary: %q", out)
			}
			want, got := hashes(t, filepath.Join(root, "single")), hashes(t, merged)
			if len(want) != c.files || len(got) != len(want) {
				t.Fatalf("%d files merged, %d in the single run, want %d", len(got), len(want), c.files)
			}
			for name, h := range want {
				if got[name] != h {
					t.Errorf("%s: merged content hash %s, single run %s", name, got[name], h)
				}
			}

			// Usage errors exit 2 with one sentence naming the problem.
			code, _, errOut = run(t, "merge", shards[0], shards[1], "--out", filepath.Join(root, "partial"))
			if code != exitUsage || !strings.Contains(errOut, "shard 3/3 missing") {
				t.Errorf("missing shard: exit %d: %s", code, errOut)
			}
			code, _, errOut = run(t, "merge", shards[0])
			if code != exitUsage || !strings.Contains(errOut, "--out is required") {
				t.Errorf("no --out: exit %d: %s", code, errOut)
			}
		})
	}
}

func TestSlurmScriptCommand(t *testing.T) {
	manifest := filepath.Join("..", "..", "testdata", "slurm", "sweep.yaml")
	out := t.TempDir()
	t.Setenv("GRIDSTAGE_CACHE", "")
	code, _, errOut := run(t, "slurm-script", manifest, "--tasks", "4", "--out", out)
	if code != exitUsage || !strings.Contains(errOut, "--cache is required") {
		t.Errorf("no cache: exit %d: %s", code, errOut)
	}
	code, stdout, errOut := run(t, "slurm-script", manifest, "--tasks", "40", "--out", out, "--cache", filepath.Join(out, "cache"))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !strings.Contains(errOut, "40 tasks for 13 jobs: using 13 tasks") || !strings.Contains(stdout, "13 jobs in 13 array tasks") {
		t.Errorf("task clamp not reported: %q %q", stdout, errOut)
	}
	solve, err := os.ReadFile(filepath.Join(out, "slurm", "solve.sbatch"))
	if err != nil {
		t.Fatal(err)
	}
	abs, _ := filepath.Abs(manifest)
	if !strings.Contains(string(solve), "#SBATCH --array=1-13\n") || !strings.Contains(string(solve), "run '"+abs+"'") {
		t.Errorf("solve.sbatch:\n%s", solve)
	}
}
