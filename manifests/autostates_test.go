package manifests

import (
	"strings"
	"testing"

	"gridstage/solver"
)

func parseText(t *testing.T, text string) (*Manifest, error) {
	t.Helper()
	return Parse(strings.NewReader(text), "auto.yaml", t.TempDir())
}

// TestStatesAuto: states: auto chooses the number solver.AR1.Advise
// finds, and the job is the job of that number given outright: same
// canonical spec, same spec hash, same settings (width √(N−1) of the
// chosen N).
func TestStatesAuto(t *testing.T) {
	const head = "run: auto\nprocesses:\n  - name: earnings\n    kind: ar1\n    sigma: 0.1\n"
	m, err := parseText(t, head+"    states: auto\n    sweep:\n      vary:\n        rho: [0.9, 0.99]\n")
	if err != nil {
		t.Fatal(err)
	}
	for k, rho := range []float64{0.9, 0.99} {
		adv, err := solver.AR1{Rho: rho, Sigma: 0.1}.Advise(solver.Settings{Moments: 4}, 0)
		if err != nil {
			t.Fatal(err)
		}
		job := m.Jobs[k]
		if job.AutoStates != adv.States || adv.States == 0 {
			t.Fatalf("rho %g: auto chose %d, advice %d", rho, job.AutoStates, adv.States)
		}
		explicit, err := parseText(t, head+"    rho: "+formatNumber(rho)+"\n    states: "+formatNumber(float64(adv.States))+"\n")
		if err != nil {
			t.Fatal(err)
		}
		want := explicit.Jobs[0]
		if job.SpecHash != want.SpecHash || string(specOf(t, job)) != string(specOf(t, want)) {
			t.Errorf("rho %g: auto spec %s, want %s", rho, specOf(t, job), specOf(t, want))
		}
		p, err := job.Build()
		if err != nil {
			t.Fatal(err)
		}
		if p.Settings.States != adv.States || p.Settings.Width != solver.DefaultWidth(adv.States) {
			t.Errorf("rho %g: built %d states, width %g", rho, p.Settings.States, p.Settings.Width)
		}
	}
}

// TestStatesAutoKinds: a VAR chooses per axis (its total within the cap),
// a life cycle by each age's marginal mass, and an i.i.d. law its points.
func TestStatesAutoKinds(t *testing.T) {
	m, err := parseText(t, `run: auto
processes:
  - name: shocks
    kind: var
    coef: [[0.97, 0.02], [0.01, 0.97]]
    cov: [[0.0004, 0.0001], [0.0001, 0.0009]]
    states: auto
  - name: ages
    kind: lifecycle
    rho: [0.99, 0.99, 0.99]
    sigma: [0.05, 0.05, 0.05]
    initial_sd: 0.3
    states: auto
  - name: returns
    kind: iid
    distribution: {law: lognormal, log_sd: 0.5}
    states: auto
`)
	if err != nil {
		t.Fatal(err)
	}
	// solver.TestAdviceVARBothDirections and TestAdviceLifeCycle give 8
	// per axis and 51 for the same processes.
	for k, want := range []int{8, 51, 0} {
		j := m.Jobs[k]
		if want > 0 && j.AutoStates != want {
			t.Errorf("%s: auto chose %d, want %d", j.Process, j.AutoStates, want)
		}
		p, err := j.Build()
		if err != nil {
			t.Fatal(err)
		}
		sol, err := p.Solve()
		if err != nil {
			t.Fatal(err)
		}
		if !sol.Carries() {
			t.Errorf("%s: the chain of %d states does not carry its moments", j.Process, j.AutoStates)
		}
	}
}

// TestStatesAutoErrors: no grid up to the cap is an error naming the
// states key; so are auto on a component, a swept states, and a cap
// without auto.
func TestStatesAutoErrors(t *testing.T) {
	for _, tc := range []struct{ body, want string }{
		{"  - name: e\n    kind: ar1\n    rho: 0.999\n    sigma: 0.1\n    states: auto\n    states_cap: 30\n",
			"auto.yaml:7:13: processes[0].states: auto: no grid of up to 30 states"},
		{"  - name: e\n    kind: ar1\n    rho: 0.9\n    sigma: 0.1\n    states: auto\n    sweep:\n      vary:\n        states: [5, 7]\n",
			"states cannot also be swept"},
		{"  - name: e\n    kind: product\n    components:\n      - {kind: ar1, rho: 0.9, sigma: 0.1, states: auto}\n      - {kind: ar1, rho: 0.5, sigma: 0.1, states: 3}\n",
			"auto applies to a whole process, not to a component"},
		{"  - name: e\n    kind: ar1\n    rho: 0.9\n    sigma: 0.1\n    states_cap: 30\n", "applies to states: auto only"},
		{"  - name: e\n    kind: ar1\n    rho: 0.9\n    sigma: 0.1\n    states: auto\n    states_cap: 1\n", "out of range"},
	} {
		_, err := parseText(t, "run: auto\nprocesses:\n"+tc.body)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want %q", tc.body, err, tc.want)
		}
	}
}
