package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// conditional describes the law of next period's level given current state
// i: x' = Mean[i] + SD[i]·Z with Z drawn from Shock (mean 0, variance 1).
type conditional struct {
	Mean, SD []float64
	Shock    Distribution // standardized; nil means standard normal
}

// shockTargets returns the standardized moments E Z^k, k = 1..L.
func shockTargets(shock Distribution, L int) []float64 {
	t := make([]float64, L)
	for k := 1; k <= L; k++ {
		if shock == nil {
			t[k-1] = normalStdMoment(k)
		} else {
			t[k-1], _ = shock.StdMoment(k)
		}
	}
	return t
}

// fallbackLadder lists the moment counts tried in turn when L moments are
// requested: L itself, then even counts downwards, then the mean alone
// (4 → 2 → 1, 5 → 4 → 2 → 1). Moments are dropped in pairs because an odd
// moment without the even one above it leaves the tails unconstrained.
func fallbackLadder(L int) []int {
	ladder := []int{L}
	for l := L - 1; l >= 1; l-- {
		if l%2 == 0 || l == 1 {
			ladder = append(ladder, l)
		}
	}
	return ladder
}

// shockScales returns the standard deviation of z^k, k = 1..L, under the
// standardized shock: √(E z^{2k} − (E z^k)²), or the normal law's value
// where the shock lacks the moment of order 2k. They scale the smooth
// policy's penalty (smoothmatch.go).
func shockScales(shock Distribution, L int) []float64 {
	s := make([]float64, L)
	for k := 1; k <= L; k++ {
		m2k, mk := normalStdMoment(2*k), normalStdMoment(k)
		if shock != nil {
			a, okA := shock.StdMoment(2 * k)
			b, okB := shock.StdMoment(k)
			if okA && okB && a-float64(b*b) > 0 {
				m2k, mk = a, b
			}
		}
		s[k-1] = math.Sqrt(m2k - float64(mk*mk))
	}
	return s
}

// quickIter is the Newton budget before the exact feasibility test runs.
const quickIter = 12

// maxentRows fills trans (one row of len(nodes) per entry of law.Mean)
// with maximum-entropy transition rows on the given nodes, matching up to
// L conditional moments in each state under the policy match: exactly,
// falling back (see fallbackLadder) only where the next level is proven
// infeasible, or smoothly (MatchSmooth). matched
// and certs receive each state's level and certificate. States are solved
// from the middle outwards so that each warm start comes from a
// neighbour; on a symmetric problem (scalarMirror) only one half is solved
// and the other mirrored.
func maxentRows(nodes, logW []float64, law conditional, L int, match Matching, trans []float64, matched []int, certs []Certificate) {
	maxentRowsKeep(nodes, logW, law, L, match, trans, matched, certs, nil)
}

