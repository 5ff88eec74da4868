package manifests

import (
	"encoding/json"
	"errors"
	"math"
	"reflect"
	"regexp"
	"strings"
	"testing"

	"gridstage/solver"
)

// parseOne parses a manifest with the given processes.
func parseOne(t *testing.T, processes string) *Manifest {
	t.Helper()
	m, err := Parse(strings.NewReader("run: r\nprocesses:\n"+processes), "r.yaml", "")
	if err != nil {
		t.Fatalf("%v\n%s", err, processes)
	}
	return m
}

// TestCanonicalNewKinds checks canonical specs written out by hand from
// docs/HASHES.md: every default filled in, matrices as lists of rows, one
// innovation law per age. √4 = 2 and √6 = 2.449489742783178 (shortest
// round-trip digits, as Python 3 prints repr(math.sqrt(6))).
func TestCanonicalNewKinds(t *testing.T) {
	cases := []struct{ process, want string }{
		{"  - {name: a, kind: var, coef: [[0.9, 0.1], [0, 0.8]], cov: [[0.01, 0], [0, 0.02]], states: 5}\n",
			`{"axes":"principal","coef":[[0.9,0.1],[0,0.8]],"compare":"tauchen","cov":[[0.01,0],[0,0.02]],"intercept":[0,0],"kind":"var","method":"maxent","moments":2,"nodes":"lattice","states":5,"width":2}`},
		{"  - {name: a, kind: var, method: tauchen, coef: [[0.9]], cov: [[0.01]], intercept: [1]}\n",
			`{"coef":[[0.9]],"compare":"maxent","cov":[[0.01]],"intercept":[1],"kind":"var","method":"tauchen","states":9,"width":3}`},
		{"  - {name: a, kind: ar1-volatility, rho: 0.9, log_variance: {rho: 0.8, sigma: 0.2, mean: -4}, states: 7, compare: none}\n",
			`{"compare":"none","kind":"ar1-volatility","log_variance":{"mean":-4,"method":"maxent","rho":0.8,"sigma":0.2,"states":5},"mean":0,"method":"maxent","moments":4,"nodes":"lattice","rho":0.9,"states":7,"width":2.449489742783178}`},
		{"  - {name: a, kind: lifecycle, method: rouwenhorst, rho: [0.9, 1], sigma: [0.1, 0.2], initial_sd: 0.3}\n",
			`{"compare":"maxent","initial":{"law":"normal"},"initial_sd":0.3,"innovation":[{"law":"normal"},{"law":"normal"}],"kind":"lifecycle","method":"rouwenhorst","rho":[0.9,1],"sigma":[0.1,0.2],"states":9}`},
		{"  - {name: a, kind: product, components: [{kind: ar1, rho: 0.5, sigma: 0.1, method: rouwenhorst, states: 3}, {kind: iid, distribution: {law: laplace}, states: 2, moments: 2}]}\n",
			`{"compare":"none","components":[{"compare":"none","innovation":{"law":"normal"},"kind":"ar1","mean":0,"method":"rouwenhorst","rho":0.5,"sigma":0.1,"states":3},{"compare":"none","distribution":{"law":"laplace","location":0,"scale":1},"kind":"iid","method":"maxent","moments":2,"nodes":"lattice","states":2,"width":1}],"kind":"product"}`},
		// A law on a bounded support: Gauss-Legendre nodes over the whole
		// support and no width, unless the process sets nodes or width.
		{"  - {name: a, kind: iid, distribution: {law: beta, alpha: 2, beta: 5}, states: 5}\n",
			`{"compare":"none","distribution":{"alpha":2,"beta":5,"law":"beta","lower":0,"upper":1},"kind":"iid","method":"maxent","moments":4,"nodes":"gauss-legendre","states":5}`},
		{"  - {name: a, kind: iid, distribution: {law: beta, alpha: 2, beta: 5}, states: 5, nodes: lattice}\n",
			`{"compare":"none","distribution":{"alpha":2,"beta":5,"law":"beta","lower":0,"upper":1},"kind":"iid","method":"maxent","moments":4,"nodes":"lattice","states":5}`},
		{"  - {name: a, kind: iid, distribution: {law: beta, alpha: 2, beta: 5}, states: 5, width: 1.5}\n",
			`{"compare":"none","distribution":{"alpha":2,"beta":5,"law":"beta","lower":0,"upper":1},"kind":"iid","method":"maxent","moments":4,"nodes":"lattice","states":5,"width":1.5}`},
		{"  - {name: a, kind: iid, distribution: {law: lognormal, log_sd: 0.5}, states: 5, nodes: gauss-hermite}\n",
			`{"compare":"none","distribution":{"law":"lognormal","log_mean":0,"log_sd":0.5},"kind":"iid","method":"maxent","moments":4,"nodes":"gauss-hermite","states":5}`},
	}
	for _, tc := range cases {
		m := parseOne(t, tc.process)
		if got := string(specOf(t, m.Jobs[0])); got != tc.want {
			t.Errorf("%s\n got %s\nwant %s", tc.process, got, tc.want)
		}
	}
}

