package solver

import (
	"errors"
	"math"
	"testing"
)

// TestClassify checks the structure of small chains whose classes are
// elementary (Kemeny and Snell 1960, ch. 2): the identity, two closed
// classes, a transient state feeding one closed class, and an irreducible
// chain. Tolerance 1e-15 on the stationary law: GTH has no cancellation.
func TestClassify(t *testing.T) {
	for _, tc := range []struct {
		name                string
		p                   []float64
		identity, irr, uniq bool
		pi                  []float64
	}{
		{"identity", []float64{1, 0, 0, 0, 1, 0, 0, 0, 1}, true, false, false, nil},
		{"two closed classes", []float64{0.5, 0.5, 0, 0, 0.5, 0.5, 0, 0, 0, 0, 0.3, 0.7, 0, 0, 0.6, 0.4}, false, false, false, nil},
		// State 0 leaks into {1, 2} for good; π on {1, 2} solves
		// π1 = 0.2 π1 + 0.5 π2: π = (0, 5/13, 8/13).
		{"transient state", []float64{0.5, 0.5, 0, 0, 0.2, 0.8, 0, 0.5, 0.5}, false, false, true, []float64{0, 5.0 / 13, 8.0 / 13}},
		{"irreducible", []float64{0.9, 0.1, 0.2, 0.8}, false, true, true, []float64{2.0 / 3, 1.0 / 3}},
	} {
		n := int(math.Sqrt(float64(len(tc.p))))
		s := Classify(tc.p, n)
		if s.Identity != tc.identity || s.Irreducible != tc.irr || s.UniqueStationary() != tc.uniq {
			t.Errorf("%s: %+v", tc.name, s)
		}
		if (s.Degenerate() == "") != tc.irr {
			t.Errorf("%s: degenerate %q", tc.name, s.Degenerate())
		}
		pi, err := Stationary(tc.p, n)
		if !tc.uniq {
			if !errors.Is(err, ErrReducible) {
				t.Errorf("%s: Stationary error %v, want ErrReducible", tc.name, err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		for i := range pi {
			if math.Abs(pi[i]-tc.pi[i]) > 1e-15 {
				t.Errorf("%s: pi = %v, want %v", tc.name, pi, tc.pi)
				break
			}
		}
	}
}
