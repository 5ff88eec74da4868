package solver

import (
	"math"
	"strconv"
)

// Numerical ranges. Inputs inside the mathematical ranges can still give
// chains that are degenerate in float64; these bounds refuse them up front
// with the range that works, rather than let NaN or a panic come out. Each
// bound says why it holds; the bounds are stated in the README
// ("Reliability").
const (
	// MaxPersistence bounds |ρ| (and a VAR's spectral radius): at
	// 1 − |ρ| < 1e-6 the stationary s.d. σ/√(1−ρ²) magnifies the rounding
	// of 1 − ρ² (relative 2⁻⁵³/1e-6 ≈ 1e-10) and the chain mixes over more
	// than 1e6 periods, so its stationary law is not determined to the
	// digits the diagnostics report.
	MaxPersistence = 1 - 1e-6
	// MinScale and MaxScale bound every standard deviation (σ, the
	// stationary s.d., a VAR's √Ψ_kk): the solver and its diagnostics take
	// up to 8th powers of deviations, and (1e±30)⁸ = 1e±240 stays inside
	// float64 (about 1e±308) with room for sums.
	MinScale, MaxScale = 1e-30, 1e30
	// MaxMeanRatio bounds |mean| / stationary s.d.: grid points are
	// mean + z·s.d., and a deviation z·s.d. keeps relative precision
	// 2⁻⁵³·|mean|/s.d. ≈ 1e-10 at this ratio; beyond it the grid collapses
	// onto a few floating-point numbers (at 1e308 onto one).
	MaxMeanRatio = 1e6
	// MaxCovCondition bounds the condition number of a VAR's Ψ: Cholesky
	// in float64 succeeds and keeps about 4 correct digits up to
	// 1/(d·2⁻⁵³) ≈ 1e15; 1e12 leaves a margin.
	MaxCovCondition = 1e12
	// MaxStates bounds the states of one chain (N, or N^d for a tensor
	// grid). Measured on one core of a 2-core machine (issue 16), a chain
	// of 2,000 states takes at most about 10 s (Rouwenhorst's recursion;
	// maximum entropy about 1.5 s, a 2-D VAR at 44 per axis about 7 s) and
	// under 300 MB, and `discretize --json` with a baseline under 1.2 GB;
	// time grows as N² to N³ and memory as N², so the former 10,000 took
	// minutes and gigabytes.
	MaxStates = 2000
)

// checkPersistence refuses |ρ| > MaxPersistence.
func checkPersistence(name string, rho float64) error {
	if math.Abs(rho) > MaxPersistence {
		return badParam(name, rho, "in [-0.999999, 0.999999]: nearer to ±1 the chain is degenerate in double precision (a unit root needs another model)")
	}
	return nil
}

// checkScale refuses a standard deviation outside [MinScale, MaxScale].
func checkScale(name string, sd float64) error {
	if !(sd >= MinScale && sd <= MaxScale) {
		return badParam(name, sd, "from 1e-30 to 1e30: outside it powers of the deviations overflow or underflow double precision (rescale the units)")
	}
	return nil
}

// checkMean refuses a mean too far from 0 relative to its s.d.
func checkMean(name string, mean, sd float64) error {
	if math.Abs(mean) > MaxMeanRatio*sd {
		return badParam(name, mean, "at most 1e6 stationary standard deviations ("+strconv.FormatFloat(float64(MaxMeanRatio*sd), 'g', 4, 64)+") from 0: farther the grid collapses in double precision (subtract the mean first)")
	}
	return nil
}

// ranges checks an AR(1) inside its mathematical range against the
// numerical bounds.
func (p AR1) ranges() error {
	if err := checkPersistence("rho", p.Rho); err != nil {
		return err
	}
	if err := checkScale("sigma", p.Sigma); err != nil {
		return err
	}
	sd := p.StationarySD()
	if err := checkScale("stationary s.d. sigma/sqrt(1-rho^2)", sd); err != nil {
		return err
	}
	return checkMean("mean", p.Mean, sd)
}

// ranges checks a VAR: persistence, scale and conditioning of Ψ, and the
// stationary mean against the stationary s.d.
func (p VAR) ranges() error {
	d := p.Dim()
	if r := spectralRadius(p.Coef, d); r > MaxPersistence {
		return badParam("coef spectral radius", r, "at most 0.999999: nearer to 1 the chain is degenerate in double precision")
	}
	maxVar := 0.0
	for k := 0; k < d; k++ {
		v := p.Cov[k*d+k]
		if err := checkScale("sqrt(cov["+strconv.Itoa(k)+","+strconv.Itoa(k)+"])", math.Sqrt(v)); err != nil {
			return err
		}
		maxVar = math.Max(maxVar, v)
	}
	if m := minEigenSym(p.Cov, d); !(m >= maxVar/MaxCovCondition) {
		return badParam("cov smallest eigenvalue", m, "at least 1e-12 times the largest variance ("+strconv.FormatFloat(maxVar/MaxCovCondition, 'g', 4, 64)+"): a nearly singular covariance cannot be factored reliably in double precision")
	}
	sigma := p.StationaryCov()
	mu := p.StationaryMean()
	for k := 0; k < d; k++ {
		sd := math.Sqrt(sigma[k*d+k])
		if err := checkScale("stationary s.d. of variable "+strconv.Itoa(k), sd); err != nil {
			return err
		}
		if err := checkMean("stationary mean of variable "+strconv.Itoa(k), mu[k], sd); err != nil {
			return err
		}
	}
	return nil
}

// ranges checks a stochastic-volatility process: the level's persistence,
// the log-variance process (an AR(1)), and the level's stationary s.d.
func (p SV) ranges() error {
	if err := checkPersistence("rho", p.Rho); err != nil {
		return err
	}
	if err := prefixParam(p.LogVar.ranges(), "logvar "); err != nil {
		return err
	}
	sd := p.LevelSD()
	if err := checkScale("level stationary s.d.", sd); err != nil {
		return err
	}
	return checkMean("mean", p.Mean, sd)
}

// ranges checks a life cycle: every age's s.d. within the scale bounds.
func (p LifeCycle) ranges() error {
	if err := checkScale("initial_sd", p.InitialSD); err != nil {
		return err
	}
	for t, s := range p.Sigma {
		if err := checkScale("sigma["+strconv.Itoa(t)+"]", s); err != nil {
			return err
		}
		if math.Abs(p.Rho[t]) > 1e3 {
			return badParam("rho["+strconv.Itoa(t)+"]", p.Rho[t], "at most 1000 in absolute value: beyond it the age variances overflow")
		}
	}
	for t, v := range p.Variances() {
		if err := checkScale("s.d. at age "+strconv.Itoa(t), math.Sqrt(v)); err != nil {
			return err
		}
	}
	return nil
}
