package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// Mixture is a finite mixture of normal distributions: with probability
// Weights[c] a draw from N(Means[c], SDs[c]²). Weights must sum to one.
type Mixture struct {
	Weights, Means, SDs []float64
}

func (d Mixture) LogProb(x float64) float64 {
	// log-sum-exp over components keeps far tails finite.
	best := math.Inf(-1)
	logs := make([]float64, len(d.Weights))
	for c := range d.Weights {
		logs[c] = portablemath.Log(d.Weights[c]) + Normal{d.Means[c], d.SDs[c]}.LogProb(x)
		best = math.Max(best, logs[c])
	}
	if math.IsInf(best, -1) {
		return best
	}
	var s float64
	for _, l := range logs {
		s += portablemath.Exp(l - best)
	}
	return best + portablemath.Log(s)
}

func (d Mixture) CDF(x float64) float64 {
	var s float64
	for c := range d.Weights {
		s += float64(d.Weights[c] * Normal{Mu: d.Means[c], Sigma: d.SDs[c]}.CDF(x))
	}
	return s
}

// Quantile inverts the CDF by bisection to full double precision.
func (d Mixture) Quantile(p float64) float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for c := range d.Weights {
		q := Normal{Mu: d.Means[c], Sigma: d.SDs[c]}
		lo = math.Min(lo, q.Quantile(p))
		hi = math.Max(hi, q.Quantile(p))
	}
	for i := 0; i < 200 && hi-lo > 1e-15*math.Max(1, math.Abs(lo)); i++ {
		mid := (lo + hi) / 2
		if d.CDF(mid) < p {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

func (d Mixture) Mean() float64 {
	var m float64
	for c, w := range d.Weights {
		m += float64(w * d.Means[c])
	}
	return m
}

// central returns E(X−μ)^k = Σ_c w_c Σ_j C(k,j) (μ_c−μ)^{k−j} σ_c^j E Z^j.
func (d Mixture) central(k int) float64 {
	mu := d.Mean()
	var s float64
	for c, w := range d.Weights {
		delta := d.Means[c] - mu
		for j := 0; j <= k; j += 2 { // odd normal moments vanish
			s += float64(w * binomial(k, j) * portablemath.Pow(delta, float64(k-j)) * portablemath.Pow(d.SDs[c], float64(j)) * normalStdMoment(j))
		}
	}
	return s
}

func (d Mixture) StdDev() float64 { return math.Sqrt(d.central(2)) }
func (d Mixture) StdMoment(k int) (float64, bool) {
	return stdMomentFromCentral(d.central, k), true
}
func (d Mixture) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }
