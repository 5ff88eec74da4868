package main

import (
	"encoding/json"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// TestReadmePipelineSection runs the shell commands of the README's
// pipeline section verbatim in a fresh copy of the files they need (the
// examples, the Python stage, binaries in bin/), as a new user on a fresh
// clone would: every command must succeed, and every id the commands query
// must be one the earlier commands printed. Then the output folder is
// moved (copied, original deleted) and lineage verifies every row from the
// copy; a ledger kept apart verifies with --root; a tampered chain file
// makes lineage exit 1; the ledger follows the umask and no lock file is
// left behind.
func TestReadmePipelineSection(t *testing.T) {
	bin := stageBinaries(t)
	if !pythonStage(t) {
		t.Skip("the README's pipeline runs the Python stage")
	}
	root := t.TempDir()
	for _, dir := range []string{"examples/pipeline", "stages/python"} {
		copyTree(t, filepath.Join("..", "..", dir), filepath.Join(root, dir))
	}
	os.MkdirAll(filepath.Join(root, "bin"), 0o755)
	for _, b := range []string{"gridstage", "modelstage"} {
		if err := os.Symlink(filepath.Join(bin, b), filepath.Join(root, "bin", b)); err != nil {
			t.Fatal(err)
		}
	}
	readme, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	lines := sectionCommands(t, string(readme), "## Pipelines")
	if len(lines) < 6 {
		t.Fatalf("found %d commands in the README's pipeline section", len(lines))
	}
	var printed strings.Builder
	idFlag := regexp.MustCompile(`--(?:estimate|chain) ([0-9a-f]+)`)
	for _, line := range lines {
		if strings.HasPrefix(line, "go build ") {
			if line != "go build -o bin/ ./cmd/gridstage ./cmd/modelstage" {
				t.Fatalf("README builds %q; this test provides bin/gridstage and bin/modelstage only", line)
			}
			continue
		}
		for _, m := range idFlag.FindAllStringSubmatch(line, -1) {
			if !strings.Contains(printed.String(), m[1]) {
				t.Errorf("README queries id %s, which no earlier command printed; a change of numbers (numeric version) changes ids: put the ones printed below into README.md:\n%s", m[1], printed.String())
			}
		}
		cmd := exec.Command("/bin/sh", "-c", line)
		cmd.Dir = root
		out, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("README command %q: %v\n%s", line, err, out)
		}
		printed.Write(out)
	}
	out := filepath.Join(root, "out", "kessrin-pipeline")
	entries, _ := os.ReadDir(out)
	for _, e := range entries {
		if strings.Contains(e.Name(), "lock") || strings.Contains(e.Name(), ".tmp") {
			t.Errorf("%s left behind in the output folder", e.Name())
		}
	}

	// Permissions follow the umask: enter the Python estimate again under
	// umask 027 (the same estimate, recorded again).
	again := exec.Command("/bin/sh", "-c", "umask 027 && exec bin/gridstage enter out/kessrin-pipeline/lineage.parquet out/kessrin-pipeline/precaution-estimate.json")
	again.Dir = root
	if b, err := again.CombinedOutput(); err != nil {
		t.Fatalf("enter under umask 027: %v\n%s", err, b)
	}
	if fi, err := os.Stat(filepath.Join(out, "lineage.parquet")); err != nil || fi.Mode().Perm() != 0o640 {
		t.Errorf("ledger written under umask 027: mode %v, %v; want -rw-r-----", fi.Mode().Perm(), err)
	}

	// Move: copy the output folder elsewhere, delete the original.
	moved := filepath.Join(t.TempDir(), "replication", "kessrin")
	copyTree(t, out, moved)
	if err := os.RemoveAll(out); err != nil {
		t.Fatal(err)
	}
	checks := lineageChecks(t, bin, 0, filepath.Join(moved, "lineage.parquet"))
	if len(checks) < 11 { // 4 chains and 7 estimates
		t.Errorf("lineage verified %d files from the moved folder, want every chain and estimate (11)", len(checks))
	}
	apart := filepath.Join(t.TempDir(), "lineage.parquet")
	copyFile(t, filepath.Join(moved, "lineage.parquet"), apart)
	lineageChecks(t, bin, 0, apart, "--root", moved)

	// Tampering with the chain the Python estimate used fails lineage.
	code, stdout, errOut := gridstageCmd(bin, "lineage", filepath.Join(moved, "lineage.parquet"), "--no-verify", "--json")
	var rows struct {
		Records []struct {
			Stage     string `json:"stage"`
			ChainHash string `json:"chain_hash"`
		} `json:"records"`
	}
	if err := json.Unmarshal([]byte(stdout), &rows); code != 0 || err != nil {
		t.Fatalf("lineage --json: exit %d, %v: %s", code, err, errOut)
	}
	earnings := ""
	for _, r := range rows.Records {
		if r.Stage == "kessrin-precaution.py" {
			earnings = r.ChainHash
		}
	}
	trans := filepath.Join(moved, "chains", "earnings.transitions.parquet")
	copyFile(t, filepath.Join(moved, "chains", "productivity.transitions.parquet"), trans)
	code, _, errOut = gridstageCmd(bin, "lineage", filepath.Join(moved, "lineage.parquet"), "--chain", earnings)
	if code != 1 || !strings.Contains(errOut, "does not verify") {
		t.Errorf("tampered chain: exit %d, stderr %q", code, errOut)
	}
}

