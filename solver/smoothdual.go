package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// The relaxed dual of the smooth matching policy.
//
// The exact dual min_λ log Σ_j q_j exp(λ·dev_j) has a minimizer only when
// the target lies inside the hull of the moment vectors dev_j; as a
// parameter carries the target towards the hull's boundary the
// multipliers diverge, and beyond it the exact policy must drop moments,
// which makes the chain jump. The smooth policy minimizes instead
//
//	F(λ) = log Σ_j q_j exp(λ·dev_j) + Σ_k c_k (cosh(λ_k/b_k) − 1),
//
// which is strictly convex and coercive for every target, so its
// minimizer exists, is unique and, by the implicit function theorem, is
// an analytic function of everything q and dev depend on. At the
// minimizer the moment error is
//
//	E_p dev_k = −(c_k/b_k) sinh(λ_k/b_k),
//
// which is negligible (below 1e-11 in standardized units) while |λ_k| is a
// few multiples of b_k, as it is wherever the target has a clear margin
// inside the hull, and grows smoothly once the multiplier would otherwise
// run off. By Fenchel duality the primal is the Kullback-Leibler
// divergence from q plus a penalty on each moment error e_k whose slope
// grows like b_k·log|e_k|: nearly an ℓ1 penalty (exact penalty functions,
// Fletcher 1987, ch. 14; the relaxed maximum-entropy duals of Dudík,
// Phillips and Schapire 2007), made smooth so that the solution is
// differentiable.

// smoothDual solves the relaxed dual by Newton's method with a
// backtracking line search; it reuses its buffers and is not safe for
// concurrent use. The zero value is ready to use.
type smoothDual struct {
	a, p, aTry, pTry, shift []float64
	lam, grad, hess, chol   []float64
	step, lamTry, regH      []float64
	iters                   int
}

// smoothMaxIter bounds Newton iterations of the relaxed dual. The dual is
// strictly convex and warm-started from a neighbouring state, so most
// solves take 3 to 10; targets just past the hull's boundary take more.
const smoothMaxIter = 500

func (w *smoothDual) resize(n, L int) {
	w.a, w.p, w.aTry, w.pTry, w.shift = grow(w.a, n), grow(w.p, n), grow(w.aTry, n), grow(w.pTry, n), grow(w.shift, n)
	w.lam, w.grad, w.step, w.lamTry, w.regH = grow(w.lam, L), grow(w.grad, L), grow(w.step, L), grow(w.lamTry, L), grow(w.regH, L)
	w.hess, w.chol = grow(w.hess, L*L), grow(w.chol, L*L)
}

// penalty returns Σ_k c_k (cosh(λ_k/b_k) − 1) (+Inf on overflow).
func penalty(lam, b, c []float64) float64 {
	var s float64
	for k, l := range lam {
		s += float64(c[k] * (portablemath.Cosh(l/b[k]) - 1))
	}
	return s
}

// solve minimizes F from lam0 (nil for zeros) and writes p. It returns the
// multipliers (valid until the next call) and whether every component k of
// the gradient of F reached tol[k].
func (w *smoothDual) solve(logq, dev []float64, L int, b, c, tol, lam0, p []float64) ([]float64, bool) {
	n := len(logq)
	if len(dev) != n*L || len(p) != n || len(b) < L || len(c) < L || len(tol) < L {
		panic("solver: smoothDual.solve shape mismatch")
	}
	w.resize(n, L)
	if lam0 != nil {
		copy(w.lam, lam0)
	} else {
		clear(w.lam)
	}
	for j := range w.a {
		a := logq[j]
		for k, d := range dev[j*L : j*L+L] {
			a += float64(w.lam[k] * d)
		}
		w.a[j] = a
	}
	f := normalize(w.a, w.p) + penalty(w.lam, b, c)
	ok := L == 0
	prevG := math.Inf(1)
	for it := 0; it < smoothMaxIter && L > 0; it++ {
		w.iters = it
		w.gradHess(dev, n, L, b, c)
		if w.converged(L, tol) {
			ok = true
			break
		}
		// Newton converges quadratically on this strictly convex dual;
		// a gradient that stops shrinking has reached the rounding floor
		// of its sums (large multipliers, far grid points).
		g := maxAbs(w.grad[:L])
		if g > prevG/2 && w.atFloor(dev, n, L, b, c) {
			ok = true
			break
		}
		prevG = g
		if !cholesky(w.hess, w.chol, L) {
			w.dampHess(L)
		}
		cholSolve(w.chol, L, w.grad, w.step)
		var slope float64
		for k := range w.step {
			w.step[k] = -w.step[k]
			slope += float64(w.grad[k] * w.step[k])
		}
		quadratic := -slope <= 1e-10*(1+math.Abs(f))
		var lse float64 = f - penalty(w.lam, b, c)
		t := 1.0
		for j := 0; j < n; j++ {
			var s float64
			for k, d := range dev[j*L : j*L+L] {
				s += float64(w.step[k] * d)
			}
			w.shift[j] = s
			if rise := s - slope; w.a[j]-lse+float64(t*rise) > maxLogStep {
				t = (maxLogStep - (w.a[j] - lse)) / rise
			}
		}
		accepted := false
		for ls := 0; ls < 60; ls++ {
			for k := range w.lamTry[:L] {
				w.lamTry[k] = w.lam[k] + float64(t*w.step[k])
			}
			for j, a := range w.a {
				w.aTry[j] = a + float64(t*w.shift[j])
			}
			ft := normalize(w.aTry, w.pTry) + penalty(w.lamTry[:L], b, c)
			if ft <= f+float64(1e-4*t*slope) || (quadratic && !math.IsInf(ft, 1)) {
				f = ft
				w.a, w.aTry = w.aTry, w.a
				w.p, w.pTry = w.pTry, w.p
				copy(w.lam, w.lamTry[:L])
				accepted = true
				break
			}
			t /= 2
		}
		if !accepted {
			w.gradHess(dev, n, L, b, c)
			ok = w.atFloor(dev, n, L, b, c)
			break
		}
	}
	copy(p, w.p)
	return w.lam[:L], ok && allFinite(p)
}

