package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

func TestDiscretizeVARJSON(t *testing.T) {
	for _, tc := range []struct {
		args   []string
		dim, n int
	}{
		{[]string{"--coef", "0.9", "--cov", "0.01", "--states", "7"}, 1, 7},
		{[]string{"--coef", "0.9,0.1,0,0.8", "--cov", "0.01,0,0,0.02", "--states", "9"}, 2, 81},
		{[]string{"--coef", "0.9,0.1,0,0.8", "--cov", "0.01,0.004,0.004,0.02", "--intercept", "0.1,-0.1", "--states", "6", "--axes", "coordinate"}, 2, 36},
		{[]string{"--coef", "0.9,0.05,0,0.02,0.85,0.03,0,0.1,0.8", "--cov", "0.01,0.002,0,0.002,0.02,0.001,0,0.001,0.015", "--states", "5"}, 3, 125},
	} {
		args := append([]string{"discretize", "var", "--json"}, tc.args...)
		code, out, errOut := run(t, args...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", tc.args, code, errOut)
		}
		var got struct {
			Kind        string      `json:"kind"`
			Grid        [][]float64 `json:"grid"`
			Transition  [][]float64 `json:"transition"`
			Stationary  []float64   `json:"stationary"`
			Matched     []int       `json:"matched"`
			Diagnostics struct {
				States []struct {
					Matched int       `json:"matched"`
					MeanErr []float64 `json:"mean_std_error"`
				} `json:"states"`
			} `json:"diagnostics"`
			Baseline *struct {
				Method string `json:"method"`
			} `json:"baseline"`
		}
		if err := json.Unmarshal([]byte(out), &got); err != nil {
			t.Fatalf("%v: output is not one JSON object: %v", tc.args, err)
		}
		if got.Kind != "var" || len(got.Grid) != tc.n || len(got.Grid[0]) != tc.dim || len(got.Transition) != tc.n ||
			len(got.Transition[0]) != tc.n || len(got.Stationary) != tc.n || len(got.Matched) != tc.n {
			t.Fatalf("%v: shape: kind %q grid %d×%d transition %d stationary %d", tc.args, got.Kind, len(got.Grid), len(got.Grid[0]), len(got.Transition), len(got.Stationary))
		}
		for i, row := range got.Transition {
			var s float64
			for _, p := range row {
				s += p
			}
			// JSON carries shortest round-trip decimals: sums stay within 1e-12.
			if math.Abs(s-1) > 1e-12 {
				t.Errorf("%v: row %d sums to %.17g", tc.args, i, s)
			}
		}
		for i, st := range got.Diagnostics.States {
			for _, e := range st.MeanErr {
				// Conditional means are matched in every state (1e-10 standardized).
				if st.Matched >= 1 && math.Abs(e) > 1e-10 {
					t.Errorf("%v: state %d mean error %.3g", tc.args, i, e)
				}
			}
		}
		if got.Baseline == nil || got.Baseline.Method != "tauchen" {
			t.Errorf("%v: baseline missing or not tauchen", tc.args)
		}
	}
}

func TestDiscretizeVARText(t *testing.T) {
	code, out, errOut := run(t, "discretize", "var", "--coef", "0.9,0.1,0,0.8", "--cov", "0.01,0,0,0.02", "--states", "5", "--method", "tauchen")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"method tauchen", "stationary moments", "maxent", "Lyapunov", "corr(x0', x1)"} {
		if !strings.Contains(out, want) {
			t.Errorf("text output lacks %q", want)
		}
	}
}

// Bad input exits with status 2 and one line naming the flag and what is
// expected.
func TestDiscretizeVARBadInput(t *testing.T) {
	ok := []string{"--coef", "0.5,0,0,0.5", "--cov", "1,0,0,1"}
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"--coef", "1.1,0,0,0.5", "--cov", "1,0,0,1"}, "--coef has spectral radius 1.1: want < 1"},
		{[]string{"--coef", "0.8,-0.7,0.7,0.8", "--cov", "1,0,0,1"}, "--coef has spectral radius 1.06301: want < 1"},
		{[]string{"--coef", "0.9,0.1,0", "--cov", "1"}, "--coef has 3 entries: want d*d for a dimension d from 1 to 4"},
		{[]string{"--coef", "0.5,0,0,0.5", "--cov", "1"}, "--cov has 1 entries: want 4"},
		{[]string{"--coef", "0.5,0,0,0.5", "--cov", "1,2,2,1"}, "--cov is not positive definite: its smallest eigenvalue is -1"},
		{[]string{"--coef", "0.5,0,0,0.5", "--cov", "1,0.1,0.2,1"}, "--cov is not symmetric: cov[1,2] = 0.1 but cov[2,1] = 0.2"},
		{[]string{"--coef", "0.5,0,0,0.5", "--cov", "1,0,0,NaN"}, "--cov entry 4 = NaN is out of range"},
		{[]string{"--cov", "1"}, "--coef is required"},
		{append(ok, "--intercept", "1"), "--intercept has 1 entries: want 2"},
		{append(ok, "--states", "101"), "--states 101 is out of range: want an integer from 2 to 44 per axis for a 2-dimensional VAR"},
		{append(ok, "--states", "1"), "--states 1 is out of range"},
		{append(ok, "--method", "rouwenhorst"), `--method "rouwenhorst" is not recognised: want one of maxent, tauchen`},
		{append(ok, "--method", "tauchen", "--axes", "coordinate"), "--axes applies to --method maxent only"},
		{append(ok, "--axes", "diagonal"), `--axes "diagonal" is not recognised: want one of principal, coordinate`},
		{append(ok, "--moments", "5"), "--moments 5 is out of range: want an integer from 1 to 4"},
		{append(ok, "--width", "0"), "--width 0 is out of range"},
		{append(ok, "--compare", "rouwenhorst"), `--compare "rouwenhorst" is not recognised`},
		{append(ok, "--method", "adda-cooper"), "--method adda-cooper does not apply to a VAR"},
		{append(ok, "--compare", "adda-cooper"), "--compare adda-cooper does not apply to a VAR"},
	}
	for _, c := range cases {
		code, out, errOut := run(t, append([]string{"discretize", "var"}, c.args...)...)
		if code != 2 {
			t.Errorf("%v: exit %d, want 2", c.args, code)
		}
		if out != "" {
			t.Errorf("%v: wrote to stdout on error", c.args)
		}
		lines := strings.Split(strings.TrimSpace(errOut), "\n")
		if len(lines) != 1 || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: stderr %q, want one line containing %q", c.args, errOut, c.want)
		}
	}
}
