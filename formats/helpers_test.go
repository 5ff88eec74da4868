package formats

import (
	"fmt"
	"math"
	"os"
	"testing"

	"gridstage/internal/version"
	"gridstage/solver"
)

// sampleAR1 discretizes a Gaussian AR(1) with maximum entropy and a
// Rouwenhorst baseline, and diagnoses both; it returns the chain, its
// diagnostics, the baseline's diagnostics and the baseline's matrix.
func sampleAR1(t testing.TB, rho, sigma float64, states int) (*solver.Chain, solver.Diagnostics, solver.Diagnostics, []float64) {
	t.Helper()
	p := solver.AR1{Rho: rho, Sigma: sigma}
	c, err := p.Discretize(solver.Settings{States: states})
	if err != nil {
		t.Fatal(err)
	}
	b, err := p.Discretize(solver.Settings{States: states, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	return c, solver.Diagnose(c, p), solver.Diagnose(b, p), b.Transition
}

// sweepSet is a sweep over the persistence of an invented regional
// earnings process: points × ages chains of the given size, with a
// baseline on even points and an initial distribution at age 0.
func sweepSet(t testing.TB, points, ages, states int) *Set {
	t.Helper()
	s := &Set{Header: Header{Run: "regional-wages", Process: "earnings", Kind: "ar1", Method: "maxent",
		Dim: 1, Params: []string{"sigma", "rho"}, ManifestHash: "ab12"}}
	for p := 0; p < points; p++ {
		rho := 0.5 + 0.1*float64(p%5)
		spec := fmt.Sprintf(`{"kind":"ar1","rho":%g,"sigma":0.1,"states":%d}`, rho, states)
		for a := 0; a < ages; a++ {
			sigma := 0.1 + 0.01*float64(a)
			c, d, b, bt := sampleAR1(t, rho, sigma, states)
			r := Record{Point: p, Params: map[string]float64{"rho": rho, "sigma": 0.1}, Age: a,
				SpecHash: specHash(spec), Spec: []byte(spec), Chain: c, Diag: d}
			if p%2 == 0 {
				r.Baseline, r.BaselineTransition = &b, bt
			}
			if a == 0 && ages > 1 {
				r.Initial = append([]float64(nil), d.Stationary...)
				r.Diag.Stationary = nil
			}
			s.Records = append(s.Records, r)
		}
	}
	return s
}

// productSet holds one two-dimensional chain: the product of two
// independent AR(1) chains (an invented firm's productivity and demand).
func productSet(t testing.TB) *Set {
	t.Helper()
	a, _, _, _ := sampleAR1(t, 0.9, 0.1, 3)
	b, _, _, _ := sampleAR1(t, 0.5, 0.2, 4)
	na, nb := a.States(), b.States()
	n := na * nb
	c := &solver.Chain{Dim: 2, Method: solver.MaxEnt, Moments: 2, Matched: make([]int, n), Transition: make([]float64, n*n)}
	for i := 0; i < na; i++ {
		for j := 0; j < nb; j++ {
			c.Grid = append(c.Grid, a.Grid[i], b.Grid[j])
			c.Matched[i*nb+j] = 2
			for k := 0; k < na; k++ {
				for l := 0; l < nb; l++ {
					c.Transition[(i*nb+j)*n+k*nb+l] = a.Row(i)[k] * b.Row(j)[l]
				}
			}
		}
	}
	d := solver.Diagnose(c, solver.AR1{Rho: 0.9, Sigma: 0.1})
	return &Set{Header: Header{Run: "firm-panel", Process: "firm.productivity", Kind: "product", Method: "maxent", Dim: 2},
		Records: []Record{{Point: 0, Params: map[string]float64{}, SpecHash: specHash(`{"kind":"product"}`), Spec: []byte(`{"kind":"product"}`), Chain: c, Diag: d}}}
}

// sameBits reports whether two float slices are identical bit for bit
// (NaN equal to NaN).
func sameBits(a, b []float64) bool {
	if len(a) != len(b) || (a == nil) != (b == nil) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
			return false
		}
	}
	return true
}

func momentBits(m solver.Moments) []float64 { return []float64{m.Mean, m.Var, m.Skew, m.Kurt} }
func summaryBits(s solver.Summary) []float64 {
	return []float64{s.Mean, s.SD, s.Skew, s.Kurt, s.Autocorr}
}

