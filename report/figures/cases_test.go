package figures

import (
	"testing"

	"gridstage/solver"
)

// wageShock is the invented process used across these tests: a log-wage
// shock with persistence 0.95 and innovation s.d. 0.1.
var wageShock = solver.AR1{Mean: 0, Rho: 0.95, Sigma: 0.1}

// gaussianCase is a maximum-entropy chain of the wage shock with n states
// and four moments, with Tauchen as the baseline.
func gaussianCase(t *testing.T, n int) Case {
	t.Helper()
	c, err := wageShock.Discretize(solver.Settings{States: n})
	if err != nil {
		t.Fatal(err)
	}
	b, err := wageShock.Discretize(solver.Settings{States: n, Method: solver.Tauchen})
	if err != nil {
		t.Fatal(err)
	}
	d, bd := solver.Diagnose(c, wageShock), solver.Diagnose(b, wageShock)
	return Case{
		Label: "wage-shock", Units: "log wage", Chain: c, Diag: &d, BaselineDiag: &bd,
		Law: Law{Mean: wageShock.Mean, SD: wageShock.StationarySD(), Gaussian: true},
	}
}

// shear maps independent components (x, y) to (x + 0.5 y, y), giving the
// product chain below correlated components.
var shear = [2][2]float64{{1, 0.5}, {0, 1}}

// vectorCase is a two-dimensional chain: the product of two independent
// Rouwenhorst chains (5 states each) with its grid sheared. Rouwenhorst
// matches the stationary variance exactly (Kopecky and Suen 2010), so the
// chain's stationary covariance is exactly A diag(s1², s2²) Aᵀ.
func vectorCase(t *testing.T) Case {
	t.Helper()
	p1 := solver.AR1{Rho: 0.9, Sigma: 0.2}
	p2 := solver.AR1{Rho: 0.6, Sigma: 0.1}
	c1, err := p1.Discretize(solver.Settings{States: 5, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	c2, err := p2.Discretize(solver.Settings{States: 5, Method: solver.Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	n1, n2 := c1.States(), c2.States()
	n := n1 * n2
	c := &solver.Chain{Dim: 2, Method: solver.Rouwenhorst, Moments: 2, Grid: make([]float64, 2*n), Transition: make([]float64, n*n), Matched: make([]int, n)}
	for i := 0; i < n1; i++ {
		for j := 0; j < n2; j++ {
			s := i*n2 + j
			x, y := c1.Grid[i], c2.Grid[j]
			c.Grid[2*s] = shear[0][0]*x + shear[0][1]*y
			c.Grid[2*s+1] = shear[1][0]*x + shear[1][1]*y
			c.Matched[s] = 2
			for k := 0; k < n1; k++ {
				for l := 0; l < n2; l++ {
					c.Transition[s*n+k*n2+l] = c1.Row(i)[k] * c2.Row(j)[l]
				}
			}
		}
	}
	v1, v2 := p1.StationarySD()*p1.StationarySD(), p2.StationarySD()*p2.StationarySD()
	a := shear
	cov := []float64{
		a[0][0]*a[0][0]*v1 + a[0][1]*a[0][1]*v2, a[0][0]*a[1][0]*v1 + a[0][1]*a[1][1]*v2,
		a[1][0]*a[0][0]*v1 + a[1][1]*a[0][1]*v2, a[1][0]*a[1][0]*v1 + a[1][1]*a[1][1]*v2,
	}
	return Case{Label: "two-shock", Units: "log points", Chain: c, Law: Law{Cov: cov, MeanVec: []float64{0, 0}, Gaussian: true}}
}
