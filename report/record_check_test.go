package report

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/batch"
	"gridstage/manifests"
)

// Issue 16 case 4: an edited chain hash in run.json once passed the
// report. Even with its record hash recomputed (a careful forger), the
// report's verification check fails, naming the job.
func TestReportChecksTheRunRecord(t *testing.T) {
	dir := t.TempDir()
	m, err := manifests.Parse(strings.NewReader("run: small\nprocesses:\n  - {name: inc, kind: ar1, rho: 0.9, sigma: 0.1, states: 5, sweep: {vary: {rho: [0.5, 0.9]}}}\n"), "m.yaml", dir)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := batch.Run(context.Background(), m, batch.Options{Out: dir, Workers: 1}); err != nil {
		t.Fatal(err)
	}
	r, err := Load(dir)
	if err != nil || !r.Checks[0].OK || !strings.Contains(r.Checks[0].Detail, "agree with run.json") {
		t.Fatalf("intact run: %+v, %v", r.Checks, err)
	}
	rec, err := batch.ReadRecord(dir)
	if err != nil {
		t.Fatal(err)
	}
	rec.Jobs[1].ChainHash = strings.Repeat("0", 64)
	if err := batch.WriteRecord(dir, rec); err != nil {
		t.Fatal(err)
	}
	r, err = Load(dir)
	if err != nil || r.Checks[0].OK || !strings.Contains(r.Checks[0].Detail, "job 1 (process inc, point 1) records spec hash") {
		t.Errorf("forged record: %+v, %v", r.Checks, err)
	}
	// Plain edits break the record hash, which the report names too.
	b, _ := os.ReadFile(filepath.Join(dir, batch.RecordFile))
	os.WriteFile(filepath.Join(dir, batch.RecordFile), []byte(strings.Replace(string(b), `"rho": 0.5`, `"rho": 0.55`, 1)), 0o644)
	if r, err = Load(dir); err != nil || r.Checks[0].OK || !strings.Contains(r.Checks[0].Detail, "run.json is damaged") {
		t.Errorf("edited record: %+v, %v", r.Checks, err)
	}
}