// TestCanonicalFormsNewKinds: spellings of the same process give the same
// canonical spec, and the same numbers.
func TestCanonicalFormsNewKinds(t *testing.T) {
	groups := [][]string{
		{ // intercept left out or written as zeros; default axes named
			"{name: a, kind: var, coef: [[0.9, 0.1], [0, 0.8]], cov: [[0.01, 0], [0, 0.02]]}",
			"{name: b, kind: var, coef: [[0.90, 1e-1], [0, 0.8]], cov: [[0.01, 0], [0, 0.02]], intercept: [0, -0], axes: principal, moments: 2}",
		},
		{ // one law for every age or the same law per age
			"{name: a, kind: lifecycle, rho: [0.9, 0.95], sigma: [0.1, 0.1], initial_sd: 0.2, innovation: {law: t, nu: 6}}",
			"{name: b, kind: lifecycle, rho: [0.9, 0.95], sigma: [0.1, 0.1], initial_sd: 0.2, innovation: [{law: t, nu: 6}, {law: t, nu: 6.0}]}",
		},
		{ // the log-variance's defaults written out
			"{name: a, kind: ar1-volatility, rho: 0.9, log_variance: {rho: 0.8, sigma: 0.2, mean: -4}}",
			"{name: b, kind: ar1-volatility, rho: 0.9, mean: 0, log_variance: {rho: 0.8, sigma: 0.2, mean: -4, states: 5, method: maxent}}",
		},
	}
	for _, forms := range groups {
		var first Job
		for i, f := range forms {
			j := parseOne(t, "  - "+f+"\n").Jobs[0]
			if i == 0 {
				first = j
				continue
			}
			if string(specOf(t, j)) != string(specOf(t, first)) {
				t.Errorf("%s\n gives %s\n  not %s", f, specOf(t, j), specOf(t, first))
				continue
			}
			s1, err1 := mustBuild(t, first).Solve()
			s2, err2 := mustBuild(t, j).Solve()
			if err1 != nil || err2 != nil {
				t.Fatal(err1, err2)
			}
			// Exact: the same computation on the same inputs.
			if !reflect.DeepEqual(s1, s2) {
				t.Errorf("%s: same canonical spec, different numbers", f)
			}
		}
	}
}

