package formats

import (
	"fmt"
	"math"

	"gridstage/solver"
)

// VectorDiag is what a set keeps of the diagnostics of a chain whose state
// is a vector (solver.VectorDiagnostics; kinds var, ar1-volatility and product): in
// every state the largest standardized errors of the conditional mean
// vector and covariance matrix, and for the chain its stationary mean and
// covariance beside the true ones (docs/FORMATS.md, vector columns).
// Matrices are d×d row-major with d = Header.Dim.
type VectorDiag struct {
	// MeanErr[i] = max_k |(L⁻¹ (m_chain − m))_k| and CovErr[i] =
	// max_kl |(L⁻¹ (C_chain − C) L⁻ᵀ)_kl| in state i, where m and C are
	// the true conditional mean and covariance and L is the lower Cholesky
	// factor of C.
	MeanErr []float64 `json:"mean_std_error"`
	CovErr  []float64 `json:"cov_std_error"`
	// WorstMeanErr and WorstCovErr are the largest of them over states.
	WorstMeanErr float64 `json:"worst_mean_std_error"`
	WorstCovErr  float64 `json:"worst_cov_std_error"`
	// TrueMean and TrueCov are the process's stationary mean and covariance
	// (for a VAR, the discrete Lyapunov solution).
	TrueMean []float64 `json:"true_mean"`
	TrueCov  []float64 `json:"true_cov"`
	// ChainMean and ChainCov are the chain's, under its stationary
	// distribution; both nil when the chain has none (a reducible chain).
	ChainMean []float64 `json:"chain_mean"`
	ChainCov  []float64 `json:"chain_cov"`
	// StationaryCovErr is max_kl |Σ_chain − Σ|_kl / √(Σ_kk Σ_ll); it is
	// stored only with ChainCov (0 otherwise).
	StationaryCovErr float64 `json:"stationary_cov_std_error"`
}

// NewVectorDiag returns the part of v that a set keeps. v is not modified.
func NewVectorDiag(v *solver.VectorDiagnostics) *VectorDiag {
	out := &VectorDiag{
		MeanErr: make([]float64, len(v.States)), CovErr: make([]float64, len(v.States)),
		WorstMeanErr: v.WorstMeanErr, WorstCovErr: v.WorstCovErr,
		TrueMean: append([]float64(nil), v.True.Mean...), TrueCov: append([]float64(nil), v.True.Cov...),
	}
	for i, s := range v.States {
		out.MeanErr[i], out.CovErr[i] = maxAbs(s.MeanErr), maxAbs(s.CovErr)
	}
	if v.StationaryErr == "" && v.Chain.Cov != nil {
		out.ChainMean = append([]float64(nil), v.Chain.Mean...)
		out.ChainCov = append([]float64(nil), v.Chain.Cov...)
		out.StationaryCovErr = v.StationaryCovErr
	}
	return out
}

func maxAbs(v []float64) float64 {
	var m float64
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// check validates the shape of v for a chain of n states in dimension dim.
func (v *VectorDiag) check(n, dim int) error {
	switch {
	case len(v.MeanErr) != n || len(v.CovErr) != n:
		return fmt.Errorf("%d and %d per-state errors, want %d", len(v.MeanErr), len(v.CovErr), n)
	case len(v.TrueMean) != dim || len(v.TrueCov) != dim*dim:
		return fmt.Errorf("true mean and covariance of %d and %d values, want %d and %d", len(v.TrueMean), len(v.TrueCov), dim, dim*dim)
	case (v.ChainMean == nil) != (v.ChainCov == nil):
		return fmt.Errorf("chain mean and covariance must be both given or both absent")
	case v.ChainMean != nil && (len(v.ChainMean) != dim || len(v.ChainCov) != dim*dim):
		return fmt.Errorf("chain mean and covariance of %d and %d values, want %d and %d", len(v.ChainMean), len(v.ChainCov), dim, dim*dim)
	}
	return nil
}

// Column names of the vector columns.
const (
	ColVecMeanErr       = "vec_mean_err_scaled"
	ColVecCovErr        = "vec_cov_err_scaled"
	ColWorstVecMeanErr  = "worst_vec_mean_err_scaled"
	ColWorstVecCovErr   = "worst_vec_cov_err_scaled"
	ColStationaryCovErr = "stationary_cov_err_scaled"
)

// MeanColumn returns the summary column of a stationary mean: prefix is
// "true" or "chain", k the dimension (true_mean_x0, …).
func MeanColumn(prefix string, k int) string { return prefix + "_mean_" + LevelColumn(k) }

// CovColumn returns the summary column of a stationary covariance entry:
// prefix is "true" or "chain" (true_cov_x0_x1, …).
func CovColumn(prefix string, k, l int) string {
	return prefix + "_cov_" + LevelColumn(k) + "_" + LevelColumn(l)
}

// summaryVecColumns returns the number of vector columns of the summary
// table in dimension d.
func summaryVecColumns(d int) int { return 3 + 2*d + 2*d*d }
