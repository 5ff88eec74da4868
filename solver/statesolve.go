package solver

// stateProblem is one state's moment-matching problem: the log prior
// weights of the row and, for each level of the fallback ladder, the
// moment functions' deviations from their targets.
type stateProblem struct {
	logq []float64
	// ladder lists the levels tried, from the requested one down (see
	// fallbackLadder); the last is the mean alone.
	ladder []int
	// at returns the deviations (n×cols, row-major) of level l; the slice
	// may be reused by the next call.
	at func(l int) (dev []float64, cols int)
	// separator returns a candidate direction proving level l infeasible
	// (an exact test specific to the moment functions), or nil.
	separator func(l int, dev []float64, cols int) []float64
	// cols returns the number of moment functions of level l; they are
	// the first columns of the top level's.
	cols func(l int) int
	// scale and order describe the top level's moment functions: the
	// standard deviation of each under the true conditional law, and its
	// order (1 for a mean, 2 for a second moment, …). The smooth policy
	// scales its penalty by penaltyScale when set, else by scale.
	scale []float64
	order []int
	// penaltyScale, when set, replaces scale in the smooth policy's
	// penalty: a scale that must not depend on the law's shape, since the
	// chain would then jump wherever a moment of the law ceases to exist
	// (a Student t's m_2k as ν falls to 2k: scale falls back to the
	// normal's there).
	penaltyScale []float64
}

// stateSolution is what a policy reports for one state.
type stateSolution struct {
	// Level is the ladder level matched (0: not even the mean; the row is
	// the prior).
	Level int
	// Cert says why no higher level was matched, or that the requested
	// level was.
	Cert Certificate
}

// matchPolicy turns one state's problem into a transition row: the exact
// maximum-entropy policy (exactMatch) or the smooth one (smoothMatch). A
// policy is used for the states of one chain in turn, so it may carry warm starts
// from state to state, and is not safe for concurrent use.
type matchPolicy interface {
	// solveState writes the row (length len(pr.logq)) and reports the
	// level matched with its certificate.
	solveState(pr *stateProblem, row []float64) stateSolution
	// stashWarm keeps the current warm start aside; restoreWarm makes it
	// current again (to go on from a state other than the last solved).
	stashWarm()
	restoreWarm()
	// multipliers returns the multipliers of the last state solved (one
	// per moment function of the level it matched; empty for a prior row)
	// and the curvature the policy added to the dual's Hessian there (nil
	// for none). Both are views valid until the next solve.
	multipliers() (lam, curvature []float64)
}

// exactMatch is maximum-entropy matching with exact moment constraints
// (Tanaka and Toda 2013): the largest ladder level with a strictly
// feasible target is matched, and every level skipped carries a proof of
// infeasibility (certificate.go).
type exactMatch struct {
	dual          Dual
	warm, stash   []float64
	warmL, stashL int
	quick         int // Newton budget before the exact tests run
	neg           []float64
	lastCols      int // columns of the last state's multipliers (in warm)
}

var _ matchPolicy = (*exactMatch)(nil)

func newExactMatch(maxCols, quick int) *exactMatch {
	return &exactMatch{warm: make([]float64, maxCols), stash: make([]float64, maxCols), warmL: -1, stashL: -1,
		quick: quick, neg: make([]float64, maxCols)}
}

func (m *exactMatch) stashWarm() {
	copy(m.stash, m.warm)
	m.stashL = m.warmL
}

func (m *exactMatch) restoreWarm() {
	copy(m.warm, m.stash)
	m.warmL = m.stashL
}

func (m *exactMatch) multipliers() (lam, curvature []float64) { return m.warm[:m.lastCols], nil }

// solveState runs the staged solve at each level in turn: a short Newton
// run from the warm start, which settles every target away from the hull's
// boundary; then the exact separation test, whose direction must pass
// infeasibleAt; then Newton with the full budget from where it stopped and
// from a cold start; then the directions Newton diverged along.
func (m *exactMatch) solveState(pr *stateProblem, row []float64) stateSolution {
	n := len(pr.logq)
	proven := true // every level above the current one is proven infeasible
	for idx, l := range pr.ladder {
		dev, cols := pr.at(l)
		var start []float64
		if m.warmL == l {
			start = m.warm[:cols]
		}
		lam, ok := m.dual.solve(pr.logq, dev, cols, start, row, m.quick)
		if !ok {
			if m.provenInfeasible(pr, l, dev, cols, n) {
				continue
			}
			if lam, ok = m.dual.solve(pr.logq, dev, cols, lam, row, dualMaxIter); !ok {
				lam, ok = m.dual.solve(pr.logq, dev, cols, nil, row, dualMaxIter)
			}
		}
		if ok {
			copy(m.warm, lam)
			m.warmL = l
			m.lastCols = cols
			cert := CertSolved
			if idx > 0 {
				cert = CertInfeasible
				if !proven {
					cert = CertUnproven
				}
			}
			return stateSolution{Level: l, Cert: cert}
		}
		if !m.divergedInfeasible(dev, cols, n, lam) {
			proven = false
		}
	}
	priorRow(pr.logq, row)
	m.warmL = -1
	m.lastCols = 0
	cert := CertInfeasible
	if !proven {
		cert = CertUnproven
	}
	return stateSolution{Level: 0, Cert: cert}
}

// provenInfeasible tries the cheap certificates of level l: a moment
// function of one sign on the whole grid, then the problem's exact test.
func (m *exactMatch) provenInfeasible(pr *stateProblem, l int, dev []float64, cols, n int) bool {
	if y := coordinateSeparator(dev, n, cols, m.neg); y != nil && infeasibleAt(dev, n, cols, y) {
		return true
	}
	if pr.separator == nil {
		return false
	}
	y := pr.separator(l, dev, cols)
	return y != nil && infeasibleAt(dev, n, cols, y)
}

// divergedInfeasible checks the directions a failed Newton run points
// along: the dual log Σ q_j exp(λ·dev_j) decreases without bound along −y
// for a separating y, so −λ, and the last moment error E_p dev (a point of
// the hull near its part closest to the target), are candidates.
func (m *exactMatch) divergedInfeasible(dev []float64, cols, n int, lam []float64) bool {
	for k := 0; k < cols; k++ {
		m.neg[k] = -lam[k]
	}
	if infeasibleAt(dev, n, cols, m.neg[:cols]) {
		return true
	}
	m.dual.moments(dev, n, cols)
	return infeasibleAt(dev, n, cols, m.dual.grad[:cols])
}

// coordinateSeparator returns ±e_k (in buf) for a moment function k that
// takes one sign on the whole grid, or nil.
func coordinateSeparator(dev []float64, n, L int, buf []float64) []float64 {
	for k := 0; k < L; k++ {
		neg, pos := false, false
		for j := 0; j < n; j++ {
			d := dev[j*L+k]
			neg = neg || d < 0
			pos = pos || d > 0
		}
		if neg && pos {
			continue
		}
		clear(buf[:L])
		buf[k] = 1
		if neg {
			buf[k] = -1
		}
		return buf[:L]
	}
	return nil
}
