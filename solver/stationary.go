package solver

import (
	"errors"
	"math"
)

// ErrReducible reports a chain whose stationary distribution is not unique.
var ErrReducible = errors.New("solver: chain is reducible; its stationary distribution is not unique")

// Stationary returns the stationary distribution π (π P = π, Σ π = 1) of
// the n×n row-stochastic matrix trans by the Grassmann-Taksar-Heyman (1985)
// elimination, which involves no subtractions and so stays accurate even for
// nearly decomposable chains where power iteration stalls. trans is not
// modified. It returns ErrReducible if elimination meets a state that cannot
// reach the states below it.
func Stationary(trans []float64, n int) ([]float64, error) {
	a := append([]float64(nil), trans...)
	for k := n - 1; k >= 1; k-- {
		var s float64
		for j := 0; j < k; j++ {
			s += a[k*n+j]
		}
		if !(s > 0) {
			return nil, ErrReducible
		}
		for i := 0; i < k; i++ {
			a[i*n+k] /= s
		}
		for i := 0; i < k; i++ {
			aik := a[i*n+k]
			if aik == 0 {
				continue
			}
			for j := 0; j < k; j++ {
				a[i*n+j] += aik * a[k*n+j]
			}
		}
	}
	pi := make([]float64, n)
	pi[0] = 1
	total := 1.0
	for k := 1; k < n; k++ {
		var s float64
		for i := 0; i < k; i++ {
			s += pi[i] * a[i*n+k]
		}
		pi[k] = s
		total += s
	}
	for i := range pi {
		pi[i] /= total
		if math.IsNaN(pi[i]) {
			return nil, ErrReducible
		}
	}
	return pi, nil
}