func mustBuild(t *testing.T, j Job) Problem {
	t.Helper()
	p, err := j.Build()
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestBuildNewKinds checks what Build hands the solver for each kind.
func TestBuildNewKinds(t *testing.T) {
	m := parseOne(t, `  - {name: v, kind: var, coef: [[0.9, 0.1], [0, 0.8]], cov: [[0.01, 0.002], [0.002, 0.02]], intercept: [0.1, 0], axes: coordinate, states: 4}
  - {name: s, kind: ar1-volatility, rho: 0.9, mean: 1, log_variance: {rho: 0.8, sigma: 0.2, mean: -4, states: 3, method: tauchen}, method: tauchen, states: 6}
  - {name: l, kind: lifecycle, rho: [0.9, 1], sigma: [0.1, 0.2], initial_sd: 0.3, innovation: [{law: normal}, {law: laplace}], states: 5}
  - {name: p, kind: product, components: [{kind: ar1-volatility, rho: 0.5, log_variance: {rho: 0.5, sigma: 0.1, mean: -3}, states: 3}, {kind: ar1, rho: 0.5, sigma: 0.1, states: 4}]}
`)
	v := mustBuild(t, m.Jobs[0])
	wantVAR := solver.VAR{Intercept: []float64{0.1, 0}, Coef: []float64{0.9, 0.1, 0, 0.8}, Cov: []float64{0.01, 0.002, 0.002, 0.02}}
	if !reflect.DeepEqual(v.Model, wantVAR) {
		t.Errorf("var model %+v, want %+v", v.Model, wantVAR)
	}
	if want := (solver.Settings{States: 4, Moments: 2, Width: math.Sqrt(3), Axes: solver.AxesCoordinate}); v.Settings != want {
		t.Errorf("var settings %+v, want %+v", v.Settings, want)
	}
	if v.Baseline == nil || v.Baseline.Method != solver.Tauchen || v.Baseline.Axes != solver.AxesPrincipal {
		t.Errorf("var baseline %+v, want Tauchen", v.Baseline)
	}

	s := mustBuild(t, m.Jobs[1])
	vm, ok := s.Model.(volatilityModel)
	if !ok || vm.Vol != (solver.Settings{States: 3, Method: solver.Tauchen}) || vm.LogVar != (solver.AR1{Mean: -4, Rho: 0.8, Sigma: 0.2}) || vm.Mean != 1 {
		t.Errorf("ar1-volatility model %+v", s.Model)
	}
	if want := (solver.Settings{States: 6, Method: solver.Tauchen, Width: 3}); s.Settings != want || s.Baseline.Method != solver.MaxEnt {
		t.Errorf("ar1-volatility settings %+v, baseline %+v", s.Settings, s.Baseline)
	}

	l := mustBuild(t, m.Jobs[2])
	if l.Model != nil || l.AgeModel == nil || l.Baseline.Method != solver.Rouwenhorst {
		t.Fatalf("lifecycle problem %+v", l)
	}
	if _, err := l.Chain(); !errors.Is(err, errAgeModel) {
		t.Errorf("Chain of a life cycle: %v, want errAgeModel", err)
	}
	lc := l.AgeModel.(lifecycleModel).LifeCycle
	if lc.Shocks[0] != nil || lc.Shocks[1] == nil || lc.InitialSD != 0.3 || !reflect.DeepEqual(lc.Rho, []float64{0.9, 1}) {
		t.Errorf("life cycle %+v", lc)
	}
	sol, err := l.Solve()
	if err != nil || sol.Chain != nil || sol.Ages.Transitions() != 2 || len(sol.AgeDiagnostics) != 2 || len(sol.BaselineAgeDiagnostics) != 2 {
		t.Fatalf("life-cycle solution %+v, %v", sol, err)
	}
	if sol.States() != 10 || sol.Dim() != 1 || sol.Method() != solver.MaxEnt {
		t.Errorf("states %d, dim %d, method %s", sol.States(), sol.Dim(), sol.Method())
	}

	p := mustBuild(t, m.Jobs[3])
	pm := p.Model.(productModel)
	if len(pm.Parts) != 2 || pm.Settings[0].States != 3 || pm.Settings[1].States != 4 || pm.Dim() != 3 || p.Baseline != nil {
		t.Errorf("product model %+v, baseline %v", pm, p.Baseline)
	}
	c, err := p.Chain()
	if err != nil || c.States() != 3*5*4 || c.Dim != 3 {
		t.Fatalf("product chain: %v states, %v", c.States(), err)
	}
}

// TestSweepNestedParameters checks sweeps over matrix entries, list
// entries, log-variance and component parameters: each point's model
// carries the swept value.
func TestSweepNestedParameters(t *testing.T) {
	m := parseOne(t, `  - name: v
    kind: var
    coef: [[0.9, 0.1], [0, 0.8]]
    cov: [[0.01, 0], [0, 0.02]]
    sweep: {vary: {"coef[1][0]": [0.05, 0.1], "intercept[1]": [0.5]}}
  - name: l
    kind: lifecycle
    rho: [0.9, 1]
    sigma: [0.1, 0.2]
    initial_sd: 0.3
    sweep: {vary: {"sigma[1]": [0.3, 0.4]}}
  - name: p
    kind: product
    components:
      - {kind: ar1, rho: 0.5, sigma: 0.1}
      - {kind: ar1-volatility, rho: 0.5, log_variance: {rho: 0.5, sigma: 0.1, mean: -3}}
    sweep: {vary: {"components[1].log_variance.mean": [-3, -2]}}
`)
	if len(m.Jobs) != 6 {
		t.Fatalf("%d jobs, want 6", len(m.Jobs))
	}
	if got := mustBuild(t, m.Jobs[1]).Model.(solver.VAR); got.Coef[2] != 0.1 || got.Intercept[1] != 0.5 {
		t.Errorf("point 1 of v: %+v", got)
	}
	if got := mustBuild(t, m.Jobs[3]).AgeModel.(lifecycleModel); got.Sigma[1] != 0.4 {
		t.Errorf("point 1 of l: %+v", got)
	}
	if got := mustBuild(t, m.Jobs[5]).Model.(productModel).Parts[1].(volatilityModel); got.LogVar.Mean != -2 {
		t.Errorf("point 1 of p: %+v", got)
	}
	// Sweeping one entry of cov breaks its symmetry: the error names the
	// swept value's position.
	_, err := Parse(strings.NewReader("run: r\nprocesses:\n  - {name: v, kind: var, coef: [[0.9]], cov: [[0.01]], sweep: {vary: {\"cov[0][0]\": [-1]}}}\n"), "r.yaml", "")
	if err == nil || !strings.Contains(err.Error(), "r.yaml:3:") || !strings.Contains(err.Error(), "not positive definite") {
		t.Errorf("swept cov[0][0] = -1: %v", err)
	}
}

// TestSchemaParameterPattern checks the schema's pattern for swept
// parameter names against the names the tool accepts: every parameter of
// every process in the good manifests must match it, and names the tool
// refuses must not.
func TestSchemaParameterPattern(t *testing.T) {
	var doc struct {
		Defs map[string]struct {
			Pattern string `json:"pattern"`
		} `json:"$defs"`
	}
	if err := json.Unmarshal(Schema(), &doc); err != nil {
		t.Fatal(err)
	}
	re := regexp.MustCompile(doc.Defs["parameter"].Pattern)
	toRoot(t)
	n := 0
	for _, tc := range goodManifests {
		for _, j := range loadGood(t, tc.file).Jobs {
			q, err := j.checked()
			if err != nil {
				t.Fatal(err)
			}
			names, _ := q.params()
			for _, name := range names {
				n++
				if !re.MatchString(name) {
					t.Errorf("%s: parameter %s does not match the schema's pattern", tc.file, name)
				}
			}
		}
	}
	if n < 100 {
		t.Errorf("only %d parameter names checked", n)
	}
	for _, bad := range []string{"coef[4][0]", "components[0].components[1].rho", "components[0].rho[1].x", "components[0].years_per_period", "log_variance.nu", "innovation[x].nu"} {
		if re.MatchString(bad) {
			t.Errorf("the schema's pattern accepts %s", bad)
		}
	}
}
