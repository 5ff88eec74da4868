package solver

import (
	"math"
	"math/cmplx"
	"strconv"

	"gonum.org/v1/gonum/mat"
	"gridstage/internal/portablemath"
)

// MaxVARDim is the largest VAR dimension Discretize accepts.
const MaxVARDim = 4

// maxVectorStates bounds the total number of states N^d of a vector chain,
// the same bound as for univariate chains.
const maxVectorStates = MaxStates

// VAR is the first-order vector autoregression
//
//	x' = c + B x + ε,   ε ~ N(0, Ψ),
//
// of dimension d = √len(Coef), from 1 to MaxVARDim. Matrices are row-major.
type VAR struct {
	Intercept []float64 // c, length d; nil means zero
	Coef      []float64 // B, d×d; spectral radius < 1
	Cov       []float64 // Ψ, d×d, symmetric positive definite
}

// Dim returns d, or 0 when len(Coef) is not a square from 1 to MaxVARDim².
func (p VAR) Dim() int {
	for d := 1; d <= MaxVARDim; d++ {
		if len(p.Coef) == d*d {
			return d
		}
	}
	return 0
}

// Validate reports the first parameter outside its range: shapes, finite
// entries, a symmetric positive definite Ψ, and a stationary B (spectral
// radius < 1, from gonum's mat.Eigen).
func (p VAR) Validate() error {
	d := p.Dim()
	if d == 0 {
		return badParam("coef entries", float64(len(p.Coef)), "d×d (row-major) for a dimension d from 1 to 4")
	}
	if len(p.Cov) != d*d {
		return badParam("cov entries", float64(len(p.Cov)), "d×d = "+strconv.Itoa(d*d)+" to match coef")
	}
	if p.Intercept != nil && len(p.Intercept) != d {
		return badParam("intercept entries", float64(len(p.Intercept)), strconv.Itoa(d)+" to match coef")
	}
	for name, v := range map[string][]float64{"coef": p.Coef, "cov": p.Cov, "intercept": p.Intercept} {
		for _, x := range v {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return badParam(name+" entry", x, "finite")
			}
		}
	}
	for k := 0; k < d; k++ {
		for l := k + 1; l < d; l++ {
			a, b := p.Cov[k*d+l], p.Cov[l*d+k]
			if math.Abs(a-b) > 1e-12*math.Max(math.Abs(a), math.Abs(b)) {
				return badParam("cov asymmetry", a-b, "0 (cov must be symmetric)")
			}
		}
	}
	if m := minEigenSym(p.Cov, d); !(m > 0) {
		return badParam("cov smallest eigenvalue", m, "> 0 (cov must be positive definite)")
	}
	if r := spectralRadius(p.Coef, d); !(r < 1) {
		return badParam("coef spectral radius", r, "< 1 (the VAR must be stationary)")
	}
	return p.ranges()
}

// spectralRadius returns the largest modulus of B's eigenvalues.
func spectralRadius(b []float64, d int) float64 {
	var eig mat.Eigen
	if !eig.Factorize(mat.NewDense(d, d, append([]float64(nil), b...)), mat.EigenNone) {
		return math.Inf(1)
	}
	var r float64
	for _, v := range eig.Values(nil) {
		r = math.Max(r, cmplx.Abs(v))
	}
	return r
}

// minEigenSym returns the smallest eigenvalue of the symmetric matrix s.
func minEigenSym(s []float64, d int) float64 {
	vals, _ := symEigen(s, d)
	return vals[0]
}

// StationaryMean returns μ = (I − B)⁻¹ c. It assumes p is valid.
func (p VAR) StationaryMean() []float64 {
	d := p.Dim()
	mu := make([]float64, d)
	if p.Intercept == nil {
		return mu
	}
	a := make([]float64, d*d)
	for k := 0; k < d; k++ {
		for l := 0; l < d; l++ {
			a[k*d+l] = -p.Coef[k*d+l]
		}
		a[k*d+k]++
	}
	// I − B is nonsingular when the spectral radius of B is below one.
	f, err := luFactor(a, d)
	if err != nil {
		return mu
	}
	return f.solve(p.Intercept)
}

// StationaryCov returns Σ solving Σ = B Σ Bᵀ + Ψ (row-major d×d). It
// assumes p is valid.
func (p VAR) StationaryCov() []float64 {
	s, err := Lyapunov(p.Coef, p.Cov, p.Dim())
	if err != nil {
		panic("solver: Lyapunov equation of a stationary VAR is singular")
	}
	return s
}

// ConditionalMean writes c + B x into dst (length d) and returns it.
func (p VAR) ConditionalMean(x, dst []float64) []float64 {
	d := p.Dim()
	for k := 0; k < d; k++ {
		var s float64
		if p.Intercept != nil {
			s = p.Intercept[k]
		}
		for l := 0; l < d; l++ {
			s += float64(p.Coef[k*d+l] * x[l])
		}
		dst[k] = s
	}
	return dst
}

