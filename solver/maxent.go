package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// Tolerances of the dual Newton solver. Moment errors are measured in
// standardized units (deviations divided by the conditional s.d.), so one
// tolerance serves every scale.
const (
	// dualTol is the gradient (= moment error) at which Newton stops.
	dualTol = 1e-13
	// dualAccept is the largest moment error accepted when Newton stalls at
	// the floating-point floor; anything larger counts as infeasible.
	dualAccept = 1e-11
	// dualMaxIter bounds Newton iterations. Most feasible problems converge
	// in under 15; targets close to the hull's boundary need large
	// multipliers, reached in capped steps (maxLogStep), and take longer.
	dualMaxIter = 1000
)

// Dual solves the maximum-entropy moment-matching problem for one
// distribution: given log prior weights logq (length n) and deviations
// dev (n×L row-major, dev[j*L+k] = T_k(x_j) − T̄_k), it finds
//
//	p_j ∝ q_j exp(λ·dev_j)
//
// with Σ_j p_j dev_j = 0 by minimizing the convex dual
// log Σ_j q_j exp(λ·dev_j) with Newton's method and a backtracking line
// search. A Dual reuses its buffers across calls; it is not safe for
// concurrent use. The zero value is ready to use.
type Dual struct {
	a, p, aTry, pTry, shift      []float64
	lam, grad, step, trial, chol []float64
	hess                         []float64
	lastIter                     int
}

func grow(s []float64, m int) []float64 {
	if cap(s) < m {
		return make([]float64, m)
	}
	return s[:m]
}

func (w *Dual) resize(n, L int) {
	w.a, w.p, w.aTry, w.pTry, w.shift = grow(w.a, n), grow(w.p, n), grow(w.aTry, n), grow(w.pTry, n), grow(w.shift, n)
	w.lam, w.grad, w.step, w.trial = grow(w.lam, L), grow(w.grad, L), grow(w.step, L), grow(w.trial, L)
	w.hess, w.chol = grow(w.hess, L*L), grow(w.chol, L*L)
}

// Solve runs Newton's method from the multipliers lam0 (nil or zeros for a
// cold start) and writes the probabilities into p (length n). It returns
// the multipliers (valid until the next call) and whether the moments were
// matched to within tolerance. On failure p holds the last iterate.
func (w *Dual) Solve(logq, dev []float64, L int, lam0, p []float64) (lam []float64, ok bool) {
	return w.solve(logq, dev, L, lam0, p, dualMaxIter)
}

