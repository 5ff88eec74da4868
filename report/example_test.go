package report

import (
	"testing"

	"gridstage/report/figures"
	"gridstage/solver"
)

// arCase builds a chain of an invented AR(1) with its diagnostics and a
// Tauchen baseline.
func arCase(t *testing.T, p solver.AR1, s solver.Settings) figures.Case {
	t.Helper()
	c, err := p.Discretize(s)
	if err != nil {
		t.Fatal(err)
	}
	d := solver.Diagnose(c, p)
	cs := figures.Case{Units: "log earnings", Chain: c, Diag: &d, Law: figures.Law{Mean: p.Mean, SD: p.StationarySD(), Gaussian: p.Shock == nil}}
	if s.Method == solver.MaxEnt {
		b, err := p.Discretize(solver.Settings{States: s.States, Method: solver.Tauchen})
		if err != nil {
			t.Fatal(err)
		}
		bd := solver.Diagnose(b, p)
		cs.BaselineDiag = &bd
	}
	return cs
}

// exampleRun is an invented study, "Kestrel Bay earnings", with one chain
// of each verdict: a sound maximum-entropy chain (ρ = 0.5), one that falls
// back at the edges (ρ = 0.9, 9 states), and a Tauchen-Hussey chain at
// ρ = 0.99 whose long-run s.d. is far too small (Flodén 2008 documents this
// failure of Tauchen-Hussey at high persistence), plus a short life cycle.
func exampleRun(t *testing.T) Run {
	t.Helper()
	// Sound (two moments: with four the edge rows of ρ 0.5 end in a
	// spike far from unimodal), use with care (fallbacks) and do not use.
	pts := []struct {
		rho     float64
		method  solver.Method
		moments int
	}{{0.5, solver.MaxEnt, 2}, {0.9, solver.MaxEnt, 0}, {0.99, solver.TauchenHussey, 0}}
	job := Job{Process: "earnings", Kind: "ar1", Method: "maxent", Dim: 1, Params: []string{"rho"},
		Files: []File{{Name: "earnings.points.parquet", Table: "points", ContentHash: "5e1f0c3a9b7d2e4f60718293a4b5c6d7e8f90123456789abcdef0123456789ab"}}}
	for i, pt := range pts {
		p := solver.AR1{Rho: pt.rho, Sigma: 0.1}
		cs := arCase(t, p, solver.Settings{States: 9, Method: pt.method, Moments: pt.moments})
		job.Points = append(job.Points, Point{Index: i, Params: map[string]float64{"rho": pt.rho},
			SpecHash: "a1b2c3d4e5f60718293a4b5c6d7e8f9a", ChainHash: "0f1e2d3c4b5a69788796a5b4c3d2e1f0", Chains: []Chain{{Case: cs}}})
	}
	life := Job{Process: "earnings-by-age", Kind: "ar1-lifecycle", Method: "rouwenhorst", Dim: 1}
	pt := Point{Index: 0, SpecHash: "77aa"}
	for age, sigma := range []float64{0.05, 0.1, 0.15} {
		p := solver.AR1{Rho: 0.8, Sigma: sigma}
		cs := arCase(t, p, solver.Settings{States: 7, Method: solver.Rouwenhorst})
		pt.Chains = append(pt.Chains, Chain{Case: cs, Age: 25 + 10*age})
	}
	life.Points = []Point{pt}
	return Run{Name: "kestrel-bay-earnings", Source: "out/kestrel-bay", Tool: "0.1.0",
		ManifestHash: "9c8b7a6f5e4d3c2b1a0998877665544332211000ffeeddccbbaa998877665544",
		Jobs:         []Job{job, life},
		Checks:       []Check{{Subject: "earnings.points.parquet", OK: true, Detail: "content hash matches"}}}
}
