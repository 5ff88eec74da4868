package solver

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Gauss-Hermite nodes and weights for ω(x) = exp(−x²) from Abramowitz and
// Stegun (1964), Table 25.10 (15 significant digits printed; values as
// recalled in REFERENCES.md and confirmed against scipy below). Tolerance
// 1e-14: the table's last printed digit.
func TestGaussHermiteAbramowitzStegun(t *testing.T) {
	cases := []struct {
		n              int
		nodes, weights []float64 // non-negative half, ascending
	}{
		{3, []float64{0, 1.224744871391589}, []float64{1.181635900603677, 0.295408975150919}},
		{5, []float64{0, 0.958572464613819, 2.020182870456086}, []float64{0.945308720482942, 0.393619323152241, 0.019953242059046}},
	}
	for _, c := range cases {
		r := GaussHermite(c.n)
		half := c.n / 2
		for k := range c.nodes {
			x, w := r.Nodes[half+k], r.Weights[half+k]
			if !scalar.EqualWithinAbs(x, c.nodes[k], 1e-14) || !scalar.EqualWithinAbs(w, c.weights[k], 1e-14) {
				t.Errorf("n=%d node %d: got (%.16g, %.16g), want (%.15g, %.15g)", c.n, k, x, w, c.nodes[k], c.weights[k])
			}
			// Symmetry about zero.
			if !scalar.EqualWithinAbs(r.Nodes[c.n-1-half-k], -x, 1e-15) {
				t.Errorf("n=%d: nodes not symmetric", c.n)
			}
		}
	}
}

// Larger rules against scipy.special.roots_hermite and roots_legendre.
// Nodes agree to 1e-13 relative; weights to 1e-11 relative, since the
// smallest Gauss-Hermite weights (below 1e-100 at n = 80) are computed by
// two independent routes whose rounding differs in the last digits.
func TestGaussRulesAgainstScipy(t *testing.T) {
	sizes := []int{2, 7, 10, 21, 40, 80}
	var ref struct {
		Hermite, Legendre map[string][2][]float64
	}
	scipyEval(t, fmt.Sprintf(`
from scipy.special import roots_hermite, roots_legendre
out = {"Hermite": {}, "Legendre": {}}
for n in %s:
    x, w = roots_hermite(n); out["Hermite"][str(n)] = [x.tolist(), w.tolist()]
    x, w = roots_legendre(n); out["Legendre"][str(n)] = [x.tolist(), w.tolist()]
print(json.dumps(out))`, pyList(sizes)), &ref)
	for _, n := range sizes {
		for name, got := range map[string]Rule{"Hermite": GaussHermite(n), "Legendre": GaussLegendre(n, -1, 1)} {
			want := map[string][2][]float64{"Hermite": ref.Hermite[fmt.Sprint(n)], "Legendre": ref.Legendre[fmt.Sprint(n)]}[name]
			for i := 0; i < n; i++ {
				if !scalar.EqualWithinAbsOrRel(got.Nodes[i], want[0][i], 1e-13, 1e-13) {
					t.Errorf("%s n=%d node %d: got %.17g, scipy %.17g", name, n, i, got.Nodes[i], want[0][i])
				}
				if !scalar.EqualWithinRel(got.Weights[i], want[1][i], 1e-11) {
					t.Errorf("%s n=%d weight %d: got %.17g, scipy %.17g", name, n, i, got.Weights[i], want[1][i])
				}
			}
		}
	}
}

// An n-point Gauss rule integrates polynomials of degree 2n−1 exactly:
// ∫ x^{2k} e^{−x²} dx = Γ(k+½) (closed form); ∫_a^b x^k dx = (b^{k+1}−a^{k+1})/(k+1).
// Tolerance 1e-12 relative: a few ulps times the size of the sums.
func TestGaussRulesExactForPolynomials(t *testing.T) {
	for _, n := range []int{1, 4, 9, 15} {
		gh := GaussHermite(n)
		for k := 0; 2*k <= 2*n-1; k++ {
			var s float64
			for i, x := range gh.Nodes {
				s += gh.Weights[i] * math.Pow(x, float64(2*k))
			}
			if want := math.Gamma(float64(k) + 0.5); !scalar.EqualWithinRel(s, want, 1e-12) {
				t.Errorf("Gauss-Hermite n=%d: ∫x^%d e^{-x²} = %.16g, want Γ(%d+½) = %.16g", n, 2*k, s, k, want)
			}
		}
		a, b := -0.5, 2.0
		gl := GaussLegendre(n, a, b)
		for k := 0; k <= 2*n-1; k++ {
			var s float64
			for i, x := range gl.Nodes {
				s += gl.Weights[i] * math.Pow(x, float64(k))
			}
			kk := float64(k + 1)
			if want := (math.Pow(b, kk) - math.Pow(a, kk)) / kk; !scalar.EqualWithinAbsOrRel(s, want, 1e-12, 1e-12) {
				t.Errorf("Gauss-Legendre n=%d: ∫x^%d = %.16g, want %.16g", n, k, s, want)
			}
		}
	}
}

// Trapezoid integrates linear functions exactly; quantile nodes sit at the
// (i−½)/n quantiles (checked through the CDF, to 1e-12).
func TestTrapezoidAndQuantiles(t *testing.T) {
	r := Trapezoid(7, -1, 2)
	var s0, s1 float64
	for i, x := range r.Nodes {
		s0 += r.Weights[i]
		s1 += r.Weights[i] * x
	}
	if !scalar.EqualWithinAbs(s0, 3, 1e-14) || !scalar.EqualWithinAbs(s1, 1.5, 1e-14) {
		t.Errorf("trapezoid: ∫1 = %g (want 3), ∫x = %g (want 1.5)", s0, s1)
	}
	d := Normal{Mu: 1, Sigma: 2}
	q := Quantiles(5, d)
	for i, x := range q.Nodes {
		if p := d.CDF(x); !scalar.EqualWithinAbs(p, (float64(i)+0.5)/5, 1e-12) {
			t.Errorf("quantile node %d: CDF = %g, want %g", i, p, (float64(i)+0.5)/5)
		}
	}
}

func pyList(v []int) string {
	s := "["
	for i, x := range v {
		if i > 0 {
			s += ","
		}
		s += fmt.Sprint(x)
	}
	return s + "]"
}
