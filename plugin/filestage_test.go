//go:build unix

package plugin

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"gridstage/solver"
)

// fileChainInput returns a small AR(1) chain inline, with its reference.
func fileChainInput(t *testing.T) ChainInput {
	t.Helper()
	c, err := solver.AR1{Rho: 0.9, Sigma: 0.1}.Discretize(solver.Settings{States: 5})
	if err != nil {
		t.Fatal(err)
	}
	d := &ChainData{Dim: 1, Grid: c.Grid, Transition: c.Transition, Matched: c.Matched}
	return ChainInput{Ref: ChainRef{ChainHash: DataHash(d), SpecHash: "spec", Process: "income", Point: 3,
		Path: "/data/income.points.parquet", FileHash: "file", Params: map[string]float64{"rho": 0.9}}, Data: d}
}

func fileStage(t *testing.T, script string) *FileStage {
	t.Helper()
	return &FileStage{Name: "mine", Command: []string{"/bin/sh", "-c", script}, WorkRoot: t.TempDir(), Timeout: 20 * time.Second}
}

// The contract end to end with a shell program: the request names the
// model, the parameters and the chain; the arrays read back bit for bit
// (shortest round-trip decimals, parsed here by strconv.ParseFloat); the
// estimate comes back with the chain's hash; the work folder is gone.
func TestFileStageRuns(t *testing.T) {
	in := fileChainInput(t)
	fs := fileStage(t, `cp "$GRIDSTAGE_WORK"/*.txt "$GRIDSTAGE_REQUEST" "$KEEP"/ && printf '%s' '{"scalars": {"a": 1.5e-3}, "vectors": {"v": [1, -2.25]}}' > "$GRIDSTAGE_WORK/estimate.json"`)
	keep := t.TempDir()
	fs.Env = []string{"KEEP=" + keep}
	d, err := fs.Describe(context.Background())
	if err != nil || d.Name != "mine" || !strings.HasPrefix(d.Version, "sha256:") || !d.Can(CapEstimate) || !d.Can(CapChainInline) {
		t.Fatalf("Describe = %+v, %v", d, err)
	}
	es, err := fs.Estimate(context.Background(), EstimateRequest{Model: "m", Params: map[string]float64{"beta": 0.96, "gamma": 2}, Chains: []ChainInput{in}})
	if err != nil {
		t.Fatal(err)
	}
	if len(es) != 1 || es[0].Model != "m" || es[0].ChainHashes[0] != in.Ref.ChainHash || es[0].Scalars["a"] != 1.5e-3 ||
		len(es[0].Vectors["v"]) != 2 || es[0].Vectors["v"][1] != -2.25 {
		t.Fatalf("estimates %+v", es)
	}
	var req fileRequest
	b, _ := os.ReadFile(filepath.Join(keep, RequestFile))
	if err := json.Unmarshal(b, &req); err != nil {
		t.Fatal(err)
	}
	if req.Contract != FileContract || req.Model != "m" || req.Params["gamma"] != 2 || req.Chain.ChainHash != in.Ref.ChainHash ||
		req.Chain.Point != 3 || req.Chain.States != 5 || req.Chain.Dim != 1 || req.Chain.Swept["rho"] != 0.9 || req.Chain.File != in.Ref.Path {
		t.Errorf("request %s", b)
	}
	read := func(name string) [][]float64 {
		b, err := os.ReadFile(filepath.Join(keep, name))
		if err != nil {
			t.Fatal(err)
		}
		var rows [][]float64
		for _, line := range strings.Split(strings.TrimSuffix(string(b), "\n"), "\n") {
			var row []float64
			for _, f := range strings.Split(line, " ") {
				v, err := strconv.ParseFloat(f, 64)
				if err != nil {
					t.Fatalf("%s: %v", name, err)
				}
				row = append(row, v)
			}
			rows = append(rows, row)
		}
		return rows
	}
	for i, row := range read("transition.txt") {
		for j, p := range row {
			if math.Float64bits(p) != math.Float64bits(in.Data.Transition[i*5+j]) {
				t.Fatalf("transition[%d][%d] reads back as %v, want %v", i, j, p, in.Data.Transition[i*5+j])
			}
		}
	}
	for i, row := range read("grid.txt") {
		if len(row) != 1 || row[0] != in.Data.Grid[i] {
			t.Fatalf("grid row %d = %v, want %v", i, row, in.Data.Grid[i])
		}
	}
	pi, _ := solver.Stationary(in.Data.Transition, 5)
	for i, row := range read("stationary.txt") {
		if row[0] != pi[i] {
			t.Errorf("stationary %d = %v, want %v", i, row[0], pi[i])
		}
	}
}

func TestFileStageParamsText(t *testing.T) {
	in := fileChainInput(t)
	keep := t.TempDir()
	fs := fileStage(t, `cp "$GRIDSTAGE_WORK/params.txt" "$KEEP"/ && echo '{"scalars": {"a": 1}}' > "$GRIDSTAGE_WORK/estimate.json"`)
	fs.Env = []string{"KEEP=" + keep}
	if _, err := fs.Estimate(context.Background(), EstimateRequest{Model: "m", Params: map[string]float64{"gamma": 2, "beta": 0.96}, Chains: []ChainInput{in}}); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(filepath.Join(keep, "params.txt"))
	if string(b) != "beta 0.96\ngamma 2\n" {
		t.Errorf("params.txt = %q", b)
	}
	if left, _ := os.ReadDir(fs.WorkRoot); len(left) != 0 {
		t.Errorf("work folders left after a successful run: %v", left)
	}
}

