package solver

import (
	"math"
	"testing"
)

// centralDiff returns the Richardson-extrapolated central difference
// (4 D(h/2) − D(h))/3 of f at x, entry by entry: its truncation error is
// O(h⁴), and h = 1e-4 keeps the rounding of the chain (about 1e-13 per
// entry, the dual's tolerance) divided by h below 1e-8.
func centralDiff(f func(float64) []float64, x, h float64) []float64 {
	d := func(h float64) []float64 {
		a, b := f(x+h), f(x-h)
		out := make([]float64, len(a))
		for j := range a {
			out[j] = (a[j] - b[j]) / (2 * h)
		}
		return out
	}
	big, small := d(h), d(h/2)
	for j := range big {
		small[j] = (4*small[j] - big[j]) / 3
	}
	return small
}

// closeDerivatives compares an analytic derivative with a finite
// difference: the error may be 1e-6 relative to the larger of the entry
// and the largest entry of the whole derivative (tiny entries of a
// derivative have no relative accuracy to speak of in a difference), plus
// 1e-8 absolute, the difference's own rounding noise (the chain's entries
// carry about 1e-13, divided by h = 1e-4 and amplified by extrapolation).
// Derivatives that vanish (the chain does not depend on the mean or on
// sigma when its grid scales with them) are checked by the floor alone.
func closeDerivatives(t *testing.T, what string, got, want []float64) {
	t.Helper()
	var scale float64
	for _, v := range want {
		scale = math.Max(scale, math.Abs(v))
	}
	worst := 0.0
	for j := range got {
		e := math.Abs(got[j]-want[j]) / (1e-6*math.Max(math.Abs(want[j]), scale) + 1e-8)
		worst = math.Max(worst, e)
	}
	if worst > 1 || math.IsNaN(worst) {
		t.Errorf("%s: error %.3g times the bound (1e-6 relative + 1e-8) against central differences", what, worst)
	}
}

func TestSensitivitiesAgainstFiniteDifferences(t *testing.T) {
	cases := []struct {
		name string
		p    AR1
		s    Settings
	}{
		{"smooth lattice, states relaxed", AR1{Mean: 0.3, Rho: 0.97, Sigma: 0.1}, Settings{States: 9, Moments: 4, Matching: MatchSmooth}},
		{"smooth gauss-legendre", AR1{Mean: -1, Rho: 0.9, Sigma: 0.2}, Settings{States: 21, Moments: 4, Nodes: NodesGaussLegendre, Matching: MatchSmooth}},
		{"exact lattice, every state solved", AR1{Mean: 0.5, Rho: 0.8, Sigma: 0.1}, Settings{States: 15, Moments: 4}},
		{"exact gauss-hermite", AR1{Rho: 0.6, Sigma: 0.3}, Settings{States: 11, Moments: 2, Nodes: NodesGaussHermite}},
		{"smooth equal-mass, Student t", AR1{Rho: 0.95, Sigma: 0.1, Shock: Standardized{StudentT{Nu: 8, Scale: 1}}}, Settings{States: 11, Moments: 4, Nodes: NodesEqualMass, Matching: MatchSmooth}},
		{"exact lattice, Student t", AR1{Rho: 0.7, Sigma: 0.2, Shock: Standardized{StudentT{Nu: 9, Scale: 1}}}, Settings{States: 9, Moments: 4}},
		{"smooth gauss-legendre, Student t near the hull", AR1{Rho: 0.97, Sigma: 0.1, Shock: Standardized{StudentT{Nu: 6.5, Scale: 1}}}, Settings{States: 9, Moments: 4, Nodes: NodesGaussLegendre, Matching: MatchSmooth}},
		{"no moments (the prior rows)", AR1{Mean: 0.2, Rho: 0.85, Sigma: 0.1}, Settings{States: 9, Moments: NoMoments}},
	}
	for _, tc := range cases {
		c, sens, err := tc.p.Sensitivities(tc.s)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		plain, _ := tc.p.Discretize(tc.s)
		if d := maxChange(c.Transition, plain.Transition); d != 0 {
			t.Errorf("%s: the chain with sensitivities differs from Discretize's by %.3g", tc.name, d)
		}
		for k, name := range sens.Params {
			nu := 0.0
			if st, ok := tc.p.Shock.(Standardized); ok {
				nu = st.Base.(StudentT).Nu
			}
			at := func(v float64) AR1 {
				q := tc.p
				switch name {
				case "mean":
					q.Mean = v
				case "rho":
					q.Rho = v
				case "sigma":
					q.Sigma = v
				case "innovation.nu":
					q.Shock = Standardized{StudentT{Nu: v, Scale: 1}}
				}
				return q
			}
			x := map[string]float64{"mean": tc.p.Mean, "rho": tc.p.Rho, "sigma": tc.p.Sigma, "innovation.nu": nu}[name]
			var matchedMoved bool
			trans := func(v float64) []float64 {
				ch, err := at(v).Discretize(tc.s)
				if err != nil {
					t.Fatal(err)
				}
				for i := range ch.Matched {
					matchedMoved = matchedMoved || ch.Matched[i] != c.Matched[i]
				}
				return ch.Transition
			}
			grid := func(v float64) []float64 {
				ch, _ := at(v).Discretize(tc.s)
				return ch.Grid
			}
			stat := func(v float64) []float64 {
				ch, _ := at(v).Discretize(tc.s)
				pi, _ := Stationary(ch.Transition, ch.States())
				return pi
			}
			fd := centralDiff(trans, x, 1e-4)
			if matchedMoved && tc.s.Matching == MatchExact {
				t.Fatalf("%s: a state changes level within 1e-4 of %s; pick a point where the exact chain is differentiable", tc.name, name)
			}
			closeDerivatives(t, tc.name+" dP/d"+name, sens.Transition[k], fd)
			closeDerivatives(t, tc.name+" dgrid/d"+name, sens.Grid[k], centralDiff(grid, x, 1e-4))
			closeDerivatives(t, tc.name+" dpi/d"+name, sens.Stationary[k], centralDiff(stat, x, 1e-4))
		}
	}
}

func TestSensitivitiesRefuseBaselines(t *testing.T) {
	if _, _, err := (AR1{Rho: 0.9, Sigma: 0.1}).Sensitivities(Settings{States: 5, Method: Tauchen}); err != ErrNoSensitivities {
		t.Errorf("tauchen: err = %v, want ErrNoSensitivities", err)
	}
	if _, _, err := (AR1{Rho: 0.9, Sigma: 0.1, Shock: Standardized{Laplace{Scale: 1}}}).Sensitivities(Settings{States: 5}); err != ErrNoSensitivities {
		t.Errorf("laplace: err = %v, want ErrNoSensitivities", err)
	}
}
