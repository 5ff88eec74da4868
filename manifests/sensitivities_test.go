package manifests

import (
	"strings"
	"testing"

	"gridstage/solver"
)

// TestSensitivitiesSwitch: sensitivities: true is an output choice — the
// specs and their hashes stay as they are, the manifest hash changes (the
// output is then stale) — and a process whose chains have no derivatives
// is refused with an error naming the field and why.
func TestSensitivitiesSwitch(t *testing.T) {
	parse := func(body string) (*Manifest, error) {
		return Parse(strings.NewReader("run: s\nprocesses:\n  - name: y\n"+body), "s.yaml", ".")
	}
	ar1 := "    kind: ar1\n    rho: 0.95\n    sigma: 0.1\n"
	plain, err := parse(ar1)
	if err != nil {
		t.Fatal(err)
	}
	with, err := parse(ar1 + "    sensitivities: true\n")
	if err != nil {
		t.Fatal(err)
	}
	off, err := parse(ar1 + "    sensitivities: false\n")
	if err != nil {
		t.Fatal(err)
	}
	if !with.Processes[0].Sensitivities || plain.Processes[0].Sensitivities {
		t.Errorf("Process.Sensitivities: %v with the switch, %v without", with.Processes[0].Sensitivities, plain.Processes[0].Sensitivities)
	}
	if with.Jobs[0].SpecHash != plain.Jobs[0].SpecHash {
		t.Errorf("the switch changed the spec hash")
	}
	if with.Hash == plain.Hash || off.Hash != plain.Hash {
		t.Errorf("manifest hashes: %s with the switch, %s without, %s with false: want the first to differ only", with.Hash, plain.Hash, off.Hash)
	}
	sens, err := with.Jobs[0].Sensitivities(mustSolve(t, with.Jobs[0]))
	if err != nil || strings.Join(sens.Params, ",") != "mean,rho,sigma" {
		t.Errorf("Job.Sensitivities: %v, %v", sens, err)
	}

	for _, tc := range []struct{ body, want string }{
		{"    kind: iid\n    distribution: {law: beta, alpha: 2, beta: 3}\n    sensitivities: true\n",
			"s.yaml:6:20: processes[0].sensitivities: the distribution is beta: sensitivities need a normal, lognormal, t or laplace law"},
		{"    kind: iid\n    distribution: {law: t, nu: 8}\n    nodes: equal-mass\n    sensitivities: true\n",
			"processes[0].sensitivities: a t law's shape moves the quantiles of equal-mass nodes"},
		{"    kind: ar1-volatility\n    rho: 0.9\n    sigma: 0.1\n    vol_rho: 0.8\n    vol_sigma: 0.1\n    sensitivities: true\n",
			"processes[0].sensitivities: kind ar1-volatility has no parameter sensitivities in this version: want kind ar1, iid, product, var"},
		{"    kind: var\n    coef: [[0.9, 0], [0, 0.8]]\n    cov: [[0.01, 0], [0, 0.01]]\n    method: tauchen\n    sensitivities: true\n",
			"processes[0].sensitivities: method tauchen has no parameter sensitivities"},
		{ar1 + "    method: tauchen\n    sensitivities: true\n", "processes[0].sensitivities: method tauchen has no parameter sensitivities"},
		{ar1 + "    innovation: {law: laplace}\n    sensitivities: true\n", "processes[0].sensitivities: the innovation is laplace"},
		{ar1 + "    sensitivities: 1\n", "processes[0].sensitivities: the value is"},
	} {
		_, err := parse(tc.body)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want it to contain %q", tc.body, err, tc.want)
		}
	}
	v, err := parse("    kind: var\n    coef: [[0.9, 0.1], [0, 0.8]]\n    cov: [[0.01, 0.002], [0.002, 0.01]]\n    states: 3\n    sensitivities: true\n")
	if err != nil {
		t.Fatal(err)
	}
	if sens, err := v.Jobs[0].Sensitivities(mustSolve(t, v.Jobs[0])); err != nil || len(sens.Params) != 9 || sens.Params[3] != "coef[0][1]" {
		t.Errorf("VAR Job.Sensitivities: %v, %v; want 9 parameters named as the manifest's sweep names them (coef[0][1])", sens, err)
	}
	iid, err := parse("    kind: iid\n    distribution: {law: lognormal, log_mean: 0.03, log_sd: 0.15}\n    states: 7\n    sensitivities: true\n")
	if err != nil {
		t.Fatal(err)
	}
	if sens, err := iid.Jobs[0].Sensitivities(mustSolve(t, iid.Jobs[0])); err != nil || strings.Join(sens.Params, ",") != "distribution.log_mean,distribution.log_sd" {
		t.Errorf("iid Job.Sensitivities: %v, %v; want the law's parameters as a sweep names them", sens, err)
	}
	prod, err := parse("    kind: product\n    components:\n      - {kind: ar1, rho: 0.9, sigma: 0.1, states: 5, matching: smooth}\n      - {kind: iid, distribution: {law: normal, sd: 0.2}, states: 3}\n    sensitivities: true\n")
	if err != nil {
		t.Fatal(err)
	}
	if sens, err := prod.Jobs[0].Sensitivities(mustSolve(t, prod.Jobs[0])); err != nil || len(sens.Params) != 5 || sens.Params[1] != "components[0].rho" || sens.Params[4] != "components[1].distribution.sd" {
		t.Errorf("product Job.Sensitivities: %v, %v; want components[i].<name> for every component's parameters", sens, err)
	}
	for _, tc := range []struct{ body, want string }{
		{"    kind: product\n    components:\n      - {kind: ar1, rho: 0.9, sigma: 0.1, innovation: {law: laplace}}\n      - {kind: iid, distribution: {law: normal, sd: 0.2}}\n    sensitivities: true\n",
			"processes[0].sensitivities: components[0]: the innovation is laplace"},
		{"    kind: product\n    components:\n      - {kind: lifecycle, rho: [0.9, 0.9], sigma: [0.1, 0.1], initial_sd: 0.2}\n      - {kind: iid, distribution: {law: normal, sd: 0.2}}\n    sensitivities: true\n",
			"processes[0].sensitivities: components[0] is kind lifecycle, which has no parameter sensitivities"},
	} {
		if _, err := parse(tc.body); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want it to contain %q", tc.body, err, tc.want)
		}
	}
	if _, err := ParseSpec([]byte(`{"kind":"ar1","rho":0.9,"sigma":0.1,"sensitivities":true}`)); err == nil || !strings.Contains(err.Error(), "sensitivities") {
		t.Errorf("a canonical spec with sensitivities: %v, want the key refused", err)
	}
}

func mustSolve(t *testing.T, j Job) *solver.Chain {
	t.Helper()
	pr, err := j.Build()
	if err != nil {
		t.Fatal(err)
	}
	sol, err := pr.Solve()
	if err != nil {
		t.Fatal(err)
	}
	return sol.Chain
}