// Every kind of misbehaviour stops with one sentence that names the stage
// and the chain, and keeps the work folder.
func TestFileStageMisbehaves(t *testing.T) {
	in := fileChainInput(t)
	est := `"$GRIDSTAGE_WORK/estimate.json"`
	cases := []struct {
		name, script string
		want         []string
		badRequest   bool
	}{
		{"exit status", `echo 'cannot open the model' >&2; exit 3`, []string{"failed on chain", "income point 3", "exit status 3", `last output line: "cannot open the model"`}, false},
		{"refusal", `echo 'beta must be below 1' >&2; exit 2`, []string{"rejected the request on chain", ": beta must be below 1"}, true},
		{"no estimate", `true`, []string{"exited normally on chain", "but wrote no estimate.json"}, false},
		{"not json", `echo 'price 12.5' > ` + est, []string{"is not an estimate: line 1:", `want {"scalars"`}, false},
		{"unknown key", `echo '{"scalar": {"a": 1}}' > ` + est, []string{"is not an estimate", `unknown field "scalar"`}, false},
		{"text value", `echo '{"scalars": {"a": "high"}}' > ` + est, []string{`scalars.a = "high": want a number`}, false},
		{"NaN", `echo '{"scalars": {"a": NaN}}' > ` + est, []string{"holds NaN: estimates must be finite"}, false},
		{"Infinity in a vector", `echo '{"vectors": {"v": [1, -Infinity]}}' > ` + est, []string{"holds -Infinity: estimates must be finite"}, false},
		{"overflow", `echo '{"scalars": {"a": 1e999}}' > ` + est, []string{"scalars.a = 1e999: estimates must be finite numbers"}, false},
		{"no values", `echo '{"scalars": {}}' > ` + est, []string{"has no values"}, false},
		{"two values", `echo '{"scalars": {"a": 1}} {}' > ` + est, []string{"more than one JSON value"}, false},
		{"matrix", `echo '{"vectors": {"m": [[1, 2]]}}' > ` + est, []string{"vectors.m[0] = [1, 2]: want a number"}, false},
	}
	for _, tc := range cases {
		fs := fileStage(t, tc.script)
		_, err := fs.Estimate(context.Background(), EstimateRequest{Model: "m", Chains: []ChainInput{in}})
		if err == nil {
			t.Errorf("%s: no error", tc.name)
			continue
		}
		msg := err.Error()
		if !strings.HasPrefix(msg, "stage mine ") || strings.Contains(msg, "\n") {
			t.Errorf("%s: %q is not one sentence naming the stage", tc.name, msg)
		}
		for _, w := range tc.want {
			if !strings.Contains(msg, w) {
				t.Errorf("%s: %q lacks %q", tc.name, msg, w)
			}
		}
		if errors.Is(err, ErrBadRequest) != tc.badRequest {
			t.Errorf("%s: bad request = %v, want %v", tc.name, errors.Is(err, ErrBadRequest), tc.badRequest)
		}
		left, _ := os.ReadDir(fs.WorkRoot)
		if !tc.badRequest && (len(left) != 1 || !strings.Contains(msg, filepath.Join(fs.WorkRoot, left[0].Name()))) {
			t.Errorf("%s: the work folder is not kept and named: %v, %q", tc.name, left, msg)
		}
	}
}

// A program that overruns is killed with everything it started: a
// background child that would outlive the shell is gone too.
func TestFileStageTimeoutKillsTheGroup(t *testing.T) {
	in := fileChainInput(t)
	pids := filepath.Join(t.TempDir(), "pids")
	fs := fileStage(t, `sleep 60 & echo $! > `+pids+`; echo $$ >> `+pids+`; wait`)
	fs.Timeout = 500 * time.Millisecond
	start := time.Now()
	_, err := fs.Estimate(context.Background(), EstimateRequest{Model: "m", Chains: []ChainInput{in}})
	if err == nil || !strings.Contains(err.Error(), "did not finish within the timeout of 500ms on chain") {
		t.Fatalf("err = %v", err)
	}
	if d := time.Since(start); d > 10*time.Second {
		t.Errorf("the timeout took %v to stop the program", d)
	}
	b, _ := os.ReadFile(pids)
	for _, f := range strings.Fields(string(b)) {
		pid, _ := strconv.Atoi(f)
		deadline := time.Now().Add(2 * time.Second)
		for alive(pid) && time.Now().Before(deadline) {
			time.Sleep(20 * time.Millisecond)
		}
		if alive(pid) {
			t.Errorf("process %d outlived the timeout", pid)
		}
	}
	if len(strings.Fields(string(b))) != 2 {
		t.Errorf("pid file %q", b)
	}
}

// The derived version follows the bytes of the files the command names.
func TestCommandVersionFollowsTheScript(t *testing.T) {
	dir := t.TempDir()
	script := filepath.Join(dir, "solve.sh")
	os.WriteFile(script, []byte("echo one\n"), 0o755)
	v1, err := CommandVersion([]string{"/bin/sh", "solve.sh"}, dir)
	if err != nil {
		t.Fatal(err)
	}
	v2, _ := CommandVersion([]string{"/bin/sh", "solve.sh"}, dir)
	os.WriteFile(script, []byte("echo two\n"), 0o755)
	v3, _ := CommandVersion([]string{"/bin/sh", "solve.sh"}, dir)
	v4, _ := CommandVersion([]string{"/bin/sh", "solve.sh", "--fast"}, dir)
	if v1 != v2 || v1 == v3 || v3 == v4 || len(v1) != len("sha256:")+16 {
		t.Errorf("versions %s %s %s %s", v1, v2, v3, v4)
	}
}
