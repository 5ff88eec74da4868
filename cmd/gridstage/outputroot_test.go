package main

import (
	"os"
	"path/filepath"
	"testing"
)

// A manifest's relative output folder lies beneath the output root —
// --output-root, else $GRIDSTAGE_OUTPUT_ROOT — never beside the manifest
// (README, "Where output goes"); --out names the folder outright.
func TestRunOutputRoot(t *testing.T) {
	src := t.TempDir()
	manifest := filepath.Join(src, "m.yaml")
	os.WriteFile(manifest, []byte("run: roots\noutput:\n  folder: out/roots\nprocesses:\n  - name: earnings\n    kind: ar1\n    rho: 0.9\n    sigma: 0.1\n    states: 5\n"), 0o644)
	flagRoot, envRoot, out := t.TempDir(), t.TempDir(), filepath.Join(t.TempDir(), "named")
	t.Setenv(outputRootEnv, envRoot)
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--output-root", flagRoot}, filepath.Join(flagRoot, "out", "roots")},
		{nil, filepath.Join(envRoot, "out", "roots")},
		{[]string{"--out", out, "--output-root", flagRoot}, out},
	} {
		if code, _, errOut := run(t, append([]string{"run", manifest, "--cache", "off"}, c.args...)...); code != 0 {
			t.Fatalf("%v: exit %d: %s", c.args, code, errOut)
		}
		if _, err := os.Stat(filepath.Join(c.want, "run.json")); err != nil {
			t.Errorf("%v: no run.json in %s: %v", c.args, c.want, err)
		}
	}
	if entries, _ := os.ReadDir(src); len(entries) != 1 {
		t.Errorf("the manifest's folder holds %d entries, want the manifest alone", len(entries))
	}
}