// gradHess sets w.grad = E_p dev + r'(λ) and the lower triangle of
// w.hess = Cov_p(dev) + diag h(λ), h the penalty's second derivative,
// kept in w.regH.
func (w *smoothDual) gradHess(dev []float64, n, L int, b, c []float64) {
	clear(w.grad)
	clear(w.hess)
	for j := 0; j < n; j++ {
		pj := w.p[j]
		if pj == 0 {
			continue
		}
		row := dev[j*L : j*L+L]
		for r := 0; r < L; r++ {
			w.grad[r] += float64(pj * row[r])
		}
	}
	// The centred form has no cancellation, which matters here: near the
	// hull's boundary the covariance is tiny against the raw moments.
	for j := 0; j < n; j++ {
		pj := w.p[j]
		if pj == 0 {
			continue
		}
		row := dev[j*L : j*L+L]
		for r := 0; r < L; r++ {
			dr := float64(pj * (row[r] - w.grad[r]))
			for col := 0; col <= r; col++ {
				w.hess[r*L+col] += float64(dr * (row[col] - w.grad[col]))
			}
		}
	}
	for k := 0; k < L; k++ {
		x := w.lam[k] / b[k]
		w.grad[k] += float64(c[k] / b[k] * portablemath.Sinh(x))
		h := float64(c[k] / (b[k] * b[k]) * portablemath.Cosh(x))
		w.regH[k] = h
		w.hess[k*L+k] += h
	}
}

// converged reports whether every gradient component is within its
// tolerance.
func (w *smoothDual) converged(L int, tol []float64) bool {
	for k := 0; k < L; k++ {
		if !(math.Abs(w.grad[k]) <= tol[k]) {
			return false
		}
	}
	return true
}

// dampHess adds to the diagonal until the Cholesky factorization succeeds
// (the Hessian is positive definite in exact arithmetic; rounding can
// hide it when the covariance is many orders above the penalty's share).
func (w *smoothDual) dampHess(L int) {
	var scale float64
	for r := 0; r < L; r++ {
		scale = math.Max(scale, w.hess[r*L+r])
	}
	for mu := 1e-14; ; mu = float64(mu * 10) {
		for r := 0; r < L; r++ {
			w.hess[r*L+r] += float64(mu * scale)
		}
		if cholesky(w.hess, w.chol, L) || mu > 1 {
			return
		}
	}
}

// atFloor reports whether the gradient is as small as the rounding of its
// two terms, E_p dev_k and r'_k(λ_k), allows: within 2¹² ulps of
// Σ_j p_j |dev_jk| + |r'_k|.
func (w *smoothDual) atFloor(dev []float64, n, L int, b, c []float64) bool {
	for k := 0; k < L; k++ {
		g := math.Abs(w.grad[k])
		if g <= dualAccept {
			continue
		}
		size := math.Abs(float64(c[k] / b[k] * portablemath.Sinh(w.lam[k]/b[k])))
		for j := 0; j < n; j++ {
			size += float64(w.p[j] * math.Abs(dev[j*L+k]))
		}
		if !(g <= 0x1p-40*size) {
			return false
		}
	}
	return true
}
