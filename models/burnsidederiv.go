package models

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// PriceDividendDerivative returns the price-dividend ratio v of every state
// and its derivative dv/dθ with respect to a parameter θ of the process,
// given how the chain moves with θ: dLevels[i] = ∂x_i/∂θ and
// dTrans[i*N+j] = ∂P_ij/∂θ (gridstage's sensitivities). It differentiates
// the pricing equation (I − A) v = A 1, A = β P D, D = diag(exp(θ_u x)),
// implicitly:
//
//	(I − A) dv = dA (1 + v),   dA = β (dP D + P dD),   dD = diag(θ_u exp(θ_u x) dx),
//
// one more solve with the matrix already needed for v. θ_u is the utility
// curvature m.Theta. c is not modified.
func (m Burnside) PriceDividendDerivative(c Chain, dLevels, dTrans []float64) (v, dv []float64, err error) {
	n := c.N()
	if len(dLevels) != n || len(dTrans) != n*n {
		return nil, nil, fmt.Errorf("models: derivatives for %d levels and %d transitions, want %d and %d", len(dLevels), len(dTrans), n, n*n)
	}
	for _, x := range append(append([]float64(nil), dLevels...), dTrans...) {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, nil, fmt.Errorf("models: a derivative of the chain is %g, want a finite number", x)
		}
	}
	if v, err = m.PriceDividend(c); err != nil {
		return nil, nil, err
	}
	a := mat.NewDense(n, n, nil)
	rhs := mat.NewVecDense(n, nil)
	for i := 0; i < n; i++ {
		var r float64
		for j, p := range c.row(i) {
			e := math.Exp(m.Theta * c.Levels[j])
			w := m.Beta * p * e
			a.Set(i, j, -w)
			dA := m.Beta * (float64(dTrans[i*n+j]*e) + float64(p*m.Theta*e*dLevels[j]))
			r += float64(dA * (1 + v[j]))
		}
		a.Set(i, i, a.At(i, i)+1)
		rhs.SetVec(i, r)
	}
	var x mat.VecDense
	if err := x.SolveVec(a, rhs); err != nil {
		return nil, nil, ErrDiverges
	}
	dv = make([]float64, n)
	for i := range dv {
		dv[i] = x.AtVec(i)
	}
	return v, dv, nil
}

// BurnsideClosedForm is the exact price-dividend ratio of Burnside (1998)
// when log dividend growth is the Gaussian AR(1)
// x' = (1−ρ)μ + ρx + ε, ε ~ N(0, σ²):
//
//	v(x) = Σ_{n≥1} β^n exp(a_n + b_n (x − μ)),
//	a_n = θμn + k [n − 2ρ(1−ρ^n)/(1−ρ) + ρ²(1−ρ^{2n})/(1−ρ²)],  k = θ²σ²/(2(1−ρ)²),
//	b_n = θρ(1−ρ^n)/(1−ρ),
//
// with its derivative in ρ, term by term. It returns ErrDiverges when the
// series does not converge (β exp(θμ + k) ≥ 1).
func (m Burnside) BurnsideClosedForm(mu, rho, sigma, x float64) (v, dvdrho float64, err error) {
	if err := m.Validate(); err != nil {
		return 0, 0, err
	}
	th := m.Theta
	k := th * th * sigma * sigma / (2 * (1 - rho) * (1 - rho))
	if !(rho > -1 && rho < 1) || !(m.Beta*math.Exp(th*mu+k) < 1) {
		return 0, 0, ErrDiverges
	}
	dk := 2 * k / (1 - rho)
	u := x - mu
	for n := 1; n < 10_000_000; n++ {
		fn := float64(n)
		rn := math.Pow(rho, fn)
		rn1 := math.Pow(rho, fn-1)
		g := (1 - rn) / (1 - rho)                                    // Σ_{i<n} ρ^i
		dg := (-fn*rn1*(1-rho) + (1 - rn)) / ((1 - rho) * (1 - rho)) // dg/dρ
		h := (1 - rn*rn) / (1 - rho*rho)                             // Σ_{i<n} ρ^{2i}
		dh := (-2*fn*rn*rn1*(1-rho*rho) + 2*rho*(1-rn*rn)) / ((1 - rho*rho) * (1 - rho*rho))
		bracket := fn - 2*rho*g + rho*rho*h
		dbracket := -2*g - 2*rho*dg + 2*rho*h + rho*rho*dh
		a := th*mu*fn + k*bracket
		da := dk*bracket + k*dbracket
		b := th * rho * g
		db := th * (g + rho*dg)
		term := math.Pow(m.Beta, fn) * math.Exp(a+b*u)
		v += term
		dvdrho += term * (da + db*u)
		if term < 1e-18*v && math.Abs(term*(da+db*u)) < 1e-18*math.Abs(dvdrho)+1e-300 {
			return v, dvdrho, nil
		}
	}
	return 0, 0, ErrDiverges
}
