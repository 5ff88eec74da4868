package solver

import "testing"

// TestSeparated checks Wolfe's separation test on point sets whose answer
// is elementary geometry: the origin is inside a square centred on it, on
// a vertex of a triangle (in the hull, not separated), and outside a
// triangle in the positive quadrant and a segment off the origin.
func TestSeparated(t *testing.T) {
	for _, tc := range []struct {
		name string
		pts  []float64
		L    int
		want bool
	}{
		{"square around origin", []float64{-1, -1, 1, -1, 1, 1, -1, 1}, 2, false},
		{"triangle with origin inside", []float64{-1, -1, 2, -1, 0, 3}, 2, false},
		{"origin is a vertex", []float64{0, 0, 1, 0, 0, 1}, 2, false},
		{"triangle in the positive quadrant", []float64{1, 1, 2, 1, 1, 2}, 2, true},
		{"segment missing the origin", []float64{-1, 0.5, 1, 0.5}, 2, true},
		{"simplex around origin in 3-D", []float64{1, 0, 0, 0, 1, 0, 0, 0, 1, -1, -1, -1}, 3, false},
		{"shifted simplex in 3-D", []float64{2, 0.1, 0.1, 0.1, 2, 0.1, 0.1, 0.1, 2, 0.5, 0.5, 0.5}, 3, true},
	} {
		if got := separated(tc.pts, len(tc.pts)/tc.L, tc.L); got != tc.want {
			t.Errorf("%s: separated = %v, want %v", tc.name, got, tc.want)
		}
	}
}
