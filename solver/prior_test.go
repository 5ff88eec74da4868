package solver

import (
	"math"
	"testing"
)

// TestExpectationAsMomentsAreMatched reproduces the comparison in
// docs/ACCURACY.md ("What matching moments adds"): E[e^X] for X ~ N(0, 1)
// on a 7-point lattice, from the node rule's own weights (NoMoments) and
// with 2, 4 and 6 moments matched. The check value is the closed form
// E[e^X] = e^{1/2} (the normal moment generating function at 1). Each
// matched pair of moments must cut the error, and the errors must be the
// ones the documentation states (to the 2 significant digits it prints:
// relative tolerance 0.05).
func TestExpectationAsMomentsAreMatched(t *testing.T) {
	truth := math.Exp(0.5)
	want := map[int]float64{NoMoments: -0.11, 2: -0.028, 4: -0.0036, 6: -0.00063} // docs/ACCURACY.md
	prev := math.Inf(1)
	for _, m := range []int{NoMoments, 2, 4, 6} {
		d, err := IID{Dist: Normal{Mu: 0, Sigma: 1}}.Discretize(Settings{States: 7, Moments: m})
		if err != nil {
			t.Fatal(err)
		}
		wantMatched := max(m, 0)
		if d.Matched != wantMatched || d.Moments != wantMatched {
			t.Fatalf("moments %d: %d of %d matched", m, d.Matched, d.Moments)
		}
		var e float64
		for j, x := range d.Nodes {
			e += d.Weights[j] * math.Exp(x)
		}
		got := e - truth
		if math.Abs(got) >= prev {
			t.Errorf("moments %d: error %.3g is not below the previous %.3g", m, got, prev)
		}
		prev = math.Abs(got)
		if math.Abs(got-want[m]) > 0.05*math.Abs(want[m]) {
			t.Errorf("moments %d: E[e^X] error %.4g, docs/ACCURACY.md says %.2g", m, got, want[m])
		}
	}
}

// TestNoMomentsIsThePrior checks that NoMoments returns the prior exactly:
// on Gauss-Hermite nodes the normalised weights of N(0, 1) are the
// Gauss-Hermite probabilities, whose 7-point values are tabulated
// (Abramowitz and Stegun 1964, table 25.10, weights divided by √π;
// the digits below are recalled from memory:
// 0.000548268856, 0.030757123968, 0.240123178605, 0.457142857143).
// Tolerance 1e-11: the table's 12 digits.
func TestNoMomentsIsThePrior(t *testing.T) {
	d, err := IID{Dist: Normal{Mu: 0, Sigma: 1}}.Discretize(Settings{States: 7, Moments: NoMoments, Nodes: NodesGaussHermite})
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{0.000548268856, 0.030757123968, 0.240123178605, 0.457142857143, 0.240123178605, 0.030757123968, 0.000548268856}
	for j, w := range d.Weights {
		if math.Abs(w-want[j]) > 1e-11 {
			t.Errorf("weight %d is %.12f, the table gives %.12f", j, w, want[j])
		}
	}
	c, err := AR1{Rho: 0.9, Sigma: 0.1}.Discretize(Settings{States: 5, Moments: NoMoments})
	if err != nil {
		t.Fatal(err)
	}
	if c.Moments != 0 || c.Fallbacks() != 0 || c.Check(1e-12) != nil {
		t.Errorf("AR(1) prior chain: %d moments, %d fallbacks, check %v", c.Moments, c.Fallbacks(), c.Check(1e-12))
	}
}
