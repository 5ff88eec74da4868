package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Issue 16 cases 6 and 7: inputs that once gave NaN or Infinity in the
// output, or a panic. Each is now refused with exit 2 and the range that
// works, or answered with exit 0 and finite JSON (no NaN can be encoded;
// a degenerate chain is flagged by the solver). A panic would crash this
// test, since the command runs in process.
func TestGuardRailsOnTheIssueInputs(t *testing.T) {
	cases := []struct {
		args []string
		want string // "" for a finite answer (exit 0)
	}{
		{[]string{"ar1", "--rho", "0.99999999", "--sigma", "0.1", "--states", "9"}, "--rho 0.99999999 is out of range: want in [-0.999999, 0.999999]"},
		{[]string{"ar1", "--rho", "0.99999999", "--sigma", "0.1", "--states", "9", "--method", "tauchen"}, "--rho 0.99999999 is out of range"},
		{[]string{"ar1", "--rho", "0.9", "--sigma", "1e-300", "--states", "9"}, "--sigma 1e-300 is out of range: want from 1e-30 to 1e30"},
		{[]string{"ar1", "--rho", "0.9", "--sigma", "1e300", "--states", "9"}, "--sigma 1e+300 is out of range: want from 1e-30 to 1e30"},
		{[]string{"ar1", "--rho", "0.9", "--sigma", "0.1", "--states", "9", "--mean", "1e308"}, "--mean 1e+308 is out of range: want at most 1e6 stationary standard deviations"},
		{[]string{"ar1", "--rho", "0.9", "--sigma", "0.1", "--states", "9", "--innovation", "t", "--nu", "2.0001"}, ""},
		{[]string{"var", "--coef", "0.9999999,0,0,0.5", "--cov", "1,0,0,1", "--states", "5"}, "--coef has spectral radius 0.9999999: want at most 0.999999"},
		{[]string{"var", "--coef", "0.5,0,0,0.5", "--cov", "1e-300,0,0,1e-300", "--states", "5"}, "--cov is out of range: sqrt(cov[0,0]) = 1e-150, want from 1e-30 to 1e30"},
		{[]string{"var", "--coef", "0.5,0,0,0.5", "--cov", "1,0.9999999999999,0.9999999999999,1", "--states", "5"}, "want at least 1e-12 times the largest variance"},
		{[]string{"ar1", "--rho", "-0.999999", "--sigma", "1e30", "--states", "9", "--method", "tauchen"}, "stationary s.d. sigma/sqrt(1-rho^2) = 7.07107e+32 is out of range"},
	}
	for _, tc := range cases {
		args := append([]string{"discretize"}, append(tc.args, "--json")...)
		code, _, errOut := run(t, args...)
		switch {
		case tc.want == "" && code != 0:
			t.Errorf("%v: exit %d (%s), want a finite answer", tc.args, code, errOut)
		case tc.want != "" && (code != 2 || !strings.Contains(errOut, tc.want)):
			t.Errorf("%v: exit %d, %q; want exit 2 with %q", tc.args, code, errOut, tc.want)
		}
	}
}

// At the edges of the accepted ranges every method answers (exit 0) or
// refuses (exit 2) — never a panic, never a non-finite number.
func TestGuardRailsAtTheBounds(t *testing.T) {
	for _, method := range []string{"maxent", "tauchen", "tauchen-hussey", "rouwenhorst"} {
		for _, p := range [][]string{
			{"--rho", "0.999999", "--sigma", "0.1"},
			{"--rho", "-0.999999", "--sigma", "0.1"},
			{"--rho", "0", "--sigma", "1e-30"},
			{"--rho", "0", "--sigma", "1e30"},
			{"--rho", "0.5", "--sigma", "1", "--mean", "1e6"},
			{"--rho", "0.5", "--sigma", "1", "--mean", "-1e6"},
		} {
			args := append([]string{"discretize", "ar1", "--states", "9", "--method", method, "--compare", "none", "--json"}, p...)
			if code, _, errOut := run(t, args...); code != 0 && code != 2 {
				t.Errorf("%v: exit %d: %s", args, code, errOut)
			}
		}
	}
}

// A manifest refuses what discretize refuses, at the process, per point.
func TestManifestHonoursTheNumericRanges(t *testing.T) {
	dir := t.TempDir()
	m := filepath.Join(dir, "m.yaml")
	os.WriteFile(m, []byte(`run: edge
processes:
  - {name: inc, kind: ar1, rho: 0.9, sigma: 0.1, states: 5, sweep: {vary: {rho: [0.5, 0.99999999]}}}
`), 0o644)
	code, _, errOut := run(t, "run", m, "--out", filepath.Join(dir, "out"), "--cache", "off")
	if code != 2 || !strings.Contains(errOut, "rho = 0.99999999 is out of range: want in [-0.999999, 0.999999]") {
		t.Errorf("exit %d, %q", code, errOut)
	}
}

// Issue 16 case 9: sizes whose jobs once ran for minutes are refused with
// the bound (solver.MaxStates; its time and memory are stated there and in
// the README), on the command line and in manifests alike.
func TestStateLimits(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"discretize", "ar1", "--rho", "0.9", "--sigma", "0.1", "--states", "5000"}, "--states 5000 is out of range: want an integer from 2 to 2000"},
		{[]string{"discretize", "var", "--coef", "0.5,0,0,0,0,0.5,0,0,0,0,0.5,0,0,0,0,0.5", "--cov", "1,0,0,0,0,1,0,0,0,0,1,0,0,0,0,1", "--states", "9"},
			"want an integer from 2 to 6 per axis for a 4-dimensional VAR (at most 2000 states in all)"},
	} {
		if code, _, errOut := run(t, tc.args...); code != 2 || !strings.Contains(errOut, tc.want) {
			t.Errorf("%v: exit %d, %q; want exit 2 with %q", tc.args, code, errOut, tc.want)
		}
	}
	dir := t.TempDir()
	m := filepath.Join(dir, "m.yaml")
	os.WriteFile(m, []byte("run: big\nprocesses:\n  - {name: inc, kind: ar1, rho: 0.9, sigma: 0.1, states: 5000}\n"), 0o644)
	if code, _, errOut := run(t, "run", m, "--out", filepath.Join(dir, "out"), "--cache", "off"); code != 2 || !strings.Contains(errOut, "5000 is out of range: want an integer from 2 to 2000") {
		t.Errorf("manifest: exit %d, %q", code, errOut)
	}
}
