package main

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// run executes the command line in-process.
func run(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = execute(args, &out, &errb)
	return code, out.String(), errb.String()
}

func TestDiscretizeAR1JSON(t *testing.T) {
	code, out, errOut := run(t, "discretize", "ar1", "--rho", "0.9", "--sigma", "0.1", "--states", "7", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got struct {
		Grid        [][]float64 `json:"grid"`
		Transition  [][]float64 `json:"transition"`
		Stationary  []float64   `json:"stationary"`
		Matched     []int       `json:"matched"`
		Diagnostics struct {
			Chain struct {
				Autocorr float64 `json:"autocorrelation"`
			} `json:"chain_unconditional"`
		} `json:"diagnostics"`
		Baseline *struct {
			Method string `json:"method"`
		} `json:"baseline"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not one JSON object: %v\n%s", err, out)
	}
	if len(got.Grid) != 7 || len(got.Grid[0]) != 1 || len(got.Transition) != 7 || len(got.Stationary) != 7 {
		t.Fatalf("shape: grid %d, transition %d, stationary %d", len(got.Grid), len(got.Transition), len(got.Stationary))
	}
	for i, row := range got.Transition {
		var s float64
		for _, p := range row {
			s += p
		}
		// JSON carries shortest round-trip decimals, so sums stay within 1e-12.
		if math.Abs(s-1) > 1e-12 {
			t.Errorf("row %d sums to %.17g", i, s)
		}
	}
	// Mean matched in every state ⇒ autocorrelation equals ρ (REFERENCES.md, derived).
	if math.Abs(got.Diagnostics.Chain.Autocorr-0.9) > 1e-11 {
		t.Errorf("autocorrelation %.15g, want 0.9", got.Diagnostics.Chain.Autocorr)
	}
	if got.Baseline == nil || got.Baseline.Method != "rouwenhorst" { // the default baseline of an AR(1)
		t.Errorf("baseline missing or wrong: %+v", got.Baseline)
	}
}

// The Adda and Cooper (2003) chain from the command line: the stationary
// law in the JSON is uniform and the grid averages to the mean [derived in
// solver/addacooper.go]; tolerance 1e-12, the JSON round trip plus the
// stationary solve's rounding. The default baseline is Tauchen.
func TestDiscretizeAddaCooperJSON(t *testing.T) {
	code, out, errOut := run(t, "discretize", "ar1", "--rho", "0.99", "--sigma", "0.05", "--mean", "1", "--states", "5", "--method", "adda-cooper", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got struct {
		Method     string      `json:"method"`
		Grid       [][]float64 `json:"grid"`
		Stationary []float64   `json:"stationary"`
		Baseline   *struct {
			Method string `json:"method"`
		} `json:"baseline"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not one JSON object: %v\n%s", err, out)
	}
	if got.Method != "adda-cooper" || len(got.Grid) != 5 || got.Baseline == nil || got.Baseline.Method != "rouwenhorst" { // the default baseline
		t.Fatalf("method %q, %d states, baseline %+v", got.Method, len(got.Grid), got.Baseline)
	}
	var mean float64
	for i, p := range got.Stationary {
		if math.Abs(p-0.2) > 1e-12 {
			t.Errorf("stationary[%d] = %.17g, want 1/5", i, p)
		}
		mean += got.Grid[i][0] / 5
	}
	if math.Abs(mean-1) > 1e-12 {
		t.Errorf("grid average %.17g, want the mean 1", mean)
	}
}

func TestDiscretizeTextShowsBaseline(t *testing.T) {
	code, out, _ := run(t, "discretize", "ar1", "--rho", "0.95", "--sigma", "0.12", "--states", "9", "--compare", "rouwenhorst")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	for _, want := range []string{"transition matrix", "unconditional moments", "rouwenhorst", "autocorrelation"} {
		if !strings.Contains(out, want) {
			t.Errorf("text output lacks %q", want)
		}
	}
}

func TestDiscretizeIIDJSON(t *testing.T) {
	code, out, errOut := run(t, "discretize", "iid", "--distribution", "beta", "--alpha", "2", "--beta", "5", "--states", "9", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got struct {
		Grid    [][]float64 `json:"grid"`
		Weights []float64   `json:"weights"`
		Diag    struct {
			Matched int `json:"matched"`
		} `json:"diagnostics"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if len(got.Grid) != 9 || len(got.Weights) != 9 || got.Diag.Matched != 4 {
		t.Errorf("grid %d, weights %d, matched %d", len(got.Grid), len(got.Weights), got.Diag.Matched)
	}
}

// Bad input exits with status 2 and one line naming the flag and the
// valid range.
func TestDiscretizeBadInput(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"discretize", "ar1", "--rho", "1.2", "--sigma", "0.1"}, "--rho 1.2 is out of range: want in (-1, 1)"},
		{[]string{"discretize", "ar1", "--rho", "NaN", "--sigma", "0.1"}, "--rho NaN is out of range"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "0"}, "--sigma 0 is out of range: want finite and > 0"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "-1"}, "--sigma -1 is out of range"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--states", "1"}, "--states 1 is out of range: want an integer from 2 to 2000"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--moments", "9"}, "--moments 9 is out of range: want an integer from 0 to 8"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--method", "rouwenhorst", "--moments", "4"}, "--moments applies to --method maxent only"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--innovation", "t", "--nu", "3", "--moments", "4"}, "--moments 4 is out of range: want an integer from 1 to 2, since the t innovation has no finite moment of order 3"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--method", "nearest"}, `--method "nearest" is not recognised`},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--method", "adda-cooper", "--innovation", "laplace"}, "--method adda-cooper needs --innovation normal"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--compare", "adda-cooper", "--innovation", "t", "--nu", "5"}, "--compare adda-cooper needs --innovation normal"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--method", "adda-cooper", "--nodes", "equal-mass"}, "--nodes applies to --method maxent only"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--bogus"}, "unknown flag: --bogus"},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--matching", "smoothed"}, `--matching "smoothed" is not recognised: want one of exact, smooth`},
		{[]string{"discretize", "ar1", "--rho", "0.5", "--sigma", "1", "--method", "tauchen", "--matching", "smooth"}, "--matching applies to --method maxent only"},
		{[]string{"discretize", "var", "--coef", "0.5", "--cov", "1", "--method", "tauchen", "--matching", "smooth"}, "--matching applies to --method maxent only"},
		{[]string{"discretize", "ar1", "--sigma", "1"}, "--rho is required"},
		{[]string{"discretize", "ar2"}, `unknown process kind "ar2"`},
		{[]string{"discretize", "iid", "--distribution", "beta", "--lower", "1", "--upper", "0"}, "--upper 0 is out of range"},
		{[]string{"discretize", "iid", "--distribution", "mixture", "--component", "weight=0.5,mean=0,sd=1", "--component", "weight=0.4,mean=1,sd=1"}, "--component weights sum to 0.9: want 1"},
	}
	for _, c := range cases {
		code, out, errOut := run(t, c.args...)
		if code != 2 {
			t.Errorf("%v: exit %d, want 2", c.args, code)
		}
		if out != "" {
			t.Errorf("%v: wrote to stdout on error: %q", c.args, out)
		}
		lines := strings.Split(strings.TrimSpace(errOut), "\n")
		if len(lines) != 1 || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: stderr %q, want one line containing %q", c.args, errOut, c.want)
		}
	}
}

// TestDiscretizeSmoothMatching: --matching smooth reaches the solver and
// the canonical spec; where 4 moments are feasible with a clear margin the
// chain equals the exact one to 1e-8 (solver.TestSmoothAgreesWithExact).
func TestDiscretizeSmoothMatching(t *testing.T) {
	decode := func(args ...string) map[string]any {
		t.Helper()
		code, out, errOut := run(t, args...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errOut)
		}
		var v map[string]any
		if err := json.Unmarshal([]byte(out), &v); err != nil {
			t.Fatal(err)
		}
		return v
	}
	base := []string{"discretize", "ar1", "--rho", "0.6", "--sigma", "0.1", "--states", "15", "--json"}
	ex := decode(base...)
	sm := decode(append(base, "--matching", "smooth")...)
	if sm["spec"].(map[string]any)["matching"] != "smooth" {
		t.Errorf("spec = %v, want matching smooth", sm["spec"])
	}
	if _, has := ex["spec"].(map[string]any)["matching"]; has {
		t.Errorf("the exact policy's spec names it: %v", ex["spec"])
	}
	er, sr := ex["transition"].([]any), sm["transition"].([]any)
	for i := range er {
		for j, v := range er[i].([]any) {
			if d := math.Abs(v.(float64) - sr[i].([]any)[j].(float64)); d > 1e-8 {
				t.Errorf("transition[%d][%d] differs by %.3g between the policies", i, j, d)
			}
		}
	}
}

// TestDiscretizeSensitivitiesJSON: --sensitivities adds the derivatives
// with respect to mean, rho and sigma; every row of a transition
// derivative sums to zero (rows of P sum to one for every parameter), to
// 1e-10: each entry is p_j (ȧ_j − E ȧ), and the log-weight derivatives ȧ
// reach 1e3 to 1e4 where multipliers are large, so their rounding is
// about 1e-12 per entry. Their accuracy against
// finite differences is solver.TestSensitivitiesAgainstFiniteDifferences.
func TestDiscretizeSensitivitiesJSON(t *testing.T) {
	code, out, errOut := run(t, "discretize", "ar1", "--rho", "0.95", "--sigma", "0.1", "--states", "7", "--matching", "smooth", "--sensitivities", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var v struct {
		Sensitivities struct {
			Params     []string               `json:"params"`
			Transition map[string][][]float64 `json:"transition"`
			Stationary map[string][]float64   `json:"stationary"`
		} `json:"sensitivities"`
	}
	if err := json.Unmarshal([]byte(out), &v); err != nil {
		t.Fatal(err)
	}
	if strings.Join(v.Sensitivities.Params, ",") != "mean,rho,sigma" {
		t.Fatalf("params = %v", v.Sensitivities.Params)
	}
	for _, name := range v.Sensitivities.Params {
		rows := v.Sensitivities.Transition[name]
		if len(rows) != 7 || len(v.Sensitivities.Stationary[name]) != 7 {
			t.Fatalf("%s: %d rows, %d stationary entries, want 7", name, len(rows), len(v.Sensitivities.Stationary[name]))
		}
		for i, r := range rows {
			var s float64
			for _, x := range r {
				s += x
			}
			if math.Abs(s) > 1e-10 {
				t.Errorf("d row %d / d%s sums to %g", i, name, s)
			}
		}
	}
	if code, _, errOut := run(t, "discretize", "ar1", "--rho", "0.9", "--sigma", "0.1", "--method", "tauchen", "--sensitivities", "--json"); code != 2 || !strings.Contains(errOut, "--sensitivities: solver: no parameter sensitivities for this chain (they need method maxent") {
		t.Errorf("tauchen with --sensitivities: exit %d, %q", code, errOut)
	}
}

// TestDiscretizeVARSensitivitiesJSON: discretize var --sensitivities adds
// the derivatives in every intercept, coef and cov entry, named as a
// manifest sweep names them, and every transition-row derivative sums to
// zero within 1e-10 (as for ar1 above); principal axes at a repeated
// eigenvalue are refused with the reason. Their accuracy against finite
// differences is solver.TestVARSensitivitiesAgainstFiniteDifferences.
func TestDiscretizeVARSensitivitiesJSON(t *testing.T) {
	code, out, errOut := run(t, "discretize", "var", "--coef", "0.7,0.1,0.05,0.6", "--cov", "0.02,0.004,0.004,0.01", "--states", "3", "--matching", "smooth", "--sensitivities", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var v struct {
		Sensitivities struct {
			Params     []string               `json:"params"`
			Transition map[string][][]float64 `json:"transition"`
		} `json:"sensitivities"`
	}
	if err := json.Unmarshal([]byte(out), &v); err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(v.Sensitivities.Params, ","); got != "intercept[0],intercept[1],coef[0][0],coef[0][1],coef[1][0],coef[1][1],cov[0][0],cov[0][1],cov[1][1]" {
		t.Fatalf("params = %s", got)
	}
	for _, name := range v.Sensitivities.Params {
		rows := v.Sensitivities.Transition[name]
		if len(rows) != 9 {
			t.Fatalf("%s: %d rows, want 9", name, len(rows))
		}
		for i, r := range rows {
			var s float64
			for _, x := range r {
				s += x
			}
			if math.Abs(s) > 1e-10 {
				t.Errorf("d row %d / d%s sums to %g", i, name, s)
			}
		}
	}
	code, _, errOut = run(t, "discretize", "var", "--coef", "0.5,0,0,0.5", "--cov", "0.01,0,0,0.01", "--states", "3", "--sensitivities", "--json")
	if code != 2 || !strings.Contains(errOut, "repeated eigenvalue") {
		t.Errorf("principal axes at a repeated eigenvalue: exit %d, %q", code, errOut)
	}
}

// TestDiscretizeNoMoments: --moments 0 gives the node rule's own weights
// and says so.
func TestDiscretizeNoMoments(t *testing.T) {
	code, out, errOut := run(t, "discretize", "ar1", "--rho", "0.9", "--sigma", "0.1", "--states", "5", "--moments", "0")
	if code != 0 || !strings.Contains(out, "no moment matched: each row is the node rule's own weights") {
		t.Errorf("ar1 --moments 0: exit %d\n%s%s", code, out, errOut)
	}
	code, out, errOut = run(t, "discretize", "iid", "--distribution", "normal", "--states", "5", "--moments", "0")
	if code != 0 || !strings.Contains(out, "no moment matched: the weights are the node rule's own") {
		t.Errorf("iid --moments 0: exit %d\n%s%s", code, out, errOut)
	}
	code, _, errOut = run(t, "discretize", "var", "--coef", "0.9,0,0,0.8", "--cov", "0.01,0,0,0.01", "--states", "3", "--moments", "0")
	if code != 2 || !strings.Contains(errOut, "--moments 0 is out of range") {
		t.Errorf("var --moments 0: exit %d, %q (want 2: a vector chain has no prior-only form here)", code, errOut)
	}
}

// TestDiscretizeIIDSensitivitiesJSON: discretize iid --sensitivities adds
// the derivatives of the points and the weights in each parameter of the
// law; the weights' derivatives sum to zero within 1e-12 (the weights sum
// to one; entries of order 0.1 round at 1e-17). Their accuracy is
// solver.TestIIDSensitivitiesAgainstFiniteDifferences. A law without them
// is refused, naming it.
func TestDiscretizeIIDSensitivitiesJSON(t *testing.T) {
	code, out, errOut := run(t, "discretize", "iid", "--distribution", "t", "--nu", "8", "--states", "7", "--sensitivities", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var v struct {
		Sensitivities struct {
			Params  []string             `json:"params"`
			Weights map[string][]float64 `json:"weights"`
		} `json:"sensitivities"`
	}
	if err := json.Unmarshal([]byte(out), &v); err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(v.Sensitivities.Params, ","); got != "distribution.nu,distribution.location,distribution.scale" {
		t.Fatalf("params = %s", got)
	}
	var s float64
	for _, x := range v.Sensitivities.Weights["distribution.nu"] {
		s += x
	}
	if len(v.Sensitivities.Weights["distribution.nu"]) != 7 || math.Abs(s) > 1e-12 {
		t.Errorf("d weights/d nu: %v (sum %g)", v.Sensitivities.Weights["distribution.nu"], s)
	}
	if code, _, errOut := run(t, "discretize", "iid", "--distribution", "beta", "--states", "5", "--sensitivities", "--json"); code != 2 || !strings.Contains(errOut, "the law is beta") {
		t.Errorf("beta with --sensitivities: exit %d, %q", code, errOut)
	}
}
