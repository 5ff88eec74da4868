package report

import (
	"strings"
	"testing"

	"gridstage/solver"
)

func TestAssess(t *testing.T) {
	cases := []struct {
		name   string
		rho    float64
		set    solver.Settings
		want   Level
		reason string
	}{
		// Rouwenhorst reproduces the stationary s.d. and the
		// autocorrelation exactly (Kopecky and Suen 2010).
		{"rouwenhorst", 0.95, solver.Settings{States: 9, Method: solver.Rouwenhorst}, Sound, ""},
		// Mean and variance are feasible in every state at ρ = 0.5 with 9
		// states, and every row is unimodal.
		{"maxent sound", 0.5, solver.Settings{States: 9, Moments: 2}, Sound, ""},
		// With four moments the edge rows end in a spike: row 0 reads
		// … 0.0003 0.0001 0.0016, a jump across the grid.
		{"maxent edge spike", 0.5, solver.Settings{States: 9}, Caution, "up to 0.0016 of the probability (state 0)"},
		// Two edge states fall back at ρ = 0.9 with 9 states.
		{"maxent fallback", 0.9, solver.Settings{States: 9}, Caution, "fell back"},
		// examples/wage-risk.yaml at ρ 0.9 (σ scales out): row 0 has two
		// separated peaks, 0.4220 and 0.4897 (issue 10).
		{"maxent far from unimodal", 0.9, solver.Settings{States: 25}, Caution, "rows far from unimodal: up to 0.42 of the probability (state 0)"},
		// Tauchen-Hussey understates the stationary s.d. badly at ρ = 0.99
		// (Flodén 2008, Table 1 shows the failure growing with ρ).
		{"tauchen-hussey", 0.99, solver.Settings{States: 5, Method: solver.TauchenHussey}, Unfit, "standard deviation is understated"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			v := Assess(arCase(t, solver.AR1{Rho: tc.rho, Sigma: 0.1}, tc.set))
			if v.Level != tc.want {
				t.Fatalf("level %s, want %s; reasons %q", v.Level.Label(), tc.want.Label(), v.Reasons)
			}
			if tc.reason == "" && len(v.Reasons) != 0 {
				t.Errorf("sound chain with reasons %q", v.Reasons)
			}
			if tc.reason != "" && !strings.Contains(strings.Join(v.Reasons, " "), tc.reason) {
				t.Errorf("reasons %q do not mention %q", v.Reasons, tc.reason)
			}
		})
	}
}

func TestAssessCatchesBrokenChains(t *testing.T) {
	p := solver.AR1{Rho: 0.5, Sigma: 0.1}
	// A row that does not sum to one.
	cs := arCase(t, p, solver.Settings{States: 9})
	cs.Chain.Transition[0] += 0.01
	if v := Assess(cs); v.Level != Unfit || !strings.Contains(v.Reasons[0], "not a valid probability matrix") {
		t.Errorf("bad row: %s %q", v.Level.Label(), v.Reasons)
	}

	// A moment recorded as matched that is not.
	cs = arCase(t, p, solver.Settings{States: 9})
	cs.Diag.States[4].RelErr.Var = 1e-3
	if v := Assess(cs); v.Level != Unfit || !strings.Contains(strings.Join(v.Reasons, " "), "recorded as matched") {
		t.Errorf("false match: %s %q", v.Level.Label(), v.Reasons)
	}

	// A reducible chain: the identity has many stationary laws.
	id := &solver.Chain{Dim: 1, Grid: []float64{-1, 1}, Transition: []float64{1, 0, 0, 1}, Matched: []int{0, 0}, Method: solver.Tauchen}
	d := solver.Diagnose(id, p)
	cs.Chain, cs.Diag = id, &d
	if v := Assess(cs); v.Level != Unfit || !strings.Contains(strings.Join(v.Reasons, " "), "no unique stationary") {
		t.Errorf("reducible: %s %q", v.Level.Label(), v.Reasons)
	}

	// No diagnostics: cannot be judged sound.
	cs = arCase(t, p, solver.Settings{States: 9})
	cs.Diag = nil
	if v := Assess(cs); v.Level != Caution {
		t.Errorf("no diagnostics: %s", v.Level.Label())
	}
}

func TestLevelsHaveWordsAndMarks(t *testing.T) {
	seen := map[string]bool{}
	for _, l := range []Level{Sound, Caution, Unfit} {
		if l.Label() == "" || l.Mark() == "" || seen[l.Label()] || seen[l.Mark()] {
			t.Errorf("level %d: label %q mark %q not distinct", l, l.Label(), l.Mark())
		}
		seen[l.Label()], seen[l.Mark()] = true, true
	}
}
