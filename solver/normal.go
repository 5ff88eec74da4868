package solver

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Normal is N(Mu, Sigma²).
type Normal struct{ Mu, Sigma float64 }

func (d Normal) dist() distuv.Normal { return distuv.Normal{Mu: d.Mu, Sigma: d.Sigma} }

func (d Normal) LogProb(x float64) float64 {
	z := (x - d.Mu) / d.Sigma
	return -0.5*z*z - math.Log(d.Sigma) - 0.5*math.Log(2*math.Pi)
}
func (d Normal) CDF(x float64) float64      { return d.dist().CDF(x) }
func (d Normal) Quantile(p float64) float64 { return d.dist().Quantile(p) }
func (d Normal) Mean() float64              { return d.Mu }
func (d Normal) StdDev() float64            { return d.Sigma }
func (d Normal) StdMoment(k int) (float64, bool) {
	return normalStdMoment(k), true
}
func (d Normal) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }
