package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// VectorStateCheck compares a chain's conditional moments in one state with
// the truth, in standardized units: with L the Cholesky factor of the true
// conditional covariance C,
//
//	MeanErr = L⁻¹ (m_chain − m),   CovErr = L⁻¹ (C_chain − C) L⁻ᵀ,
//
// SkewErr is the marginal skewness error and KurtErr the marginal kurtosis
// error divided by the true kurtosis. Matrices are d×d row-major.
type VectorStateCheck struct {
	Level   []float64 `json:"level"`
	Matched int       `json:"matched"`
	// Certificate says why Matched moments were matched.
	Certificate Certificate `json:"certificate"`
	// PriorKL is the row's divergence from its prior (StateCheck.PriorKL).
	PriorKL *float64  `json:"prior_kl,omitempty"`
	MeanErr []float64 `json:"mean_std_error"`
	CovErr  []float64 `json:"cov_std_error"`
	SkewErr []float64 `json:"skewness_error"`
	KurtErr []float64 `json:"kurtosis_std_error"`
}

// VectorDiagnostics compares a vector chain with the process it
// approximates, state by state and in its stationary law.
type VectorDiagnostics struct {
	Method     string             `json:"method"`
	Dim        int                `json:"dim"`
	States     []VectorStateCheck `json:"states"`
	Stationary []float64          `json:"stationary"`
	Chain      VectorSummary      `json:"chain_unconditional"`
	True       VectorSummary      `json:"true_unconditional"`
	// ChainAutocorr and TrueAutocorr are the lag-one autocorrelation
	// matrices Corr(x_{t+1,k}, x_{t,l}) (d×d row-major).
	ChainAutocorr []float64 `json:"chain_autocorrelation"`
	TrueAutocorr  []float64 `json:"true_autocorrelation"`
	// Worst* are the largest absolute standardized errors over all states
	// and entries.
	WorstMeanErr float64 `json:"worst_mean_std_error"`
	WorstCovErr  float64 `json:"worst_cov_std_error"`
	WorstSkewErr float64 `json:"worst_skewness_error"`
	WorstKurtErr float64 `json:"worst_kurtosis_std_error"`
	// StationaryMeanErr is max_k |μ_chain − μ|_k / √Σ_kk and
	// StationaryCovErr max_kl |Σ_chain − Σ|_kl / √(Σ_kk Σ_ll), with Σ the
	// true stationary covariance (for a VAR, the Lyapunov solution).
	StationaryMeanErr float64 `json:"stationary_mean_std_error"`
	StationaryCovErr  float64 `json:"stationary_cov_std_error"`
	// AutocorrErr is the largest absolute difference of the lag-one
	// autocorrelation matrices.
	AutocorrErr float64 `json:"autocorrelation_error"`
	Fallbacks   int     `json:"fallback_states"`
	// StationaryErr is non-empty when the stationary distribution could not
	// be computed (a reducible chain); the stationary fields are then empty.
	StationaryErr string `json:"stationary_error,omitempty"`
	// Degenerate says why the chain is degenerate; empty when irreducible.
	Degenerate string `json:"degenerate,omitempty"`
}

// DiagnoseVector computes the diagnostics of a chain of dimension
// truth.Dim() against the truth. The chain is not modified. It panics if
// the dimensions differ.
func DiagnoseVector(c *Chain, truth VectorTruth) VectorDiagnostics {
	d, n := c.Dim, c.States()
	if truth.Dim() != d {
		panic("solver: DiagnoseVector dimension mismatch")
	}
	out := VectorDiagnostics{Method: c.Method.String(), Dim: d, States: make([]VectorStateCheck, n), Fallbacks: c.Fallbacks()}
	chol := make([]float64, d*d)
	diff := make([]float64, d*d)
	for i := 0; i < n; i++ {
		cm := rowMoments(c, c.Row(i))
		tm := truth.VectorConditional(c.State(i))
		if !cholesky(tm.Cov, chol, d) {
			clear(chol)
			for k := 0; k < d; k++ {
				chol[k*d+k] = math.Sqrt(math.Max(tm.Cov[k*d+k], math.SmallestNonzeroFloat64))
			}
		}
		sc := VectorStateCheck{Level: append([]float64(nil), c.State(i)...), SkewErr: make([]float64, d), KurtErr: make([]float64, d)}
		if c.Matched != nil {
			sc.Matched = c.Matched[i]
			sc.Certificate = c.Certificate(i)
		}
		sc.PriorKL, _ = rowDiagnostics(c, nil, i)
		for k := 0; k < d; k++ {
			diff[k] = cm.Mean[k] - tm.Mean[k]
		}
		sc.MeanErr = lowerSolve(chol, d, diff[:d])
		for k := range diff {
			diff[k] = cm.Cov[k] - tm.Cov[k]
		}
		sc.CovErr = sandwichInverse(chol, d, diff)
		for k := 0; k < d; k++ {
			sc.SkewErr[k] = cm.Skew[k] - tm.Skew[k]
			sc.KurtErr[k] = (cm.Kurt[k] - tm.Kurt[k]) / tm.Kurt[k]
		}
		out.WorstMeanErr = math.Max(out.WorstMeanErr, maxAbs(sc.MeanErr))
		out.WorstCovErr = math.Max(out.WorstCovErr, maxAbs(sc.CovErr))
		out.WorstSkewErr = math.Max(out.WorstSkewErr, maxAbs(sc.SkewErr))
		out.WorstKurtErr = math.Max(out.WorstKurtErr, maxAbs(sc.KurtErr))
		out.States[i] = sc
	}
	out.True = truth.VectorUnconditional()
	out.TrueAutocorr = autocorrelation(out.True, d)
	out.Degenerate = Classify(c.Transition, n).Degenerate()
	pi, err := Stationary(c.Transition, n)
	if err != nil {
		out.StationaryErr = err.Error()
		if out.Degenerate == "" {
			out.Degenerate = "nearly decomposable: the stationary distribution cannot be computed in floating point"
		}
		return out
	}
	out.Stationary = pi
	out.Chain = ChainMoments(c, pi)
	out.ChainAutocorr = autocorrelation(out.Chain, d)
	for k := 0; k < d; k++ {
		out.StationaryMeanErr = math.Max(out.StationaryMeanErr,
			math.Abs(out.Chain.Mean[k]-out.True.Mean[k])/math.Sqrt(out.True.Cov[k*d+k]))
		for l := 0; l < d; l++ {
			e := math.Abs(out.Chain.Cov[k*d+l]-out.True.Cov[k*d+l]) / math.Sqrt(float64(out.True.Cov[k*d+k]*out.True.Cov[l*d+l]))
			out.StationaryCovErr = math.Max(out.StationaryCovErr, e)
			out.AutocorrErr = math.Max(out.AutocorrErr, math.Abs(out.ChainAutocorr[k*d+l]-out.TrueAutocorr[k*d+l]))
		}
	}
	return out
}

