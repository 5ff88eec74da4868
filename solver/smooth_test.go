package solver

import (
	"math"
	"testing"
)

// maxChange is the largest absolute difference between two transition
// matrices of the same shape.
func maxChange(a, b []float64) float64 {
	var w float64
	for j := range a {
		w = math.Max(w, math.Abs(a[j]-b[j]))
	}
	return w
}

// bisectStep follows, from the interval [a, b], the half in which the
// transition matrix changes more, down to an interval of width tol, and
// returns the change across that last interval: a jump keeps its size as
// the interval shrinks, a continuous change shrinks with it.
func bisectStep(chain func(float64) []float64, a, b, tol float64) (change, at float64) {
	pa, pb := chain(a), chain(b)
	for b-a > tol {
		m := a + (b-a)/2
		pm := chain(m)
		if maxChange(pa, pm) >= maxChange(pm, pb) {
			b, pb = m, pm
		} else {
			a, pa = m, pm
		}
	}
	return maxChange(pa, pb), a
}

// sweepContinuity sweeps chain over [lo, hi] in steps coarse intervals,
// bisects the `bisect` largest steps to width 1e-9 and returns the largest
// change across a final interval, with where it was.
func sweepContinuity(chain func(float64) []float64, lo, hi float64, steps, bisect int) (worst, at float64) {
	type step struct{ a, change float64 }
	h := (hi - lo) / float64(steps)
	list := make([]step, 0, steps)
	prev := chain(lo)
	for s := 1; s <= steps; s++ {
		x := lo + h*float64(s)
		p := chain(x)
		list = append(list, step{x - h, maxChange(prev, p)})
		prev = p
	}
	for k := 0; k < bisect && k < len(list); k++ {
		best := 0
		for i := range list {
			if list[i].change > list[best].change {
				best = i
			}
		}
		c, x := bisectStep(chain, list[best].a, math.Min(list[best].a+h, hi), 1e-9)
		if c > worst {
			worst, at = c, x
		}
		list[best].change = -1
	}
	return worst, at
}

// continuityBound is the test: across every bisected interval of
// width 1e-9 no transition probability may change by more than 1e-6 (a
// slope of at most 1000 per unit of the parameter; the exact policy's
// jumps are 1e-3 to 0.4 there, see the exact-policy cases below).
const continuityBound = 1e-6

func TestSmoothContinuityInRho(t *testing.T) {
	for _, rule := range []NodeRule{NodesLattice, NodesGaussHermite, NodesGaussLegendre, NodesEqualMass} {
		for _, n := range []int{9, 21} {
			chain := func(rho float64) []float64 {
				c, err := AR1{Rho: rho, Sigma: 0.1}.Discretize(Settings{States: n, Moments: 4, Nodes: rule, Matching: MatchSmooth})
				if err != nil {
					t.Fatal(err)
				}
				for i, cert := range c.Certificates {
					if cert == CertUnproven {
						t.Fatalf("%s N=%d rho=%.12g: state %d did not converge", rule, n, rho, i)
					}
				}
				return c.Transition
			}
			worst, at := sweepContinuity(chain, 0.9, 0.999, 80, 4)
			if worst > continuityBound {
				t.Errorf("%s N=%d: a transition probability changes by %.3g across rho in [%.10f, +1e-9]", rule, n, worst, at)
			}
		}
	}
}

// TestSmoothContinuityInInnovationShape: the same check in the degrees of
// freedom ν of a Student t innovation, swept over [5, 30] (4 moments need
// a finite kurtosis, ν > 4). The penalty's scales are the normal law's,
// whatever ν: scales taken from the t itself fell back to the normal's
// where a moment m_2k ceases to exist (ν = 6, 8), and the chain jumped
// there by up to 0.08.
func TestSmoothContinuityInInnovationShape(t *testing.T) {
	for _, rule := range []NodeRule{NodesLattice, NodesGaussHermite, NodesGaussLegendre, NodesEqualMass} {
		for _, n := range []int{9, 21} {
			chain := func(nu float64) []float64 {
				c, err := AR1{Rho: 0.95, Sigma: 0.1, Shock: Standardized{StudentT{Nu: nu, Scale: 1}}}.Discretize(Settings{States: n, Moments: 4, Nodes: rule, Matching: MatchSmooth})
				if err != nil {
					t.Fatal(err)
				}
				return c.Transition
			}
			if worst, at := sweepContinuity(chain, 5, 30, 40, 3); worst > continuityBound {
				t.Errorf("%s N=%d: a transition probability changes by %.3g across nu in [%.10f, +1e-9]", rule, n, worst, at)
			}
		}
	}
}