// lineageChecks runs lineage --json and returns its checks, each of which
// must have passed.
func lineageChecks(t *testing.T, bin string, want int, args ...string) []struct {
	Path string `json:"path"`
	OK   bool   `json:"ok"`
} {
	t.Helper()
	code, stdout, errOut := gridstageCmd(bin, append([]string{"lineage"}, append(args, "--json")...)...)
	if code != want {
		t.Fatalf("lineage %v: exit %d: %s", args, code, errOut)
	}
	var ans struct {
		Checks []struct {
			Path string `json:"path"`
			OK   bool   `json:"ok"`
		} `json:"checks"`
	}
	if err := json.Unmarshal([]byte(stdout), &ans); err != nil {
		t.Fatal(err)
	}
	for _, c := range ans.Checks {
		if !c.OK {
			t.Errorf("lineage %v: %s did not verify", args, c.Path)
		}
	}
	return ans.Checks
}

// sectionCommands returns the command lines of the sh blocks in the README
// section that starts with heading, comments removed.
func sectionCommands(t *testing.T, readme, heading string) []string {
	t.Helper()
	i := strings.Index(readme, "\n"+heading)
	if i < 0 {
		t.Fatalf("README has no section %q", heading)
	}
	sec := readme[i+1:]
	if j := strings.Index(sec[len(heading):], "\n## "); j >= 0 {
		sec = sec[:len(heading)+j]
	}
	var out []string
	in := false
	for _, line := range strings.Split(sec, "\n") {
		switch {
		case strings.HasPrefix(line, "```sh"):
			in = true
		case strings.HasPrefix(line, "```"):
			in = false
		case in:
			if k := strings.Index(line, " #"); k >= 0 {
				line = line[:k]
			}
			if line = strings.TrimSpace(line); line != "" {
				out = append(out, line)
			}
		}
	}
	return out
}

func copyTree(t *testing.T, from, to string) {
	t.Helper()
	err := filepath.WalkDir(from, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(from, p)
		if d.IsDir() {
			if d.Name() == "__pycache__" {
				return filepath.SkipDir
			}
			return os.MkdirAll(filepath.Join(to, rel), 0o755)
		}
		copyFile(t, p, filepath.Join(to, rel))
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
}

func copyFile(t *testing.T, from, to string) {
	t.Helper()
	b, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	fi, _ := os.Stat(from)
	if err := os.WriteFile(to, b, fi.Mode().Perm()); err != nil {
		t.Fatal(err)
	}
}