// diffDiag returns the first difference between two diagnostics.
func diffDiag(a, b *solver.Diagnostics) string {
	switch {
	case a.Method != b.Method || a.Fallbacks != b.Fallbacks || a.StationaryErr != b.StationaryErr:
		return "method, fallbacks or stationary error"
	case a.Degenerate != b.Degenerate || a.FarFromUnimodal != b.FarFromUnimodal:
		return "degenerate or far-from-unimodal count"
	case !sameBits(a.Stationary, b.Stationary):
		return "stationary"
	case !sameBits(summaryBits(a.Chain), summaryBits(b.Chain)) || !sameBits(summaryBits(a.True), summaryBits(b.True)):
		return "unconditional moments"
	case !sameBits(momentBits(a.WorstRelErr), momentBits(b.WorstRelErr)):
		return "worst errors"
	case len(a.States) != len(b.States):
		return "state count"
	}
	for i := range a.States {
		x, y := a.States[i], b.States[i]
		if x.Matched != y.Matched || !sameBits(x.Level, y.Level) {
			return fmt.Sprintf("state %d level or matched", i)
		}
		if (x.PriorKL == nil) != (y.PriorKL == nil) || x.PriorKL != nil && *x.PriorKL != *y.PriorKL {
			return fmt.Sprintf("state %d prior KL", i)
		}
		if (x.Shape == nil) != (y.Shape == nil) || x.Shape != nil && *x.Shape != *y.Shape {
			return fmt.Sprintf("state %d shape", i)
		}
		for k, pair := range [][2]solver.Moments{{x.Chain, y.Chain}, {x.True, y.True}, {x.AbsErr, y.AbsErr}, {x.RelErr, y.RelErr}} {
			if !sameBits(momentBits(pair[0]), momentBits(pair[1])) {
				return fmt.Sprintf("state %d moments group %d", i, k)
			}
		}
	}
	return ""
}

// diffRecords returns the first difference between two records.
func diffRecords(a, b *Record) string {
	switch {
	case a.Point != b.Point || a.Age != b.Age:
		return "point or age"
	case a.SpecHash != b.SpecHash || string(a.Spec) != string(b.Spec):
		return "spec"
	case len(a.Params) != len(b.Params):
		return "params"
	case !sameBits(a.Initial, b.Initial):
		return "initial"
	}
	for k, v := range a.Params {
		if w, ok := b.Params[k]; !ok || math.Float64bits(v) != math.Float64bits(w) {
			return "param " + k
		}
	}
	ca, cb := a.Chain, b.Chain
	switch {
	case ca.Dim != cb.Dim || ca.Method != cb.Method || ca.Moments != cb.Moments:
		return "chain dim, method or moments"
	case !sameBits(ca.Grid, cb.Grid):
		return "grid"
	case !sameBits(ca.Transition, cb.Transition):
		return "transition"
	case fmt.Sprint(ca.Matched) != fmt.Sprint(cb.Matched):
		return "matched"
	}
	if d := diffDiag(&a.Diag, &b.Diag); d != "" {
		return "diagnostics: " + d
	}
	if (a.Baseline == nil) != (b.Baseline == nil) {
		return "baseline presence"
	}
	if a.Baseline != nil {
		if d := diffDiag(a.Baseline, b.Baseline); d != "" {
			return "baseline: " + d
		}
		if !sameBits(a.BaselineTransition, b.BaselineTransition) {
			return "baseline transition"
		}
	}
	if d := diffVector(a.Vector, b.Vector); d != "" {
		return "vector: " + d
	}
	if d := diffVector(a.BaselineVector, b.BaselineVector); d != "" {
		return "baseline vector: " + d
	}
	return ""
}

