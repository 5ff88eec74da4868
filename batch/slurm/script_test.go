package slurm

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

func plan(dir string) Plan {
	return Plan{Run: "vessmark-wage-risk", Manifest: "/shared/studies/it's here/wage.yaml", Binary: "/shared/bin/gridstage",
		Out: dir, Cache: "/shared/cache/grid stage", Tasks: 4, Jobs: 17, CPUsPerTask: 2, Time: "01:00:00", Verify: true}
}

func TestRenderedScripts(t *testing.T) {
	files, err := Render(plan("/shared/out/wage"))
	if err != nil {
		t.Fatal(err)
	}
	solve, merge, submit := string(files["solve.sbatch"]), string(files["merge.sbatch"]), string(files["submit.sh"])
	for _, want := range []string{
		"#SBATCH --array=1-4\n", "#SBATCH --cpus-per-task=2\n", "#SBATCH --time=01:00:00\n",
		"#SBATCH --output=/shared/out/wage/slurm/logs/solve-%A_%a.log\n",
		"export GRIDSTAGE_CACHE='/shared/cache/grid stage'\n",
		`'/shared/bin/gridstage' run '/shared/studies/it'\''s here/wage.yaml'`,
		`--out '/shared/out/wage/shards'/task-"${SLURM_ARRAY_TASK_ID}"`,
	} {
		if !strings.Contains(solve, want) {
			t.Errorf("solve.sbatch lacks %q:\n%s", want, solve)
		}
	}
	if strings.Contains(solve, "--partition") || strings.Contains(solve, "--mem") {
		t.Errorf("unset options appear in solve.sbatch:\n%s", solve)
	}
	for _, want := range []string{"merge \"${shards[@]}\" --out '/shared/out/wage'", "verify '/shared/out/wage'", "seq 1 4"} {
		if !strings.Contains(merge, want) {
			t.Errorf("merge.sbatch lacks %q:\n%s", want, merge)
		}
	}
	for _, want := range []string{"--dependency=afterok:\"$solve\"", "--kill-on-invalid-dep=yes", "jobs.env"} {
		if !strings.Contains(submit, want) {
			t.Errorf("submit.sh lacks %q:\n%s", want, submit)
		}
	}
}

// TestScriptsParseAsBash checks every script with bash -n (syntax only).
func TestScriptsParseAsBash(t *testing.T) {
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("no bash")
	}
	dir := t.TempDir()
	paths, err := Write(plan(dir))
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range paths {
		if out, err := exec.Command("bash", "-n", p).CombinedOutput(); err != nil {
			t.Errorf("%s: %v\n%s", filepath.Base(p), err, out)
		}
		if fi, err := os.Stat(p); err != nil || fi.Mode().Perm()&0o100 == 0 {
			t.Errorf("%s is not executable", p)
		}
	}
	if fi, err := os.Stat(filepath.Join(dir, "slurm", "logs")); err != nil || !fi.IsDir() {
		t.Error("logs folder not created")
	}
}

// TestMergeScriptListsEveryShard runs the shard loop of merge.sbatch with
// a stand-in binary that prints its arguments.
func TestMergeScriptListsEveryShard(t *testing.T) {
	dir := t.TempDir()
	p := plan(dir)
	p.Binary = filepath.Join(dir, "fake gridstage")
	if err := os.WriteFile(p.Binary, []byte("#!/bin/sh\nfor a in \"$@\"; do echo \"[$a]\"; done\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	p.Verify = false
	files, err := Render(p)
	if err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command("bash", "-c", string(files["merge.sbatch"])).CombinedOutput()
	if err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	want := "[merge]\n"
	for _, i := range []string{"1", "2", "3", "4"} {
		want += "[" + filepath.Join(dir, "shards", "task-"+i) + "]\n"
	}
	want += "[--out]\n[" + dir + "]\n"
	if string(out) != want {
		t.Errorf("merge arguments:\n%s\nwant:\n%s", out, want)
	}
}

func TestPlanChecks(t *testing.T) {
	p := plan("/out")
	p.Manifest = "wage.yaml"
	if _, err := Render(p); err == nil || !strings.Contains(err.Error(), "not an absolute path") {
		t.Errorf("relative manifest: %v", err)
	}
	p = plan("/out with space")
	if _, err := Render(p); err == nil || !strings.Contains(err.Error(), "#SBATCH") {
		t.Errorf("blank in output folder: %v", err)
	}
	p = plan("/out")
	p.Tasks = 0
	if _, err := Render(p); err == nil {
		t.Error("zero tasks accepted")
	}
}
