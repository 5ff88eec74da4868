package report

import (
	"errors"
	"strings"
	"testing"
)

func TestSelect(t *testing.T) {
	r := exampleRun(t)
	got, err := r.Select(Selection{Point: 1, HasPoint: true})
	if err != nil {
		t.Fatal(err)
	}
	// Point 1 exists in the AR(1) job only; the life-cycle job has point 0.
	if len(got.Jobs) != 1 || len(got.Jobs[0].Points) != 1 || got.Jobs[0].Points[0].Index != 1 {
		t.Errorf("--point 1 kept %+v", got.Jobs)
	}
	// 0.3 × 3 is not exactly 0.9 in floating point; the match tolerates it.
	got, err = r.Select(Selection{Where: map[string]float64{"rho": 0.3 * 3}})
	if err != nil || len(got.Jobs) != 1 || got.Jobs[0].Points[0].Params["rho"] != 0.9 {
		t.Errorf("rho=0.3*3: %v %+v", err, got.Jobs)
	}
	if got, _ := r.Select(Selection{}); got.Chains() != r.Chains() {
		t.Error("the empty selection dropped chains")
	}
}

func TestSelectNamesWhatExists(t *testing.T) {
	r := exampleRun(t)
	cases := []struct {
		sel  Selection
		want string
	}{
		{Selection{Point: 7, HasPoint: true}, "no sweep point matches --point 7 (points 0 to 2 exist)"},
		{Selection{Where: map[string]float64{"rho": 0.8}}, "rho takes 0.5, 0.9, 0.99"},
		{Selection{Where: map[string]float64{"sigma": 0.1}}, `no job sweeps a parameter named "sigma" (swept: rho)`},
	}
	for _, tc := range cases {
		_, err := r.Select(tc.sel)
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%+v: error %v, want an InputError containing %q", tc.sel, err, tc.want)
		}
	}
}

func TestParseWhere(t *testing.T) {
	if n, v, err := ParseWhere(" rho = 0.95 "); err != nil || n != "rho" || v != 0.95 {
		t.Errorf("got %q %g %v", n, v, err)
	}
	for _, bad := range []string{"rho", "=1", "rho=", "rho=abc", "rho=NaN", "rho=Inf"} {
		if _, _, err := ParseWhere(bad); err == nil {
			t.Errorf("%q accepted", bad)
		}
	}
}
