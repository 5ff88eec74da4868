package solver

import (
	"math"
	"testing"
)

// TestProductOfPersistentAndTransitory combines an invented persistent
// earnings component (AR(1), ρ = 0.95, σ = 0.15) with an i.i.d. normal
// transitory one (s.d. 0.2) into one chain, and checks it against the
// properties of a Kronecker product of independent chains: rows are
// distributions, the conditional moments of each component are exact where
// the components match them, and the stationary distribution is the outer
// product of the components' (1e-12: GTH elimination rounding).
func TestProductOfPersistentAndTransitory(t *testing.T) {
	persistent := AR1{Rho: 0.95, Sigma: 0.15}
	transitory := IID{Dist: Normal{0, 0.2}}
	a, err := persistent.Discretize(Settings{States: 9, Moments: 2})
	if err != nil {
		t.Fatal(err)
	}
	d, err := transitory.Discretize(Settings{States: 5})
	if err != nil {
		t.Fatal(err)
	}
	b := d.Chain()
	c := Product(a, b)
	if c.Dim != 2 || c.States() != 45 {
		t.Fatalf("dim %d states %d, want 2 and 45", c.Dim, c.States())
	}
	if err := c.Check(1e-12); err != nil {
		t.Fatal(err)
	}
	dg := DiagnoseVector(c, Independent{AsVector(persistent), AsVector(transitory)})
	if dg.WorstMeanErr > momentTol || dg.WorstCovErr > momentTol {
		t.Errorf("worst mean/cov error %.3g/%.3g > %g", dg.WorstMeanErr, dg.WorstCovErr, momentTol)
	}
	pa, _ := Stationary(a.Transition, 9)
	pb, _ := Stationary(b.Transition, 5)
	for i := range pa {
		for k := range pb {
			if e := math.Abs(dg.Stationary[i*5+k] - pa[i]*pb[k]); e > 1e-12 {
				t.Errorf("π(%d,%d) = %.15g, product %.15g", i, k, dg.Stationary[i*5+k], pa[i]*pb[k])
			}
		}
	}
	// Stationary variances: σ²/(1 − ρ²) and 0.04 (closed forms), exact when
	// means and variances are matched in every state (1e-10: the moment
	// tolerance amplified by 1/(1 − ρ²) ≈ 10).
	if e := math.Abs(dg.Chain.Cov[0]/(0.0225/(1-0.9025)) - 1); e > 1e-10 {
		t.Errorf("persistent variance off by %.3g", e)
	}
	if e := math.Abs(dg.Chain.Cov[3]/0.04 - 1); e > 1e-10 {
		t.Errorf("transitory variance off by %.3g", e)
	}
	if math.Abs(dg.Chain.Cov[1]) > 1e-14 {
		t.Errorf("components are correlated: %.3g", dg.Chain.Cov[1])
	}
}

// TestProductMixesDimensions: a 2-D VAR chain times an AR(1) chain has
// dimension 3, the VAR's coordinates first, and the last component varying
// fastest.
func TestProductMixesDimensions(t *testing.T) {
	v, err := varModerate.Discretize(Settings{States: 3})
	if err != nil {
		t.Fatal(err)
	}
	a, err := AR1{Rho: 0.5, Sigma: 1}.Discretize(Settings{States: 4, Moments: 2})
	if err != nil {
		t.Fatal(err)
	}
	c := Product(v, a)
	if c.Dim != 3 || c.States() != 36 {
		t.Fatalf("dim %d states %d, want 3 and 36", c.Dim, c.States())
	}
	for s := 0; s < 36; s++ {
		i, k := s/4, s%4
		x := c.State(s)
		if x[0] != v.State(i)[0] || x[1] != v.State(i)[1] || x[2] != a.Grid[k] {
			t.Fatalf("state %d = %v, want VAR state %d and AR(1) state %d", s, x, i, k)
		}
		for j := 0; j < 9; j++ {
			for m := 0; m < 4; m++ {
				// Exact: one multiplication.
				if c.Row(s)[j*4+m] != v.Row(i)[j]*a.Row(k)[m] {
					t.Fatalf("P[%d][%d] is not the Kronecker product", s, j*4+m)
				}
			}
		}
	}
	if err := c.Check(1e-12); err != nil {
		t.Fatal(err)
	}
}
