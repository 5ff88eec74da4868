package models

import (
	"fmt"
	"math"
	"strconv"
)

// stationary returns the stationary distribution of c by power iteration of
// the lazy chain (P + I)/2 from the uniform distribution: it has the same
// stationary law and is aperiodic, so periodic chains converge too.
func stationary(c Chain) ([]float64, error) {
	n := c.N()
	pi := make([]float64, n)
	for i := range pi {
		pi[i] = 1 / float64(n)
	}
	next := make([]float64, n)
	for it := 0; it < 100000; it++ {
		clear(next)
		for i, p := range pi {
			for j, q := range c.row(i) {
				next[j] += p * q
			}
		}
		var d float64
		for j := range next {
			next[j] = 0.5*next[j] + 0.5*pi[j] // lazy chain: same stationary law, aperiodic
			d += math.Abs(next[j] - pi[j])
		}
		pi, next = next, pi
		if d < 1e-14 {
			return pi, nil
		}
	}
	return nil, fmt.Errorf("models: the chain's stationary distribution did not converge: %w", ErrNoConvergence)
}

func formatG(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }
