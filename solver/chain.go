package solver

import "fmt"

// Chain is a finite Markov chain on a grid of state vectors.
type Chain struct {
	// Dim is the dimension of each state vector (1 for univariate processes).
	Dim int
	// Grid holds the state vectors row-major: state i is Grid[i*Dim:(i+1)*Dim].
	Grid []float64
	// Transition holds the transition matrix row-major: Transition[i*N+j] is
	// the probability of moving from state i to state j.
	Transition []float64
	// Method is the method that built the chain.
	Method Method
	// Moments is the number of conditional moments the method was asked to
	// match (for baselines: the number it matches by construction).
	Moments int
	// Matched[i] is the number of leading conditional moments (mean,
	// variance, skewness, kurtosis, …) matched exactly in state i.
	Matched []int
	// Certificates[i] says why state i matched Matched[i] moments (solved,
	// or the next level proven infeasible); nil for methods that do not
	// solve for moments.
	Certificates []Certificate
	// PriorKL[i] is the Kullback-Leibler divergence of row i from the
	// prior weights its method started from (maximum entropy: the
	// quadrature prior); nil for methods that start from none.
	PriorKL []float64
}

// Certificate returns the certificate of state i (CertNone when the chain
// keeps none).
func (c *Chain) Certificate(i int) Certificate {
	if c.Certificates == nil {
		return CertNone
	}
	return c.Certificates[i]
}

// States returns the number of states N.
func (c *Chain) States() int {
	if c.Dim == 0 {
		return 0
	}
	return len(c.Grid) / c.Dim
}

// State returns the state vector of state i (a view into Grid).
func (c *Chain) State(i int) []float64 { return c.Grid[i*c.Dim : (i+1)*c.Dim] }

// Row returns the transition probabilities out of state i (a view).
func (c *Chain) Row(i int) []float64 {
	n := c.States()
	return c.Transition[i*n : (i+1)*n]
}

// Fallbacks counts the states that matched fewer moments than requested.
func (c *Chain) Fallbacks() int {
	var k int
	for _, m := range c.Matched {
		if m < c.Moments {
			k++
		}
	}
	return k
}

// Check reports the first row that has a negative or non-finite entry or
// does not sum to one within tol.
func (c *Chain) Check(tol float64) error {
	n := c.States()
	if len(c.Transition) != n*n {
		return fmt.Errorf("solver: transition has %d entries, want %d", len(c.Transition), n*n)
	}
	for i := 0; i < n; i++ {
		var s float64
		for j, p := range c.Row(i) {
			if !(p >= 0) || p > 1+tol {
				return fmt.Errorf("solver: transition[%d][%d] = %g is not a probability", i, j, p)
			}
			s += p
		}
		if d := s - 1; d > tol || d < -tol {
			return fmt.Errorf("solver: row %d sums to 1%+.3g", i, d)
		}
	}
	return nil
}
