package solver

import (
	"math"
)

// jacobi holds the three-term recurrence of a family of orthonormal
// polynomials: β_{k+1} p_{k+1}(x) = (x − α_k) p_k(x) − β_k p_{k−1}(x),
// with p_0 = 1/√μ0, where μ0 is the total mass of the weight function.
type jacobi struct {
	alpha []float64 // diagonal, length n
	beta  []float64 // beta[k] couples p_{k} and p_{k+1}; length n (beta[n-1] used for p_n)
	mu0   float64
}

// gaussRule computes an n-point Gauss rule for the recurrence by the
// Golub-Welsch (1969) eigen-decomposition of the Jacobi matrix, then polishes
// each node with Newton steps on p_n and recomputes the weight from the
// Christoffel formula w_i = 1 / Σ_{k<n} p_k(x_i)². The polish keeps the
// relative accuracy of the tiny weights in the tails, which the eigenvector
// formula loses.
func gaussRule(j jacobi, n int) (nodes, weights []float64) {
	nodes, ok := tridiagEigenvalues(j.alpha[:n], j.beta[:n])
	if !ok {
		panic("solver: Jacobi eigen-decomposition failed")
	}
	weights = make([]float64, n)
	for i, x := range nodes {
		for it := 0; it < 3; it++ {
			pn, dpn, _ := orthoEval(j, n, x)
			if dpn == 0 {
				break
			}
			step := pn / dpn
			x -= step
			if math.Abs(step) <= 1e-16*math.Max(1, math.Abs(x)) {
				break
			}
		}
		nodes[i] = x
		_, _, sumSq := orthoEval(j, n, x)
		weights[i] = 1 / sumSq
	}
	return nodes, weights
}

// orthoEval returns p_n(x), p_n'(x) and Σ_{k<n} p_k(x)².
func orthoEval(j jacobi, n int, x float64) (pn, dpn, sumSq float64) {
	p0 := 1 / math.Sqrt(j.mu0)
	var pPrev, dPrev float64
	p, d := p0, 0.0
	for k := 0; k < n; k++ {
		sumSq += float64(p * p)
		pNext := (float64((x-j.alpha[k])*p) - float64(betaAt(j, k-1)*pPrev)) / j.beta[k]
		dNext := (p + float64((x-j.alpha[k])*d) - float64(betaAt(j, k-1)*dPrev)) / j.beta[k]
		pPrev, dPrev = p, d
		p, d = pNext, dNext
	}
	return p, d, sumSq
}

func betaAt(j jacobi, k int) float64 {
	if k < 0 {
		return 0
	}
	return j.beta[k]
}
