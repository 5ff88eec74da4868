package solver

import "math"

// VectorMoments are the exact conditional moments of a vector process's
// next state: the mean, the covariance (d×d, row-major) and the marginal
// standardized skewness and kurtosis of each component.
type VectorMoments struct {
	Mean []float64 `json:"mean"`
	Cov  []float64 `json:"cov"`
	Skew []float64 `json:"skewness"`
	Kurt []float64 `json:"kurtosis"`
}

// VectorSummary describes the stationary law of a vector process: mean,
// covariance Σ and the lag-one autocovariance Γ = Cov(x_{t+1}, x_t), with
// Γ[k*d+l] = Cov(x_{t+1,k}, x_{t,l}); all matrices d×d row-major.
type VectorSummary struct {
	Mean    []float64 `json:"mean"`
	Cov     []float64 `json:"cov"`
	Autocov []float64 `json:"autocov"`
}

// VectorTruth gives the exact moments of the vector process a chain
// approximates. Implemented by VAR, SV, Independent and AsVector.
type VectorTruth interface {
	// Dim is the dimension of the state vector.
	Dim() int
	// VectorConditional returns the moments of next period's state given x.
	VectorConditional(x []float64) VectorMoments
	// VectorUnconditional returns the stationary moments.
	VectorUnconditional() VectorSummary
}

var (
	_ VectorTruth = VAR{}
	_ VectorTruth = SV{}
	_ VectorTruth = Independent(nil)
	_ VectorTruth = scalarTruth{}
	_ Truth       = VAR{}
	_ Truth       = SV{}
)

// VectorConditional returns mean c + B x, covariance Ψ, skewness 0 and
// kurtosis 3 in every component.
func (p VAR) VectorConditional(x []float64) VectorMoments {
	d := p.Dim()
	m := VectorMoments{Mean: p.ConditionalMean(x, make([]float64, d)),
		Cov: append([]float64(nil), p.Cov...), Skew: make([]float64, d), Kurt: make([]float64, d)}
	for k := range m.Kurt {
		m.Kurt[k] = 3
	}
	return m
}

// VectorUnconditional returns μ, the Lyapunov solution Σ and Γ = B Σ.
func (p VAR) VectorUnconditional() VectorSummary {
	d := p.Dim()
	s := VectorSummary{Mean: p.StationaryMean(), Cov: p.StationaryCov(), Autocov: make([]float64, d*d)}
	matMul(p.Coef, s.Cov, d, s.Autocov)
	return s
}

// Conditional returns the conditional moments of the first component
// (the univariate Truth view of a VAR).
func (p VAR) Conditional(x []float64) Moments {
	m := p.VectorConditional(x)
	return Moments{Mean: m.Mean[0], Var: m.Cov[0], Skew: 0, Kurt: 3}
}

// Unconditional returns the stationary moments of the first component;
// Autocorr is its own lag-one autocorrelation (BΣ)₁₁/Σ₁₁.
func (p VAR) Unconditional() Summary {
	s := p.VectorUnconditional()
	return Summary{Mean: s.Mean[0], SD: math.Sqrt(s.Cov[0]), Skew: 0, Kurt: 3, Autocorr: s.Autocov[0] / s.Cov[0]}
}

// matMul sets out = a b for d×d row-major matrices.
func matMul(a, b []float64, d int, out []float64) {
	for r := 0; r < d; r++ {
		for c := 0; c < d; c++ {
			var s float64
			for k := 0; k < d; k++ {
				s += float64(a[r*d+k] * b[k*d+c])
			}
			out[r*d+c] = s
		}
	}
}

// AsVector views a univariate truth (AR1, IID, …) as a one-dimensional
// VectorTruth, for diagnostics of products of independent components.
func AsVector(t Truth) VectorTruth { return scalarTruth{t} }

type scalarTruth struct{ Truth }

func (scalarTruth) Dim() int { return 1 }

func (s scalarTruth) VectorConditional(x []float64) VectorMoments {
	m := s.Conditional(x)
	return VectorMoments{Mean: []float64{m.Mean}, Cov: []float64{m.Var}, Skew: []float64{m.Skew}, Kurt: []float64{m.Kurt}}
}

func (s scalarTruth) VectorUnconditional() VectorSummary {
	u := s.Unconditional()
	v := float64(u.SD * u.SD)
	return VectorSummary{Mean: []float64{u.Mean}, Cov: []float64{v}, Autocov: []float64{float64(u.Autocorr * v)}}
}

// Independent is the truth of a product of independent components (see
// Product): the state vector concatenates the components' vectors, and the
// moments are block-diagonal.
type Independent []VectorTruth

// Dim returns the sum of the components' dimensions.
func (t Independent) Dim() int {
	var d int
	for _, c := range t {
		d += c.Dim()
	}
	return d
}

// VectorConditional assembles the components' conditional moments.
func (t Independent) VectorConditional(x []float64) VectorMoments {
	d := t.Dim()
	out := VectorMoments{Mean: make([]float64, 0, d), Cov: make([]float64, d*d)}
	off := 0
	for _, c := range t {
		k := c.Dim()
		m := c.VectorConditional(x[off : off+k])
		out.Mean = append(out.Mean, m.Mean...)
		out.Skew = append(out.Skew, m.Skew...)
		out.Kurt = append(out.Kurt, m.Kurt...)
		setBlock(out.Cov, d, off, m.Cov, k)
		off += k
	}
	return out
}

// VectorUnconditional assembles the components' stationary moments.
func (t Independent) VectorUnconditional() VectorSummary {
	d := t.Dim()
	out := VectorSummary{Mean: make([]float64, 0, d), Cov: make([]float64, d*d), Autocov: make([]float64, d*d)}
	off := 0
	for _, c := range t {
		k := c.Dim()
		s := c.VectorUnconditional()
		out.Mean = append(out.Mean, s.Mean...)
		setBlock(out.Cov, d, off, s.Cov, k)
		setBlock(out.Autocov, d, off, s.Autocov, k)
		off += k
	}
	return out
}

// setBlock copies the k×k matrix b into a (d×d) at rows and columns off…off+k−1.
func setBlock(a []float64, d, off int, b []float64, k int) {
	for r := 0; r < k; r++ {
		copy(a[(off+r)*d+off:(off+r)*d+off+k], b[r*k:(r+1)*k])
	}
}