// vectorMoments resolves s.Moments for a Gaussian vector process: for
// MaxEnt 0 means 2 (means and covariances); 1 to 4 select means, then
// covariances, then the marginal third and fourth moments.
func vectorMoments(s Settings) (int, error) {
	if err := checkMatching(s.Matching); err != nil {
		return 0, err
	}
	if s.Method != MaxEnt {
		if s.Moments != 0 {
			return 0, badParam("moments", float64(s.Moments), "unset for method "+s.Method.String()+" (it matches a fixed set of moments)")
		}
		return s.Method.ExactMoments(), nil
	}
	if s.Moments == 0 {
		return 2, nil
	}
	if s.Moments < 1 || s.Moments > 4 {
		return 0, badParam("moments", float64(s.Moments), "an integer from 1 to 4 for a vector process")
	}
	return s.Moments, nil
}

// checkTensorStates validates N per axis and the total N^d.
func checkTensorStates(n, d int) error {
	if err := checkStates(n); err != nil {
		return err
	}
	total := 1
	for k := 0; k < d; k++ {
		total *= n
		if total > maxVectorStates {
			return badParam("states", float64(n), "at most "+strconv.Itoa(int(math.Floor(portablemath.Pow(maxVectorStates, 1/float64(d))+1e-9)))+" per axis in dimension "+strconv.Itoa(d)+" (at most "+strconv.Itoa(MaxStates)+" states in all)")
		}
	}
	return nil
}

// Discretize builds a Markov chain on N^d states (N = s.States per axis)
// with the chosen method:
//
//   - MaxEnt: a tensor grid along s.Axes (principal axes of Σ by default),
//     each axis laid by the quadrature rule s.Nodes over ±s.Width stationary
//     standard deviations (default √(N−1)); in every state the transition
//     row matches the exact conditional means, covariances and (for
//     s.Moments ≥ 3) marginal third and fourth moments, falling back to fewer
//     where infeasible (see Chain.Matched).
//   - Tauchen: Tauchen (1986) for VARs, see tauchenVAR.
//
// States are ordered row-major over the axes (the first axis varies
// slowest); Chain.Grid holds each state's vector x.
func (p VAR) Discretize(s Settings) (*Chain, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	d := p.Dim()
	if err := checkTensorStates(s.States, d); err != nil {
		return nil, err
	}
	if !(s.Width >= 0) || math.IsInf(s.Width, 1) {
		return nil, badParam("width", s.Width, "finite and > 0")
	}
	if s.Axes != AxesPrincipal && s.Axes != AxesCoordinate {
		return nil, badParam("axes", float64(s.Axes), "principal or coordinate")
	}
	L, err := vectorMoments(s)
	if err != nil {
		return nil, err
	}
	switch s.Method {
	case MaxEnt:
		return p.maxent(s, L), nil
	case Tauchen:
		return p.tauchen(s), nil
	}
	return nil, badChoice("method", s.Method.String(), "maxent or tauchen for a VAR")
}

func (p VAR) maxent(s Settings, L int) *Chain {
	d := p.Dim()
	grid, logWeights, law := p.maxentProblem(s)
	n := len(logWeights)
	c := &Chain{Dim: d, Grid: grid, Method: MaxEnt, Moments: L,
		Transition: make([]float64, n*n), Matched: make([]int, n), Certificates: make([]Certificate, n)}
	maxentVectorRows(grid, logWeights, law, L, s.Matching, c.Transition, c.Matched, c.Certificates)
	c.PriorKL = vectorPriorKL(grid, logWeights, law, c.Transition)
	return c
}

// maxentProblem lays the tensor grid with its log weights and the
// conditional law of every state.
func (p VAR) maxentProblem(s Settings) (grid, logWeights []float64, law gaussianVectorLaw) {
	d := p.Dim()
	mu, sigma := p.StationaryMean(), p.StationaryCov()
	nodes, logW := placeGrid(s.Nodes, s.States, 0, 1, s.Width, Normal{0, 1})
	grid, logWeights = tensorGrid(mu, axisFrame(s.Axes, sigma, d), d, nodes, logW)
	n := len(logWeights)
	means := make([]float64, n*d)
	for i := 0; i < n; i++ {
		p.ConditionalMean(grid[i*d:(i+1)*d], means[i*d:(i+1)*d])
	}
	law = gaussianVectorLaw{d: d, axisStates: s.States, means: means, chol: choleskyLower(p.Cov, d), sd: diagSqrt(p.Cov, d)}
	return grid, logWeights, law
}

// choleskyLower returns the lower Cholesky factor of the SPD matrix a.
func choleskyLower(a []float64, d int) []float64 {
	l := make([]float64, d*d)
	if !cholesky(a, l, d) {
		panic("solver: matrix is not positive definite")
	}
	return l
}

func diagSqrt(a []float64, d int) []float64 {
	s := make([]float64, d)
	for k := range s {
		s[k] = math.Sqrt(a[k*d+k])
	}
	return s
}
