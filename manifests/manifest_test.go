package manifests

import (
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"gridstage/solver"
)

// goodManifests lists the valid manifests with the jobs each must expand to
// and the parameters swept in each process (counted by hand from the files).
var goodManifests = []struct {
	file  string
	jobs  int
	swept map[string][]string
}{
	{"testdata/manifests/good/minimal.yaml", 1, nil},
	{"testdata/manifests/good/methods.yaml", 8, nil},
	{"testdata/manifests/good/innovations.yaml", 4, nil},
	{"testdata/manifests/good/iid-laws.yaml", 6, nil},
	{"testdata/manifests/good/sweeps.yaml", 10 + 4 + 3, map[string][]string{
		"persistence": {"rho", "states"}, "tails": {"innovation.nu"}, "mixture-weight": {"distribution.components[1].mean"}}},
	{"testdata/manifests/good/draws.yaml", 6, map[string][]string{"estimated": {"rho", "sigma", "states"}}},
	{"testdata/manifests/good/anchors.yaml", 2, nil},
	{"testdata/manifests/good/manifest.json", 3, map[string][]string{"income": {"sigma"}}},
	{"examples/wage-risk.yaml", 17, map[string][]string{"earnings": {"rho", "sigma"}}},
	{"examples/firm-productivity.yaml", 6, map[string][]string{"productivity": {"rho", "sigma"}}},
	{"testdata/manifests/good/kinds.yaml", 6 + 1 + 2 + 2 + 1 + 2, map[string][]string{
		"firm-shocks": {"coef[0][0]", "cov[1][1]"}, "price": {"log_variance.sigma"}, "earnings": {"rho[3]"},
		"wages": {"components[0].rho"}}},
	{"examples/lifecycle-earnings.yaml", 1, nil},
	{"examples/firm-var.yaml", 2, nil},
	{"examples/lifecycle-income.yaml", 2, map[string][]string{"income": {"components[1].distribution.sd"}}},
}

func loadGood(t *testing.T, file string) *Manifest {
	t.Helper()
	m, err := Load(file)
	if err != nil {
		t.Fatalf("Load(%s): %v", file, err)
	}
	return m
}

func TestGoodManifests(t *testing.T) {
	toRoot(t)
	for _, tc := range goodManifests {
		t.Run(filepath.Base(tc.file), func(t *testing.T) {
			m := loadGood(t, tc.file)
			if len(m.Jobs) != tc.jobs {
				t.Fatalf("%d jobs, want %d", len(m.Jobs), tc.jobs)
			}
			n := 0
			for _, p := range m.Processes {
				if !reflect.DeepEqual(p.Swept, tc.swept[p.Name]) {
					t.Errorf("process %s sweeps %v, want %v", p.Name, p.Swept, tc.swept[p.Name])
				}
				for k, idx := range p.Jobs {
					j := m.Jobs[idx]
					if j.Process != p.Name || j.Point != k || j.Kind != p.Kind {
						t.Errorf("job %d is %s/%d (%s), want %s/%d (%s)", idx, j.Process, j.Point, j.Kind, p.Name, k, p.Kind)
					}
				}
				n += len(p.Jobs)
			}
			if n != len(m.Jobs) {
				t.Errorf("processes hold %d jobs, manifest %d", n, len(m.Jobs))
			}
			if len(m.Hash) != 64 {
				t.Errorf("manifest hash %q is not 64 hex digits", m.Hash)
			}
		})
	}
}

func TestOutput(t *testing.T) {
	toRoot(t)
	m := loadGood(t, "testdata/manifests/good/methods.yaml")
	// The output folder lies beneath the output root, not beside the
	// manifest; an absolute one is kept.
	if m.Output.Format != FormatArrow || m.OutputDir("/srv/results") != filepath.Join("/srv/results", "out", "methods") || m.OutputDir("") != filepath.Join("out", "methods") {
		t.Errorf("output %+v in %s", m.Output, m.OutputDir("/srv/results"))
	}
	m.Output.Folder = "/abs/out"
	if m.OutputDir("/srv/results") != "/abs/out" {
		t.Errorf("absolute output folder resolved to %s", m.OutputDir("/srv/results"))
	}
	m = loadGood(t, "testdata/manifests/good/minimal.yaml")
	if m.Output.Format != FormatParquet || m.Output.Folder != "minimal" {
		t.Errorf("default output %+v, want parquet into the run name", m.Output)
	}
}

// TestRanges checks that ranges give the double nearest each decimal value
// (exact comparison is the contract: values are computed in rational
// arithmetic and rounded once). Naive accumulation gives
// 0.1 + 2×0.1 = 0.30000000000000004, which the first case would catch.
func TestRanges(t *testing.T) {
	cases := []struct {
		rng  string
		want []float64
	}{
		{"{from: 0.1, to: 0.3, step: 0.1}", []float64{0.1, 0.2, 0.3}},
		{"{from: 0.90, to: 0.99, step: 0.03}", []float64{0.9, 0.93, 0.96, 0.99}},
		{"{from: 0.12, to: 0.21, count: 4}", []float64{0.12, 0.15, 0.18, 0.21}},
		{"{from: 0.5, to: 0.6, step: 0.04}", []float64{0.5, 0.54, 0.58}}, // the upper end is off the step
		{"{from: -0.5, to: 0.5, count: 3}", []float64{-0.5, 0, 0.5}},
		{"{from: 1e-1, to: 2e-1, step: 5e-2}", []float64{0.1, 0.15, 0.2}},
		{"{from: 0.7, to: 0.7, step: 1}", []float64{0.7}},
	}
	for _, tc := range cases {
		src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    sweep:\n      vary:\n        rho: " + tc.rng + "\n"
		m, err := Parse(strings.NewReader(src), "r.yaml", "")
		if err != nil {
			t.Errorf("%s: %v", tc.rng, err)
			continue
		}
		var got []float64
		for _, j := range m.Jobs {
			got = append(got, j.Params[0].Value)
		}
		if !reflect.DeepEqual(got, tc.want) {
			t.Errorf("%s gives %v, want %v", tc.rng, got, tc.want)
		}
	}
}

// TestSweepOrder checks the numbering of sweep points: draws outer, then
// the vary parameters in file order with the last varying fastest; Params
// sorted by name.
func TestSweepOrder(t *testing.T) {
	toRoot(t)
	m := loadGood(t, "testdata/manifests/good/sweeps.yaml")
	want := [][]Param{
		{{"rho", 0.5}, {"states", 5}},
		{{"rho", 0.5}, {"states", 9}},
		{{"rho", 0.6}, {"states", 5}},
	}
	for k, w := range want {
		if got := m.Jobs[k].Params; !reflect.DeepEqual(got, w) {
			t.Errorf("point %d: %v, want %v", k, got, w)
		}
	}
	m = loadGood(t, "testdata/manifests/good/draws.yaml")
	want = [][]Param{
		{{"rho", 0.85}, {"sigma", 0.2}, {"states", 5}},
		{{"rho", 0.85}, {"sigma", 0.2}, {"states", 7}},
		{{"rho", 0.87}, {"sigma", 0.19}, {"states", 5}},
	}
	for k, w := range want {
		if got := m.Jobs[k].Params; !reflect.DeepEqual(got, w) {
			t.Errorf("draws point %d: %v, want %v", k, got, w)
		}
	}
}

// TestBuildMatchesSolver checks that a job's filled-in defaults reproduce
// the solver's own defaults bit for bit: the chain from Job.Build equals
// the chain from calling the solver directly with only States set. Exact
// equality is right here: both run the same computation on the same inputs.
func TestBuildMatchesSolver(t *testing.T) {
	toRoot(t)
	m := loadGood(t, "testdata/manifests/good/minimal.yaml")
	p, err := m.Jobs[0].Build()
	if err != nil {
		t.Fatal(err)
	}
	wantSettings := solver.Settings{States: 9, Method: solver.MaxEnt, Moments: 4, Nodes: solver.NodesLattice, Width: math.Sqrt(8)}
	if p.Settings != wantSettings {
		t.Errorf("settings %+v, want %+v", p.Settings, wantSettings)
	}
	direct := solver.AR1{Rho: 0.9, Sigma: 0.1}
	got, err := p.Chain()
	if err != nil {
		t.Fatal(err)
	}
	want, _ := direct.Discretize(solver.Settings{States: 9})
	if !reflect.DeepEqual(got, want) {
		t.Errorf("chain from the job differs from the solver's defaults")
	}
	base, err := p.BaselineChain()
	if err != nil {
		t.Fatal(err)
	}
	wantBase, _ := direct.Discretize(solver.Settings{States: 9, Method: solver.Rouwenhorst})
	if !reflect.DeepEqual(base, wantBase) {
		t.Errorf("baseline chain differs from Rouwenhorst, the default baseline")
	}
	if p.Truth().Unconditional().Autocorr != 0.9 {
		t.Errorf("truth is not the AR(1) with rho 0.9")
	}
	sol, err := p.Solve()
	if err != nil || sol.Baseline == nil || sol.BaselineDiagnostics == nil || sol.Diagnostics.Method != "maxent" {
		t.Fatalf("Solve: %+v, %v", sol, err)
	}
}

// TestBuildIID checks that an iid job gives a chain whose rows all equal
// the discrete distribution's weights, with no baseline.
func TestBuildIID(t *testing.T) {
	toRoot(t)
	m := loadGood(t, "testdata/manifests/good/iid-laws.yaml")
	for _, j := range m.Jobs {
		p, err := j.Build()
		if err != nil {
			t.Fatal(err)
		}
		if p.Baseline != nil {
			t.Errorf("%s: iid job has a baseline", j.Process)
		}
		c, err := p.Chain()
		if err != nil {
			t.Fatalf("%s: %v", j.Process, err)
		}
		iid := p.Model.(iidModel).IID
		d, err := iid.Discretize(p.Settings)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < c.States(); i++ {
			if !reflect.DeepEqual(c.Row(i), d.Weights) {
				t.Fatalf("%s: row %d differs from the weights", j.Process, i)
			}
		}
	}
}

// TestInnovationLaws checks that each innovation law reaches the solver
// with mean 0 and variance 1 and the law's skewness: the skewed mixture of
// innovations.yaml has negative skewness (its rare component sits below
// the mean), the t and Laplace laws are symmetric.
func TestInnovationLaws(t *testing.T) {
	toRoot(t)
	m := loadGood(t, "testdata/manifests/good/innovations.yaml")
	for _, j := range m.Jobs {
		p, _ := j.Build()
		shock := p.Model.(solver.AR1).Shock
		if shock == nil {
			t.Fatalf("%s: normal shock where the manifest names another law", j.Process)
		}
		// Tolerance 1e-12: standardization divides by a computed s.d.
		if math.Abs(shock.Mean()) > 1e-12 || math.Abs(shock.StdDev()-1) > 1e-12 {
			t.Errorf("%s: innovation mean %g, s.d. %g; want 0 and 1", j.Process, shock.Mean(), shock.StdDev())
		}
		skew, _ := shock.StdMoment(3)
		if (j.Process == "skewed") != (skew < -0.1) {
			t.Errorf("%s: skewness %g", j.Process, skew)
		}
	}
	if jobSettings(t, m.Jobs[1]).Moments != 3 {
		t.Errorf("t law with nu 3.5: moments %d, want the 3 given", jobSettings(t, m.Jobs[1]).Moments)
	}
}

func TestParseSpecRoundTrip(t *testing.T) {
	toRoot(t)
	for _, tc := range goodManifests {
		m := loadGood(t, tc.file)
		for _, j := range m.Jobs {
			back, err := ParseSpec(specOf(t, j))
			if err != nil {
				t.Fatalf("%s %s/%d: ParseSpec(%s): %v", tc.file, j.Process, j.Point, specOf(t, j), err)
			}
			if string(specOf(t, back)) != string(specOf(t, j)) || back.SpecHash != j.SpecHash {
				t.Errorf("%s %s/%d: canonical spec is not a fixed point:\n%s\n%s", tc.file, j.Process, j.Point, specOf(t, j), specOf(t, back))
			}
			p1, _ := j.Build()
			p2, _ := back.Build()
			if p1.Settings != p2.Settings || !reflect.DeepEqual(p1.Baseline, p2.Baseline) {
				t.Errorf("%s %s/%d: settings differ after the round trip", tc.file, j.Process, j.Point)
			}
		}
	}
}

func TestDrawsHeaderBlanks(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte("\ufeffrho , sigma\n0.5, 0.1\n"), 0o644)
	src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sweep: {draws: d.csv}\n"
	m, err := Parse(strings.NewReader(src), "r.yaml", dir)
	if err != nil {
		t.Fatal(err)
	}
	if got := m.Jobs[0].Params; !reflect.DeepEqual(got, []Param{{"rho", 0.5}, {"sigma", 0.1}}) {
		t.Errorf("params %v (a byte-order mark and blanks around names must not matter)", got)
	}
}

// TestParseSpecErrors checks that a damaged canonical spec (as read from a
// file's metadata) gives a positioned error rather than a job.
func TestParseSpecErrors(t *testing.T) {
	cases := []struct{ spec, want string }{
		{`{"kind":"ar1","rho":2,"sigma":0.1}`, `canonical spec:1:21: rho: 2 is out of range: want a number in (-1, 1)`},
		{`{"kind":"ar1","rho":0.5,"sigma":0.1,"name":"x"}`, `canonical spec:1:37: name: unknown key: want one of kind, method, states, states_cap, moments, nodes, matching, width, floden, compare, rho, sigma, mean, innovation, sweep`},
		{`{"kind":"ar1","rho":0.5,"sigma":0.1,"sweep":{}}`, `canonical spec:1:45: sweep: a canonical spec has no sweep`},
		{`not json {`, `canonical spec:1:1: the value is "not json {" (text): want a mapping describing a process`},
		{`{"kind": [}`, `canonical spec:1:1: invalid YAML: did not find expected node content`},
	}
	for _, tc := range cases {
		_, err := ParseSpec([]byte(tc.spec))
		if err == nil || err.Error() != tc.want {
			t.Errorf("ParseSpec(%s):\n got %v\nwant %s", tc.spec, err, tc.want)
		}
	}
}

// jobSettings returns the solver settings Build gives the job.
func jobSettings(t *testing.T, j Job) solver.Settings {
	t.Helper()
	p, err := j.Build()
	if err != nil {
		t.Fatal(err)
	}
	return p.Settings
}
