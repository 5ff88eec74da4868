package main

import (
	"encoding/json"
	"strings"
	"testing"
)

func TestAccuracyVARJSON(t *testing.T) {
	code, out, errOut := run(t, "accuracy", "var", "--coef", "0.8,0.1,0.05,0.7", "--cov", "0.01,0.003,0.003,0.02",
		"--intercept", "0.01,-0.02", "--states", "9", "--reps", "8", "--length", "200", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got struct {
		Kind    string   `json:"kind"`
		Names   []string `json:"parameters"`
		Methods []struct {
			Name       string    `json:"name"`
			PopCoefErr float64   `json:"population_coef_error"`
			PopCovErr  float64   `json:"population_cov_error"`
			Bias       []float64 `json:"bias"`
			MSE        []float64 `json:"mse"`
		} `json:"methods"`
		Floor struct {
			MSE []float64 `json:"mse"`
		} `json:"true_process"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not one JSON object: %v", err)
	}
	if got.Kind != "var" || len(got.Names) != 9 || len(got.Methods) != 2 || len(got.Floor.MSE) != 9 {
		t.Fatalf("shape: kind %q, %d parameters, %d methods, floor %d", got.Kind, len(got.Names), len(got.Methods), len(got.Floor.MSE))
	}
	me, ta := got.Methods[0], got.Methods[1]
	if me.Name != "maxent" || ta.Name != "tauchen" {
		t.Fatalf("methods %q, %q", me.Name, ta.Name)
	}
	// Every state matches means and covariances for this VAR, so the
	// implied VAR is exact (derived; 1e-10 = moment tolerance).
	if me.PopCoefErr > 1e-10 || me.PopCovErr > 1e-10 {
		t.Errorf("maxent population errors %.3g/%.3g, want ≤ 1e-10", me.PopCoefErr, me.PopCovErr)
	}
	if !(ta.PopCoefErr > 1e-4) {
		t.Errorf("tauchen population coefficient error %.3g: expected visibly inexact", ta.PopCoefErr)
	}
}

func TestAccuracyAR1Text(t *testing.T) {
	code, out, errOut := run(t, "accuracy", "ar1", "--rho", "0.9", "--sigma", "0.1", "--states", "5", "--reps", "4", "--length", "100")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"population least squares", "true process", "rouwenhorst", "tauchen-hussey", "adda-cooper", "intercept", "rho", "sigma^2"} {
		if !strings.Contains(out, want) {
			t.Errorf("text output lacks %q", want)
		}
	}
}

func TestAccuracyBadInput(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"accuracy", "ar1", "--rho", "0.9", "--sigma", "0.1", "--reps", "0"}, "--reps 0 is out of range: want an integer from 1 to 100000"},
		{[]string{"accuracy", "ar1", "--rho", "0.9", "--sigma", "0.1", "--length", "5"}, "--length 5 is out of range"},
		{[]string{"accuracy", "ar1", "--rho", "0.9", "--sigma", "0.1", "--methods", "maxent,maxent"}, `--methods lists "maxent" twice`},
		{[]string{"accuracy", "ar1", "--rho", "1", "--sigma", "0.1"}, "--rho 1 is out of range"},
		{[]string{"accuracy", "var", "--coef", "0.5", "--cov", "1", "--methods", "rouwenhorst"}, `--methods "rouwenhorst" is not recognised: want one of maxent, tauchen`},
		{[]string{"accuracy", "var", "--coef", "0.5", "--cov", "1", "--methods", "maxent,adda-cooper"}, "--methods adda-cooper does not apply to a VAR"},
		{[]string{"accuracy", "var", "--coef", "1.5", "--cov", "1"}, "--coef has spectral radius 1.5"},
		{[]string{"accuracy", "arma"}, `unknown process kind "arma"`},
	}
	for _, c := range cases {
		code, out, errOut := run(t, c.args...)
		if code != 2 || out != "" {
			t.Errorf("%v: exit %d (want 2), stdout %q", c.args, code, out)
		}
		if lines := strings.Split(strings.TrimSpace(errOut), "\n"); len(lines) != 1 || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: stderr %q, want one line containing %q", c.args, errOut, c.want)
		}
	}
}
