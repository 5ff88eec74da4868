package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// Laplace is the double-exponential distribution with location Loc and scale
// Scale: density exp(−|x−Loc|/Scale)/(2 Scale), variance 2 Scale².
type Laplace struct{ Loc, Scale float64 }

func (d Laplace) LogProb(x float64) float64 {
	return -math.Abs(x-d.Loc)/d.Scale - portablemath.Log(float64(2*d.Scale))
}

// CDF is ½ exp((x−Loc)/Scale) left of Loc and 1 − ½ exp(−(x−Loc)/Scale)
// right of it.
func (d Laplace) CDF(x float64) float64 {
	if x < d.Loc {
		return float64(0.5 * portablemath.Exp((x-d.Loc)/d.Scale))
	}
	return 1 - float64(0.5*portablemath.Exp(-(x-d.Loc)/d.Scale))
}

// Quantile inverts CDF; it panics if p is outside [0, 1].
func (d Laplace) Quantile(p float64) float64 {
	if p < 0 || p > 1 {
		panic("solver: Laplace quantile of a probability outside [0, 1]")
	}
	if p < 0.5 {
		return d.Loc + float64(d.Scale*portablemath.Log(float64(2*p)))
	}
	return d.Loc - float64(d.Scale*portablemath.Log(float64(2*(1-p))))
}
func (d Laplace) Mean() float64   { return d.Loc }
func (d Laplace) StdDev() float64 { return float64(math.Sqrt2 * d.Scale) }

// StdMoment: E|X−Loc|^k = k! Scale^k for even k, so the standardized moment
// is k!/2^{k/2}; odd moments vanish.
func (d Laplace) StdMoment(k int) (float64, bool) {
	if k%2 == 1 {
		return 0, true
	}
	f := 1.0
	for i := 2; i <= k; i++ {
		f = float64(f * float64(i))
	}
	return f / portablemath.Pow(2, float64(k)/2), true
}
func (d Laplace) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }
