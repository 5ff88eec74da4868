package solver

import (
	"strings"
	"testing"
)

// TestVARSensitivitiesAgainstFiniteDifferences checks every derivative of
// a 2-D VAR chain (grid, transition matrix, stationary law, in each
// intercept, coefficient and covariance entry) against Richardson-
// extrapolated central differences of the chain itself, with the bound
// of closeDerivatives (1e-6 relative + 1e-8). Cases: principal and
// coordinate axes, both matching policies, a correlated process with a
// non-zero intercept. The exact case is checked only where no state
// changes level within the differencing step.
func TestVARSensitivitiesAgainstFiniteDifferences(t *testing.T) {
	base := VAR{Coef: []float64{0.7, 0.1, 0.05, 0.6}, Cov: []float64{0.02, 0.004, 0.004, 0.01}, Intercept: []float64{0.1, -0.2}}
	cases := []struct {
		name string
		s    Settings
	}{
		{"smooth principal", Settings{States: 5, Moments: 4, Matching: MatchSmooth}},
		{"smooth coordinate gauss-hermite", Settings{States: 4, Moments: 4, Axes: AxesCoordinate, Nodes: NodesGaussHermite, Matching: MatchSmooth}},
		{"exact coordinate", Settings{States: 5, Moments: 2, Axes: AxesCoordinate}},
	}
	for _, tc := range cases {
		c, sens, err := base.Sensitivities(tc.s)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		plain, err := base.Discretize(tc.s)
		if err != nil {
			t.Fatal(err)
		}
		if d := maxChange(c.Transition, plain.Transition); d != 0 {
			t.Errorf("%s: the chain with sensitivities differs from Discretize's by %.3g", tc.name, d)
		}
		if len(sens.Params) != 2+4+3 {
			t.Fatalf("%s: %d parameters %v, want 9", tc.name, len(sens.Params), sens.Params)
		}
		for k, name := range sens.Params {
			at := func(h float64) VAR {
				q := VAR{Coef: append([]float64(nil), base.Coef...), Cov: append([]float64(nil), base.Cov...), Intercept: append([]float64(nil), base.Intercept...)}
				var r, col int
				switch {
				case strings.HasPrefix(name, "intercept"):
					parseIndex(name, &r, nil)
					q.Intercept[r] += h
				case strings.HasPrefix(name, "coef"):
					parseIndex(name, &r, &col)
					q.Coef[r*2+col] += h
				default:
					parseIndex(name, &r, &col)
					q.Cov[r*2+col] += h
					if r != col {
						q.Cov[col*2+r] += h
					}
				}
				return q
			}
			build := func(h float64) *Chain {
				ch, err := at(h).Discretize(tc.s)
				if err != nil {
					t.Fatal(err)
				}
				if tc.s.Matching == MatchExact {
					for i := range ch.Matched {
						if ch.Matched[i] != c.Matched[i] {
							t.Fatalf("%s: a state changes level within the step in %s", tc.name, name)
						}
					}
				}
				return ch
			}
			trans := func(h float64) []float64 { return build(h).Transition }
			grid := func(h float64) []float64 { return build(h).Grid }
			stat := func(h float64) []float64 {
				ch := build(h)
				pi, _ := Stationary(ch.Transition, ch.States())
				return pi
			}
			closeDerivatives(t, tc.name+" dP/d"+name, sens.Transition[k], centralDiff(trans, 0, 1e-4))
			closeDerivatives(t, tc.name+" dgrid/d"+name, sens.Grid[k], centralDiff(grid, 0, 1e-4))
			closeDerivatives(t, tc.name+" dpi/d"+name, sens.Stationary[k], centralDiff(stat, 0, 1e-4))
		}
	}
}

// parseIndex reads the indices of "name[r]" or "name[r][c]".
func parseIndex(name string, r, c *int) {
	parts := strings.FieldsFunc(name, func(x rune) bool { return x == '[' || x == ']' })
	*r = int(parts[1][0] - '0')
	if c != nil {
		*c = int(parts[2][0] - '0')
	}
}

func TestVARSensitivitiesRefuse(t *testing.T) {
	p := VAR{Coef: []float64{0.5, 0, 0, 0.5}, Cov: []float64{0.01, 0, 0, 0.01}}
	if _, _, err := p.Sensitivities(Settings{States: 3, Method: Tauchen}); err != ErrNoSensitivities {
		t.Errorf("tauchen: %v, want ErrNoSensitivities", err)
	}
	// Σ = Ψ/(1 − 0.25) has one repeated eigenvalue: principal axes are
	// not differentiable there (any rotation is an eigenbasis).
	if _, _, err := p.Sensitivities(Settings{States: 3, Moments: 2}); err == nil || !strings.Contains(err.Error(), "repeated eigenvalue") {
		t.Errorf("principal axes at a repeated eigenvalue: %v", err)
	}
	if _, _, err := p.Sensitivities(Settings{States: 3, Moments: 2, Axes: AxesCoordinate}); err != nil {
		t.Errorf("coordinate axes: %v", err)
	}
}
