package solver

import (
	"strings"
	"testing"
)

// TestIIDSensitivitiesAgainstFiniteDifferences checks the derivatives of
// i.i.d. chains (points, weights) in every parameter of the law against
// Richardson-extrapolated central differences of IID.Discretize, with the
// bound of closeDerivatives (1e-6 relative + 1e-8). The cases cover a
// location-scale law (whose weights do not move), the shape parameters ν
// of a Student t and σ of a log-normal (whose weights do), a log-normal
// on Gauss-Hermite nodes in logs, and one on a lattice clipped at 0.
func TestIIDSensitivitiesAgainstFiniteDifferences(t *testing.T) {
	cases := []struct {
		name string
		law  func(v []float64) Distribution
		at   []float64
		s    Settings
	}{
		{"normal lattice", func(v []float64) Distribution { return Normal{Mu: v[0], Sigma: v[1]} }, []float64{0.3, 0.2}, Settings{States: 7, Moments: 4}},
		{"t lattice", func(v []float64) Distribution { return StudentT{Nu: v[0], Loc: v[1], Scale: v[2]} }, []float64{9, 0.1, 0.5}, Settings{States: 9, Moments: 4}},
		{"t gauss-legendre smooth", func(v []float64) Distribution { return StudentT{Nu: v[0], Loc: v[1], Scale: v[2]} }, []float64{6.5, 0, 1}, Settings{States: 11, Moments: 4, Nodes: NodesGaussLegendre, Matching: MatchSmooth}},
		{"lognormal lattice", func(v []float64) Distribution { return LogNormal{Mu: v[0], Sigma: v[1]} }, []float64{0.03, 0.15}, Settings{States: 9, Moments: 4}},
		{"lognormal clipped lattice", func(v []float64) Distribution { return LogNormal{Mu: v[0], Sigma: v[1]} }, []float64{0, 0.6}, Settings{States: 9, Moments: 3, Matching: MatchSmooth}},
		{"lognormal gauss-hermite", func(v []float64) Distribution { return LogNormal{Mu: v[0], Sigma: v[1]} }, []float64{0.1, 0.3}, Settings{States: 9, Moments: 4, Nodes: NodesGaussHermite}},
		{"t, no moments (the prior row)", func(v []float64) Distribution { return StudentT{Nu: v[0], Loc: v[1], Scale: v[2]} }, []float64{7, 0, 1}, Settings{States: 7, Moments: NoMoments}},
		{"laplace equal-mass", func(v []float64) Distribution { return Laplace{Loc: v[0], Scale: v[1]} }, []float64{-0.2, 0.4}, Settings{States: 8, Moments: 4, Nodes: NodesEqualMass}},
	}
	for _, tc := range cases {
		p := IID{Dist: tc.law(tc.at)}
		c, sens, err := p.Sensitivities(tc.s)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		d, _ := p.Discretize(tc.s)
		if !sameFloats(c.Grid, d.Nodes) || !sameFloats(c.Transition[:len(d.Weights)], d.Weights) {
			t.Errorf("%s: the chain with sensitivities is not Discretize's", tc.name)
		}
		if len(sens.Params) != len(tc.at) {
			t.Fatalf("%s: parameters %v", tc.name, sens.Params)
		}
		for k, name := range sens.Params {
			build := func(h float64) *Discrete {
				v := append([]float64(nil), tc.at...)
				v[k] += h
				dd, err := IID{Dist: tc.law(v)}.Discretize(tc.s)
				if err != nil {
					t.Fatal(err)
				}
				if tc.s.Matching == MatchExact && dd.Matched != d.Matched {
					t.Fatalf("%s: the level changes within the step in %s", tc.name, name)
				}
				return dd
			}
			n := len(d.Nodes)
			closeDerivatives(t, tc.name+" dweights/d"+name, sens.Stationary[k], centralDiff(func(h float64) []float64 { return build(h).Weights }, 0, 1e-4))
			closeDerivatives(t, tc.name+" dpoints/d"+name, sens.Grid[k], centralDiff(func(h float64) []float64 { return build(h).Nodes }, 0, 1e-4))
			if !sameFloats(sens.Transition[k][(n-1)*n:], sens.Stationary[k]) {
				t.Errorf("%s: every row's derivative must be the weights'", tc.name)
			}
		}
	}
}

func sameFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func TestIIDSensitivitiesRefuse(t *testing.T) {
	if _, _, err := (IID{Dist: Beta{Alpha: 2, Beta: 3, Lo: 0, Hi: 1}}).Sensitivities(Settings{States: 5, Moments: 2}); err == nil || !strings.Contains(err.Error(), "the law is beta") {
		t.Errorf("beta: %v", err)
	}
	if _, _, err := (IID{Dist: StudentT{Nu: 8, Scale: 1}}).Sensitivities(Settings{States: 5, Moments: 2, Nodes: NodesEqualMass}); err == nil || !strings.Contains(err.Error(), "nu of this law on equal-mass nodes") {
		t.Errorf("t on equal-mass nodes: %v", err)
	}
}
