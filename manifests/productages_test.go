package manifests

import (
	"math"
	"testing"
)

// examples/lifecycle-income.yaml: the diagnostics of a life-cycle product
// describe the sum of its coordinates. Where a state matched mean and
// variance its errors against the sum of the components' conditional
// moments vanish (1e-9: the solver's tolerance), and the true marginal
// standard deviation of the sum at age t is the closed form
// √(V_t + σ_e²), V_0 = σ_0², V_{t+1} = ρ_t² V_t + σ_t², with the
// correlation between ages ρ_t V_t / √((V_t + σ_e²)(V_{t+1} + σ_e²))
// (1e-12 relative: closed forms evaluated two ways).
func TestLifeCycleProductDiagnostics(t *testing.T) {
	toRoot(t)
	m := loadGood(t, "examples/lifecycle-income.yaml")
	rho := []float64{0.88, 0.90, 0.91, 0.92, 0.93, 0.94, 0.95, 0.96, 0.96, 0.97, 0.97, 0.98}
	sigma := []float64{0.26, 0.24, 0.22, 0.20, 0.19, 0.18, 0.17, 0.16, 0.16, 0.15, 0.15, 0.15}
	for point, sdE := range []float64{0.15, 0.25} {
		p, err := m.Jobs[point].Build()
		if err != nil {
			t.Fatal(err)
		}
		if p.AgeModel == nil || p.Model != nil {
			t.Fatalf("a product with a life-cycle component must build as a life cycle")
		}
		sol, err := p.Solve()
		if err != nil {
			t.Fatal(err)
		}
		if sol.Dim() != 2 || len(sol.AgeDiagnostics) != 12 {
			t.Fatalf("dim %d, %d ages", sol.Dim(), len(sol.AgeDiagnostics))
		}
		v := 0.35 * 0.35
		for age, d := range sol.AgeDiagnostics {
			for i, s := range d.States {
				if s.Matched >= 2 && (math.Abs(s.RelErr.Mean) > 1e-9 || math.Abs(s.RelErr.Var) > 1e-9) {
					t.Errorf("point %d age %d state %d: errors of the sum %g, %g", point, age, i, s.RelErr.Mean, s.RelErr.Var)
				}
			}
			next := rho[age]*rho[age]*v + sigma[age]*sigma[age]
			wantSD := math.Sqrt(next + sdE*sdE)
			wantAC := rho[age] * v / math.Sqrt((v+sdE*sdE)*(next+sdE*sdE))
			if math.Abs(d.True.SD/wantSD-1) > 1e-12 || math.Abs(d.True.Autocorr/wantAC-1) > 1e-12 {
				t.Errorf("point %d age %d: true sd %.15g, autocorrelation %.15g; closed form %.15g, %.15g", point, age, d.True.SD, d.True.Autocorr, wantSD, wantAC)
			}
			v = next
		}
	}
}