// diffVector returns the first difference between two vector diagnostics.
func diffVector(a, b *VectorDiag) string {
	switch {
	case (a == nil) != (b == nil):
		return "presence"
	case a == nil:
		return ""
	case !sameBits(a.MeanErr, b.MeanErr) || !sameBits(a.CovErr, b.CovErr):
		return "per-state errors"
	case !sameBits([]float64{a.WorstMeanErr, a.WorstCovErr, a.StationaryCovErr}, []float64{b.WorstMeanErr, b.WorstCovErr, b.StationaryCovErr}):
		return "worst errors"
	case !sameBits(a.TrueMean, b.TrueMean) || !sameBits(a.TrueCov, b.TrueCov):
		return "true moments"
	case !sameBits(a.ChainMean, b.ChainMean) || !sameBits(a.ChainCov, b.ChainCov):
		return "chain moments"
	}
	return ""
}

// vectorSet holds a sweep of two points of an invented two-sector VAR
// (a made-up firm panel's productivity and demand): maxent chains with a
// Tauchen baseline and vector diagnostics for both. The second point's
// primary chain claims no stationary distribution, so that the nulls of
// the chain's stationary columns are written and read back too.
func vectorSet(t testing.TB) *Set {
	t.Helper()
	s := &Set{Header: Header{Run: "firm-panel", Process: "shocks", Kind: "var", Method: "maxent", Dim: 2, Params: []string{"coef[0][0]"}}}
	for pt, b00 := range []float64{0.8, 0.9} {
		p := solver.VAR{Coef: []float64{b00, 0.05, 0.02, 0.7}, Cov: []float64{0.01, 0.002, 0.002, 0.02}}
		c, err := p.Discretize(solver.Settings{States: 4})
		if err != nil {
			t.Fatal(err)
		}
		b, err := p.Discretize(solver.Settings{States: 3, Method: solver.Tauchen})
		if err != nil {
			t.Fatal(err)
		}
		vc, vb := solver.DiagnoseVector(c, p), solver.DiagnoseVector(b, p)
		dc, db := solver.Diagnose(c, p), solver.Diagnose(b, p)
		r := Record{Point: pt, Params: map[string]float64{"coef[0][0]": b00}, SpecHash: specHash(`{"kind":"var"}`),
			Spec: []byte(`{"kind":"var"}`), Chain: c, Diag: dc, Baseline: &db, BaselineTransition: b.Transition, Vector: NewVectorDiag(&vc), BaselineVector: NewVectorDiag(&vb)}
		if pt == 1 {
			r.Vector.ChainMean, r.Vector.ChainCov, r.Vector.StationaryCovErr = nil, nil, 0
		}
		s.Records = append(s.Records, r)
	}
	return s
}

// readFile returns a file's bytes.
func readFile(t testing.TB, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// lifeCycleSet holds one life-cycle point of an invented earnings profile:
// a chain per age from the solver's age-varying discretization, the
// initial distribution at age 0, and the final age's grid as a terminal
// age without transition. (The diagnostics are solver.Diagnose of each age
// matrix on its own grid: only their storage is under test here.)
func lifeCycleSet(t testing.TB) *Set {
	t.Helper()
	p := solver.LifeCycle{InitialSD: 0.3, Rho: []float64{0.95, 0.9, 0.97}, Sigma: []float64{0.1, 0.12, 0.08}}
	ac, err := p.Discretize(solver.Settings{States: 5})
	if err != nil {
		t.Fatal(err)
	}
	s := &Set{Header: Header{Run: "earnings-profile", Process: "income", Kind: "lifecycle", Method: "maxent", Dim: 1}}
	base := Record{Point: 0, Params: map[string]float64{}, SpecHash: specHash(`{"kind":"lifecycle"}`), Spec: []byte(`{"kind":"lifecycle"}`)}
	for a, c := range ac.Ages {
		r := base
		r.Age, r.Chain = a, c
		r.Diag = solver.Diagnose(c, solver.AR1{Rho: p.Rho[a], Sigma: p.Sigma[a]})
		if a == 0 {
			r.Initial = ac.Initial
		}
		s.Records = append(s.Records, r)
	}
	final := base
	final.Age = len(ac.Ages)
	final.Chain = &solver.Chain{Dim: 1, Grid: ac.Final, Method: ac.Method, Matched: make([]int, len(ac.Final))}
	return &Set{Header: s.Header, Records: append(s.Records, final)}
}

// specHash is the spec hash of a test spec under the current numeric
// version, as verify recomputes it.
func specHash(spec string) string { return version.SpecHash(version.Numeric, []byte(spec)) }
