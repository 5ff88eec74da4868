package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

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
// probability where the prior is zero gives +Inf. To spare a logarithm
// and an exponential per point where they cannot matter, prior weights
// below e^−60 of the largest are left out of the normalization (a
// relative change below n·1e-26) and p log p is dropped for p < 1e-30
// (each such term is above −7e-29); the term −p log q̂ is always kept.
func rowKL(logq, row []float64) float64 {
	top := math.Inf(-1)
	for _, a := range logq {
		top = math.Max(top, a)
	}
	var z float64
	for _, a := range logq {
		if a-top > -60 {
			z += portablemath.Exp(a - top)
		}
	}
	logZ := top + portablemath.Log(z)
	var kl float64
	for j, p := range row {
		switch {
		case p >= 1e-30:
			kl += float64(p * (portablemath.Log(p) - (logq[j] - logZ)))
		case p > 0:
			kl -= float64(p * (logq[j] - logZ))
		}
	}
	// Rounding can leave a tiny negative number for a row equal to its prior.
	return math.Max(kl, 0)
}

// scalarPriorKL returns each row's divergence from the prior of
// maxentRows on the same nodes, weights and conditional law. On a
// symmetric problem the rows and priors of states i and m−1−i are
// mirrors (maxentRows copies them), so one half is computed and copied.
func scalarPriorKL(nodes, logW []float64, law conditional, trans []float64) []float64 {
	n, m := len(nodes), len(law.Mean)
	logq := make([]float64, n)
	kl := make([]float64, m)
	mirror := m == n && scalarMirror(nodes, logW, law)
	for i := range law.Mean {
		if mirror && i > (m-1)/2 {
			kl[i] = kl[m-1-i]
			continue
		}
		for j, x := range nodes {
			z := (x - law.Mean[i]) / law.SD[i]
			if law.Shock == nil {
				logq[j] = logW[j] - float64(0.5*z*z)
			} else {
				logq[j] = logW[j] + law.Shock.LogProb(z)
			}
		}
		kl[i] = rowKL(logq, trans[i*n:(i+1)*n])
	}
	return kl
}

// vectorPriorKL does the same for maxentVectorRows, whose prior in state
// i is log q_ij = log w_j − |L⁻¹(x_j − m_i)|²/2 (fillState). L⁻¹ is
// linear, so L⁻¹x_j and L⁻¹m_i are solved once each and every pair costs
// d subtractions, not a triangular solve.
func vectorPriorKL(grid, logW []float64, law gaussianVectorLaw, trans []float64) []float64 {
	d, n := law.d, len(logW)
	from := len(law.means) / d
	y := whiten(law.chol, d, grid)
	c := whiten(law.chol, d, law.means)
	logq := make([]float64, n)
	kl := make([]float64, from)
	// Mirror states (vectorMirror, as maxentVectorRows) share a divergence.
	mirror := from == n && vectorMirror(grid, logW, law.means, d)
	for i := range kl {
		if mirror && i > (from-1)/2 {
			kl[i] = kl[from-1-i]
			continue
		}
		ci := c[i*d : (i+1)*d]
		for j := 0; j < n; j++ {
			var q float64
			for k, v := range y[j*d : (j+1)*d] {
				e := v - ci[k]
				q += float64(e * e)
			}
			logq[j] = logW[j] - q/2
		}
		kl[i] = rowKL(logq, trans[i*n:(i+1)*n])
	}
	return kl
}

// whiten returns L⁻¹v for each d-vector v of vs (row-major), with L the
// d×d lower-triangular chol, by forward substitution.
func whiten(chol []float64, d int, vs []float64) []float64 {
	out := make([]float64, len(vs))
	for off := 0; off < len(vs); off += d {
		v, z := vs[off:off+d], out[off:off+d]
		for r := 0; r < d; r++ {
			s := v[r]
			for k := 0; k < r; k++ {
				s -= float64(chol[r*d+k] * z[k])
			}
			z[r] = s / chol[r*d+r]
		}
	}
	return out
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
