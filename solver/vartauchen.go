package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// tauchen builds Tauchen's (1986) chain for the VAR. Tauchen writes the VAR
// with independent innovations, which any VAR can be brought to by a linear
// change of variables; here y = L⁻¹x with Ψ = L Lᵀ (Cholesky), so that
//
//	y' = L⁻¹c + (L⁻¹ B L) y + η,   η ~ N(0, I).
//
// Each y-axis gets an even grid over ±m stationary standard deviations of
// that component (m = s.Width, default 3) about its stationary mean, and
// the probability of moving to grid point y_j is the product over axes of
// the normal mass of the interval around y_jk between the midpoints to its
// neighbours (end intervals open). States are reported in the original
// coordinates, x = L y. For d = 1 this is the univariate Tauchen chain.
func (p VAR) tauchen(s Settings) *Chain {
	d, N := p.Dim(), s.States
	width := s.Width
	if width == 0 {
		width = DefaultTauchenWidth
	}
	chol := choleskyLower(p.Cov, d)
	mu, sigma := p.StationaryMean(), p.StationaryCov()
	muY := lowerSolve(chol, d, mu)
	// Σ_y = L⁻¹ Σ L⁻ᵀ: only its diagonal is needed, from the columns of L⁻¹Σ.
	sdY := make([]float64, d)
	tmp := make([]float64, d*d) // L⁻¹ Σ, column by column
	col := make([]float64, d)
	for c := 0; c < d; c++ {
		for r := 0; r < d; r++ {
			col[r] = sigma[r*d+c]
		}
		v := lowerSolve(chol, d, col)
		for r := 0; r < d; r++ {
			tmp[r*d+c] = v[r]
		}
	}
	for k := 0; k < d; k++ {
		// Column k of L⁻¹ Σ L⁻ᵀ = L⁻¹ (L⁻¹Σ)ᵀ is L⁻¹ applied to row k of L⁻¹Σ.
		row := lowerSolve(chol, d, tmp[k*d:(k+1)*d])
		sdY[k] = math.Sqrt(row[k])
	}
	axisNodes := make([][]float64, d)
	h := make([]float64, d)
	for k := 0; k < d; k++ {
		r := Trapezoid(N, muY[k]-float64(width*sdY[k]), muY[k]+float64(width*sdY[k]))
		axisNodes[k], h[k] = r.Nodes, r.Nodes[1]-r.Nodes[0]
	}
	total := 1
	for k := 0; k < d; k++ {
		total *= N
	}
	yGrid := make([]float64, total*d)
	idx := make([]int, d)
	for st := 0; st < total; st++ {
		rem := st
		for k := d - 1; k >= 0; k-- {
			idx[k] = rem % N
			rem /= N
		}
		for k := 0; k < d; k++ {
			yGrid[st*d+k] = axisNodes[k][idx[k]]
		}
	}
	c := &Chain{Dim: d, Grid: make([]float64, total*d), Method: Tauchen, Moments: 0,
		Transition: make([]float64, total*total), Matched: make([]int, total)}
	for st := 0; st < total; st++ {
		y := yGrid[st*d : (st+1)*d]
		x := c.Grid[st*d : (st+1)*d]
		for r := 0; r < d; r++ {
			var v float64
			for k := 0; k <= r; k++ {
				v += float64(chol[r*d+k] * y[k])
			}
			x[r] = v
		}
	}
	m := make([]float64, d)
	masses := make([][]float64, d)
	for k := range masses {
		masses[k] = make([]float64, N)
	}
	for i := 0; i < total; i++ {
		mY := lowerSolve(chol, d, p.ConditionalMean(c.Grid[i*d:(i+1)*d], m))
		for k := 0; k < d; k++ {
			intervalMasses(axisNodes[k], h[k], mY[k], masses[k])
		}
		row := c.Row(i)
		for j := range row {
			rem, prob := j, 1.0
			for k := d - 1; k >= 0; k-- {
				prob = float64(prob * masses[k][rem%N])
				rem /= N
			}
			row[j] = prob
		}
		normalizeRow(row)
	}
	return c
}

// intervalMasses sets out[j] to the N(mean, 1) mass of the interval around
// nodes[j] (spacing h) bounded by the midpoints to its neighbours, with the
// end intervals open, as in Tauchen (1986).
func intervalMasses(nodes []float64, h, mean float64, out []float64) {
	n := len(nodes)
	for j := range out {
		lo, hi := math.Inf(-1), math.Inf(1)
		if j > 0 {
			lo = nodes[j] - h/2 - mean
		}
		if j < n-1 {
			hi = nodes[j] + h/2 - mean
		}
		// Survival differences keep precision in the upper tail.
		if lo > 0 {
			out[j] = float64(0.5 * (portablemath.Erfc(lo/math.Sqrt2) - portablemath.Erfc(hi/math.Sqrt2)))
		} else {
			out[j] = float64(0.5 * (portablemath.Erfc(-hi/math.Sqrt2) - portablemath.Erfc(-lo/math.Sqrt2)))
		}
	}
}

// lowerSolve returns L⁻¹ b for the lower-triangular d×d matrix l.
func lowerSolve(l []float64, d int, b []float64) []float64 {
	x := make([]float64, d)
	for r := 0; r < d; r++ {
		s := b[r]
		for c := 0; c < r; c++ {
			s -= float64(l[r*d+c] * x[c])
		}
		x[r] = s / l[r*d+r]
	}
	return x
}
