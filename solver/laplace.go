package solver

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Laplace is the double-exponential distribution with location Loc and scale
// Scale: density exp(−|x−Loc|/Scale)/(2 Scale), variance 2 Scale².
type Laplace struct{ Loc, Scale float64 }

func (d Laplace) dist() distuv.Laplace       { return distuv.Laplace{Mu: d.Loc, Scale: d.Scale} }
func (d Laplace) LogProb(x float64) float64  { return -math.Abs(x-d.Loc)/d.Scale - math.Log(2*d.Scale) }
func (d Laplace) CDF(x float64) float64      { return d.dist().CDF(x) }
func (d Laplace) Quantile(p float64) float64 { return d.dist().Quantile(p) }
func (d Laplace) Mean() float64              { return d.Loc }
func (d Laplace) StdDev() float64            { return math.Sqrt2 * d.Scale }

// StdMoment: E|X−Loc|^k = k! Scale^k for even k, so the standardized moment
// is k!/2^{k/2}; odd moments vanish.
func (d Laplace) StdMoment(k int) (float64, bool) {
	if k%2 == 1 {
		return 0, true
	}
	f := 1.0
	for i := 2; i <= k; i++ {
		f *= float64(i)
	}
	return f / math.Pow(2, float64(k)/2), true
}
func (d Laplace) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }
