package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/formats"
)

// TestArraysCommand exports an output folder, checks the files and their
// bytes are the same on a second export (which replaces the first whole),
// and that bad input exits 2 and a damaged folder 1 with nothing written.
func TestArraysCommand(t *testing.T) {
	dir := writeOutput(t, formats.Parquet)
	code, out, errOut := run(t, "arrays", dir)
	if code != 0 || !strings.Contains(out, "wages: 2 points, 11 files in "+filepath.Join(dir, "arrays", "wages")) {
		t.Fatalf("arrays: exit %d\n%s%s", code, out, errOut)
	}
	folder := filepath.Join(dir, "arrays", "wages")
	first := readFolder(t, folder)
	for _, name := range []string{"point-0.npz", "point-1.mat", "transition.csv", "states.csv", "points.csv", "moments.csv", "provenance.json"} {
		if _, ok := first[name]; !ok {
			t.Errorf("no %s among %v", name, keys(first))
		}
	}
	if code, _, errOut := run(t, "arrays", dir); code != 0 {
		t.Fatalf("second export: exit %d: %s", code, errOut)
	}
	second := readFolder(t, folder)
	if len(second) != len(first) {
		t.Errorf("second export has %d files, the first %d", len(second), len(first))
	}
	for name, b := range first {
		if second[name] != b {
			t.Errorf("%s differs between two exports of the same folder", name)
		}
	}
	entries, _ := os.ReadDir(filepath.Join(dir, "arrays"))
	if len(entries) != 1 {
		t.Errorf("the export folder holds %d entries after a re-export, want only wages/ (no staging or old folders)", len(entries))
	}

	other := filepath.Join(t.TempDir(), "x")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"arrays", filepath.Join(dir, "missing"), "--out", other}, "not gridstage output"},
		{[]string{"arrays", dir, "--to", "xlsx", "--out", other}, `unknown kind of export "xlsx" (want npz, mat or csv)`},
		{[]string{"arrays", dir, "--process", "rent", "--out", other}, `no process "rent"`},
	} {
		code, _, errOut := run(t, c.args...)
		if code != 2 || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: exit %d, %q; want 2 and %q", c.args, code, errOut, c.want)
		}
	}
	if _, err := os.Stat(other); err == nil {
		t.Errorf("a refused export created %s", other)
	}

	path := filepath.Join(dir, "wages.transitions.parquet")
	b, _ := os.ReadFile(path)
	os.WriteFile(path, b[:len(b)-20], 0o644)
	if code, _, errOut := run(t, "arrays", dir, "--out", other); code != 1 || !strings.Contains(errOut, "wages.transitions.parquet") {
		t.Errorf("export of a damaged folder: exit %d (%s), want 1 naming the file", code, errOut)
	}
	if _, err := os.Stat(filepath.Join(other, "wages")); err == nil {
		t.Error("a failed export left a folder")
	}
}

func readFolder(t *testing.T, dir string) map[string]string {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]string{}
	for _, e := range entries {
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		out[e.Name()] = string(b)
	}
	return out
}

func keys(m map[string]string) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	return out
}
