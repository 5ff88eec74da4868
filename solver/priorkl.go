package solver

import "math"

// The Kullback-Leibler divergence of each maximum-entropy row from the
// prior it started from,
//
//	KL(p_i ‖ q_i) = Σ_j p_ij log(p_ij / q_ij),   q_ij ∝ w_j f(x_j | x_i),
//
// says how far matching the moments had to bend the quadrature rule's own
// weights: near 0 where the rule already carries the moments, large where
// the row had to be pushed towards the hull's edge. It is computed after
// the rows are solved, from the same log prior the solver used.

// rowKL returns KL(row ‖ q) for the unnormalized log prior logq: terms
// with row[j] = 0 contribute 0 (the limit of p log p), and a positive
// probability where the prior is zero gives +Inf.
func rowKL(logq, row []float64) float64 {
	top := math.Inf(-1)
	for _, a := range logq {
		top = math.Max(top, a)
	}
	var z float64
	for _, a := range logq {
		z += math.Exp(a - top)
	}
	logZ := top + math.Log(z)
	var kl float64
	for j, p := range row {
		if p > 0 {
			kl += p * (math.Log(p) - (logq[j] - logZ))
		}
	}
	// Rounding can leave a tiny negative number for a row equal to its prior.
	return math.Max(kl, 0)
}

// scalarPriorKL returns each row's divergence from the prior of
// maxentRows on the same nodes, weights and conditional law.
func scalarPriorKL(nodes, logW []float64, law conditional, trans []float64) []float64 {
	n := len(nodes)
	logq := make([]float64, n)
	kl := make([]float64, len(law.Mean))
	for i := range law.Mean {
		for j, x := range nodes {
			z := (x - law.Mean[i]) / law.SD[i]
			if law.Shock == nil {
				logq[j] = logW[j] - 0.5*z*z
			} else {
				logq[j] = logW[j] + law.Shock.LogProb(z)
			}
		}
		kl[i] = rowKL(logq, trans[i*n:(i+1)*n])
	}
	return kl
}

// vectorPriorKL does the same for maxentVectorRows.
func vectorPriorKL(grid, logW []float64, law gaussianVectorLaw, trans []float64) []float64 {
	d, n := law.d, len(logW)
	logq := make([]float64, n)
	dev := make([]float64, n*vectorMomentCount(1, d))
	e, z := make([]float64, d), make([]float64, d)
	kl := make([]float64, len(law.means)/d)
	for i := range kl {
		law.fillState(i, grid, logW, 1, logq, dev, e, z)
		kl[i] = rowKL(logq, trans[i*n:(i+1)*n])
	}
	return kl
}

// sumKL returns a[i] + b[k] for the product state (i, k), b varying
// fastest: the divergence of a product row from a product prior. It is
// nil when either part keeps none.
func sumKL(a, b []float64) []float64 {
	if a == nil || b == nil {
		return nil
	}
	out := make([]float64, 0, len(a)*len(b))
	for _, x := range a {
		for _, y := range b {
			out = append(out, x+y)
		}
	}
	return out
}
