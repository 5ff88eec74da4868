package solver

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// addaCooperCases cover weak, strong and negative persistence, odd and even
// N, and the N = 2, 5, 25 and ρ = 0.99 cases the method is known to be
// used at.
var addaCooperCases = []struct {
	p AR1
	n int
}{
	{AR1{Rho: 0.9, Sigma: 0.1}, 5},
	{AR1{Mean: 1.5, Rho: 0.99, Sigma: 0.01}, 25},
	{AR1{Mean: -2, Rho: 0.5, Sigma: 1}, 2},
	{AR1{Rho: 0.99, Sigma: 0.05}, 5},
	{AR1{Mean: 0.4, Rho: -0.7, Sigma: 0.3}, 6},
	{AR1{Mean: 0.02, Rho: 0.95, Sigma: 0.15}, 25},
	{AR1{Rho: 0.99, Sigma: 0.2}, 2},
	{AR1{Rho: 0, Sigma: 0.2}, 3},
}

// Adda and Cooper (2003) against an independent computation of the
// published formulas in the process's own units: cut points and interval
// means from scipy.stats.norm (ppf, pdf), transition integrals by
// scipy.integrate.quad (adaptive Gauss-Kronrod, infinite end intervals by
// quad's own change of variables) with Φ from scipy.special.ndtr, the
// routine scipy.stats.norm.cdf evaluates (called directly: 625 integrals
// per 25-state case). Tolerance 1e-10 absolute on probabilities and
// 1e-10 absolute-or-relative on grid points (the check the method's
// issue asks for); the reference itself must report quad error estimates
// below 1e-12 for the comparison to mean anything, and the test checks so.
func TestAddaCooperAgainstScipy(t *testing.T) {
	for _, c := range addaCooperCases {
		ch, err := c.p.Discretize(Settings{States: c.n, Method: AddaCooper})
		if err != nil {
			t.Fatal(err)
		}
		var ref struct {
			Grid, P []float64
			MaxErr  float64
		}
		scipyEval(t, fmt.Sprintf(`from scipy.stats import norm
from scipy.integrate import quad
from scipy.special import ndtr
import math
mu, rho, s, n = %v, %v, %v, %d
sx = s / math.sqrt(1 - rho**2)
e = norm.ppf(np.arange(n + 1) / n, loc=mu, scale=sx)
z = mu + n * sx * (norm.pdf((e[:-1] - mu) / sx) - norm.pdf((e[1:] - mu) / sx))
c0 = (1 - rho) * mu
def mass(lo, hi):
    # P(lo < x' < hi | u) as a difference of lower or upper tails
    if lo > 0:
        return ndtr(-lo) - ndtr(-hi)
    return ndtr(hi) - ndtr(lo)
P = np.zeros((n, n)); worst = 0.0
for i in range(n):
    for j in range(n):
        f = lambda u: math.exp(-0.5 * ((u - mu) / sx)**2) / (sx * math.sqrt(2 * math.pi)) * mass((e[j] - c0 - rho * u) / s, (e[j + 1] - c0 - rho * u) / s)
        lo, hi = e[i], e[i + 1]
        kinks = [] if rho == 0 else sorted(k for k in ((e[j] - c0) / rho, (e[j + 1] - c0) / rho) if lo < k < hi)
        if np.isfinite(lo) and np.isfinite(hi):
            v, err = quad(f, lo, hi, points=kinks or None, epsabs=1e-14, epsrel=1e-13, limit=500)
        else:
            v, err = quad(f, lo, hi, epsabs=1e-14, epsrel=1e-13, limit=500)
        P[i, j] = n * v; worst = max(worst, n * err)
print(json.dumps({"Grid": z.tolist(), "P": P.ravel().tolist(), "MaxErr": worst}))`, c.p.Mean, c.p.Rho, c.p.Sigma, c.n), &ref)
		if ref.MaxErr > 1e-12 {
			t.Errorf("%+v N=%d: scipy's own error estimate %.2g is too large to judge 1e-10", c.p, c.n, ref.MaxErr)
		}
		var worstP, worstZ float64
		for i := range ref.Grid {
			worstZ = math.Max(worstZ, math.Abs(ch.Grid[i]-ref.Grid[i]))
			if !scalar.EqualWithinAbsOrRel(ch.Grid[i], ref.Grid[i], 1e-10, 1e-10) {
				t.Errorf("%+v N=%d: grid %d = %.17g, scipy %.17g", c.p, c.n, i, ch.Grid[i], ref.Grid[i])
			}
		}
		for k := range ref.P {
			worstP = math.Max(worstP, math.Abs(ch.Transition[k]-ref.P[k]))
			if !scalar.EqualWithinAbs(ch.Transition[k], ref.P[k], 1e-10) {
				t.Errorf("%+v N=%d: P[%d][%d] = %.17g, scipy %.17g", c.p, c.n, k/c.n, k%c.n, ch.Transition[k], ref.P[k])
			}
		}
		t.Logf("rho=%g N=%d: largest difference from scipy: grid %.2g, matrix %.2g (scipy's error estimate %.2g)", c.p.Rho, c.n, worstZ, worstP, ref.MaxErr)
	}
}

