package solver

import (
	"errors"
)

// Lyapunov solves the discrete Lyapunov equation
//
//	Σ = B Σ Bᵀ + Q
//
// for the d×d matrix Σ, with B and Q given row-major (d×d). It vectorises
// the equation, (I − B⊗B) vec Σ = vec Q, and solves the d²×d² system by LU
// with partial pivoting; d is at most a handful here, so the d⁶ cost is
// negligible. For a stable B (spectral radius < 1) and symmetric Q the
// solution is unique and symmetric; the result is symmetrised to remove
// rounding. Neither input is modified. It returns an error if the system
// is singular (B has a pair of eigenvalues with product 1). It panics if the
// lengths are not d².
func Lyapunov(b, q []float64, d int) ([]float64, error) {
	if len(b) != d*d || len(q) != d*d {
		panic("solver: Lyapunov shape mismatch")
	}
	m := d * d
	a := make([]float64, m*m)
	// Row-major vec: vec(BΣBᵀ)[i*d+j] = Σ_{k,l} B[i,k] B[j,l] Σ[k,l].
	for i := 0; i < d; i++ {
		for j := 0; j < d; j++ {
			r := i*d + j
			for k := 0; k < d; k++ {
				for l := 0; l < d; l++ {
					a[r*m+k*d+l] = float64(-b[i*d+k] * b[j*d+l])
				}
			}
			a[r*m+r]++
		}
	}
	f, err := luFactor(a, m)
	if err != nil {
		return nil, errors.New("solver: discrete Lyapunov equation is singular: the coefficient matrix has eigenvalues whose product is 1")
	}
	x := f.solve(q)
	s := make([]float64, m)
	for i := 0; i < d; i++ {
		for j := 0; j < d; j++ {
			s[i*d+j] = (x[i*d+j] + x[j*d+i]) / 2
		}
	}
	return s, nil
}
