package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Issue 10, items 3 and 5: a degenerate chain (Tauchen at ρ 0.999999 on 9
// points: every off-diagonal probability underflows, so the matrix is the
// identity) and rows far from unimodal (maximum entropy at ρ 0.9 on 25
// points, examples/wage-risk.yaml: row 0 has two separated peaks) are
// flagged in the text of discretize, its JSON, the Parquet tables a run
// writes (read back by inspect), and the report's verdict.
func TestDegenerateAndShapeFlagsEverywhere(t *testing.T) {
	identity := []string{"discretize", "ar1", "--rho", "0.999999", "--sigma", "0.1", "--states", "9", "--method", "tauchen", "--compare", "none"}
	peaks := []string{"discretize", "ar1", "--rho", "0.9", "--sigma", "0.12", "--states", "25"}
	for _, c := range []struct {
		args []string
		want string
	}{
		{identity, "warning: degenerate chain: identity matrix"},
		{peaks, "warning: 6 row(s) far from unimodal (states 0, 1, 2, 22, 23, 24): up to 0.422 of the probability"},
	} {
		code, out, errOut := run(t, c.args...)
		if code != 0 || !strings.Contains(out, c.want) {
			t.Errorf("%v: exit %d, %s; output lacks %q:\n%s", c.args, code, errOut, c.want, out)
		}
	}

	var id struct {
		Stationary  []float64 `json:"stationary"`
		Degenerate  string    `json:"degenerate"`
		Diagnostics struct {
			StationaryErr string `json:"stationary_error"`
		} `json:"diagnostics"`
		NullReasons map[string]string `json:"null_reasons"`
	}
	code, out, errOut := run(t, append(identity, "--json")...)
	if code != 0 {
		t.Fatalf("identity --json: exit %d: %s", code, errOut)
	}
	if err := json.Unmarshal([]byte(out), &id); err != nil {
		t.Fatal(err)
	}
	if id.Stationary != nil || !strings.Contains(id.Degenerate, "identity matrix") || !strings.Contains(id.Diagnostics.StationaryErr, "not unique") {
		t.Errorf("identity JSON: stationary %v, degenerate %q, stationary_error %q", id.Stationary, id.Degenerate, id.Diagnostics.StationaryErr)
	}
	if r := id.NullReasons["diagnostics.states[0].chain.skewness"]; r == "" {
		t.Errorf("identity JSON: the skewness of a row with all its mass on one point is null without a reason: %v", id.NullReasons)
	}
	var pk struct {
		Diagnostics struct {
			States []struct {
				PriorKL *float64 `json:"prior_kl"`
				Shape   *struct {
					Stranded float64 `json:"stranded_mass"`
					Far      bool    `json:"far_from_unimodal"`
				} `json:"shape"`
			} `json:"states"`
			Far int `json:"far_from_unimodal_states"`
		} `json:"diagnostics"`
	}
	if code, out, errOut = run(t, append(peaks, "--json")...); code != 0 {
		t.Fatalf("peaks --json: exit %d: %s", code, errOut)
	}
	if err := json.Unmarshal([]byte(out), &pk); err != nil {
		t.Fatal(err)
	}
	if s := pk.Diagnostics.States[0]; pk.Diagnostics.Far != 6 || s.Shape == nil || !s.Shape.Far || s.PriorKL == nil || *s.PriorKL <= 0 {
		t.Errorf("peaks JSON: %d far states, state 0 %+v", pk.Diagnostics.Far, s)
	}

	dir := t.TempDir()
	manifest := filepath.Join(dir, "m.yaml")
	if err := os.WriteFile(manifest, []byte(`run: flags-check
output: {folder: out}
processes:
  - {name: frozen, kind: ar1, rho: 0.999999, sigma: 0.1, states: 9, method: tauchen, compare: none}
  - {name: peaks, kind: ar1, rho: 0.9, sigma: 0.12, states: 25, compare: none}
`), 0o644); err != nil {
		t.Fatal(err)
	}
	outDir := filepath.Join(dir, "out")
	if code, _, errOut = run(t, "run", manifest, "--out", outDir, "--cache", "off"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errOut)
	}
	// inspect reads the chain back from the Parquet tables.
	for _, c := range []struct{ process, want string }{
		{"frozen", "warning: degenerate chain: identity matrix"},
		{"peaks", "warning: 6 row(s) far from unimodal"},
	} {
		code, out, errOut := run(t, "inspect", outDir, "--process", c.process)
		if code != 0 || !strings.Contains(out, c.want) {
			t.Errorf("inspect %s: exit %d, %s; output lacks %q", c.process, code, errOut, c.want)
		}
	}
	code, out, errOut = run(t, "report", outDir)
	if code != 0 {
		t.Fatalf("report: exit %d: %s", code, errOut)
	}
	html, err := os.ReadFile(strings.TrimSpace(out))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"The chain has no unique stationary distribution", "identity matrix",
		"6 state(s) have rows far from unimodal: up to 0.42 of the probability (state 0)"} {
		if !strings.Contains(string(html), want) {
			t.Errorf("the report lacks %q", want)
		}
	}
}
