package accuracy

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"gridstage/solver"
)

// ErrSingular reports regressors without variation in some direction (for
// example a simulated path that never left its first state), so the
// regression coefficients are not identified.
var ErrSingular = errors.New("accuracy: regressors are singular (the sample does not move in every direction)")

// Estimate is a VAR(1) x' = c + B x + e with Cov(e) = Ψ, estimated from
// data or implied by a chain. Matrices are d×d row-major.
type Estimate struct {
	Intercept []float64 `json:"intercept"`
	Coef      []float64 `json:"coef"`
	Cov       []float64 `json:"cov"`
}

// FromVAR returns the parameters of p as an Estimate (nil intercept → 0).
func FromVAR(p solver.VAR) Estimate {
	d := p.Dim()
	e := Estimate{Intercept: make([]float64, d), Coef: append([]float64(nil), p.Coef...), Cov: append([]float64(nil), p.Cov...)}
	copy(e.Intercept, p.Intercept)
	return e
}

// Dim returns d.
func (e Estimate) Dim() int { return len(e.Intercept) }

// Params flattens the estimate in the order of ParamNames: c, then B
// row-major, then the upper triangle of Ψ row by row.
func (e Estimate) Params() []float64 {
	d := e.Dim()
	out := append(append([]float64(nil), e.Intercept...), e.Coef...)
	for k := 0; k < d; k++ {
		for l := k; l < d; l++ {
			out = append(out, e.Cov[k*d+l])
		}
	}
	return out
}

// ParamNames names the entries of Params for dimension d, rows and
// columns counted from 1 as in the command's help: intercept[1] …,
// coef[1,1] …, cov[1,1] … (for d = 1: intercept, rho, sigma^2).
func ParamNames(d int) []string {
	if d == 1 {
		return []string{"intercept", "rho", "sigma^2"}
	}
	var out []string
	for k := 1; k <= d; k++ {
		out = append(out, fmt.Sprintf("intercept[%d]", k))
	}
	for k := 1; k <= d; k++ {
		for l := 1; l <= d; l++ {
			out = append(out, fmt.Sprintf("coef[%d,%d]", k, l))
		}
	}
	for k := 1; k <= d; k++ {
		for l := k; l <= d; l++ {
			out = append(out, fmt.Sprintf("cov[%d,%d]", k, l))
		}
	}
	return out
}

// Errors summarizes how far e is from the truth: CoefErr is the largest
// absolute error over c and B; CovErr the largest error of Ψ in
// correlation units, |Ψ̂_kl − Ψ_kl| / √(Ψ_kk Ψ_ll).
func Errors(e, truth Estimate) (coefErr, covErr float64) {
	d := truth.Dim()
	for k := range truth.Intercept {
		coefErr = math.Max(coefErr, math.Abs(e.Intercept[k]-truth.Intercept[k]))
	}
	for k := range truth.Coef {
		coefErr = math.Max(coefErr, math.Abs(e.Coef[k]-truth.Coef[k]))
	}
	for k := 0; k < d; k++ {
		for l := 0; l < d; l++ {
			covErr = math.Max(covErr, math.Abs(e.Cov[k*d+l]-truth.Cov[k*d+l])/math.Sqrt(truth.Cov[k*d+k]*truth.Cov[l*d+l]))
		}
	}
	return coefErr, covErr
}

// Population returns the VAR implied by chain c under the distribution pi
// (normally its stationary distribution): population least squares of x'
// on (1, x),
//
//	B = Γ Σ⁻¹,   c = E x' − B E x,   Ψ = Σ_i π_i Σ_j P_ij (x_j − c − B x_i)(…)ᵀ,
//
// with Σ = Cov_π(x) and Γ = Cov_π(x', x) = Σ_i π_i (E[x'|i] − E x')(x_i − E x)ᵀ.
// It needs no simulation. It returns ErrSingular if Σ is singular.
func Population(c *solver.Chain, pi []float64) (Estimate, error) {
	d, n := c.Dim, c.States()
	mx, my := make([]float64, d), make([]float64, d)
	next := make([]float64, n*d) // E[x' | i]
	for i := 0; i < n; i++ {
		nx := next[i*d : (i+1)*d]
		for j, p := range c.Row(i) {
			for k, v := range c.State(j) {
				nx[k] += p * v
			}
		}
		for k := 0; k < d; k++ {
			mx[k] += pi[i] * c.State(i)[k]
			my[k] += pi[i] * nx[k]
		}
	}
	sxx, sxy := make([]float64, d*d), make([]float64, d*d)
	for i := 0; i < n; i++ {
		x := c.State(i)
		for k := 0; k < d; k++ {
			for l := 0; l < d; l++ {
				sxx[k*d+l] += pi[i] * (x[k] - mx[k]) * (x[l] - mx[l])
				sxy[k*d+l] += pi[i] * (x[k] - mx[k]) * (next[i*d+l] - my[l])
			}
		}
	}
	e, err := fromMoments(d, mx, my, sxx, sxy)
	if err != nil {
		return e, err
	}
	// Residual covariance from the residuals themselves, not from
	// differences of second moments, to keep precision when Ψ ≪ Σ.
	r := make([]float64, d)
	for i := 0; i < n; i++ {
		if pi[i] == 0 {
			continue
		}
		x := c.State(i)
		for j, p := range c.Row(i) {
			if p == 0 {
				continue
			}
			y := c.State(j)
			for k := 0; k < d; k++ {
				r[k] = y[k] - e.Intercept[k]
				for l := 0; l < d; l++ {
					r[k] -= e.Coef[k*d+l] * x[l]
				}
			}
			w := pi[i] * p
			for k := 0; k < d; k++ {
				for l := 0; l < d; l++ {
					e.Cov[k*d+l] += w * r[k] * r[l]
				}
			}
		}
	}
	return e, nil
}

// OLS fits x_{t+1} = c + B x_t + e_t by least squares to the path (T×d
// row-major, T ≥ d+2) and estimates Ψ by the residual cross-products
// divided by T − 1 − (d + 1), the degrees of freedom. Regressors are
// centred before solving the normal equations, which keeps them well
// conditioned for persistent processes. It returns ErrSingular if the
// regressors do not vary in every direction.
func OLS(path []float64, d int) (Estimate, error) {
	T := len(path) / d
	m := T - 1
	if m < d+2 {
		return Estimate{}, fmt.Errorf("accuracy: a path of %d observations is too short for a %d-dimensional VAR", T, d)
	}
	mx, my := make([]float64, d), make([]float64, d)
	for t := 0; t < m; t++ {
		for k := 0; k < d; k++ {
			mx[k] += path[t*d+k]
			my[k] += path[(t+1)*d+k]
		}
	}
	for k := 0; k < d; k++ {
		mx[k] /= float64(m)
		my[k] /= float64(m)
	}
	sxx, sxy := make([]float64, d*d), make([]float64, d*d)
	for t := 0; t < m; t++ {
		x, y := path[t*d:(t+1)*d], path[(t+1)*d:(t+2)*d]
		for k := 0; k < d; k++ {
			dx := x[k] - mx[k]
			for l := 0; l < d; l++ {
				sxx[k*d+l] += dx * (x[l] - mx[l])
				sxy[k*d+l] += dx * (y[l] - my[l])
			}
		}
	}
	e, err := fromMoments(d, mx, my, sxx, sxy)
	if err != nil {
		return e, err
	}
	r := make([]float64, d)
	for t := 0; t < m; t++ {
		x, y := path[t*d:(t+1)*d], path[(t+1)*d:(t+2)*d]
		for k := 0; k < d; k++ {
			r[k] = y[k] - e.Intercept[k]
			for l := 0; l < d; l++ {
				r[k] -= e.Coef[k*d+l] * x[l]
			}
		}
		for k := 0; k < d; k++ {
			for l := 0; l < d; l++ {
				e.Cov[k*d+l] += r[k] * r[l]
			}
		}
	}
	dof := float64(m - d - 1)
	for k := range e.Cov {
		e.Cov[k] /= dof
	}
	return e, nil
}

// fromMoments solves Bᵀ = Sxx⁻¹ Sxy (Sxy[k][l] = Σ dx_k dy_l) and
// c = ȳ − B x̄, leaving Cov zeroed for the caller to fill.
func fromMoments(d int, mx, my, sxx, sxy []float64) (Estimate, error) {
	var chol mat.Cholesky
	if !chol.Factorize(mat.NewSymDense(d, sxx)) {
		return Estimate{}, ErrSingular
	}
	if c := chol.Cond(); c > 1e14 || math.IsInf(c, 1) || math.IsNaN(c) {
		return Estimate{}, ErrSingular
	}
	var bt mat.Dense
	if err := chol.SolveTo(&bt, mat.NewDense(d, d, sxy)); err != nil {
		return Estimate{}, ErrSingular
	}
	e := Estimate{Intercept: make([]float64, d), Coef: make([]float64, d*d), Cov: make([]float64, d*d)}
	for k := 0; k < d; k++ {
		e.Intercept[k] = my[k]
		for l := 0; l < d; l++ {
			b := bt.At(l, k)
			e.Coef[k*d+l] = b
			e.Intercept[k] -= b * mx[l]
		}
	}
	return e, nil
}