// TestExactPolicyJumps shows the sweep finds the exact policy's jumps, so
// that the smooth policy's pass means something.
func TestExactPolicyJumps(t *testing.T) {
	chain := func(rho float64) []float64 {
		c, _ := AR1{Rho: rho, Sigma: 0.1}.Discretize(Settings{States: 21, Moments: 4, Nodes: NodesGaussLegendre})
		return c.Transition
	}
	if worst, at := sweepContinuity(chain, 0.9, 0.999, 80, 2); worst < 1e-2 {
		t.Errorf("the exact policy's largest jump is %.3g (at rho %.10f); the sweep should find one above 1e-2", worst, at)
	}
}

func TestSmoothContinuityInSigma(t *testing.T) {
	// An AR(1) chain on a grid scaled by the stationary s.d. depends on
	// sigma only through the grid's scale (its probabilities do not move),
	// so the variance parameter swept is a VAR's innovation variance
	// cov[1,1], on coordinate axes: principal axes turn, and flip sign,
	// with the covariance, which moves the grid itself (see doc.go).
	for _, tc := range varContinuityCases() {
		chain := func(v float64) []float64 {
			c, err := VAR{Coef: []float64{0.9, 0.05, 0.02, 0.8}, Cov: []float64{0.01, 0.002, 0.002, v}}.Discretize(
				Settings{States: tc.axis, Moments: 4, Nodes: tc.rule, Axes: AxesCoordinate, Matching: MatchSmooth})
			if err != nil {
				t.Fatal(err)
			}
			return c.Transition
		}
		if worst, at := sweepContinuity(chain, 0.004, 0.03, 30, 2); worst > continuityBound {
			t.Errorf("VAR cov[1,1], %s, %d per axis: a transition probability changes by %.3g across [%.10f, +1e-9]", tc.rule, tc.axis, worst, at)
		}
	}
}

// varContinuityCases are the grids of the VAR continuity checks: every
// node rule with 3 points per axis (9 states) and 5 (25 states, the
// nearest square to the 21), and the 7-point lattice.
func varContinuityCases() []struct {
	rule NodeRule
	axis int
} {
	out := []struct {
		rule NodeRule
		axis int
	}{{NodesLattice, 7}}
	for _, rule := range []NodeRule{NodesLattice, NodesGaussHermite, NodesGaussLegendre, NodesEqualMass} {
		for _, axis := range []int{3, 5} {
			out = append(out, struct {
				rule NodeRule
				axis int
			}{rule, axis})
		}
	}
	return out
}

func TestSmoothContinuityInVARCoefficient(t *testing.T) {
	for _, tc := range varContinuityCases() {
		chain := func(b float64) []float64 {
			c, err := VAR{Coef: []float64{b, 0.1, 0.05, 0.7}, Cov: []float64{0.01, 0.003, 0.003, 0.02}}.Discretize(
				Settings{States: tc.axis, Moments: 4, Nodes: tc.rule, Axes: AxesCoordinate, Matching: MatchSmooth})
			if err != nil {
				t.Fatal(err)
			}
			return c.Transition
		}
		if worst, at := sweepContinuity(chain, 0.5, 0.95, 30, 2); worst > continuityBound {
			t.Errorf("VAR coef[0,0], %s, %d per axis: a transition probability changes by %.3g across [%.10f, +1e-9]", tc.rule, tc.axis, worst, at)
		}
	}
}

// TestSmoothAgreesWithExact: wherever the exact policy matches all the
// requested moments with its dual converged (CertSolved), the smooth
// policy's penalty is below 1e-11 in standardized units and the rows
// agree to 1e-8 (the bound; measured agreement is about 1e-11).
func TestSmoothAgreesWithExact(t *testing.T) {
	for _, rule := range []NodeRule{NodesLattice, NodesGaussHermite, NodesGaussLegendre, NodesEqualMass} {
		for _, n := range []int{9, 21} {
			compared := 0
			for _, rho := range []float64{0.3, 0.6, 0.8, 0.9, 0.95, 0.98} {
				p := AR1{Rho: rho, Sigma: 0.1}
				s := Settings{States: n, Moments: 4, Nodes: rule}
				ex, _ := p.Discretize(s)
				s.Matching = MatchSmooth
				sm, _ := p.Discretize(s)
				for i := 0; i < n; i++ {
					if ex.Certificates[i] != CertSolved {
						continue
					}
					compared++
					if sm.Matched[i] != 4 {
						t.Errorf("%s N=%d rho=%g state %d: smooth matched %d moments, exact 4", rule, n, rho, i, sm.Matched[i])
					}
					if d := maxChange(ex.Row(i), sm.Row(i)); d > 1e-8 {
						t.Errorf("%s N=%d rho=%g state %d: rows differ by %.3g", rule, n, rho, i, d)
					}
				}
			}
			if compared < 2*n {
				t.Errorf("%s N=%d: only %d states compared", rule, n, compared)
			}
		}
	}
}
