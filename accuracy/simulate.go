package accuracy

import (
	"math"
	"math/rand/v2"
	"sort"

	"gridstage/solver"
)

// Sampler draws paths from a Markov chain by inverting the cumulative
// transition rows. It is safe for concurrent use; each caller brings its
// own random source.
type Sampler struct {
	dim     int
	grid    []float64
	cumRows [][]float64
	cumInit []float64
}

// NewSampler prepares chain c for simulation with initial states drawn from
// the distribution init (normally the stationary distribution, so that
// paths are stationary from the first observation).
func NewSampler(c *solver.Chain, init []float64) *Sampler {
	n := c.States()
	s := &Sampler{dim: c.Dim, grid: c.Grid, cumRows: make([][]float64, n), cumInit: cumulative(init)}
	for i := 0; i < n; i++ {
		s.cumRows[i] = cumulative(c.Row(i))
	}
	return s
}

// cumulative returns the running sums of w, with the last forced to 1 so
// that a uniform draw in [0, 1) always lands on a state.
func cumulative(w []float64) []float64 {
	c := make([]float64, len(w))
	var s float64
	for i, v := range w {
		s += v
		c[i] = s
	}
	c[len(c)-1] = math.Inf(1)
	return c
}

// draw returns the first index whose cumulative weight exceeds u.
func draw(cum []float64, u float64) int {
	return sort.Search(len(cum), func(i int) bool { return cum[i] > u })
}

// Path fills out (T×dim, row-major) with a path of T = len(out)/dim
// observations.
func (s *Sampler) Path(rng *rand.Rand, out []float64) {
	d := s.dim
	i := draw(s.cumInit, rng.Float64())
	for t := 0; t < len(out)/d; t++ {
		if t > 0 {
			i = draw(s.cumRows[i], rng.Float64())
		}
		copy(out[t*d:(t+1)*d], s.grid[i*d:(i+1)*d])
	}
}

// VARSampler draws paths from a Gaussian VAR(1), started from its
// stationary law N(μ, Σ) so that paths are stationary from the first
// observation.
type VARSampler struct {
	p                  solver.VAR
	d                  int
	mu, cholS, cholPsi []float64
}

// NewVARSampler prepares p (which must be valid) for simulation.
func NewVARSampler(p solver.VAR) *VARSampler {
	d := p.Dim()
	return &VARSampler{p: p, d: d, mu: p.StationaryMean(), cholS: lowerCholesky(p.StationaryCov(), d), cholPsi: lowerCholesky(p.Cov, d)}
}

// Path fills out (T×d, row-major) with a path of T = len(out)/d observations.
func (s *VARSampler) Path(rng *rand.Rand, out []float64) {
	d := s.d
	z := make([]float64, d)
	x := out[:d]
	for k := range z {
		z[k] = rng.NormFloat64()
	}
	for r := 0; r < d; r++ {
		x[r] = s.mu[r]
		for k := 0; k <= r; k++ {
			x[r] += s.cholS[r*d+k] * z[k]
		}
	}
	for t := 1; t < len(out)/d; t++ {
		prev, cur := out[(t-1)*d:t*d], out[t*d:(t+1)*d]
		s.p.ConditionalMean(prev, cur)
		for k := range z {
			z[k] = rng.NormFloat64()
		}
		for r := 0; r < d; r++ {
			for k := 0; k <= r; k++ {
				cur[r] += s.cholPsi[r*d+k] * z[k]
			}
		}
	}
}

// lowerCholesky returns the lower Cholesky factor of the SPD d×d matrix a.
func lowerCholesky(a []float64, d int) []float64 {
	l := make([]float64, d*d)
	for r := 0; r < d; r++ {
		for c := 0; c <= r; c++ {
			s := a[r*d+c]
			for k := 0; k < c; k++ {
				s -= l[r*d+k] * l[c*d+k]
			}
			if r == c {
				l[r*d+r] = math.Sqrt(s)
			} else {
				l[r*d+c] = s / l[c*d+c]
			}
		}
	}
	return l
}