// maxentRowsKeep is maxentRows that also records, in keep (when not nil),
// every state's multipliers and which states are mirrors, for
// scalarRowSens.
func maxentRowsKeep(nodes, logW []float64, law conditional, L int, match Matching, trans []float64, matched []int, certs []Certificate, keep *rowMultipliers) {
	n, m := len(nodes), len(law.Mean)
	if keep != nil {
		// Every state unmirrored and without multipliers until solved: a
		// prior row (L = 0) stays so.
		keep.lam, keep.regH, keep.mirror = make([][]float64, m), make([][]float64, m), make([]int, m)
		for i := range keep.mirror {
			keep.mirror[i] = -1
		}
	}
	if L == 0 {
		priorRows(nodes, logW, law, trans, matched, certs)
		return
	}
	targets := shockTargets(law.Shock, L)
	logq := make([]float64, n)
	dev := make([]float64, n*L)
	z := make([]float64, n)
	policy := newPolicy(match, L, quickIter)
	order := make([]int, L)
	for k := range order {
		order[k] = k + 1
	}
	pr := &stateProblem{
		cols:  func(l int) int { return l },
		scale: shockScales(law.Shock, L),
		// The normal law's scales, whatever the shock: continuous in its
		// shape parameters (see stateProblem.penaltyScale).
		penaltyScale: shockScales(nil, L),
		order:        order,
		logq:         logq,
		ladder:       fallbackLadder(L),
		at: func(l int) ([]float64, int) {
			fillDeviations(z, targets[:l], dev[:n*l])
			return dev[:n*l], l
		},
		separator: func(l int, _ []float64, _ int) []float64 {
			y, _ := powerMomentsSeparator(z, targets[:l])
			return y
		},
	}
	solve := func(i int) {
		mi, s := law.Mean[i], law.SD[i]
		for j, x := range nodes {
			z[j] = (x - mi) / s
			if law.Shock == nil {
				logq[j] = logW[j] - float64(0.5*z[j]*z[j])
			} else {
				logq[j] = logW[j] + law.Shock.LogProb(z[j])
			}
		}
		sol := policy.solveState(pr, trans[i*n:(i+1)*n])
		matched[i], certs[i] = sol.Level, sol.Cert
		if keep != nil {
			lam, curv := policy.multipliers()
			keep.lam[i] = append([]float64(nil), lam...)
			if curv != nil {
				keep.regH[i] = append([]float64(nil), curv...)
			}
		}
	}
	mirror := scalarMirror(nodes, logW, law)
	mid := (m - 1) / 2
	for i := mid; i >= 0; i-- {
		solve(i)
		if i == mid {
			policy.stashWarm()
		}
	}
	if mirror {
		if m%2 == 1 {
			symmetrizeRow(trans[mid*n : (mid+1)*n])
		}
		for i := m / 2; i < m; i++ {
			k := m - 1 - i
			if k == i {
				continue
			}
			mirrorRow(trans[i*n:(i+1)*n], trans[k*n:(k+1)*n])
			matched[i], certs[i] = matched[k], certs[k]
			if keep != nil {
				keep.mirror[i] = k
			}
		}
		return
	}
	policy.restoreWarm()
	for i := mid + 1; i < m; i++ {
		solve(i)
	}
}

// fillDeviations sets dev[j*L+k] = z_j^{k+1} − targets[k].
func fillDeviations(z, targets, dev []float64) {
	L := len(targets)
	for j, zj := range z {
		pow := 1.0
		for k := 0; k < L; k++ {
			pow = float64(pow * zj)
			dev[j*L+k] = pow - targets[k]
		}
	}
}

// priorRow normalizes exp(logq) into row: the quadrature prior itself.
func priorRow(logq, row []float64) {
	best := math.Inf(-1)
	for _, a := range logq {
		best = math.Max(best, a)
	}
	var s float64
	for j, a := range logq {
		row[j] = portablemath.Exp(a - best)
		s += row[j]
	}
	for j := range row {
		row[j] /= s
	}
}

// priorRows fills each row with the prior of maximum entropy, normalised:
// q_j ∝ w_j f(x_j | x_i), the quadrature rule's own weights, with no
// moment matched (Settings.Moments = NoMoments).
func priorRows(nodes, logW []float64, law conditional, trans []float64, matched []int, certs []Certificate) {
	n := len(nodes)
	logq := make([]float64, n)
	for i := range law.Mean {
		top := math.Inf(-1)
		for j, x := range nodes {
			z := (x - law.Mean[i]) / law.SD[i]
			if law.Shock == nil {
				logq[j] = logW[j] - float64(0.5*z*z)
			} else {
				logq[j] = logW[j] + law.Shock.LogProb(z)
			}
			top = math.Max(top, logq[j])
		}
		row := trans[i*n : (i+1)*n]
		var sum float64
		for j := range row {
			row[j] = portablemath.Exp(logq[j] - top)
			sum += row[j]
		}
		for j := range row {
			row[j] /= sum
		}
		matched[i], certs[i] = 0, CertNone
	}
}
