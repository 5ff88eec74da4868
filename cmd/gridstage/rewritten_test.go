package main

import (
	"gridstage/internal/noderef"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/formats"
)

// A file rewritten by another writer — DuckDB's COPY for Parquet (values
// kept, key/value metadata dropped), apache-arrow for Arrow IPC (its file
// writer leaves out the schema message a stream reader starts from) — is
// a failed check: verify exits 1 naming the file, in its folder and on its
// own, with or without --values-only, never 2 (bad usage), which is kept
// for paths that are not gridstage output at all (README, "Exit status").
func TestVerifyFileRewrittenByAnotherWriter(t *testing.T) {
	node, tools := noderef.Interop(t, "this test")
	for _, f := range []formats.Format{formats.Parquet, formats.Arrow} {
		dir := writeOutput(t, f)
		name := "wages.states." + f.String()
		path := filepath.Join(dir, name)
		copyPath := filepath.Join(t.TempDir(), name)
		if out, err := exec.Command(node, filepath.Join(tools, "rewrite.mjs"), path, copyPath).CombinedOutput(); err != nil {
			t.Fatalf("rewrite.mjs %s: %v\n%s", name, err, out)
		}
		b, err := os.ReadFile(copyPath)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, b, 0o644); err != nil {
			t.Fatal(err)
		}
		for _, args := range [][]string{{"verify", dir}, {"verify", path}, {"verify", "--values-only", dir}, {"verify", copyPath}} {
			code, out, errOut := run(t, args...)
			if code != 1 || !strings.Contains(errOut, name) {
				t.Errorf("%s %v: exit %d, want 1 naming %s (%s%s)", f, args, code, name, out, errOut)
			}
		}
	}
}
