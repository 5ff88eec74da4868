package solver

import (
	"math"

	"gridstage/internal/portablemath"
)

// DefaultTauchenWidth is the half-width of Tauchen's grid in unconditional
// standard deviations when none is given (m = 3, common practice).
const DefaultTauchenWidth = 3

// tauchenRows fills trans with Tauchen (1986) probabilities on an even grid
// with spacing h: the mass the conditional law puts on the interval around
// x_j between the midpoints to its neighbours, with the end intervals open.
func tauchenRows(nodes []float64, h float64, law conditional, trans []float64) {
	n := len(nodes)
	cdf := func(z float64) float64 {
		if law.Shock == nil {
			return float64(0.5 * portablemath.Erfc(-z/math.Sqrt2))
		}
		return law.Shock.CDF(z)
	}
	// survival 1 − F(z), accurate in the upper tail for the normal.
	sf := func(z float64) float64 {
		if law.Shock == nil {
			return float64(0.5 * portablemath.Erfc(z/math.Sqrt2))
		}
		return 1 - law.Shock.CDF(z)
	}
	for i := 0; i < n; i++ {
		m, s := law.Mean[i], law.SD[i]
		row := trans[i*n : (i+1)*n]
		for j := range row {
			lo, hi := math.Inf(-1), math.Inf(1)
			if j > 0 {
				lo = (nodes[j] - h/2 - m) / s
			}
			if j < n-1 {
				hi = (nodes[j] + h/2 - m) / s
			}
			// Differences of survival values keep precision in the upper
			// tail, where CDF values round to one.
			if lo > 0 {
				row[j] = sf(lo) - sf(hi)
			} else {
				row[j] = cdf(hi) - cdf(lo)
			}
		}
		normalizeRow(row)
	}
}

// normalizeRow rescales row to sum to one (it removes rounding only: the
// rows of every method sum to one in exact arithmetic).
func normalizeRow(row []float64) {
	var s float64
	for _, p := range row {
		s += p
	}
	for j := range row {
		row[j] /= s
	}
}
