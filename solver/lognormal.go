package solver

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// LogNormal is the distribution of exp(Y) for Y ~ N(Mu, Sigma²).
type LogNormal struct{ Mu, Sigma float64 }

func (d LogNormal) dist() distuv.LogNormal { return distuv.LogNormal{Mu: d.Mu, Sigma: d.Sigma} }

func (d LogNormal) LogProb(x float64) float64 {
	if x <= 0 {
		return math.Inf(-1)
	}
	return d.dist().LogProb(x)
}
func (d LogNormal) CDF(x float64) float64      { return d.dist().CDF(x) }
func (d LogNormal) Quantile(p float64) float64 { return d.dist().Quantile(p) }

// raw returns E X^k = exp(kμ + k²σ²/2).
func (d LogNormal) raw(k int) float64 {
	kk := float64(k)
	return math.Exp(kk*d.Mu + kk*kk*d.Sigma*d.Sigma/2)
}
func (d LogNormal) Mean() float64 { return d.raw(1) }
func (d LogNormal) StdDev() float64 {
	s2 := d.Sigma * d.Sigma
	return math.Sqrt(math.Expm1(s2)) * math.Exp(d.Mu+s2/2)
}

// StdMoment uses the moments of Y = X/E X, whose raw moments are
// exp(k(k−1)σ²/2); this keeps the binomial sum well scaled.
func (d LogNormal) StdMoment(k int) (float64, bool) {
	s2 := d.Sigma * d.Sigma
	raw := func(j int) float64 { jj := float64(j); return math.Exp(jj * (jj - 1) * s2 / 2) }
	c := func(j int) float64 { return centralFromRaw(raw, j) }
	if k == 2 {
		return 1, true
	}
	if k == 1 {
		return 0, true
	}
	return c(k) / math.Pow(math.Expm1(s2), float64(k)/2), true
}
func (d LogNormal) Support() (lo, hi float64) { return 0, math.Inf(1) }
