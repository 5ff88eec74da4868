package solver

import "math"

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
func maxentVectorRows(grid, logW []float64, law gaussianVectorLaw, L int, match Matching, trans []float64, matched []int, certs []Certificate) {
	maxentVectorRowsKeep(grid, logW, law, L, match, trans, matched, certs, nil)
}

// maxentVectorRowsKeep is maxentVectorRows that also keeps, when keep is
// not nil, every solved state's multipliers and which states mirror
// which, for VAR.Sensitivities.
func maxentVectorRowsKeep(grid, logW []float64, law gaussianVectorLaw, L int, match Matching, trans []float64, matched []int, certs []Certificate, keep *rowMultipliers) {
	d, n := law.d, len(logW)
	full := vectorMomentCount(L, d)
	logq := make([]float64, n)
	allDev := make([]float64, n*full)
	dev := make([]float64, n*full)
	e, z := make([]float64, d), make([]float64, d)
	policy := newPolicy(match, full, vectorQuickIter)
	var ws wolfe
	scale, order := vectorMomentShapes(L, d)
	pr := &stateProblem{
		cols:   func(l int) int { return vectorMomentCount(l, d) },
		scale:  scale,
		order:  order,
		logq:   logq,
		ladder: vectorLadder(L),
		at: func(l int) ([]float64, int) {
			cols := vectorMomentCount(l, d)
			for j := 0; j < n; j++ {
				copy(dev[j*cols:(j+1)*cols], allDev[j*full:j*full+cols])
			}
			return dev[:n*cols], cols
		},
		// Wolfe's minimum-norm-point test finds a separating direction.
		separator: func(_ int, dv []float64, cols int) []float64 {
			return ws.separator(dv, n, cols)
		},
	}
	from := len(law.means) / d
	mirror := from == n && vectorMirror(grid, logW, law.means, d)
	solved := make([]bool, from)
	if keep != nil {
		keep.lam, keep.regH, keep.mirror = make([][]float64, from), make([][]float64, from), make([]int, from)
		for i := range keep.mirror {
			keep.mirror[i] = -1
		}
	}
	for _, i := range snakeOrder(from, law.axisStates, d) {
		k := from - 1 - i
		if mirror && solved[k] {
			continue
		}
		law.fillState(i, grid, logW, L, logq, allDev, e, z)
		sol := policy.solveState(pr, trans[i*n:(i+1)*n])
		matched[i], certs[i] = sol.Level, sol.Cert
		solved[i] = true
		if keep != nil {
			lam, curv := policy.multipliers()
			keep.lam[i] = append([]float64(nil), lam...)
			if curv != nil {
				keep.regH[i] = append([]float64(nil), curv...)
			}
		}
	}
	if !mirror {
		return
	}
	for i := 0; i < from; i++ {
		k := from - 1 - i
		switch {
		case k == i:
			symmetrizeRow(trans[i*n : (i+1)*n])
		case !solved[i]:
			mirrorRow(trans[i*n:(i+1)*n], trans[k*n:(k+1)*n])
			matched[i], certs[i] = matched[k], certs[k]
			if keep != nil {
				keep.mirror[i] = k
			}
		}
	}
}

// vectorMomentShapes returns, for the moment functions of level L in
// dimension d (see maxentVectorRows), their standard deviations under the
// true Gaussian law (z_k: 1; z_k z_l − δ_kl: 1, or √2 on the diagonal;
// u³: √15; u⁴ − 3: √96) and their orders.
func vectorMomentShapes(L, d int) (scale []float64, order []int) {
	add := func(s float64, o int) {
		scale = append(scale, s)
		order = append(order, o)
	}
	for k := 0; k < min(L, 1)*d; k++ {
		add(1, 1)
	}
	if L >= 2 {
		for k := 0; k < d; k++ {
			for l := k; l < d; l++ {
				if k == l {
					add(math.Sqrt2, 2)
				} else {
					add(1, 2)
				}
			}
		}
	}
	if L >= 3 {
		for k := 0; k < d; k++ {
			add(math.Sqrt(15), 3)
		}
	}
	if L >= 4 {
		for k := 0; k < d; k++ {
			add(math.Sqrt(96), 4)
		}
	}
	return scale, order
}

// fillState sets, for from-state i, the log prior weights logq (length n)
// and the deviations of every moment function of level L (allDev, n×
// vectorMomentCount(L, d)); e and z are scratch of length d.
func (law gaussianVectorLaw) fillState(i int, grid, logW []float64, L int, logq, allDev, e, z []float64) {
	d, n := law.d, len(logW)
	full := vectorMomentCount(L, d)
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
				s -= float64(law.chol[r*d+c] * z[c])
			}
			z[r] = s / law.chol[r*d+r]
			q += float64(z[r] * z[r])
		}
		logq[j] = logW[j] - q/2
		row := allDev[j*full : (j+1)*full]
		col := copy(row, z[:min(d, full)])
		if L >= 2 {
			for k := 0; k < d; k++ {
				for l := k; l < d; l++ {
					v := float64(z[k] * z[l])
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
				row[col] = float64(u * u * u)
				col++
			}
		}
		if L >= 4 {
			for k := 0; k < d; k++ {
				u := e[k] / law.sd[k]
				u = float64(u * u)
				row[col] = float64(u*u) - 3
				col++
			}
		}
	}
}

// vectorMirror reports whether the vector problem is symmetric under
// reflection through the grid's centre c: grid point j mirrors n−1−j (a
// tensor grid on symmetric axis nodes), with equal weights and
// conditional means reflected too (c + B(2c − x) = 2c − (c + Bx) when c
// is the stationary mean). The Gaussian innovation is symmetric.
func vectorMirror(grid, logW, means []float64, d int) bool {
	n := len(logW)
	var span float64
	c := make([]float64, d)
	for k := 0; k < d; k++ {
		c[k] = (grid[k] + grid[(n-1)*d+k]) / 2
		span = math.Max(span, math.Abs(grid[k]-grid[(n-1)*d+k])+math.Abs(c[k]))
	}
	tol := float64(symTol * span)
	for i := 0; i < n/2+1; i++ {
		m := n - 1 - i
		if math.Abs(logW[i]-logW[m]) > symTol*(1+math.Abs(logW[i])) {
			return false
		}
		for k := 0; k < d; k++ {
			if math.Abs(grid[i*d+k]+grid[m*d+k]-float64(2*c[k])) > tol || math.Abs(means[i*d+k]+means[m*d+k]-float64(2*c[k])) > tol {
				return false
			}
		}
	}
	return true
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
