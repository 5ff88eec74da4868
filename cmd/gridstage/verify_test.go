package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/batch"
	"gridstage/formats"
	"gridstage/internal/version"
	"gridstage/solver"
)

// writeOutput writes a small sweep of AR(1) chains (an invented regional
// wage process, persistence 0.8 and 0.9) and returns the folder.
func writeOutput(t *testing.T, f formats.Format) string {
	t.Helper()
	dir := t.TempDir()
	set := &formats.Set{Header: formats.Header{Run: "wage-test", Process: "wages", Kind: "ar1", Method: "maxent", Dim: 1, Params: []string{"rho"}}}
	for i, rho := range []float64{0.8, 0.9} {
		p := solver.AR1{Rho: rho, Sigma: 0.1}
		c, err := p.Discretize(solver.Settings{States: 5})
		if err != nil {
			t.Fatal(err)
		}
		set.Records = append(set.Records, formats.Record{Point: i, Params: map[string]float64{"rho": rho},
			SpecHash: version.SpecHash(version.Numeric, []byte(`{"rho":`+[]string{"0.8", "0.9"}[i]+`}`)), Spec: []byte(`{"rho":` + []string{"0.8", "0.9"}[i] + `}`), Chain: c, Diag: solver.Diagnose(c, p)})
	}
	res, err := formats.Write(dir, set, formats.Options{Format: f})
	if err != nil {
		t.Fatal(err)
	}
	// The run record a run would write beside the set.
	rec := &batch.RunRecord{Run: "wage-test", Manifest: "wage-test.yaml", Tool: "test", Shard: "1/1", Succeeded: true,
		Files: batch.FileRecords([]formats.Result{res})}
	for i, p := range res.Points {
		rec.Jobs = append(rec.Jobs, batch.JobRecord{Index: i, Process: "wages", Point: p.Point, SpecHash: p.SpecHash, ChainHash: p.ChainHash,
			Params: batch.Params{{Name: "rho", Value: set.Records[i].Params["rho"]}}, Status: "done"})
	}
	if err := batch.WriteRecord(dir, rec); err != nil {
		t.Fatal(err)
	}
	return dir
}

func TestVerifyCommand(t *testing.T) {
	dir := writeOutput(t, formats.Parquet)
	if code, out, errOut := run(t, "verify", dir); code != 0 || !strings.Contains(out, "6 files in 1 set verified") {
		t.Fatalf("verify of a good folder: exit %d\n%s%s", code, out, errOut)
	}
	if code, _, errOut := run(t, "verify", filepath.Join(dir, "missing")); code != 2 {
		t.Errorf("verify of a missing path: exit %d, want 2 (%s)", code, errOut)
	}
	other := filepath.Join(t.TempDir(), "notes.txt")
	os.WriteFile(other, []byte("not a table"), 0o644)
	if code, _, errOut := run(t, "verify", other); code != 2 || !strings.Contains(errOut, "not gridstage output") {
		t.Errorf("verify of a text file: exit %d, want 2 (%s)", code, errOut)
	}
	path := filepath.Join(dir, "wages.transitions.parquet")
	b, _ := os.ReadFile(path)
	os.WriteFile(path, b[:len(b)-20], 0o644)
	code, _, errOut := run(t, "verify", dir)
	if code != 1 || !strings.Contains(errOut, "wages.transitions.parquet") {
		t.Errorf("verify of a truncated file: exit %d, want 1 naming the file (%s)", code, errOut)
	}
	if strings.Count(strings.TrimSpace(errOut), "\n") != 0 {
		t.Errorf("error is not one line: %q", errOut)
	}
}

// TestInspectAmbiguousWhere: a --where that fits several sweep points is
// refused (exit 2) with the points it fits, never resolved to the first.
func TestInspectAmbiguousWhere(t *testing.T) {
	dir := t.TempDir()
	set := &formats.Set{Header: formats.Header{Run: "wage-test", Process: "wages", Kind: "ar1", Method: "maxent", Dim: 1, Params: []string{"rho", "sigma"}}}
	for i, v := range [][2]float64{{0.9, 0.1}, {0.9, 0.2}, {0.8, 0.1}} {
		p := solver.AR1{Rho: v[0], Sigma: v[1]}
		c, err := p.Discretize(solver.Settings{States: 5})
		if err != nil {
			t.Fatal(err)
		}
		spec := []byte(fmt.Sprintf(`{"rho":%g,"sigma":%g}`, v[0], v[1]))
		set.Records = append(set.Records, formats.Record{Point: i, Params: map[string]float64{"rho": v[0], "sigma": v[1]},
			SpecHash: version.SpecHash(version.Numeric, spec), Spec: spec, Chain: c, Diag: solver.Diagnose(c, p)})
	}
	if _, err := formats.Write(dir, set, formats.Options{}); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := run(t, "inspect", dir, "--where", "rho=0.9")
	if code != 2 || !strings.Contains(errOut, "--where rho=0.9 matches 2 sweep points of wages: point 0 (rho=0.9, sigma=0.1); point 1 (rho=0.9, sigma=0.2)") {
		t.Errorf("ambiguous --where: exit %d, %q", code, errOut)
	}
	if code, out, errOut := run(t, "inspect", dir, "--where", "rho=0.9,sigma=0.2"); code != 0 || !strings.Contains(out, "sweep point 1 (3 points in the set)") {
		t.Errorf("--where naming one point: exit %d\n%s%s", code, out, errOut)
	}
	if code, _, errOut := run(t, "inspect", dir, "--where", "rho=0.7"); code != 2 || !strings.Contains(errOut, "no sweep point of wages matches --where rho=0.7") {
		t.Errorf("--where matching nothing: exit %d, %q", code, errOut)
	}
	// No selection: the first point, named in the header.
	if code, out, errOut := run(t, "inspect", dir); code != 0 || !strings.Contains(out, "sweep point 0 (3 points in the set)") {
		t.Errorf("no selection: exit %d\n%s%s", code, out, errOut)
	}
}

func TestInspectCommand(t *testing.T) {
	dir := writeOutput(t, formats.Arrow)
	code, out, errOut := run(t, "inspect", dir, "--where", "rho=0.9")
	if code != 0 || !strings.Contains(out, "sweep point 1 (2 points in the set), rho=0.9") || !strings.Contains(out, "transition matrix") {
		t.Fatalf("inspect --where: exit %d\n%s%s", code, out, errOut)
	}
	code, out, errOut = run(t, "inspect", filepath.Join(dir, "wages.states.arrow"), "--point", "0", "--json")
	if code != 0 || !strings.Contains(out, `"rho": 0.8`) || !strings.Contains(out, `"transition": [`) {
		t.Fatalf("inspect --json: exit %d\n%s%s", code, out, errOut)
	}
	for _, args := range [][]string{
		{"inspect", dir, "--point", "7"},
		{"inspect", dir, "--where", "sigma=1"},
		{"inspect", dir, "--where", "rho"},
		{"inspect", dir, "--age", "3"},
		{"inspect", t.TempDir()},
	} {
		if code, _, errOut := run(t, args...); code != 2 {
			t.Errorf("%v: exit %d, want 2 (%s)", args, code, errOut)
		}
	}
}
