package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// LogNormal is the distribution of exp(Y) for Y ~ N(Mu, Sigma²).
type LogNormal struct{ Mu, Sigma float64 }

func (d LogNormal) LogProb(x float64) float64 {
	if x <= 0 {
		return math.Inf(-1)
	}
	logx := portablemath.Log(x)
	z := (logx - d.Mu) / d.Sigma
	return float64(-0.5*z*z) - logx - portablemath.Log(d.Sigma) - logRoot2Pi
}

// CDF is ½ erfc(−(log x − μ)/(σ√2)) for x > 0.
func (d LogNormal) CDF(x float64) float64 {
	if x <= 0 {
		return 0
	}
	return float64(0.5 * portablemath.Erfc(-(portablemath.Log(x)-d.Mu)/(math.Sqrt2*d.Sigma)))
}

// Quantile is exp(μ + σ Φ⁻¹(p)); it panics if p is outside [0, 1].
func (d LogNormal) Quantile(p float64) float64 {
	return portablemath.Exp(d.Mu + float64(d.Sigma*portablemath.NormalQuantile(p)))
}

// logRoot2Pi is log √(2π), correctly rounded.
const logRoot2Pi = 0.918938533204672741780329736405617639861397473637783412817

// raw returns E X^k = exp(kμ + k²σ²/2).
func (d LogNormal) raw(k int) float64 {
	kk := float64(k)
	return portablemath.Exp(float64(kk*d.Mu) + kk*kk*d.Sigma*d.Sigma/2)
}
func (d LogNormal) Mean() float64 { return d.raw(1) }
func (d LogNormal) StdDev() float64 {
	s2 := float64(d.Sigma * d.Sigma)
	return float64(math.Sqrt(portablemath.Expm1(s2)) * portablemath.Exp(d.Mu+s2/2))
}

// StdMoment uses the moments of Y = X/E X, whose raw moments are
// exp(k(k−1)σ²/2); this keeps the binomial sum well scaled.
func (d LogNormal) StdMoment(k int) (float64, bool) {
	s2 := float64(d.Sigma * d.Sigma)
	raw := func(j int) float64 { jj := float64(j); return portablemath.Exp(jj * (jj - 1) * s2 / 2) }
	c := func(j int) float64 { return centralFromRaw(raw, j) }
	if k == 2 {
		return 1, true
	}
	if k == 1 {
		return 0, true
	}
	return c(k) / portablemath.Pow(portablemath.Expm1(s2), float64(k)/2), true
}
func (d LogNormal) Support() (lo, hi float64) { return 0, math.Inf(1) }
