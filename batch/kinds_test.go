package batch

import (
	"bytes"
	"context"
	"encoding/binary"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gridstage/batch/cache"
	"gridstage/formats"
	"gridstage/solver"
)

// kindsManifest holds one process of each kind the VAR, stochastic
// volatility, life-cycle and product work added, in invented scenarios: a
// made-up firm panel's productivity and demand (VAR), a fictional
// commodity price with volatility regimes (ar1-volatility), an earnings profile over
// five ages (lifecycle, persistence and variance changing with age, mixture
// innovations at one age), and a persistent wage component times a
// transitory one (product). The var process is swept over one coefficient.
const kindsManifest = `run: kinds
processes:
  - name: firm
    kind: var
    coef: [[0.9, 0.05], [0.02, 0.8]]
    cov: [[0.01, 0.002], [0.002, 0.02]]
    intercept: [0.01, 0]
    states: 5
    sweep:
      vary:
        coef[0][0]: [0.85, 0.9]
  - name: price
    kind: ar1-volatility
    rho: 0.9
    mean: 1
    log_variance: {rho: 0.8, sigma: 0.2, mean: -4, states: 3, method: rouwenhorst}
    states: 9
    moments: 2
  - name: earnings
    kind: lifecycle
    rho: [0.9, 0.93, 0.96, 1]
    sigma: [0.2, 0.18, 0.16, 0.15]
    initial_sd: 0.3
    innovation:
      - {law: normal}
      - {law: normal}
      - {law: mixture, components: [{weight: 0.9, mean: 0.02, sd: 0.1}, {weight: 0.1, mean: -0.18, sd: 0.4}]}
      - {law: normal}
    states: 7
  - name: wages
    kind: product
    components:
      - {kind: ar1, rho: 0.95, sigma: 0.1, states: 5, method: rouwenhorst}
      - {kind: iid, distribution: {law: normal, sd: 0.2}, states: 3}
`

// momentTol bounds standardized conditional-moment errors where a chain
// matches them: the solver's Newton iterations stop at errors of order
// 1e-13, and summing a row's moments adds rounding of order n·1e-16; 1e-10
// is the target.
const momentTol = 1e-10

