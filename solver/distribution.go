package solver

import "gridstage/internal/portablemath"

// Distribution is a univariate continuous distribution with the quantities
// the discretization needs. Implementations in this package: Normal,
// LogNormal, Beta, Mixture, StudentT, Laplace and Standardized.
type Distribution interface {
	// LogProb returns the log density at x (−Inf outside the support).
	LogProb(x float64) float64
	// CDF returns P(X ≤ x).
	CDF(x float64) float64
	// Quantile returns the p-quantile for p in (0, 1).
	Quantile(p float64) float64
	// Mean returns E X.
	Mean() float64
	// StdDev returns the standard deviation.
	StdDev() float64
	// StdMoment returns the standardized moment E[((X − EX)/sd)^k] for k ≥ 1,
	// and false if it is infinite or undefined.
	StdMoment(k int) (float64, bool)
	// Support returns the interval outside which the density is zero.
	Support() (lo, hi float64)
}

// stdMomentsFromCentral standardizes central moments c (c[k] = E(X−μ)^k, c[2] = variance).
func stdMomentFromCentral(c func(k int) float64, k int) float64 {
	switch k {
	case 1:
		return 0
	case 2:
		return 1
	}
	v := c(2)
	return c(k) / portablemath.Pow(v, float64(k)/2)
}

// centralFromRaw returns E(X−μ)^k from raw moments raw(j) = E X^j.
func centralFromRaw(raw func(j int) float64, k int) float64 {
	mu := raw(1)
	var s float64
	for j := 0; j <= k; j++ {
		s += float64(binomial(k, j) * raw(j) * portablemath.Pow(-mu, float64(k-j)))
	}
	return s
}

func binomial(n, k int) float64 {
	r := 1.0
	for i := 1; i <= k; i++ {
		r = float64(r * (float64(n-k+i) / float64(i)))
	}
	return r
}

// normalStdMoment is E Z^k for Z ~ N(0, 1): 0 for odd k, (k−1)!! for even k.
func normalStdMoment(k int) float64 {
	if k%2 == 1 {
		return 0
	}
	r := 1.0
	for i := k - 1; i > 1; i -= 2 {
		r = float64(r * float64(i))
	}
	return r
}

// Standardized is (X − EX)/sd(X) for the wrapped distribution: mean 0 and
// variance 1. AR(1) innovations are given in this form and scaled by σ.
type Standardized struct{ Base Distribution }

func (s Standardized) LogProb(z float64) float64 {
	sd := s.Base.StdDev()
	return s.Base.LogProb(s.Base.Mean()+float64(sd*z)) + portablemath.Log(sd)
}
func (s Standardized) CDF(z float64) float64 {
	return s.Base.CDF(s.Base.Mean() + float64(s.Base.StdDev()*z))
}
func (s Standardized) Quantile(p float64) float64 {
	return (s.Base.Quantile(p) - s.Base.Mean()) / s.Base.StdDev()
}
func (s Standardized) Mean() float64                   { return 0 }
func (s Standardized) StdDev() float64                 { return 1 }
func (s Standardized) StdMoment(k int) (float64, bool) { return s.Base.StdMoment(k) }
func (s Standardized) Support() (lo, hi float64) {
	lo, hi = s.Base.Support()
	m, sd := s.Base.Mean(), s.Base.StdDev()
	return (lo - m) / sd, (hi - m) / sd
}
