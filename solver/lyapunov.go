package solver

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"
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
	a := mat.NewDense(m, m, nil)
	// Row-major vec: vec(BΣBᵀ)[i*d+j] = Σ_{k,l} B[i,k] B[j,l] Σ[k,l].
	for i := 0; i < d; i++ {
		for j := 0; j < d; j++ {
			r := i*d + j
			for k := 0; k < d; k++ {
				for l := 0; l < d; l++ {
					a.Set(r, k*d+l, -b[i*d+k]*b[j*d+l])
				}
			}
			a.Set(r, r, a.At(r, r)+1)
		}
	}
	var lu mat.LU
	lu.Factorize(a)
	if math.IsInf(lu.Cond(), 1) {
		return nil, errors.New("solver: discrete Lyapunov equation is singular: the coefficient matrix has eigenvalues whose product is 1")
	}
	var x mat.VecDense
	// A Condition error only warns of a large condition number; callers
	// check stationarity before getting here, so the answer is still used.
	_ = lu.SolveVecTo(&x, false, mat.NewVecDense(m, append([]float64(nil), q...)))
	s := make([]float64, m)
	for i := 0; i < d; i++ {
		for j := 0; j < d; j++ {
			s[i*d+j] = (x.AtVec(i*d+j) + x.AtVec(j*d+i)) / 2
		}
	}
	return s, nil
}
