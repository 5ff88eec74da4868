package report

import (
	"errors"
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
	os.WriteFile(p, []byte(`{"kind": "ar1", "process": {"innovation": "normal"}, "method": "rouwenhorst", "moments": 2,
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
