package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// StudentT is the location-scale Student t distribution: Loc + Scale·T with
// T ~ t(Nu). Its variance is Scale²·Nu/(Nu−2) for Nu > 2.
type StudentT struct{ Nu, Loc, Scale float64 }

// LogProb is log Γ((ν+1)/2) − log Γ(ν/2) − ½ log(νπ) − log Scale
// − (ν+1)/2 · log(1 + z²/ν), z = (x − Loc)/Scale.
func (d StudentT) LogProb(x float64) float64 {
	g1, _ := portablemath.Lgamma((d.Nu + 1) / 2)
	g2, _ := portablemath.Lgamma(d.Nu / 2)
	z := (x - d.Loc) / d.Scale
	return g1 - g2 - float64(0.5*portablemath.Log(d.Nu)) - 0.5*logPi - portablemath.Log(d.Scale) - float64(((d.Nu+1)/2)*portablemath.Log1p(z*z/d.Nu))
}

// CDF: with z = (x − Loc)/Scale and t = ν/(z² + ν), F = ½ I_t(ν/2, ½)
// for z < 0 and 1 − ½ I_t(ν/2, ½) for z > 0 (Abramowitz and Stegun 1964,
// 26.7.1 and 26.5.27).
func (d StudentT) CDF(x float64) float64 {
	z := (x - d.Loc) / d.Scale
	if z == 0 {
		return 0.5
	}
	t := d.Nu / (float64(z*z) + d.Nu)
	if z > 0 {
		return 1 - float64(0.5*portablemath.BetaRegularized(d.Nu/2, 0.5, t))
	}
	return float64(0.5 * portablemath.BetaRegularized(d.Nu/2, 0.5, t))
}

// Quantile inverts CDF through the inverse of I_t; it panics if p is
// outside [0, 1].
func (d StudentT) Quantile(p float64) float64 {
	if p < 0 || p > 1 {
		panic("solver: Student t quantile of a probability outside [0, 1]")
	}
	if p == 0.5 {
		return d.Loc
	}
	var z float64
	if p > 0.5 {
		t := portablemath.BetaRegularizedInverse(d.Nu/2, 0.5, float64(2*(1-p)))
		z = math.Sqrt(d.Nu * (1 - t) / t)
	} else {
		t := portablemath.BetaRegularizedInverse(d.Nu/2, 0.5, float64(2*p))
		z = -math.Sqrt(d.Nu * (1 - t) / t)
	}
	return d.Loc + float64(z*d.Scale)
}

// logPi is log π, correctly rounded.
const logPi = 1.144729885849400174143427351353058711647294812915311571513623

func (d StudentT) Mean() float64   { return d.Loc }
func (d StudentT) StdDev() float64 { return float64(d.Scale * math.Sqrt(d.Nu/(d.Nu-2))) }

// StdMoment: for even k < ν, E T^k = ν^{k/2} Π_{i=1}^{k/2} (2i−1)/(ν−2i);
// odd moments below ν vanish; moments of order ≥ ν are infinite.
func (d StudentT) StdMoment(k int) (float64, bool) {
	if float64(k) >= d.Nu {
		return math.Inf(1), false
	}
	if k%2 == 1 {
		return 0, true
	}
	m := portablemath.Pow(d.Nu, float64(k)/2)
	for i := 1; i <= k/2; i++ {
		m = float64(m * (float64(2*i-1) / (d.Nu - float64(2*i))))
	}
	v := d.Nu / (d.Nu - 2)
	return m / portablemath.Pow(v, float64(k)/2), true
}
func (d StudentT) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }
