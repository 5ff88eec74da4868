package solver

import "math"

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

// quickIter is the Newton budget before the exact feasibility test runs.
const quickIter = 12

// maxentRows fills trans (one row of len(nodes) per entry of law.Mean) with
// maximum-entropy transition rows on the given nodes, matching up to L conditional moments in each state and
// falling back (see fallbackLadder) where the full set is infeasible. matched receives
// the number of moments matched per state. The multipliers of each state
// warm-start the next.
func maxentRows(nodes, logW []float64, law conditional, L int, trans []float64, matched []int) {
	n := len(nodes)
	targets := shockTargets(law.Shock, L)
	logq := make([]float64, n)
	dev := make([]float64, n*L)
	z := make([]float64, n)
	warm := make([]float64, L)
	warmL := -1
	ladder := fallbackLadder(L)
	var dual Dual
	for i := range law.Mean {
		m, s := law.Mean[i], law.SD[i]
		for j, x := range nodes {
			z[j] = (x - m) / s
			if law.Shock == nil {
				logq[j] = logW[j] - 0.5*z[j]*z[j]
			} else {
				logq[j] = logW[j] + law.Shock.LogProb(z[j])
			}
		}
		row := trans[i*n : (i+1)*n]
		got := 0
		for _, l := range ladder {
			fillDeviations(z, targets[:l], dev[:n*l])
			var start []float64
			if warmL == l {
				start = warm[:l]
			}
			lam, ok := dual.solveOrProve(logq, dev[:n*l], l, start, row, quickIter, func() bool {
				feasible, decided := powerMomentsFeasible(z, targets[:l])
				return decided && !feasible
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

// fillDeviations sets dev[j*L+k] = z_j^{k+1} − targets[k].
func fillDeviations(z, targets, dev []float64) {
	L := len(targets)
	for j, zj := range z {
		pow := 1.0
		for k := 0; k < L; k++ {
			pow *= zj
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
		row[j] = math.Exp(a - best)
		s += row[j]
	}
	for j := range row {
		row[j] /= s
	}
}
