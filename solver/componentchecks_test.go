package solver

import (
	"math"
	"testing"
)

// Each component of a maximum-entropy VAR chain matching means and
// covariances has, in every state that matched them, the conditional mean
// (c + B x)_k and variance Ψ_kk of the VAR's closed form (Tanaka and Toda
// 2013, the moments matched); the check reports those errors as ~0 (1e-9
// standardized: the Newton solver's stopping tolerance on the moment
// equations is far tighter) and the first component's check is Diagnose's.
func TestComponentChecksMatchTheVARClosedForm(t *testing.T) {
	p := VAR{Intercept: []float64{0.01, -0.02}, Coef: []float64{0.9, 0.05, 0.02, 0.8}, Cov: []float64{0.01, 0.002, 0.002, 0.02}}
	c, err := p.Discretize(Settings{States: 7, Moments: 2})
	if err != nil {
		t.Fatal(err)
	}
	first := Diagnose(c, p)
	for k := 0; k < 2; k++ {
		d := ComponentChecks(c, p, k)
		checked := 0
		for i, st := range d.States {
			x := c.State(i)
			mean := p.Intercept[k] + p.Coef[2*k]*x[0] + p.Coef[2*k+1]*x[1]
			if st.True.Mean != mean && math.Abs(st.True.Mean-mean) > 1e-15 {
				t.Errorf("component %d state %d: true mean %g, closed form %g", k, i, st.True.Mean, mean)
			}
			if st.True.Var != p.Cov[3*k] || st.Level[k] != x[k] {
				t.Errorf("component %d state %d: true variance %g, want %g", k, i, st.True.Var, p.Cov[3*k])
			}
			if c.Matched[i] < 2 {
				continue
			}
			checked++
			if math.Abs(st.RelErr.Mean) > 1e-9 || math.Abs(st.RelErr.Var) > 1e-9 {
				t.Errorf("component %d state %d matched means and covariances but errs %g, %g", k, i, st.RelErr.Mean, st.RelErr.Var)
			}
			if k == 0 && st.RelErr != first.States[i].RelErr {
				t.Errorf("state %d: component 0 check %v, Diagnose %v", i, st.RelErr, first.States[i].RelErr)
			}
		}
		if checked == 0 {
			t.Fatalf("component %d: no state matched means and covariances", k)
		}
	}
}
