package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// Normal is N(Mu, Sigma²).
type Normal struct{ Mu, Sigma float64 }

func (d Normal) LogProb(x float64) float64 {
	z := (x - d.Mu) / d.Sigma
	return float64(-0.5*z*z) - portablemath.Log(d.Sigma) - float64(0.5*portablemath.Log(2*math.Pi))
}

// CDF is ½ erfc(−(x−μ)/(σ√2)).
func (d Normal) CDF(x float64) float64 {
	return float64(0.5 * portablemath.Erfc(-(x-d.Mu)/(d.Sigma*math.Sqrt2)))
}

// Quantile is μ + σ Φ⁻¹(p); it panics if p is outside [0, 1].
func (d Normal) Quantile(p float64) float64 {
	return d.Mu + float64(d.Sigma*portablemath.NormalQuantile(p))
}
func (d Normal) Mean() float64   { return d.Mu }
func (d Normal) StdDev() float64 { return d.Sigma }
func (d Normal) StdMoment(k int) (float64, bool) {
	return normalStdMoment(k), true
}
func (d Normal) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }
