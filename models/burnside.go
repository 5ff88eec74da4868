package models

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Burnside is the asset-pricing model of Burnside (1998): a tree whose
// dividend grows by the factor exp(x), x following the chain, priced by a
// consumer with utility c^θ/θ who consumes the dividend. The price-dividend
// ratio v solves, state by state,
//
//	v_i = β Σ_j P_ij exp(θ x_j) (1 + v_j).
//
// Reference: Burnside, C. (1998), "Solving asset pricing models with Gaussian
// shocks", Journal of Economic Dynamics and Control 22, 329–340.
type Burnside struct {
	Beta  float64 // discount factor β in (0, 1)
	Theta float64 // utility curvature θ (θ < 0 is risk aversion above one)
}

// Validate reports the first parameter outside its range.
func (m Burnside) Validate() error {
	switch {
	case !(m.Beta > 0 && m.Beta < 1):
		return badParam("beta", m.Beta, "in (0, 1)")
	case math.IsNaN(m.Theta) || math.IsInf(m.Theta, 0):
		return badParam("theta", m.Theta, "finite")
	}
	return nil
}

// PriceDividend returns the price-dividend ratio in every state of c. The
// linear system (I − βPD) v = βPD·1, D = diag(exp(θx)), has a finite
// non-negative solution exactly when the spectral radius of the non-negative
// matrix βPD is below one (the M-matrix property); any other outcome —
// a singular system or a negative entry — is reported as ErrDiverges.
// c is not modified.
func (m Burnside) PriceDividend(c Chain) ([]float64, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	if err := c.Validate(); err != nil {
		return nil, err
	}
	n := c.N()
	a := mat.NewDense(n, n, nil)
	b := mat.NewVecDense(n, nil)
	for i := 0; i < n; i++ {
		var bi float64
		for j, p := range c.row(i) {
			w := m.Beta * p * math.Exp(m.Theta*c.Levels[j])
			a.Set(i, j, -w)
			bi += w
		}
		a.Set(i, i, a.At(i, i)+1)
		b.SetVec(i, bi)
	}
	var v mat.VecDense
	if err := v.SolveVec(a, b); err != nil {
		return nil, ErrDiverges
	}
	out := make([]float64, n)
	for i := range out {
		out[i] = v.AtVec(i)
		if !(out[i] >= 0) || math.IsInf(out[i], 0) {
			return nil, ErrDiverges
		}
	}
	return out, nil
}
