package pipeline

import (
	"context"
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"gridstage/pipeline/lineage"
	"gridstage/plugin"
)

// fakeStageDir is the temporary folder of the built stage, removed by TestMain.
var fakeStageDir string

var buildFake = sync.OnceValues(func() (string, error) {
	dir, err := os.MkdirTemp("", "fakestage")
	if err != nil {
		return "", err
	}
	fakeStageDir = dir
	bin := filepath.Join(dir, "fakestage")
	if out, err := exec.Command("go", "build", "-o", bin, "./testdata/fakestage").CombinedOutput(); err != nil {
		return "", errors.New(string(out))
	}
	return bin, nil
})

func TestMain(m *testing.M) {
	code := m.Run()
	if fakeStageDir != "" {
		os.RemoveAll(fakeStageDir)
	}
	os.Exit(code)
}

func fake(t *testing.T) string {
	t.Helper()
	if testing.Short() {
		t.Skip("builds a stage binary")
	}
	bin, err := buildFake()
	if err != nil {
		t.Fatal(err)
	}
	return bin
}

// setup writes a manifest and a pipeline file using fakestage in the given
// estimate mode and returns the parsed spec.
func setup(t *testing.T, mode, extra string) *Spec {
	t.Helper()
	dir := t.TempDir()
	bin := fake(t)
	os.WriteFile(filepath.Join(dir, "m.yaml"), []byte("run: fake\n"), 0o644)
	text := `name: test-pipeline
manifest: m.yaml
out: out
timeout: 3s
grid:
  command: [` + bin + `, grid]
stages:
  - name: counter
    command: [` + bin + `, estimate, ` + mode + `]
    estimates:
      - model: count
        params: {k: 2}
` + extra
	os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(text), 0o644)
	s, err := Load(filepath.Join(dir, "p.yaml"), dir)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// fakeLoader serves chains of 3 states for any reference.
type fakeLoader struct{}

func (fakeLoader) Load(_ context.Context, ref plugin.ChainRef) (*plugin.ChainData, error) {
	return &plugin.ChainData{Dim: 1, Grid: []float64{-1, 0, 1}, Transition: []float64{1, 0, 0, 0, 1, 0, 0, 0, 1}}, nil
}

func TestRunRecordsLineage(t *testing.T) {
	s := setup(t, "ok", `      - model: count
        params: {k: 3}
        processes: [b]
`)
	fixed := time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)
	res, err := Run(context.Background(), s, Options{Now: func() time.Time { return fixed }})
	if err != nil {
		t.Fatal(err)
	}
	// 3 chains for the first estimate, 1 (process b) for the second.
	if len(res.Chains) != 3 || len(res.Estimates) != 4 {
		t.Fatalf("%d chains, %d estimates; want 3, 4", len(res.Chains), len(res.Estimates))
	}
	recs, err := lineage.Read(s.Ledger)
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 4 {
		t.Fatalf("%d ledger rows, want 4", len(recs))
	}
	users, err := lineage.ByChain(recs, "bbbb0000")
	if err != nil || len(users) != 2 {
		t.Fatalf("estimates using chain b: %d, %v; want 2", len(users), err)
	}
	for _, r := range users {
		if r.Stage != "fake-estimate" || r.StageVersion != "9.9.9" || r.SpecHash != "s2" || r.ManifestHash != "mh" || r.Pipeline != "test-pipeline" || !r.Time.Equal(fixed) {
			t.Errorf("record %+v", r)
		}
		var f estimateFile
		// Ledger paths are relative to the ledger's folder.
		b, err := os.ReadFile(lineage.Resolve(filepath.Dir(s.Ledger), r.EstimatePath))
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, &f); err != nil || f.ID != r.EstimateID || f.Chains[0].ChainHash != "bbbb0000bbbb0000" {
			t.Errorf("estimate file %s: %+v, %v", r.EstimatePath, f, err)
		}
	}
	// Running again appends the same estimates (same ids) again.
	if _, err := Run(context.Background(), s, Options{}); err != nil {
		t.Fatal(err)
	}
	recs, _ = lineage.Read(s.Ledger)
	if len(recs) != 8 || recs[4].EstimateID != recs[0].EstimateID {
		t.Errorf("after a rerun: %d rows; first ids %s, %s", len(recs), recs[0].EstimateID, recs[4].EstimateID)
	}
}

func TestRunInlineChains(t *testing.T) {
	s := setup(t, "inline", "")
	res, err := Run(context.Background(), s, Options{Loader: fakeLoader{}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Estimates[0].Scalars["n"] != 3 {
		t.Errorf("inline chain had %g states, want 3", res.Estimates[0].Scalars["n"])
	}
	if _, err := Run(context.Background(), setup(t, "inline", ""), Options{}); err == nil || !strings.Contains(err.Error(), "no chain reader") {
		t.Errorf("inline without loader: err = %v", err)
	}
}

func TestRunFaults(t *testing.T) {
	cases := []struct {
		mode string
		want string
	}{
		{"crash", "stage counter crashed during Estimate (exit status 2; last stderr line: \"panic: fakestage: crash on purpose\")"},
		{"hang", "stage counter did not answer Estimate within the timeout"},
		{"nan", "stage counter returned estimate 0 with n = NaN; estimates must be finite"},
		{"stranger", `stage counter returned estimate 0 naming chain "ffffffffffffffff", which it was not given`},
	}
	for _, tc := range cases {
		t.Run(tc.mode, func(t *testing.T) {
			s := setup(t, tc.mode, "")
			s.Timeout = time.Second
			_, err := Run(context.Background(), s, Options{})
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("err = %v\nwant it to contain %q", err, tc.want)
			}
			if pids := running(t, fake(t)); len(pids) > 0 {
				t.Errorf("stage processes left running: %v", pids)
			}
			// Nothing was recorded: the ledger was never created.
			if _, err := os.Stat(s.Ledger); !os.IsNotExist(err) {
				t.Errorf("ledger exists after a failed stage: %v", err)
			}
		})
	}
}

func TestRunBadRequests(t *testing.T) {
	s := setup(t, "ok", `      - model: count
        processes: [zzz]
`)
	_, err := Run(context.Background(), s, Options{})
	if !errors.Is(err, plugin.ErrBadRequest) || !strings.Contains(err.Error(), `process "zzz" is not in the manifest (it has a, b)`) {
		t.Errorf("unknown process: err = %v", err)
	}
	s = setup(t, "ok", `      - model: volume
`)
	_, err = Run(context.Background(), s, Options{})
	if !errors.Is(err, plugin.ErrBadRequest) || !strings.Contains(err.Error(), `does not solve model "volume" (it solves count)`) {
		t.Errorf("unknown model: err = %v", err)
	}
}

// running lists live processes whose executable is bin.
func running(t *testing.T, bin string) []int {
	t.Helper()
	entries, err := os.ReadDir("/proc")
	if err != nil {
		t.Skip("no /proc to inspect")
	}
	var pids []int
	for _, e := range entries {
		pid, err := strconv.Atoi(e.Name())
		if err != nil {
			continue
		}
		exe, err := os.Readlink(filepath.Join("/proc", e.Name(), "exe"))
		if err != nil || exe != bin {
			continue
		}
		stat, _ := os.ReadFile(filepath.Join("/proc", e.Name(), "stat"))
		if i := strings.LastIndexByte(string(stat), ')'); i > 0 && i+2 < len(stat) && stat[i+2] == 'Z' {
			continue // a zombie awaiting its reaper is not running
		}
		pids = append(pids, pid)
	}
	return pids
}
