package models

import (
	"fmt"
	"math"
)

// Chain is a univariate finite Markov chain: Levels[i] is the level of state
// i (a logarithm for every model here) and Transition[i*N+j] the probability
// of moving from state i to state j.
type Chain struct {
	Levels     []float64
	Transition []float64
}

// N returns the number of states.
func (c Chain) N() int { return len(c.Levels) }

// rowTol is how far a row sum may stray from one: chains read back from
// files carry rounding of order N·ε, far below this.
const rowTol = 1e-9

// Validate reports an empty chain, a transition matrix of the wrong size,
// a non-finite level, or a row that is not a probability distribution.
func (c Chain) Validate() error {
	n := c.N()
	if n == 0 {
		return fmt.Errorf("models: chain has no states")
	}
	if len(c.Transition) != n*n {
		return fmt.Errorf("models: chain has %d states but %d transition entries, want %d", n, len(c.Transition), n*n)
	}
	for i, x := range c.Levels {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("models: chain level %d is %g, want a finite number", i, x)
		}
	}
	for i := 0; i < n; i++ {
		var s float64
		for j, p := range c.Transition[i*n : (i+1)*n] {
			if !(p >= 0 && p <= 1) {
				return fmt.Errorf("models: transition[%d][%d] = %g is not a probability", i, j, p)
			}
			s += p
		}
		if math.Abs(s-1) > rowTol {
			return fmt.Errorf("models: transition row %d sums to %.12g, want 1", i, s)
		}
	}
	return nil
}

// row returns the transition probabilities out of state i (a view).
func (c Chain) row(i int) []float64 {
	n := c.N()
	return c.Transition[i*n : (i+1)*n]
}