// The exact properties of the method [derived in solver/addacooper.go]:
// the matrix is doubly stochastic (columns sum to one, tolerance 1e-12),
// the stationary law from the Grassmann-Taksar-Heyman elimination is
// uniform 1/N (tolerance 1e-12), and the grid's uniform average is μ
// (tolerance 1e-13 relative to σ_x: one rounding per state). Row sums
// before rescaling equal N·P(t ∈ I_i) = 1 exactly, so their distance from
// one measures the quadrature error itself; it must be at rounding level,
// 4e-16·N (N rounded terms, and cut points a_k rounded by about 1e-16
// that move each interval's mass N·ΔΦ by up to N·φ·1e-16), and the
// a-priori bound below 1e-15.
func TestAddaCooperExactProperties(t *testing.T) {
	cases := append(addaCooperCases[:len(addaCooperCases):len(addaCooperCases)],
		struct {
			p AR1
			n int
		}{AR1{Rho: 0.999, Sigma: 0.01}, 51},
		struct {
			p AR1
			n int
		}{AR1{Mean: 3, Rho: 0.6, Sigma: 2}, 400})
	for _, c := range cases {
		ch, err := c.p.Discretize(Settings{States: c.n, Method: AddaCooper})
		if err != nil {
			t.Fatal(err)
		}
		if err := ch.Check(1e-13); err != nil {
			t.Errorf("%+v N=%d: %v", c.p, c.n, err)
		}
		n := c.n
		for j := 0; j < n; j++ {
			var col float64
			for i := 0; i < n; i++ {
				col += ch.Transition[i*n+j]
			}
			if math.Abs(col-1) > 1e-12 {
				t.Errorf("%+v N=%d: column %d sums to 1%+.3g", c.p, n, j, col-1)
			}
		}
		pi, err := Stationary(ch.Transition, n)
		if err != nil {
			t.Fatal(err)
		}
		for i, v := range pi {
			if math.Abs(v-1/float64(n)) > 1e-12 {
				t.Errorf("%+v N=%d: stationary[%d] = %.17g, want 1/%d", c.p, n, i, v, n)
			}
		}
		var mean float64
		for _, z := range ch.Grid {
			mean += z / float64(n)
		}
		if math.Abs(mean-c.p.Mean) > 1e-13*c.p.StationarySD() {
			t.Errorf("%+v N=%d: grid average %.17g, want μ = %g", c.p, n, mean, c.p.Mean)
		}

		raw := make([]float64, n*n)
		bound, defect := addaCooperRaw(n, c.p.Rho, raw)
		if defect > 4e-16*float64(n) {
			t.Errorf("%+v N=%d: row sums before rescaling miss one by %.2g", c.p, n, defect)
		}
		t.Logf("rho=%g N=%d: row defect %.2g, bound %.2g", c.p.Rho, n, defect, bound)
		if bound > 1e-15 {
			t.Errorf("%+v N=%d: quadrature error bound %.2g", c.p, n, bound)
		}
	}
}

// The chain of a non-normal innovation is refused: the method's intervals
// are quantiles of the normal stationary law.
func TestAddaCooperNeedsNormal(t *testing.T) {
	p := AR1{Rho: 0.9, Sigma: 0.1, Shock: Standardized{Base: Laplace{Scale: 1}}}
	if _, err := p.Discretize(Settings{States: 5, Method: AddaCooper}); err != ErrNeedsNormal {
		t.Fatalf("got %v, want ErrNeedsNormal", err)
	}
}