// solve is Solve with an iteration budget.
//
// Each iteration makes one pass over the grid for the Hessian, one for the
// step's shift of every log-weight, and one per trial point of the line
// search, which also sums the moment error; trial points move along the
// shifts, so they cost one exponential per grid point.
func (w *Dual) solve(logq, dev []float64, L int, lam0, p []float64, maxIter int) (lam []float64, ok bool) {
	n := len(logq)
	if len(dev) != n*L || len(p) != n {
		panic("solver: Dual.Solve shape mismatch")
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
	if L == 0 {
		normalize(w.a, w.p)
		copy(p, w.p)
		return w.lam, true
	}
	best, sum := evaluate(w.a, w.p, dev, L, w.grad)
	f := best + portablemath.Log(sum)
	w.accept(sum)
	if !hullContainsZero(dev, n, L) {
		return w.lam, false
	}
	// A short run (the quick stage of exactMatch) ends early when it starts
	// far off (farStart) or stops gaining (quickStall): the exact tests
	// that follow it either prove the target infeasible or hand the state
	// back to Newton with the full budget from where it stopped.
	quick := maxIter < dualMaxIter
	stalled, prev := 0, math.Inf(1)
	for it := 0; it < maxIter; it++ {
		w.lastIter = it
		gmax := maxAbs(w.grad)
		if gmax <= dualTol {
			ok = true
			break
		}
		if quick && it == 0 && gmax > farStart {
			break
		}
		if quick && gmax > 0.9*prev {
			if stalled++; stalled == quickStall {
				break
			}
		} else {
			stalled = 0
		}
		prev = gmax
		w.hessian(dev, n, L)
		if !choleskySolve(w.hess, w.chol, L, w.grad, w.step) {
			if w.atFloor(dev, n, L) {
				ok = true
				break
			}
			// A numerically singular Hessian: p sits on too few points to
			// span the moment functions (a cold start at the hull's edge).
			// Levenberg-Marquardt damping keeps the step a descent
			// direction; the log-step cap below bounds its length.
			w.damp(L)
			cholSolve(w.chol, L, w.grad, w.step)
		}
		var slope float64
		for k := range w.step {
			w.step[k] = -w.step[k]
			slope += float64(w.grad[k] * w.step[k])
		}
		// Near the optimum the decrease of the dual (about slope/2) falls
		// below the rounding of f, so the Armijo test can no longer judge a
		// step; there Newton's full step is safe (quadratic convergence) and
		// is taken unchecked.
		quadratic := -slope <= 1e-10*(1+math.Abs(f))
		// Cap the step so that no log-probability rises, to first order,
		// above maxLogStep: at a nearly singular Hessian (a coarse grid, a
		// cold start at the hull's edge) the raw Newton step is huge and
		// halving it down would cost dozens of evaluations. Points that
		// fall lose mass they barely had (the line search judges the
		// rest); a point far down the tail may rise a long way before it
		// matters. The mean shift under p, Σ_j p_j s_j = slope, is what
		// the normalizer absorbs.
		t := 1.0
		for j := 0; j < n; j++ {
			var s float64
			for k, d := range dev[j*L : j*L+L] {
				s += float64(w.step[k] * d)
			}
			w.shift[j] = s
			if rise := s - slope; w.a[j]-f+float64(t*rise) > maxLogStep {
				t = (maxLogStep - (w.a[j] - f)) / rise
			}
		}
		accepted := false
		for ls := 0; ls < 40; ls++ {
			for j, a := range w.a {
				w.aTry[j] = a + float64(t*w.shift[j])
			}
			best, sum := evaluate(w.aTry, w.pTry, dev, L, w.trial)
			ft := best + portablemath.Log(sum)
			if ft <= f+float64(1e-4*t*slope) || quadratic {
				f = ft
				w.a, w.aTry = w.aTry, w.a
				w.p, w.pTry = w.pTry, w.p
				w.grad, w.trial = w.trial, w.grad
				w.accept(sum)
				for k := range w.lam {
					w.lam[k] += float64(t * w.step[k])
				}
				accepted = true
				break
			}
			t /= 2
		}
		if !accepted {
			// No decrease is possible: either converged to the floating-point
			// floor or the dual is unbounded below (infeasible target).
			w.moments(dev, n, L)
			ok = w.atFloor(dev, n, L)
			break
		}
	}
	copy(p, w.p)
	return w.lam, ok && allFinite(p)
}

// quickStall is the number of iterations in a row, each leaving the moment
// error above 0.9 times the one before, that end a short Newton run.
const quickStall = 2

// farStart is the moment error (in standard deviations of the moment
// functions) of a start so far off that a short run leaves it to the exact
// tests at once: typically a neighbour's multipliers carried to an edge
// state whose target lies outside the grid's moment hull (at ρ = 0.9,
// N = 9 and 21 with 4 moments, the edge states start at 2e4 and 1e5 and
// Newton only circles).
const farStart = 100

// atFloor reports whether the moment error w.grad is as small as the
// rounding of its sums allows: |g_k| ≤ dualAccept, or within 2¹⁰ ulps of
// Σ_j p_j |dev_jk| (high powers of far grid points, as with 8 moments,
// have sums whose rounding exceeds dualAccept).
func (w *Dual) atFloor(dev []float64, n, L int) bool {
	for k := 0; k < L; k++ {
		g := math.Abs(w.grad[k])
		if g <= dualAccept {
			continue
		}
		var size float64
		for j := 0; j < n; j++ {
			size += float64(w.p[j] * math.Abs(dev[j*L+k]))
		}
		if !(g <= 0x1p-42*size) {
			return false
		}
	}
	return true
}

// damp adds μ·(diag H + ν) to the Hessian, with μ raised until the
// Cholesky factorization succeeds; ν keeps the damping positive where a
// diagonal entry vanished (every weight but one underflowed).
func (w *Dual) damp(L int) {
	var scale float64
	for r := 0; r < L; r++ {
		scale = math.Max(scale, w.hess[r*L+r])
	}
	nu := math.Max(scale, 1e-300)
	for mu := 1e-12; ; mu = float64(mu * 100) {
		for r := 0; r < L; r++ {
			w.trial[r] = w.hess[r*L+r]
			w.hess[r*L+r] += float64(mu * (w.hess[r*L+r] + nu))
		}
		if cholesky(w.hess, w.chol, L) || mu > 1e30 {
			return
		}
		for r := 0; r < L; r++ {
			w.hess[r*L+r] = w.trial[r]
		}
	}
}

// normalize sets p_j = exp(a_j)/Σ exp(a) and returns log Σ exp(a),
// computed stably around the largest a_j.
func normalize(a, p []float64) float64 {
	best := math.Inf(-1)
	for _, x := range a {
		if x > best {
			best = x
		}
	}
	var s float64
	for j, x := range a {
		e := portablemath.Exp(x - best)
		p[j] = e
		s += e
	}
	inv := 1 / s
	for j := range p {
		p[j] = float64(p[j] * inv)
	}
	return best + portablemath.Log(s)
}

// moments sets w.grad = Σ_j p_j dev_j (the current moment error) and the
// lower triangle of w.hess = Σ_j p_j dev_j dev_jᵀ − g gᵀ (the covariance of
// the moment functions under p) in one pass. The uncentred form loses
// digits when g is large against the spread of the moment functions (far
// from the optimum, or where p sits almost wholly on one point, as at the
// hull's edge); when a diagonal entry keeps fewer than about eight of its
// sixteen digits, the covariance is recomputed about g in a second pass.
func (w *Dual) moments(dev []float64, n, L int) {
	clear(w.grad)
	clear(w.hess)
	for j := 0; j < n; j++ {
		pj := w.p[j]
		if pj == 0 {
			continue
		}
		row := dev[j*L : j*L+L]
		for r := 0; r < L; r++ {
			dr := float64(pj * row[r])
			w.grad[r] += dr
			for c := 0; c <= r; c++ {
				w.hess[r*L+c] += float64(dr * row[c])
			}
		}
	}
	w.finishHessian(dev, n, L)
}

// finishHessian turns the lower triangle of w.hess from the second moments
// Σ_j p_j dev_j dev_jᵀ into the covariance about g = w.grad. The
// uncentred form loses digits when g is large against the spread of the
// moment functions (far from the optimum, or where p sits almost wholly on
// one point, as at the hull's edge); when a diagonal entry keeps fewer than
// about eight of its sixteen digits, the covariance is recomputed about g
// in a second pass over every point (centredHessian).
func (w *Dual) finishHessian(dev []float64, n, L int) {
	cancelled := false
	for r := 0; r < L; r++ {
		raw := w.hess[r*L+r]
		for c := 0; c <= r; c++ {
			w.hess[r*L+c] -= float64(w.grad[r] * w.grad[c])
		}
		cancelled = cancelled || !(w.hess[r*L+r] > 1e-8*raw)
	}
	if cancelled {
		w.centredHessian(dev, n, L)
	}
}

// centredHessian recomputes w.hess as Σ_j p_j (dev_j − g)(dev_j − g)ᵀ,
// which has no cancellation.
func (w *Dual) centredHessian(dev []float64, n, L int) {
	clear(w.hess)
	for j := 0; j < n; j++ {
		pj := w.p[j]
		if pj == 0 {
			continue
		}
		row := dev[j*L : j*L+L]
		for r := 0; r < L; r++ {
			dr := float64(pj * (row[r] - w.grad[r]))
			for c := 0; c <= r; c++ {
				w.hess[r*L+c] += float64(dr * (row[c] - w.grad[c]))
			}
		}
	}
}

// hullContainsZero is a cheap necessary condition for feasibility: every
// moment deviation must take both signs (or vanish) across the grid.
func hullContainsZero(dev []float64, n, L int) bool {
	for k := 0; k < L; k++ {
		neg, pos := false, false
		for j := 0; j < n; j++ {
			d := dev[j*L+k]
			neg = neg || d < 0
			pos = pos || d > 0
		}
		if !(neg && pos) {
			return false
		}
	}
	return true
}

// cholesky factors the lower triangle of the L×L matrix a into l (a = l lᵀ)
// and reports whether a is numerically positive definite.
func cholesky(a, l []float64, L int) bool {
	clear(l)
	for r := 0; r < L; r++ {
		for c := 0; c <= r; c++ {
			s := a[r*L+c]
			for k := 0; k < c; k++ {
				s -= float64(l[r*L+k] * l[c*L+k])
			}
			if r == c {
				if !(s > 1e-300) || s <= 1e-14*a[r*L+r] {
					return false
				}
				l[r*L+r] = math.Sqrt(s)
			} else {
				l[r*L+c] = s / l[c*L+c]
			}
		}
	}
	return true
}

// cholSolve solves l lᵀ x = b.
func cholSolve(l []float64, L int, b, x []float64) {
	for r := 0; r < L; r++ {
		s := b[r]
		for k := 0; k < r; k++ {
			s -= float64(l[r*L+k] * x[k])
		}
		x[r] = s / l[r*L+r]
	}
	for r := L - 1; r >= 0; r-- {
		s := x[r]
		for k := r + 1; k < L; k++ {
			s -= float64(l[k*L+r] * x[k])
		}
		x[r] = s / l[r*L+r]
	}
}

// maxLogStep bounds, to first order, the log-probability any point may
// reach in one Newton step: a point near probability one rises by at most
// maxLogStep, one far down the tail further (the cap was tuned on AR(1) chains with ρ from 0.5 to 0.99: smaller caps slow the
// far-from-optimum phase, larger ones waste evaluations on overflowing
// trial points).
const maxLogStep = 50.0

func maxAbs(v []float64) float64 {
	var m float64
	for _, x := range v {
		if a := math.Abs(x); a > m || math.IsNaN(x) {
			m = a
		}
	}
	return m
}

func allFinite(v []float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}
