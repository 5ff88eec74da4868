package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/batch"
)

// TestDiscretizeProvenanceMatchesRun: `discretize --json` identifies a
// chain exactly as `run` records the same process in run.json — spec hash,
// chain hash, numeric version and tool version — for each kind the command
// line offers, defaults left out on both sides or written on one.
func TestDiscretizeProvenanceMatchesRun(t *testing.T) {
	cases := []struct {
		name  string
		args  []string
		entry string // the same process in a manifest
	}{
		{"ar1-defaults", []string{"ar1", "--rho", "0.9", "--sigma", "0.1"},
			`{kind: ar1, rho: 0.9, sigma: 0.1}`},
		{"ar1-student", []string{"ar1", "--rho", "0.95", "--sigma", "0.15", "--mean", "1", "--states", "7", "--innovation", "t", "--nu", "6", "--nodes", "gauss-hermite", "--compare", "rouwenhorst"},
			`{kind: ar1, rho: 0.95, sigma: 0.15, mean: 1, states: 7, innovation: {law: t, nu: 6}, nodes: gauss-hermite, compare: rouwenhorst}`},
		{"ar1-mixture", []string{"ar1", "--rho", "0.8", "--sigma", "0.2", "--innovation", "mixture", "--component", "weight=0.9,mean=0.02,sd=0.1", "--component", "weight=0.1,mean=-0.18,sd=0.4", "--moments", "3", "--width", "2.5"},
			`{kind: ar1, rho: 0.8, sigma: 0.2, moments: 3, width: 2.5, innovation: {law: mixture, components: [{weight: 0.9, mean: 0.02, sd: 0.1}, {weight: 0.1, mean: -0.18, sd: 0.4}]}}`},
		{"ar1-tauchen", []string{"ar1", "--rho", "0.9", "--sigma", "0.1", "--method", "tauchen", "--states", "11"},
			`{kind: ar1, rho: 0.9, sigma: 0.1, method: tauchen, states: 11, compare: rouwenhorst}`},
		{"ar1-floden", []string{"ar1", "--rho", "0.9", "--sigma", "0.1", "--method", "tauchen-hussey", "--floden", "--compare", "none"},
			`{kind: ar1, rho: 0.9, sigma: 0.1, method: tauchen-hussey, floden: true, compare: none}`},
		{"ar1-rouwenhorst", []string{"ar1", "--rho", "0.99", "--sigma", "0.05", "--method", "rouwenhorst", "--states", "5"},
			`{kind: ar1, rho: 0.99, sigma: 0.05, method: rouwenhorst, states: 5}`},
		{"iid-lognormal", []string{"iid", "--distribution", "lognormal", "--log-mean", "0.03", "--log-sd", "0.15", "--states", "5"},
			`{kind: iid, distribution: {law: lognormal, log_mean: 0.03, log_sd: 0.15}, states: 5}`},
		{"iid-beta", []string{"iid", "--distribution", "beta", "--alpha", "2", "--beta", "5", "--lower", "0.1", "--upper", "0.9", "--states", "7"},
			`{kind: iid, distribution: {law: beta, alpha: 2, beta: 5, lower: 0.1, upper: 0.9}, states: 7}`},
		{"var-principal", []string{"var", "--coef", "0.92,0,0.1,0.8", "--cov", "0.0036,0.0012,0.0012,0.0064", "--states", "5"},
			`{kind: var, coef: [[0.92, 0], [0.1, 0.8]], cov: [[0.0036, 0.0012], [0.0012, 0.0064]], states: 5}`},
		{"var-coordinate", []string{"var", "--coef", "0.9,0.05,0.02,0.8", "--cov", "0.01,0.002,0.002,0.02", "--intercept", "0.01,0", "--states", "4", "--axes", "coordinate", "--moments", "4", "--compare", "none"},
			`{kind: var, coef: [[0.9, 0.05], [0.02, 0.8]], cov: [[0.01, 0.002], [0.002, 0.02]], intercept: [0.01, 0], states: 4, axes: coordinate, moments: 4, compare: none}`},
		{"var-tauchen", []string{"var", "--coef", "0.9,0.05,0.02,0.8", "--cov", "0.01,0.002,0.002,0.02", "--method", "tauchen", "--states", "3"},
			`{kind: var, coef: [[0.9, 0.05], [0.02, 0.8]], cov: [[0.01, 0.002], [0.002, 0.02]], method: tauchen, states: 3}`},
	}
	var manifest strings.Builder
	manifest.WriteString("run: provenance-identity\nprocesses:\n")
	for _, c := range cases {
		manifest.WriteString("  - " + strings.Replace(c.entry, "{", "{name: "+c.name+", ", 1) + "\n")
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "same.yaml")
	if err := os.WriteFile(path, []byte(manifest.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	if code, _, errOut := run(t, "run", path, "--out", out, "--cache", "off"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errOut)
	}
	rec, err := batch.ReadRecord(out)
	if err != nil {
		t.Fatal(err)
	}
	byName := map[string]batch.JobRecord{}
	for _, j := range rec.Jobs {
		byName[j.Process] = j
	}
	for _, c := range cases {
		code, stdout, errOut := run(t, append(append([]string{"discretize"}, c.args...), "--json")...)
		if code != 0 {
			t.Fatalf("%s: discretize: exit %d: %s", c.name, code, errOut)
		}
		var got struct {
			SpecHash  string `json:"spec_hash"`
			ChainHash string `json:"chain_hash"`
			Numeric   string `json:"numeric_version"`
			Tool      string `json:"tool_version"`
		}
		if err := json.Unmarshal([]byte(stdout), &got); err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		want := byName[c.name]
		if got.SpecHash != want.SpecHash || got.ChainHash != want.ChainHash || got.Numeric != rec.Numeric || got.Tool != rec.Tool {
			t.Errorf("%s: discretize says spec %s chain %s numeric %q tool %q;\n run.json says spec %s chain %s numeric %q tool %q",
				c.name, got.SpecHash, got.ChainHash, got.Numeric, got.Tool, want.SpecHash, want.ChainHash, rec.Numeric, rec.Tool)
		}
		if got.ChainHash == "" || got.Numeric == "" || got.Tool == "" {
			t.Errorf("%s: empty provenance field in %+v", c.name, got)
		}
	}
}