// readSet reads one process's set from dir.
func readSet(t *testing.T, dir, process string, f formats.Format) *formats.Set {
	t.Helper()
	s, err := formats.Read(formats.SetRef{Dir: dir, Process: process, Format: f}, nil)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// sameChain compares the stored numbers of a chain with the solver's, bit
// for bit: exact equality is right, nothing is recomputed in between.
func sameChain(t *testing.T, what string, got, want *solver.Chain) {
	t.Helper()
	switch {
	case got.Dim != want.Dim || got.Method != want.Method:
		t.Errorf("%s: dimension %d, method %s; solver: %d, %s", what, got.Dim, got.Method, want.Dim, want.Method)
	case !sameBits(got.Grid, want.Grid):
		t.Errorf("%s: grid differs from the solver's", what)
	case !sameBits(got.Transition, want.Transition):
		t.Errorf("%s: transition differs from the solver's", what)
	case want.Transition != nil && got.Moments != want.Moments:
		t.Errorf("%s: moments %d, solver %d", what, got.Moments, want.Moments)
	}
	for i := range want.Matched {
		if got.Matched[i] != want.Matched[i] {
			t.Errorf("%s: state %d matched %d, solver %d", what, i, got.Matched[i], want.Matched[i])
			return
		}
	}
}

func sameBits(a, b []float64) bool {
	if len(a) != len(b) || (a == nil) != (b == nil) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// checkVector compares stored vector diagnostics with the solver's and
// checks that maxent matched the conditional means and covariances.
func checkVector(t *testing.T, what string, got *formats.VectorDiag, c *solver.Chain, truth solver.VectorTruth) {
	t.Helper()
	if got == nil {
		t.Fatalf("%s: no vector diagnostics in the output", what)
	}
	want := formats.NewVectorDiag(ptr(solver.DiagnoseVector(c, truth)))
	if !sameBits(got.MeanErr, want.MeanErr) || !sameBits(got.CovErr, want.CovErr) || !sameBits(got.TrueCov, want.TrueCov) ||
		!sameBits(got.ChainCov, want.ChainCov) || math.Float64bits(got.StationaryCovErr) != math.Float64bits(want.StationaryCovErr) {
		t.Errorf("%s: vector diagnostics differ from solver.DiagnoseVector's", what)
	}
	if c.Method != solver.MaxEnt {
		return
	}
	for i, m := range c.Matched {
		if m >= 2 && (got.MeanErr[i] > momentTol || got.CovErr[i] > momentTol) {
			t.Errorf("%s: state %d matched %d moments but has errors %.3g, %.3g", what, i, m, got.MeanErr[i], got.CovErr[i])
		}
	}
}

func ptr[T any](v T) *T { return &v }

// runKinds runs kindsManifest into a new folder and verifies it.
func runKinds(t *testing.T, opt Options) string {
	t.Helper()
	m := parse(t, kindsManifest)
	opt.Out = t.TempDir()
	res, err := Run(context.Background(), m, opt)
	if err != nil {
		t.Fatal(err)
	}
	if res.Failed != 0 || len(res.Sets) != 4 {
		t.Fatalf("%d jobs failed, %d sets written", res.Failed, len(res.Sets))
	}
	if _, err := formats.Verify(opt.Out); err != nil {
		t.Fatalf("verify: %v", err)
	}
	return opt.Out
}

// TestRunVAR: manifest → Run → Verify → Reader gives the chains of
// solver.VAR.Discretize with the settings the manifest implies (4 per axis
// of a 2-D VAR = 25 states, maxent, means and covariances, an even grid of
// half-width √4 along the principal axes, Tauchen's VAR baseline).
func TestRunVAR(t *testing.T) {
	dir := runKinds(t, Options{})
	set := readSet(t, dir, "firm", formats.Parquet)
	if set.Kind != "var" || set.Dim != 2 || len(set.Records) != 2 || set.Params[0] != "coef[0][0]" {
		t.Fatalf("header %+v with %d records", set.Header, len(set.Records))
	}
	for k, b00 := range []float64{0.85, 0.9} {
		rec := set.Records[k]
		p := solver.VAR{Intercept: []float64{0.01, 0}, Coef: []float64{b00, 0.05, 0.02, 0.8}, Cov: []float64{0.01, 0.002, 0.002, 0.02}}
		c, err := p.Discretize(solver.Settings{States: 5, Moments: 2, Width: 2})
		if err != nil {
			t.Fatal(err)
		}
		b, err := p.Discretize(solver.Settings{States: 5, Method: solver.Tauchen})
		if err != nil {
			t.Fatal(err)
		}
		if rec.Params["coef[0][0]"] != b00 {
			t.Errorf("point %d: coef[0][0] = %v, want %v", k, rec.Params["coef[0][0]"], b00)
		}
		sameChain(t, "var", rec.Chain, c)
		checkVector(t, "var", rec.Vector, c, p)
		checkVector(t, "var baseline", rec.BaselineVector, b, p)
		if rec.Baseline == nil || rec.Baseline.Method != "tauchen" {
			t.Errorf("point %d: baseline %+v, want tauchen", k, rec.Baseline)
		}
		// The first component's univariate diagnostics, as for every kind.
		d := solver.Diagnose(c, p)
		if math.Float64bits(rec.Diag.WorstRelErr.Var) != math.Float64bits(d.WorstRelErr.Var) {
			t.Errorf("point %d: first-component diagnostics differ from solver.Diagnose", k)
		}
	}
}

// TestRunAR1Volatility checks the ar1-volatility process against
// solver.SV.Discretize: 9 level states (2 moments, half-width √8) times 3
// Rouwenhorst log-variance states.
func TestRunAR1Volatility(t *testing.T) {
	dir := runKinds(t, Options{})
	set := readSet(t, dir, "price", formats.Parquet)
	p := solver.SV{Mean: 1, Rho: 0.9, LogVar: solver.AR1{Mean: -4, Rho: 0.8, Sigma: 0.2}}
	c, err := p.Discretize(solver.Settings{States: 9, Moments: 2, Width: math.Sqrt(8)}, solver.Settings{States: 3, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	if set.Dim != 2 || len(set.Records) != 1 || set.Records[0].Chain.States() != 27 {
		t.Fatalf("header %+v, %d records", set.Header, len(set.Records))
	}
	sameChain(t, "ar1-volatility", set.Records[0].Chain, c)
	checkVector(t, "ar1-volatility", set.Records[0].Vector, c, p)
}

// TestRunProduct checks the product against solver.Product of the
// components discretized directly.
func TestRunProduct(t *testing.T) {
	dir := runKinds(t, Options{})
	set := readSet(t, dir, "wages", formats.Parquet)
	a, err := solver.AR1{Rho: 0.95, Sigma: 0.1}.Discretize(solver.Settings{States: 5, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	d, err := solver.IID{Dist: solver.Normal{Sigma: 0.2}}.Discretize(solver.Settings{States: 3, Moments: 4, Width: math.Sqrt2})
	if err != nil {
		t.Fatal(err)
	}
	c := solver.Product(a, d.Chain())
	if set.Dim != 2 || set.Method != "rouwenhorst" || len(set.Records) != 1 {
		t.Fatalf("header %+v, %d records", set.Header, len(set.Records))
	}
	rec := set.Records[0]
	sameChain(t, "product", rec.Chain, c)
	truth := solver.Independent{solver.AsVector(solver.AR1{Rho: 0.95, Sigma: 0.1}), solver.AsVector(solver.IID{Dist: solver.Normal{Sigma: 0.2}})}
	checkVector(t, "product", rec.Vector, c, truth)
	if rec.Baseline != nil {
		t.Errorf("a product has no baseline")
	}
}

// TestRunLifeCycle checks the life cycle: one record per age, the initial
// distribution on age 0, the terminal age's grid last, all equal to
// solver.LifeCycle.Discretize; and the stored diagnostics of the
// age-varying Rouwenhorst baseline show the exact conditional means and
// variances that Fella, Gallipoli and Pan (2019) derive for it.
func TestRunLifeCycle(t *testing.T) {
	dir := runKinds(t, Options{})
	set := readSet(t, dir, "earnings", formats.Parquet)
	mix := solver.Standardized{Base: solver.Mixture{Weights: []float64{0.9, 0.1}, Means: []float64{0.02, -0.18}, SDs: []float64{0.1, 0.4}}}
	p := solver.LifeCycle{InitialSD: 0.3, Rho: []float64{0.9, 0.93, 0.96, 1}, Sigma: []float64{0.2, 0.18, 0.16, 0.15},
		Shocks: []solver.Distribution{nil, nil, mix, nil}}
	a, err := p.Discretize(solver.Settings{States: 7, Moments: 4, Width: math.Sqrt(6)})
	if err != nil {
		t.Fatal(err)
	}
	if set.Kind != "lifecycle" || set.Dim != 1 || len(set.Records) != 5 {
		t.Fatalf("header %+v, %d records; want 5 ages", set.Header, len(set.Records))
	}
	for age, rec := range set.Records {
		if rec.Age != age {
			t.Fatalf("record %d has age %d", age, rec.Age)
		}
		if age == 4 {
			if rec.Chain.Transition != nil || !sameBits(rec.Chain.Grid, a.Final) || rec.Vector != nil {
				t.Errorf("terminal age: want the final grid without transition")
			}
			continue
		}
		sameChain(t, "age", rec.Chain, a.Ages[age])
		if (age == 0) != (rec.Initial != nil) || (age == 0 && !sameBits(rec.Initial, a.Initial)) {
			t.Errorf("age %d: initial distribution %v, want the solver's on age 0 only", age, rec.Initial)
		}
		if rec.Diag.Stationary != nil {
			t.Errorf("age %d: a life-cycle age has no stationary distribution", age)
		}
		for i, s := range rec.Diag.States {
			if rec.Chain.Matched[i] >= 2 && (math.Abs(s.RelErr.Mean) > momentTol || math.Abs(s.RelErr.Var) > momentTol) {
				t.Errorf("age %d state %d: matched %d moments, errors %.3g %.3g", age, i, rec.Chain.Matched[i], s.RelErr.Mean, s.RelErr.Var)
			}
		}
		// Tolerance 1e-12: the Rouwenhorst recursion and the moment sums
		// round at 1e-15 per operation over a few hundred operations.
		if rec.Baseline == nil || rec.Baseline.Method != "rouwenhorst" {
			t.Fatalf("age %d: baseline %v, want rouwenhorst", age, rec.Baseline)
		}
		if w := rec.Baseline.WorstRelErr; w.Mean > 1e-12 || w.Var > 1e-12 {
			t.Errorf("age %d: Rouwenhorst baseline mean and variance errors %.3g, %.3g; want exact", age, w.Mean, w.Var)
		}
		// The summary's unconditional moments are the marginal at age+1,
		// whose variance the recursion V_{t+1} = ρ_t² V_t + σ_t² gives.
		v := p.Variances()[age+1]
		if e := math.Abs(rec.Baseline.True.SD*rec.Baseline.True.SD-v) / v; e > 1e-12 {
			t.Errorf("age %d: true marginal variance off by %.3g", age, e)
		}
	}
}

// TestRunKindsDeterministic runs the new kinds with one and two workers,
// the second time through a cache, and a third time from the warm cache:
// every file must be byte-identical (the cache stores the new Solution
// fields bit for bit).
func TestRunKindsDeterministic(t *testing.T) {
	c, err := cache.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	var outs []map[string][]byte
	for _, opt := range []Options{{Workers: 1}, {Workers: 2, Cache: c}, {Workers: 2, Cache: c}} {
		outs = append(outs, readAll(t, runKinds(t, opt)))
	}
	for k := 1; k < len(outs); k++ {
		for name, b := range outs[0] {
			if name != RecordFile && !bytes.Equal(b, outs[k][name]) {
				t.Errorf("run %d: %s differs from the single-worker run", k, name)
			}
		}
	}
}

// TestVerifyFlippedLifeCycleProbability replaces one transition
// probability at age 2 of the life cycle's Arrow file by 1 − p, in the
// file's bytes: verify must reject the file and the folder, naming age 2.
func TestVerifyFlippedLifeCycleProbability(t *testing.T) {
	dir := runKinds(t, Options{Format: ptr(formats.Arrow)})
	set := readSet(t, dir, "earnings", formats.Arrow)
	path := filepath.Join(dir, "earnings.transitions.arrow")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	// A probability of age 2 whose 8 bytes occur once in the file.
	row := set.Records[2].Chain.Transition
	at, p := -1, 0.0
	for _, v := range row {
		b := binary.LittleEndian.AppendUint64(nil, math.Float64bits(v))
		if v > 0.01 && v < 0.99 && bytes.Count(data, b) == 1 {
			at, p = bytes.Index(data, b), v
			break
		}
	}
	if at < 0 {
		t.Fatal("no probability of age 2 with a unique bit pattern")
	}
	binary.LittleEndian.PutUint64(data[at:], math.Float64bits(1-p))
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, target := range []string{path, dir} {
		_, err := formats.Verify(target)
		if err == nil {
			t.Fatalf("verify %s passed a flipped probability", target)
		}
		if !strings.Contains(err.Error(), "age 2") || !strings.Contains(err.Error(), "sums to") {
			t.Errorf("verify %s: %v; want the row of age 2 that no longer sums to 1", target, err)
		}
	}
}
