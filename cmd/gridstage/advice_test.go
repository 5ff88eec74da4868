package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// adviceLine matches the two answers grid advice gives when a chain does
// not carry its moments: a number of states, or none up to the cap.
var adviceLine = regexp.MustCompile(`advice[^:\n]*: (\d+ states|no grid of up to \d+ states|the states that fell back)`)

// TestFallbackWarningsCarryAdvice: every fallback warning of discretize
// (ar1, var, iid) and run names what would carry the moments.
func TestFallbackWarningsCarryAdvice(t *testing.T) {
	for _, args := range [][]string{
		{"discretize", "ar1", "--rho", "0.99", "--sigma", "0.1", "--states", "9"},
		{"discretize", "var", "--coef", "0.97,0.02,0.01,0.97", "--cov", "0.0004,0.0001,0.0001,0.0009", "--states", "5"},
		{"discretize", "iid", "--distribution", "lognormal", "--log-sd", "1.5", "--states", "5"},
	} {
		code, out, errOut := run(t, args...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errOut)
		}
		if !strings.Contains(out, "warning:") {
			t.Errorf("%v: no fallback warning; the case needs one:\n%s", args, out)
			continue
		}
		if !adviceLine.MatchString(out) {
			t.Errorf("%v: the warning carries no advice:\n%s", args, out)
		}
	}
	// The JSON carries the same advice.
	code, out, errOut := run(t, "discretize", "var", "--coef", "0.97,0.02,0.01,0.97", "--cov", "0.0004,0.0001,0.0001,0.0009", "--states", "5", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got struct {
		Advice string `json:"advice"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(got.Advice, "8 states per axis (64 in all") {
		t.Errorf("var advice %q, want 8 states per axis (solver.TestAdviceVARBothDirections)", got.Advice)
	}
}

// TestRunWarningCarriesAdvice: the run summary names, per process with
// fallbacks, the job with the most and the advice for it; the report's
// verdicts repeat it.
func TestRunWarningCarriesAdvice(t *testing.T) {
	dir := t.TempDir()
	manifest := filepath.Join(dir, "m.yaml")
	if err := os.WriteFile(manifest, []byte(`run: advice-check
output: {folder: out}
processes:
  - name: earnings
    kind: ar1
    rho: 0.99
    sigma: 0.1
    states: 9
    sweep:
      vary:
        sigma: [0.1, 0.2]
`), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	code, stdout, errOut := run(t, "run", manifest, "--out", out, "--cache", "off")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"warning: in 2 of 2 jobs", "earnings: 2 jobs; most at point 0 (sigma=0.1), 9 of 9 states fell back",
		"advice for that job: 68 states (lattice nodes, width √(N−1))"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("run summary lacks %q:\n%s", want, stdout)
		}
	}
	code, stdout, errOut = run(t, "report", out)
	if code != 0 {
		t.Fatalf("report: exit %d: %s", code, errOut)
	}
	html, err := os.ReadFile(strings.TrimSpace(stdout))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(html), "Grid advice (computed for point 0, the one with the most states that fell back): 68 states") {
		t.Errorf("the report's verdicts carry no grid advice")
	}
}

// TestStatesAutoFlag: --states auto chooses the advised number (68 for
// rho 0.99, sigma 0.1, as solver.TestAdviceBothDirections finds), and the
// chain's spec hash is that of --states 68; bad uses exit 2.
func TestStatesAutoFlag(t *testing.T) {
	var got [2]struct {
		SpecHash   string `json:"spec_hash"`
		AutoStates int    `json:"auto_states"`
		Grid       [][]float64
	}
	for k, states := range []string{"auto", "68"} {
		code, out, errOut := run(t, "discretize", "ar1", "--rho", "0.99", "--sigma", "0.1", "--states", states, "--json")
		if code != 0 {
			t.Fatalf("--states %s: exit %d: %s", states, code, errOut)
		}
		if err := json.Unmarshal([]byte(out), &got[k]); err != nil {
			t.Fatal(err)
		}
	}
	if got[0].AutoStates != 68 || len(got[0].Grid) != 68 || got[0].SpecHash != got[1].SpecHash || got[1].AutoStates != 0 {
		t.Errorf("auto: %d states, auto_states %d, spec hash %s; explicit: %s", len(got[0].Grid), got[0].AutoStates, got[0].SpecHash, got[1].SpecHash)
	}
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"--states", "auto", "--method", "tauchen"}, "--states auto applies to --method maxent only"},
		{[]string{"--states", "9", "--states-cap", "20"}, "--states-cap applies to --states auto only"},
		{[]string{"--states", "nine"}, "want an integer from 2 to 2000, or auto"},
		{[]string{"--rho", "0.999", "--states", "auto", "--states-cap", "20"}, "no grid of up to 20 states"},
	} {
		args := append([]string{"discretize", "ar1", "--rho", "0.99", "--sigma", "0.1"}, tc.args...)
		code, _, errOut := run(t, args...)
		if code != 2 || !strings.Contains(errOut, tc.want) {
			t.Errorf("%v: exit %d, %q; want 2 and %q", tc.args, code, errOut, tc.want)
		}
	}
}
