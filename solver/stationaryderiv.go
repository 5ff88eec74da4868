package solver

// stationaryDeriv returns the stationary law π of the n×n chain trans and
// its derivatives dπ_k = π dP_k (I − P + 1π)⁻¹ along each dTrans[k]
// (Kemeny and Snell 1960; Schweitzer 1968).
//
// For an irreducible chain the systems x (I − P) = π dP_k are solved with
// the Grassmann-Taksar-Heyman elimination (gthReduce): the right-hand side
// is reduced with the same censored rows, x is back-substituted with the
// component of the state eliminated last set to zero, and the multiple of
// π that makes Σ dπ = 0 is added back. That is O(n²) per parameter after
// the one O(n³) elimination π needs anyway, with no pivoting and no
// condition estimate: the pivots s_k are sums of probabilities, the same
// positive numbers GTH divides by. The state eliminated last must carry
// much of the stationary mass: x = dπ − (dπ_r/π_r) π, so a tail state
// (π_r of 1e-38 on a Gauss-Hermite grid) would leave x all cancellation.
// It is chosen as the state with the largest column sum of P (one step
// of the power method from the uniform law), and chosen again from π
// itself if that guess holds less than 1e-3 of the largest π_j. A
// reducible chain with a unique stationary law takes a pivoted LU of
// I − P + 1π instead.
func stationaryDeriv(trans []float64, n int, dTrans [][]float64) ([]float64, [][]float64, error) {
	if !Classify(trans, n).Irreducible {
		pi, err := Stationary(trans, n)
		if err != nil {
			return nil, nil, err
		}
		d, err := stationaryDerivLU(trans, pi, dTrans)
		return pi, d, err
	}
	ref := 0
	var best float64
	for j := 0; j < n; j++ {
		var s float64
		for i := 0; i < n; i++ {
			s += trans[i*n+j]
		}
		if s > best {
			ref, best = j, s
		}
	}
	pi, a, err := gthAbout(trans, n, ref)
	if err != nil {
		return nil, nil, err
	}
	top := 0
	for j, v := range pi {
		if v > pi[top] {
			top = j
		}
	}
	if pi[ref] < 1e-3*pi[top] {
		ref = top
		if pi, a, err = gthAbout(trans, n, ref); err != nil {
			return nil, nil, err
		}
	}
	pivot := make([]float64, n)
	for k := 1; k < n; k++ {
		var s float64
		for j := 0; j < k; j++ {
			s += a[k*n+j]
		}
		pivot[k] = s
	}
	out := make([][]float64, len(dTrans))
	b := make([]float64, n)
	x := make([]float64, n)
	for t, dp := range dTrans {
		// b = π dP in the order of the elimination (ref and 0 swapped).
		clear(b)
		for i, pii := range pi {
			if pii == 0 {
				continue
			}
			row := dp[i*n : (i+1)*n]
			for j, v := range row {
				b[j] += float64(pii * v)
			}
		}
		b[0], b[ref] = b[ref], b[0]
		// Eliminate states n−1, …, 1 from the right-hand side: after step
		// k, b_k/s_k is the part of x_k not due to the states before k.
		for k := n - 1; k >= 1; k-- {
			b[k] /= pivot[k]
			bk := b[k]
			if bk == 0 {
				continue
			}
			for j := 0; j < k; j++ {
				b[j] += float64(bk * a[k*n+j])
			}
		}
		x[0] = 0
		var total float64
		for k := 1; k < n; k++ {
			s := b[k]
			for i := 0; i < k; i++ {
				s += float64(x[i] * a[i*n+k])
			}
			x[k] = s
			total += s
		}
		x[0], x[ref] = x[ref], x[0]
		d := make([]float64, n)
		for j := range d {
			d[j] = x[j] - float64(total*pi[j])
		}
		out[t] = d
	}
	return pi, out, nil
}

// gthAbout runs gthReduce on trans with states 0 and ref swapped, so that
// ref is eliminated last. It returns π in the original order and the
// reduced matrix in the swapped one.
func gthAbout(trans []float64, n, ref int) ([]float64, []float64, error) {
	m := trans
	if ref != 0 {
		m = make([]float64, n*n)
		swap := func(i int) int {
			switch i {
			case 0:
				return ref
			case ref:
				return 0
			}
			return i
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				m[i*n+j] = trans[swap(i)*n+swap(j)]
			}
		}
	}
	pi, a, err := gthReduce(m, n)
	if err != nil {
		return nil, nil, ErrNearlyDecomposable
	}
	pi[0], pi[ref] = pi[ref], pi[0]
	return pi, a, nil
}

// stationaryDerivLU is stationaryDeriv through a pivoted LU of
// (I − P + 1π)ᵀ, for chains with transient states.
func stationaryDerivLU(trans, pi []float64, dTrans [][]float64) ([][]float64, error) {
	n := len(pi)
	a := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := pi[j] - trans[i*n+j]
			if i == j {
				v++
			}
			a[j*n+i] = v // transposed: solve Aᵀ xᵀ = bᵀ
		}
	}
	f, err := luFactor(a, n)
	if err != nil {
		return nil, err
	}
	out := make([][]float64, len(dTrans))
	b := make([]float64, n)
	for k, dp := range dTrans {
		for j := 0; j < n; j++ {
			var s float64
			for i := 0; i < n; i++ {
				s += float64(pi[i] * dp[i*n+j])
			}
			b[j] = s
		}
		out[k] = f.solve(b)
	}
	return out, nil
}
