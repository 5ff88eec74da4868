package solver

// gaussianVectorLaw is the conditional law of a Gaussian vector process:
// in from-state i, x' ~ N(means[i*d:(i+1)*d], Ψ) with Ψ = chol cholᵀ and
// marginal standard deviations sd. When the from-states form a tensor
// grid with axisStates points per axis (row-major), the rows are solved in
// snake order so that each warm start comes from a neighbouring state;
// axisStates 0 means the from-states are solved in index order.
type gaussianVectorLaw struct {
	d          int
	axisStates int
	means      []float64 // n×d
	chol       []float64 // d×d lower triangular
	sd         []float64 // √Ψ_kk
}

// vectorQuickIter is the Newton budget before the separation test runs.
const vectorQuickIter = 12

// vectorMomentCount is the number of moment functions at ladder level l
// in dimension d: d means, then d(d+1)/2 second cross-moments, then d
// marginal third and d marginal fourth moments.
func vectorMomentCount(l, d int) int {
	switch l {
	case 0:
		return 0
	case 1:
		return d
	case 2:
		return d + d*(d+1)/2
	case 3:
		return d + d*(d+1)/2 + d
	}
	return d + d*(d+1)/2 + 2*d
}

// vectorLadder lists the levels tried in turn when level L is requested:
// L, then the even levels below it, then the means alone (4 → 2 → 1,
// 3 → 2 → 1). Marginal third moments are dropped together with the fourth
// because an odd moment without the even one above it leaves the tails
// unconstrained.
func vectorLadder(L int) []int {
	ladder := []int{L}
	for l := L - 1; l >= 1; l-- {
		if l%2 == 0 || l == 1 {
			ladder = append(ladder, l)
		}
	}
	return ladder
}

// maxentVectorRows fills trans (one row of n = len(logW) entries per
// from-state of law) with maximum-entropy transition rows on the grid (n×d). In state i
// the prior is q_ij ∝ w_j φ(L⁻¹(x_j − m_i)) and the moment functions are,
// in standardized units z = L⁻¹(x' − m_i) and u_k = (x'_k − m_ik)/√Ψ_kk,
//
//	z_k,   z_k z_l − δ_kl (k ≤ l),   u_k³,   u_k⁴ − 3,
//
// so matching them matches the exact conditional mean, covariance and
// marginal skewness and kurtosis, and the dual's Hessian is close to the
// identity. matched[i] receives the ladder level reached in state i (0 when
// even the means are infeasible and the prior row is used). The multipliers
// of each state warm-start the next.
func maxentVectorRows(grid, logW []float64, law gaussianVectorLaw, L int, trans []float64, matched []int) {
	d, n := law.d, len(logW)
	full := vectorMomentCount(L, d)
	logq := make([]float64, n)
	allDev := make([]float64, n*full)
	dev := make([]float64, n*full)
	e, z := make([]float64, d), make([]float64, d)
	warm := make([]float64, full)
	warmL := -1
	ladder := vectorLadder(L)
	var dual Dual
	order := snakeOrder(len(law.means)/d, law.axisStates, d)
	for _, i := range order {
		m := law.means[i*d : (i+1)*d]
		for j := 0; j < n; j++ {
			x := grid[j*d : (j+1)*d]
			for k := range e {
				e[k] = x[k] - m[k]
			}
			var q float64
			for r := 0; r < d; r++ { // forward substitution L z = e
				s := e[r]
				for c := 0; c < r; c++ {
					s -= law.chol[r*d+c] * z[c]
				}
				z[r] = s / law.chol[r*d+r]
				q += z[r] * z[r]
			}
			logq[j] = logW[j] - q/2
			row := allDev[j*full : (j+1)*full]
			col := copy(row, z[:min(d, full)])
			if L >= 2 {
				for k := 0; k < d; k++ {
					for l := k; l < d; l++ {
						v := z[k] * z[l]
						if k == l {
							v--
						}
						row[col] = v
						col++
					}
				}
			}
			if L >= 3 {
				for k := 0; k < d; k++ {
					u := e[k] / law.sd[k]
					row[col] = u * u * u
					col++
				}
			}
			if L >= 4 {
				for k := 0; k < d; k++ {
					u := e[k] / law.sd[k]
					u *= u
					row[col] = u*u - 3
					col++
				}
			}
		}
		row := trans[i*n : (i+1)*n]
		got := 0
		for _, l := range ladder {
			cols := vectorMomentCount(l, d)
			for j := 0; j < n; j++ {
				copy(dev[j*cols:(j+1)*cols], allDev[j*full:j*full+cols])
			}
			var start []float64
			if warmL == l {
				start = warm[:cols]
			}
			// Wolfe's minimum-norm-point test proves infeasibility.
			lam, ok := dual.solveOrProve(logq, dev[:n*cols], cols, start, row, vectorQuickIter, func() bool {
				return separated(dev[:n*cols], n, cols)
			})
			if ok {
				copy(warm, lam)
				warmL, got = l, l
				break
			}
		}
		if got == 0 {
			priorRow(logq, row)
			warmL = -1
		}
		matched[i] = got
	}
}

// snakeOrder returns the from-states 0 … n−1 in boustrophedon order over a
// tensor grid with N points per axis (d axes, row-major): consecutive
// states differ by one step along one axis, since the digit of axis k runs
// backwards whenever the digits of the axes before it sum to an odd number.
// With N = 0 or n ≠ N^d it returns index order.
func snakeOrder(n, N, d int) []int {
	order := make([]int, n)
	total := 1
	for k := 0; k < d && N > 0; k++ {
		total *= N
	}
	if N == 0 || total != n {
		for i := range order {
			order[i] = i
		}
		return order
	}
	digits := make([]int, d)
	for s := range order {
		rem := s
		for k := d - 1; k >= 0; k-- {
			digits[k] = rem % N
			rem /= N
		}
		idx, parity := 0, 0
		for k := 0; k < d; k++ {
			dk := digits[k]
			if parity%2 == 1 {
				dk = N - 1 - dk
			}
			parity += digits[k]
			idx = idx*N + dk
		}
		order[s] = idx
	}
	return order
}
