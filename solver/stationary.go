package solver

import (
	"errors"
	"fmt"
	"math"
)

// ErrReducible reports a chain whose stationary distribution is not unique.
var ErrReducible = errors.New("solver: chain is reducible; its stationary distribution is not unique")

// ErrNearlyDecomposable reports an irreducible chain whose links between
// groups of states are so weak that the elimination underflows.
var ErrNearlyDecomposable = errors.New("solver: chain is nearly decomposable: some links between states underflow in floating point, so its stationary distribution cannot be computed")

// Stationary returns the stationary distribution π (π P = π, Σ π = 1) of
// the n×n row-stochastic matrix trans by the Grassmann-Taksar-Heyman (1985)
// elimination, which involves no subtractions and so stays accurate even for
// nearly decomposable chains where power iteration stalls. trans is not
// modified. A reducible chain with one closed class (Classify) has its
// distribution on that class and zero on the transient states; with
// several closed classes the distribution is not unique and Stationary
// returns an error wrapping ErrReducible that says why.
func Stationary(trans []float64, n int) ([]float64, error) {
	st := Classify(trans, n)
	if st.Irreducible {
		pi, err := gth(trans, n)
		if err != nil {
			return nil, ErrNearlyDecomposable
		}
		return pi, nil
	}
	if !st.UniqueStationary() {
		return nil, fmt.Errorf("%w (%s)", ErrReducible, st.Degenerate())
	}
	var members []int
	for v := 0; v < n; v++ {
		if st.closed[st.class[v]] {
			members = append(members, v)
		}
	}
	m := len(members)
	sub := make([]float64, m*m)
	for a, v := range members {
		for b, w := range members {
			sub[a*m+b] = trans[v*n+w]
		}
	}
	piSub, err := gth(sub, m)
	if err != nil {
		return nil, err
	}
	pi := make([]float64, n)
	for a, v := range members {
		pi[v] = piSub[a]
	}
	return pi, nil
}

// gth is the elimination itself, for an irreducible chain.
func gth(trans []float64, n int) ([]float64, error) {
	pi, _, err := gthReduce(trans, n)
	return pi, err
}

// gthReduce is gth that also returns the reduced matrix: row k (columns
// j < k) holds the censored chain on states 0..k, and column k (rows
// i < k) the entries a_ik/s_k that eliminated state k, where s_k =
// Σ_{j<k} a_kj. stationaryDeriv solves other systems x(I − P) = b with it.
func gthReduce(trans []float64, n int) ([]float64, []float64, error) {
	a := append([]float64(nil), trans...)
	for k := n - 1; k >= 1; k-- {
		var s float64
		for j := 0; j < k; j++ {
			s += a[k*n+j]
		}
		if !(s > 0) {
			return nil, nil, ErrReducible
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
				a[i*n+j] += float64(aik * a[k*n+j])
			}
		}
	}
	pi := make([]float64, n)
	pi[0] = 1
	total := 1.0
	for k := 1; k < n; k++ {
		var s float64
		for i := 0; i < k; i++ {
			s += float64(pi[i] * a[i*n+k])
		}
		pi[k] = s
		total += s
	}
	for i := range pi {
		pi[i] /= total
		if math.IsNaN(pi[i]) {
			return nil, nil, ErrReducible
		}
	}
	return pi, a, nil
}
