package report

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestLoadRejectsWhatIsNotGridstageOutput(t *testing.T) {
	dir := t.TempDir()
	write := func(name, body string) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(body), 0o644)
		return p
	}
	cases := []struct {
		path, want string
	}{
		{filepath.Join(dir, "nothing"), "no such file or folder"},
		{write("a.csv", "x,y\n"), "is not gridstage output"},
		{write("a.json", "[1,2]"), "is not gridstage JSON output"},
		{write("b.json", `{"kind": "normal", "grid": [[0]], "weights": [1]}`), "not a Markov chain"},
		{write("c.json", `{"kind": "ar1", "method": "maxent", "grid": [[0],[1,2]], "transition": [[1,0],[0,1]]}`), "field grid[1] has 2 values, want 1"},
		{write("d.json", `{"kind": "ar1", "method": "simplex", "grid": [[0]], "transition": [[1]]}`), "field method"},
		{write("e.json", `{"kind": "ar1", "method": "maxent", "grid": [[0],[1]], "transition": [[1,0],[0,1]], "matched": [4]}`), "field matched has 1 entries for 2 states"},
	}
	for _, tc := range cases {
		_, err := Load(tc.path)
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), tc.path) {
			t.Errorf("%s: %v; want an InputError naming the path and %q", filepath.Base(tc.path), err, tc.want)
		}
	}
}

func TestLoadDiscretizeJSON(t *testing.T) {
	p := filepath.Join(t.TempDir(), "c.json")
	os.WriteFile(p, []byte(`{"kind": "ar1", "process": {"innovation": {"law": "normal"}}, "method": "rouwenhorst", "moments": 2,
		"grid": [[-1],[1]], "transition": [[0.9,0.1],[0.1,0.9]], "matched": [2,2]}`), 0o644)
	r, err := Load(p)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Jobs[0].Points[0].Chains[0]
	if c.Chain.States() != 2 || c.Chain.Method.String() != "rouwenhorst" || c.Chain.Moments != 2 || c.Chain.Transition[1] != 0.1 {
		t.Errorf("chain %+v", c.Chain)
	}
	if r.Source != p || r.Jobs[0].Process != "ar1" {
		t.Errorf("run %+v", r)
	}
}

// The JSON of `discretize var` carries vector diagnostics; the loader
// recomputes the first-component diagnostics from the process and takes
// the true stationary covariance from it.
func TestLoadVARJSON(t *testing.T) {
	p := filepath.Join(t.TempDir(), "v.json")
	os.WriteFile(p, []byte(`{"kind": "var", "process": {"dim": 2, "coef": [0.5, 0, 0, 0.5], "cov": [0.01, 0, 0, 0.04], "intercept": [0, 0]},
		"method": "tauchen", "moments": 0, "grid": [[-0.1,-0.2],[-0.1,0.2],[0.1,-0.2],[0.1,0.2]],
		"transition": [[0.25,0.25,0.25,0.25],[0.25,0.25,0.25,0.25],[0.25,0.25,0.25,0.25],[0.25,0.25,0.25,0.25]],
		"matched": [0,0,0,0], "diagnostics": {"states": [{"mean_std_error": [0, 0]}]}}`), 0o644)
	r, err := Load(p)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Jobs[0].Points[0].Chains[0]
	// Stationary covariance of x' = 0.5 x + ε: Var = σ²/(1 − 0.25) per
	// component, closed form; 1e-15 for rounding.
	if len(c.Law.Cov) != 4 || math.Abs(c.Law.Cov[0]-0.01/0.75) > 1e-15 || math.Abs(c.Law.Cov[3]-0.04/0.75) > 1e-15 {
		t.Errorf("true covariance %v", c.Law.Cov)
	}
	if c.Diag == nil || len(c.Diag.States) != 4 || math.Abs(c.Diag.True.SD-math.Sqrt(0.01/0.75)) > 1e-15 {
		t.Fatalf("first-component diagnostics %+v", c.Diag)
	}
	// The chain's rows are uniform: conditional mean of component 1 is 0
	// in every state, against 0.5·x for the process: error 0.05/0.1 = 0.5
	// standardized in state 0.
	if got := c.Diag.States[0].RelErr.Mean; math.Abs(got-0.5) > 1e-12 {
		t.Errorf("state 0 mean error %g, want 0.5", got)
	}
}
