package solver

import "math"

// separated reports whether the origin provably lies outside the convex
// hull of the n points dev_j (rows of the n×L matrix dev), so that no
// probability vector makes Σ_j p_j dev_j = 0 and the moment target is
// infeasible (Tanaka and Toda 2013). It runs Wolfe's (1976)
// minimum-norm-point algorithm and answers true only with a certificate: a
// hull point w with w·dev_j > 0 for every j, whose normal hyperplane
// separates the origin from the hull. false means the origin is in the
// hull (up to rounding) or no certificate was found within the iteration
// budget; the caller then relies on Newton's method to decide.
func separated(dev []float64, n, L int) bool {
	var ws wolfe
	return ws.run(dev, n, L)
}

// separator runs the same test and returns the separating direction w
// (valid until the next call), or nil when no certificate was found.
func (s *wolfe) separator(dev []float64, n, L int) []float64 {
	if s.run(dev, n, L) {
		return s.w
	}
	return nil
}

// wolfe holds the working set of Wolfe's algorithm: at most L+1 points
// whose affine minimum-norm point is sought in each minor cycle.
type wolfe struct {
	set    []int     // indices of the points in the working set
	x      []float64 // convex weights of the working set
	w      []float64 // current point Σ x_i dev_set[i]
	a, rhs []float64 // (m+1)×(m+1) system of the affine minimum-norm point
	v      []float64
}

func (s *wolfe) run(dev []float64, n, L int) bool {
	row := func(j int) []float64 { return dev[j*L : (j+1)*L] }
	var scale float64
	best := 0
	for j := 0; j < n; j++ {
		var nn float64
		for _, d := range row(j) {
			nn += float64(d * d)
		}
		scale = math.Max(scale, nn)
		if nn < dot(row(best), row(best)) {
			best = j
		}
	}
	if !(scale > 0) {
		return false
	}
	s.set = append(s.set[:0], best)
	s.x = append(s.x[:0], 1)
	s.w = append(s.w[:0], row(best)...)
	for major := 0; major < 50*(L+1); major++ {
		// Certificate or optimality: the vertex most opposed to w.
		arg, lo := -1, math.Inf(1)
		for j := 0; j < n; j++ {
			if v := dot(s.w, row(j)); v < lo {
				arg, lo = j, v
			}
		}
		ww := dot(s.w, s.w)
		if lo > 1e-12*math.Sqrt(float64(ww*scale)) && ww > 1e-24*scale {
			return true
		}
		if lo >= ww-float64(1e-12*scale) || ww <= 1e-24*scale {
			return false // w is (numerically) the minimum-norm point, at the origin
		}
		if inSet(s.set, arg) || len(s.set) > L {
			return false // no progress possible in floating point
		}
		s.set = append(s.set, arg)
		s.x = append(s.x, 0)
		for minor := 0; minor <= L+1; minor++ {
			if !s.affine(row) {
				return false
			}
			if allPositive(s.v) {
				copy(s.x, s.v)
				break
			}
			// Step from x towards v until a weight reaches zero, drop it.
			theta := 1.0
			for i, vi := range s.v {
				if vi <= 0 {
					theta = math.Min(theta, s.x[i]/(s.x[i]-vi))
				}
			}
			k := 0
			for i := range s.x {
				xi := float64((1-theta)*s.x[i]) + float64(theta*s.v[i])
				if xi > 1e-15 {
					s.set[k], s.x[k] = s.set[i], xi
					k++
				}
			}
			s.set, s.x = s.set[:k], s.x[:k]
			if k == 0 {
				return false
			}
		}
		clear(s.w)
		for i, j := range s.set {
			for k, d := range row(j) {
				s.w[k] += float64(s.x[i] * d)
			}
		}
	}
	return false
}

// affine sets s.v to the weights (summing to one) of the point of minimum
// norm in the affine hull of the working set, from the bordered system
//
//	[ PᵀP  1 ] [v]   [0]
//	[ 1ᵀ   0 ] [μ] = [1],
//
// and reports whether the system was solvable.
func (s *wolfe) affine(row func(int) []float64) bool {
	m := len(s.set)
	k := m + 1
	s.a = grow(s.a, k*k)
	s.rhs = grow(s.rhs, k)
	for i := 0; i < m; i++ {
		for j := 0; j < m; j++ {
			s.a[i*k+j] = dot(row(s.set[i]), row(s.set[j]))
		}
		s.a[i*k+m], s.a[m*k+i] = 1, 1
		s.rhs[i] = 0
	}
	s.a[m*k+m], s.rhs[m] = 0, 1
	if !gaussSolve(s.a, s.rhs, k) {
		return false
	}
	s.v = append(s.v[:0], s.rhs[:m]...)
	return true
}

// gaussSolve solves the k×k system a x = b in place (x in b) by Gaussian
// elimination with partial pivoting; it reports false for a singular a.
func gaussSolve(a, b []float64, k int) bool {
	for c := 0; c < k; c++ {
		p := c
		for r := c + 1; r < k; r++ {
			if math.Abs(a[r*k+c]) > math.Abs(a[p*k+c]) {
				p = r
			}
		}
		if !(math.Abs(a[p*k+c]) > 1e-300) {
			return false
		}
		if p != c {
			for j := 0; j < k; j++ {
				a[c*k+j], a[p*k+j] = a[p*k+j], a[c*k+j]
			}
			b[c], b[p] = b[p], b[c]
		}
		for r := c + 1; r < k; r++ {
			f := a[r*k+c] / a[c*k+c]
			if f == 0 {
				continue
			}
			for j := c; j < k; j++ {
				a[r*k+j] -= float64(f * a[c*k+j])
			}
			b[r] -= float64(f * b[c])
		}
	}
	for c := k - 1; c >= 0; c-- {
		s := b[c]
		for j := c + 1; j < k; j++ {
			s -= float64(a[c*k+j] * b[j])
		}
		b[c] = s / a[c*k+c]
	}
	return true
}

func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += float64(a[i] * b[i])
	}
	return s
}

func inSet(s []int, v int) bool {
	for _, x := range s {
		if x == v {
			return true
		}
	}
	return false
}

func allPositive(v []float64) bool {
	for _, x := range v {
		if !(x > 1e-15) {
			return false
		}
	}
	return true
}
