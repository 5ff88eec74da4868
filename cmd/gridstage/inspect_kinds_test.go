package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/solver"
)

// inspectManifest is a small run of an invented firm panel's 2-D VAR and
// an invented three-age earnings profile.
const inspectManifest = `run: inspect-kinds
processes:
  - name: firm
    kind: var
    coef: [[0.9, 0.05], [0.02, 0.8]]
    cov: [[0.01, 0.002], [0.002, 0.02]]
    states: 3
  - name: earnings
    kind: lifecycle
    rho: [0.9, 0.95]
    sigma: [0.2, 0.15]
    initial_sd: 0.3
    states: 5
`

// runInspectManifest runs inspectManifest with gridstage run and returns
// the output folder.
func runInspectManifest(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	path := filepath.Join(dir, "m.yaml")
	if err := os.WriteFile(path, []byte(inspectManifest), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	if code, _, errOut := run(t, "run", path, "--out", out, "--cache", "off"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errOut)
	}
	return out
}

func TestInspectVector(t *testing.T) {
	dir := runInspectManifest(t)
	code, out, errOut := run(t, "inspect", dir, "--process", "firm")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"var chain (d = 2), method maxent, 9 states", "x0", "x1", "mean err", "cov err",
		"transition matrix (row = from, column = to)", "stationary moments", "cov x0 x1", "tauchen", "stationary covariance"} {
		if !strings.Contains(out, want) {
			t.Errorf("inspect of a VAR does not show %q:\n%s", want, out)
		}
	}
	code, out, errOut = run(t, "inspect", dir, "--process", "firm", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var j struct {
		Grid   [][]float64 `json:"grid"`
		Vector struct {
			MeanErr []float64 `json:"mean_std_error"`
			TrueCov []float64 `json:"true_cov"`
		} `json:"vector_diagnostics"`
		Baseline *struct{} `json:"baseline_vector_diagnostics"`
	}
	if err := json.Unmarshal([]byte(out), &j); err != nil {
		t.Fatal(err)
	}
	if len(j.Grid) != 9 || len(j.Grid[0]) != 2 || len(j.Vector.MeanErr) != 9 || j.Baseline == nil {
		t.Fatalf("JSON: %d states of %d values, %d vector errors, baseline %v", len(j.Grid), len(j.Grid[0]), len(j.Vector.MeanErr), j.Baseline)
	}
	// The true stationary covariance is the Lyapunov solution; checked
	// against the solver's, which is checked against scipy in package
	// solver. Exact: JSON keeps float64 values (shortest round trip).
	want := solver.VAR{Coef: []float64{0.9, 0.05, 0.02, 0.8}, Cov: []float64{0.01, 0.002, 0.002, 0.02}}.StationaryCov()
	for k := range want {
		if math.Float64bits(j.Vector.TrueCov[k]) != math.Float64bits(want[k]) {
			t.Errorf("true_cov[%d] = %v, want %v", k, j.Vector.TrueCov[k], want[k])
		}
	}
}

func TestInspectLifeCycleAges(t *testing.T) {
	dir := runInspectManifest(t)
	code, out, errOut := run(t, "inspect", dir, "--process", "earnings", "--age", "1")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"age 1", "moves from the grid of age 1 (rows) to the grid of age 2 (columns)", "grid of age 2:",
		"marginal moments at age 2", "rouwenhorst"} {
		if !strings.Contains(out, want) {
			t.Errorf("inspect --age 1 does not show %q:\n%s", want, out)
		}
	}
	code, out, _ = run(t, "inspect", dir, "--process", "earnings", "--age", "2")
	if code != 0 || !strings.Contains(out, "final age of a life-cycle chain") {
		t.Errorf("inspect of the terminal age: exit %d\n%s", code, out)
	}
	// Levels as numbers, never Go's slice notation ("0 [-0.97…]").
	if strings.Contains(out, "[") {
		t.Errorf("inspect of the terminal age prints a Go slice:\n%s", out)
	}
	code, out, _ = run(t, "inspect", dir, "--process", "earnings", "--age", "0", "--json")
	var j struct {
		Initial  []float64   `json:"initial"`
		NextGrid [][]float64 `json:"next_grid"`
	}
	if err := json.Unmarshal([]byte(out), &j); code != 0 || err != nil || len(j.Initial) != 5 || len(j.NextGrid) != 5 {
		t.Errorf("inspect --age 0 --json: exit %d, %v, initial %v, next grid %v", code, err, j.Initial, j.NextGrid)
	}
	if code, _, errOut := run(t, "inspect", dir, "--process", "earnings", "--age", "3"); code != 2 || !strings.Contains(errOut, "no age 3: it has ages 0 to 2 (age 2 is the final grid") {
		t.Errorf("inspect --age 3 of a three-age chain: exit %d, %s", code, errOut)
	}
}