// ChainMoments returns the stationary mean, covariance and lag-one
// autocovariance of the chain under the distribution pi:
//
//	Γ = Σ_i π_i (E[x' | i] − μ)(x_i − μ)ᵀ.
func ChainMoments(c *Chain, pi []float64) VectorSummary {
	d, n := c.Dim, c.States()
	s := VectorSummary{Mean: make([]float64, d), Cov: make([]float64, d*d), Autocov: make([]float64, d*d)}
	for i := 0; i < n; i++ {
		x := c.State(i)
		for k := 0; k < d; k++ {
			s.Mean[k] += float64(pi[i] * x[k])
		}
	}
	next := make([]float64, d)
	for i := 0; i < n; i++ {
		x := c.State(i)
		clear(next)
		for j, p := range c.Row(i) {
			for k, v := range c.State(j) {
				next[k] += float64(p * v)
			}
		}
		for k := 0; k < d; k++ {
			dk := x[k] - s.Mean[k]
			for l := 0; l < d; l++ {
				s.Cov[k*d+l] += float64(pi[i] * dk * (x[l] - s.Mean[l]))
				s.Autocov[k*d+l] += float64(pi[i] * (next[k] - s.Mean[k]) * (x[l] - s.Mean[l]))
			}
		}
	}
	return s
}

// autocorrelation returns Γ_kl / √(Σ_kk Σ_ll).
func autocorrelation(s VectorSummary, d int) []float64 {
	r := make([]float64, d*d)
	for k := 0; k < d; k++ {
		for l := 0; l < d; l++ {
			r[k*d+l] = s.Autocov[k*d+l] / math.Sqrt(float64(s.Cov[k*d+k]*s.Cov[l*d+l]))
		}
	}
	return r
}

// rowMoments returns the mean, covariance and marginal skewness and
// kurtosis of the distribution row over the chain's states.
func rowMoments(c *Chain, row []float64) VectorMoments {
	d := c.Dim
	m := VectorMoments{Mean: make([]float64, d), Cov: make([]float64, d*d), Skew: make([]float64, d), Kurt: make([]float64, d)}
	for j, p := range row {
		for k, v := range c.State(j) {
			m.Mean[k] += float64(p * v)
		}
	}
	m3, m4 := make([]float64, d), make([]float64, d)
	for j, p := range row {
		x := c.State(j)
		for k := 0; k < d; k++ {
			dk := x[k] - m.Mean[k]
			for l := 0; l < d; l++ {
				m.Cov[k*d+l] += float64(p * dk * (x[l] - m.Mean[l]))
			}
			m3[k] += float64(p * dk * dk * dk)
			m4[k] += float64(p * dk * dk * dk * dk)
		}
	}
	for k := 0; k < d; k++ {
		v := m.Cov[k*d+k]
		m.Skew[k] = m3[k] / portablemath.Pow(v, 1.5)
		m.Kurt[k] = m4[k] / (v * v)
	}
	return m
}

// sandwichInverse returns L⁻¹ a L⁻ᵀ for a symmetric d×d a and lower L.
func sandwichInverse(l []float64, d int, a []float64) []float64 {
	// Columns of Y = L⁻¹ a; then L⁻¹ Yᵀ = L⁻¹ a L⁻ᵀ (a symmetric).
	y := make([]float64, d*d)
	col := make([]float64, d)
	for c := 0; c < d; c++ {
		for r := 0; r < d; r++ {
			col[r] = a[r*d+c]
		}
		v := lowerSolve(l, d, col)
		for r := 0; r < d; r++ {
			y[r*d+c] = v[r]
		}
	}
	out := make([]float64, d*d)
	for c := 0; c < d; c++ {
		v := lowerSolve(l, d, y[c*d:(c+1)*d])
		for r := 0; r < d; r++ {
			out[r*d+c] = v[r]
		}
	}
	return out
}
