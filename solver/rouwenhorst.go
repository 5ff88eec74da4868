package solver

import "math"

// rouwenhorstMatrix fills trans (n×n) with the Rouwenhorst (1995) matrix for
// p = q, built by the recursion of Kopecky and Suen (2010): from the 2×2
// matrix [[p, 1−p], [1−q, q]], each step embeds the previous matrix four
// times with weights p, 1−p, 1−q, q and halves the interior rows.
func rouwenhorstMatrix(n int, p, q float64, trans []float64) {
	// Two buffers of n×n, used in turn, instead of a new matrix per step:
	// the same arithmetic with O(n²) memory rather than O(n³) allocated.
	bufs := [2][]float64{make([]float64, n*n), make([]float64, n*n)}
	prev := append(bufs[0][:0], p, 1-p, 1-q, q)
	for m := 3; m <= n; m++ {
		cur := bufs[m%2][:m*m]
		clear(cur)
		k := m - 1 // size of prev
		for r := 0; r < k; r++ {
			for c := 0; c < k; c++ {
				v := prev[r*k+c]
				cur[r*m+c] += float64(p * v)
				cur[r*m+c+1] += float64((1 - p) * v)
				cur[(r+1)*m+c] += float64((1 - q) * v)
				cur[(r+1)*m+c+1] += float64(q * v)
			}
		}
		for r := 1; r < m-1; r++ {
			for c := 0; c < m; c++ {
				cur[r*m+c] /= 2
			}
		}
		prev = cur
	}
	copy(trans, prev)
}

// RouwenhorstWidth is the half-width ψ/σ_y = √(n−1) of the Rouwenhorst grid
// in unconditional standard deviations (Kopecky and Suen 2010).
func RouwenhorstWidth(n int) float64 { return math.Sqrt(float64(n - 1)) }
