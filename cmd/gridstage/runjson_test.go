package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// jsonLines decodes every line of s as one JSON object, failing on any
// line that is not.
func jsonLines(t *testing.T, what, s string) []map[string]any {
	t.Helper()
	var recs []map[string]any
	for _, line := range strings.Split(strings.TrimRight(s, "\n"), "\n") {
		if line == "" {
			continue
		}
		var rec map[string]any
		if err := json.Unmarshal([]byte(line), &rec); err != nil {
			t.Fatalf("%s: line %q is not a JSON object: %v", what, line, err)
		}
		recs = append(recs, rec)
	}
	return recs
}

// With --log-format json, run prints only JSON lines on stderr — the
// fallback warning and its grid advice, errors found before the flags are
// read — and its summary as one JSON object on stdout, on a run that
// succeeds, one that is up to date and one with bad usage.
func TestRunLogFormatJSON(t *testing.T) {
	dir := t.TempDir()
	manifest := filepath.Join(dir, "m.yaml")
	// Persistence 0.99 on 25 lattice states: every state falls back from
	// four moments (the wage-risk example's sweep point 12).
	os.WriteFile(manifest, []byte("run: json-logs\noutput:\n  folder: out\nprocesses:\n  - name: earnings\n    kind: ar1\n    rho: 0.99\n    sigma: 0.12\n    states: 25\n    moments: 4\n"), 0o644)
	out := filepath.Join(dir, "out")
	for _, upToDate := range []bool{false, true} {
		code, stdout, stderr := run(t, "run", manifest, "--out", out, "--cache", "off", "--log-format", "json")
		if code != 0 {
			t.Fatalf("exit %d: %s%s", code, stdout, stderr)
		}
		sum := jsonLines(t, "stdout", stdout)
		if len(sum) != 1 {
			t.Fatalf("stdout holds %d JSON objects, want 1: %s", len(sum), stdout)
		}
		s := sum[0]
		if s["run"] != "json-logs" || s["jobs"] != 1.0 || s["failed"] != 0.0 || s["up_to_date"] != upToDate || s["record"] != filepath.Join(out, "run.json") {
			t.Errorf("summary %v", s)
		}
		sets, _ := s["sets"].([]any)
		if len(sets) != 1 || sets[0].(map[string]any)["process"] != "earnings" || sets[0].(map[string]any)["points"] != 1.0 {
			t.Errorf("sets %v", s["sets"])
		}
		logs := jsonLines(t, "stderr", stderr)
		if upToDate {
			if _, ok := s["short_jobs"]; ok || len(logs) != 1 || logs[0]["level"] != "INFO" {
				t.Errorf("up to date: summary %v, stderr %v", s, logs)
			}
			continue
		}
		advice, _ := s["advice"].([]any)
		if s["short_jobs"] != 1.0 || len(advice) != 1 || advice[0].(map[string]any)["states_fell_back"] != 25.0 {
			t.Errorf("fallback not in the summary: %v", s)
		}
		if len(logs) != 2 || logs[0]["level"] != "WARN" || logs[1]["msg"] != "grid advice" || logs[1]["states_fell_back"] != 25.0 {
			t.Errorf("stderr records %v", logs)
		}
	}
	for _, args := range [][]string{
		{"run", manifest, "--log-format", "json", "--no-such-flag"},
		{"run", filepath.Join(dir, "missing.yaml"), "--log-format=json"},
	} {
		code, stdout, stderr := run(t, args...)
		logs := jsonLines(t, "stderr", stderr)
		if code != 2 || stdout != "" || len(logs) != 1 || logs[0]["level"] != "ERROR" || logs[0]["exit_status"] != 2.0 {
			t.Errorf("%v: exit %d, stdout %q, stderr %v", args, code, stdout, logs)
		}
	}
}

// The text summary counts in the right number: one job, one point, no
// "(s)" (README, wording).
func TestRunSummaryWording(t *testing.T) {
	dir := t.TempDir()
	manifest := filepath.Join(dir, "m.yaml")
	os.WriteFile(manifest, []byte("run: one-job\noutput:\n  folder: out\nprocesses:\n  - name: earnings\n    kind: ar1\n    rho: 0.99\n    sigma: 0.12\n    states: 25\n    moments: 4\n"), 0o644)
	code, stdout, stderr := run(t, "run", manifest, "--out", filepath.Join(dir, "out"), "--cache", "off")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, want := range []string{`run "one-job": 1 job (1 solved`, "in 1 of 1 job, states", "earnings: 1 job; most at point 0", "(1 point)\n"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("summary lacks %q:\n%s", want, stdout)
		}
	}
	if strings.Contains(stdout, "(s)") {
		t.Errorf("summary says (s):\n%s", stdout)
	}
}
