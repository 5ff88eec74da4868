package main

import (
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// TestReadmeMainJobSections runs the shell commands of the README's
// "Set-up" and "After the main job" sections verbatim (go run replaced by
// the built binary) in a fresh copy of the examples, from its root, as a
// new user would: every command succeeds, and every file they write lies
// beneath out/ — the output root's out/ the bundled manifests name —
// never beside the manifest or in a source folder (README, "Where output
// goes").
func TestReadmeMainJobSections(t *testing.T) {
	bin := stageBinaries(t)
	root := t.TempDir()
	copyTree(t, filepath.Join("..", "..", "examples"), filepath.Join(root, "examples"))
	os.MkdirAll(filepath.Join(root, "bin"), 0o755)
	if err := os.Symlink(filepath.Join(bin, "gridstage"), filepath.Join(root, "bin", "gridstage")); err != nil {
		t.Fatal(err)
	}
	before := map[string]bool{}
	filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		before[p] = true
		return err
	})
	readme, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	lines := append(sectionCommands(t, string(readme), "## Set-up on a fresh machine"), sectionCommands(t, string(readme), "## After the main job")...)
	ran := 0
	for _, line := range lines {
		switch {
		case strings.HasPrefix(line, "go test"):
			continue
		case strings.HasPrefix(line, "go build "):
			if line != "go build -o bin/ ./cmd/gridstage" {
				t.Fatalf("README builds %q; this test provides bin/gridstage only", line)
			}
			continue
		case strings.HasPrefix(line, "go run ./cmd/gridstage "):
			line = "bin/gridstage " + strings.TrimPrefix(line, "go run ./cmd/gridstage ")
		}
		cmd := exec.Command("/bin/sh", "-c", line)
		cmd.Dir = root
		cmd.Env = append(os.Environ(), "GRIDSTAGE_CACHE="+t.TempDir())
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("README command %q: %v\n%s", line, err, out)
		}
		ran++
	}
	if ran < 5 {
		t.Fatalf("ran %d README commands, want the run and at least verify, inspect, report and plot", ran)
	}
	figures := 0
	filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil || before[p] || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(root, p)
		if !strings.HasPrefix(rel, "out"+string(filepath.Separator)) {
			t.Errorf("README command wrote %s, outside out/", rel)
		}
		if strings.HasPrefix(rel, filepath.Join("out", "vessmark-wage-risk", "figures")) {
			figures++
		}
		return nil
	})
	if figures == 0 {
		t.Error("plot wrote no figure into out/vessmark-wage-risk/figures/")
	}
}
