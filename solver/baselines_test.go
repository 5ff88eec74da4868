package solver

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat/distuv"
)

// Tauchen (1986) against its definition computed independently with
// scipy.stats.norm.cdf: even grid over ±m σ_y, probabilities are normal CDF
// differences at the cell midpoints with open end cells. Tolerance 1e-14
// absolute: both sides evaluate the same CDF differences in double
// precision (ours with erfc, scipy's with ndtr).
func TestTauchenAgainstScipy(t *testing.T) {
	cases := []struct {
		p     AR1
		n     int
		width float64
	}{
		{AR1{Rho: 0.9, Sigma: 0.1}, 7, 3},
		{AR1{Mean: 1.5, Rho: -0.4, Sigma: 2}, 5, 2.5},
		{AR1{Rho: 0.99, Sigma: 0.02}, 21, 3},
	}
	for _, c := range cases {
		ch, err := c.p.Discretize(Settings{States: c.n, Method: Tauchen, Width: c.width})
		if err != nil {
			t.Fatal(err)
		}
		var ref struct{ Grid, P []float64 }
		scipyEval(t, fmt.Sprintf(`from scipy.stats import norm
mu, rho, s, n, m = %v, %v, %v, %d, %v
sy = s / np.sqrt(1 - rho**2)
x = np.linspace(mu - m*sy, mu + m*sy, n); h = x[1] - x[0]
P = np.zeros((n, n))
for i in range(n):
    c = (1 - rho)*mu + rho*x[i]
    P[i, 0] = norm.cdf((x[0] + h/2 - c)/s)
    P[i, -1] = norm.sf((x[-1] - h/2 - c)/s)
    for j in range(1, n-1):
        P[i, j] = norm.cdf((x[j] + h/2 - c)/s) - norm.cdf((x[j] - h/2 - c)/s)
print(json.dumps({"Grid": x.tolist(), "P": P.ravel().tolist()}))`, c.p.Mean, c.p.Rho, c.p.Sigma, c.n, c.width), &ref)
		for i := range ref.Grid {
			if !scalar.EqualWithinAbsOrRel(ch.Grid[i], ref.Grid[i], 1e-14, 1e-14) {
				t.Errorf("%+v: grid %d = %.17g, scipy %.17g", c.p, i, ch.Grid[i], ref.Grid[i])
			}
		}
		for k := range ref.P {
			if !scalar.EqualWithinAbs(ch.Transition[k], ref.P[k], 1e-14) {
				t.Errorf("%+v: P[%d][%d] = %.17g, scipy %.17g", c.p, k/c.n, k%c.n, ch.Transition[k], ref.P[k])
			}
		}
	}
}

// Tauchen and Hussey (1991) against the definition with an independent
// Gauss-Hermite rule (scipy.special.roots_hermite) and normal density
// (scipy.stats.norm.pdf), with and without the Flodén (2008) base s.d.
// Tolerance 1e-13: the ratios of densities are formed in different orders.
func TestTauchenHusseyAgainstScipy(t *testing.T) {
	for _, floden := range []bool{false, true} {
		p := AR1{Mean: 0.2, Rho: 0.95, Sigma: 0.1}
		ch, err := p.Discretize(Settings{States: 9, Method: TauchenHussey, Floden: floden})
		if err != nil {
			t.Fatal(err)
		}
		base := p.Sigma
		if floden {
			w := 0.5 + p.Rho/4
			base = w*p.Sigma + (1-w)*p.StationarySD()
		}
		var ref []float64
		scipyEval(t, fmt.Sprintf(`from scipy.special import roots_hermite
from scipy.stats import norm
mu, rho, s, sb, n = %v, %v, %v, %v, 9
z, w = roots_hermite(n)
x = mu + np.sqrt(2)*sb*z
P = np.array([[w[j]*norm.pdf(x[j], (1-rho)*mu + rho*x[i], s)/norm.pdf(x[j], mu, sb) for j in range(n)] for i in range(n)])
P /= P.sum(axis=1, keepdims=True)
print(json.dumps(P.ravel().tolist()))`, p.Mean, p.Rho, p.Sigma, base), &ref)
		for k := range ref {
			if !scalar.EqualWithinAbs(ch.Transition[k], ref[k], 1e-13) {
				t.Errorf("floden=%v: P[%d][%d] = %.17g, scipy %.17g", floden, k/9, k%9, ch.Transition[k], ref[k])
			}
		}
	}
}

// Exact properties of Rouwenhorst's chain (Kopecky and Suen 2010): grid
// ±σ_y√(N−1); conditional mean ρ x_i and conditional variance σ² in every
// state; stationary distribution Binomial(N−1, ½); autocorrelation ρ.
// Tolerance 1e-12 (standardized): the recursion sums O(N²) rounded terms.
func TestRouwenhorstExactProperties(t *testing.T) {
	for _, n := range []int{2, 3, 5, 11, 25} {
		for _, rho := range []float64{-0.5, 0, 0.9, 0.995} {
			p := AR1{Mean: -1, Rho: rho, Sigma: 0.3}
			c, err := p.Discretize(Settings{States: n, Method: Rouwenhorst})
			if err != nil {
				t.Fatal(err)
			}
			sdY := p.StationarySD()
			if psi := c.Grid[n-1] - p.Mean; !scalar.EqualWithinRel(psi, sdY*math.Sqrt(float64(n-1)), 1e-14) {
				t.Errorf("N=%d: grid half-width %g", n, psi)
			}
			d := Diagnose(c, p)
			if d.WorstRelErr.Mean > 1e-12 || d.WorstRelErr.Var > 1e-12 {
				t.Errorf("N=%d rho=%g: worst mean err %.3g, var err %.3g", n, rho, d.WorstRelErr.Mean, d.WorstRelErr.Var)
			}
			bin := distuv.Binomial{N: float64(n - 1), P: 0.5}
			for i, pi := range d.Stationary {
				if !scalar.EqualWithinAbs(pi, bin.Prob(float64(i)), 1e-12) {
					t.Errorf("N=%d rho=%g: π[%d] = %.15g, Binomial gives %.15g", n, rho, i, pi, bin.Prob(float64(i)))
				}
			}
			if !scalar.EqualWithinAbs(d.Chain.Autocorr, rho, 1e-12) || !scalar.EqualWithinRel(d.Chain.SD, sdY, 1e-12) {
				t.Errorf("N=%d rho=%g: autocorr %.15g, sd %.15g (want %g)", n, rho, d.Chain.Autocorr, d.Chain.SD, sdY)
			}
		}
	}
}

// The GTH stationary solver on a chain with a closed-form answer: the
// two-state chain [[1−a, a], [b, 1−b]] has π = (b, a)/(a+b) (common
// practice), checked at a nearly decomposable a = b·1e-9 where power
// iteration would need ~10^9 steps. Tolerance 1e-15 absolute.
func TestStationaryTwoState(t *testing.T) {
	a, b := 1e-12, 1e-3
	pi, err := Stationary([]float64{1 - a, a, b, 1 - b}, 2)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbs(pi[0], b/(a+b), 1e-15) || !scalar.EqualWithinAbs(pi[1], a/(a+b), 1e-15) {
		t.Errorf("π = %v, want (%g, %g)", pi, b/(a+b), a/(a+b))
	}
	if _, err := Stationary([]float64{1, 0, 0, 1}, 2); err == nil {
		t.Error("reducible chain accepted")
	}
}
