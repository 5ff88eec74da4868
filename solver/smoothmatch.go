package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// Constants of the smooth policy's penalty (smoothdual.go), in scaled
// units μ_k = s_k λ_k, where s_k is the standard deviation of moment
// function k under the true conditional law: the scaled moment error is
// smoothEps·Λ_k·sinh(μ_k/Λ_k).
const (
	// smoothEps sets the error while the multiplier is moderate: below
	// 1e-11 for |μ_k| ≤ 5Λ_k.
	smoothEps = 1e-13
	// smoothBend is Λ_k of the highest moment order; each order below it
	// multiplies Λ_k by smoothOrderRatio, so that where the moments cannot
	// all be carried the higher ones give way first, as in the exact
	// policy's ladder.
	smoothBend = 12.0
	// smoothOrderRatio is the factor between Λ_k of successive orders.
	// Larger factors protect the lower moments more but let their
	// multipliers grow to millions on grids far coarser than the shock,
	// where Newton's method then stalls at the rounding floor; 4 kept
	// every state of the continuity sweeps (smooth_test.go) converged.
	smoothOrderRatio = 4.0
	// smoothMatchTol is the largest moment error, in the standardized units
	// of the moment functions, that counts a moment as matched.
	smoothMatchTol = 1e-9
)

// smoothMatch is the smooth matching policy (MatchSmooth): every state
// solves the relaxed dual at the requested level; no state drops moments,
// and the levels reported are those matched to within smoothMatchTol.
type smoothMatch struct {
	dual  smoothDual
	b, c  []float64
	tol   []float64
	warm  []float64
	stash []float64
	warmL int
	stshL int
	// lam and curv are the last solution's multipliers and the penalty's
	// curvature there (for sensitivities); cols is their length.
	lam, curv []float64
	cols      int
}

var _ matchPolicy = (*smoothMatch)(nil)

func newSmoothMatch(maxCols int) *smoothMatch {
	return &smoothMatch{b: make([]float64, maxCols), c: make([]float64, maxCols), tol: make([]float64, maxCols),
		warm: make([]float64, maxCols), stash: make([]float64, maxCols), lam: make([]float64, maxCols), curv: make([]float64, maxCols),
		warmL: -1, stshL: -1}
}

func (m *smoothMatch) stashWarm() {
	copy(m.stash, m.warm)
	m.stshL = m.warmL
}

func (m *smoothMatch) multipliers() (lam, curvature []float64) {
	return m.lam[:m.cols], m.curv[:m.cols]
}

func (m *smoothMatch) restoreWarm() {
	copy(m.warm, m.stash)
	m.warmL = m.stshL
}

// penaltyShape sets b and c for the columns of level l from the problem's
// scales and moment orders.
func (m *smoothMatch) penaltyShape(pr *stateProblem, cols int) {
	top := 0
	for _, o := range pr.order[:cols] {
		top = max(top, o)
	}
	scale := pr.scale
	if pr.penaltyScale != nil {
		scale = pr.penaltyScale
	}
	for k := 0; k < cols; k++ {
		bend := float64(smoothBend * portablemath.Pow(smoothOrderRatio, float64(top-pr.order[k])))
		m.b[k] = bend / scale[k]
		m.c[k] = float64(smoothEps * bend * bend)
		// The exact dual's tolerance, in the scaled units of the moment.
		m.tol[k] = float64(dualTol * pr.scale[k])
	}
}

func (m *smoothMatch) solveState(pr *stateProblem, row []float64) stateSolution {
	l := pr.ladder[0]
	dev, cols := pr.at(l)
	m.penaltyShape(pr, cols)
	var start []float64
	if m.warmL == l {
		start = m.warm[:cols]
	}
	lam, ok := m.dual.solve(pr.logq, dev, cols, m.b[:cols], m.c[:cols], m.tol[:cols], start, row)
	if !ok {
		// A cold start succeeds where a far warm start stalled.
		lam, ok = m.dual.solve(pr.logq, dev, cols, m.b[:cols], m.c[:cols], m.tol[:cols], nil, row)
	}
	copy(m.lam, lam)
	copy(m.curv, m.dual.regH[:cols])
	m.cols = cols
	if ok {
		copy(m.warm, lam)
		m.warmL = l
	} else {
		m.warmL = -1
	}
	// The level reported is the highest whose moments all lie within
	// smoothMatchTol: nothing the relaxation gave up is hidden.
	level := 0
	for _, lv := range pr.ladder {
		if m.errorsWithin(dev, cols, pr.cols(lv), row) {
			level = lv
			break
		}
	}
	cert := CertSolved
	switch {
	case !ok:
		cert = CertUnproven
	case level < l:
		cert = CertRelaxed
	}
	return stateSolution{Level: level, Cert: cert}
}

// errorsWithin reports whether the first k of the cols moment errors of
// row are within smoothMatchTol.
func (m *smoothMatch) errorsWithin(dev []float64, cols, k int, row []float64) bool {
	n := len(row)
	for col := 0; col < k; col++ {
		var e float64
		for j := 0; j < n; j++ {
			e += float64(row[j] * dev[j*cols+col])
		}
		if !(math.Abs(e) <= smoothMatchTol) {
			return false
		}
	}
	return true
}
