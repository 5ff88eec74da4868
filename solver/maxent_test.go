package solver

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// matchTol is the bound on conditional-moment errors, in standardized units,
// in every state where the requested moments were matched. The dual solver
// stops at 1e-13; 1e-10 leaves room for the rounding of the moment sums
// (terms up to (√(N−1)·width)^4 ≈ 10^4 times machine epsilon).
const matchTol = 1e-10

func TestMaxEntMatchesConditionalMoments(t *testing.T) {
	mixture := Standardized{Base: Mixture{Weights: []float64{0.9, 0.1}, Means: []float64{0.05, -0.45}, SDs: []float64{0.8, 1.6}}}
	cases := []struct {
		name string
		p    AR1
		s    Settings
		all  bool // every state must match all requested moments
	}{
		{"gaussian rho=0.5 even", AR1{Rho: 0.5, Sigma: 1}, Settings{States: 21, Moments: 4}, true},
		{"gaussian rho=0.9 even", AR1{Mean: 1, Rho: 0.9, Sigma: 0.1}, Settings{States: 21, Moments: 4}, false},
		// At ρ = 0.99 the default √(N−1) width spaces 51 points 2σ apart, too
		// coarse for the fourth moment (E z⁴ ≥ h² E z² > 3); width 3 is not.
		{"gaussian rho=0.99 even", AR1{Rho: 0.99, Sigma: 0.1}, Settings{States: 51, Moments: 4, Width: 3}, false},
		{"gaussian rho=0.99 two moments", AR1{Rho: 0.99, Sigma: 0.1}, Settings{States: 51, Moments: 2}, true},
		{"gaussian rho=-0.6 legendre", AR1{Rho: -0.6, Sigma: 0.3}, Settings{States: 15, Moments: 4, Nodes: NodesGaussLegendre}, false},
		{"gaussian rho=0.8 hermite", AR1{Rho: 0.8, Sigma: 1}, Settings{States: 15, Moments: 2, Nodes: NodesGaussHermite}, false},
		{"gaussian rho=0.7 quantile", AR1{Rho: 0.7, Sigma: 1}, Settings{States: 31, Moments: 2, Nodes: NodesEqualMass}, false},
		{"mixture rho=0.9", AR1{Rho: 0.9, Sigma: 0.15, Shock: mixture}, Settings{States: 31, Moments: 4}, false},
		{"student t nu=6", AR1{Rho: 0.6, Sigma: 1, Shock: Standardized{Base: StudentT{Nu: 6, Scale: 1}}}, Settings{States: 21, Moments: 4}, false},
		{"laplace", AR1{Rho: 0.6, Sigma: 1, Shock: Standardized{Base: Laplace{Scale: 1}}}, Settings{States: 21, Moments: 4}, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ch, err := c.p.Discretize(c.s)
			if err != nil {
				t.Fatal(err)
			}
			if err := ch.Check(1e-12); err != nil {
				t.Fatal(err)
			}
			d := Diagnose(ch, c.p)
			full := 0
			for i, st := range d.States {
				errs := []float64{st.RelErr.Mean, st.RelErr.Var, st.RelErr.Skew, st.RelErr.Kurt}
				for k := 0; k < min(st.Matched, 4); k++ {
					if math.Abs(errs[k]) > matchTol {
						t.Errorf("state %d matched %d moments but moment %d is off by %.3g", i, st.Matched, k+1, errs[k])
					}
				}
				if st.Matched == c.s.Moments {
					full++
				}
				if st.Matched < 1 {
					t.Errorf("state %d: not even the conditional mean was matched", i)
				}
			}
			// Interior states always carry the full set on these grids; only
			// states near the edges may fall back.
			if c.all && full != len(d.States) || full < len(d.States)/2 {
				t.Errorf("only %d of %d states matched all %d moments", full, len(d.States), c.s.Moments)
			}
		})
	}
}

// [derived, REFERENCES.md] With the conditional mean matched in every state
// the chain's first-order autocorrelation equals ρ; with the variance
// matched too, the unconditional variance equals σ²/(1−ρ²). Tolerance
// 1e-11 relative: the stationary distribution is accurate to a few ulps
// times N (GTH has no cancellation).
func TestMaxEntAutocorrelationAndVariance(t *testing.T) {
	for _, rho := range []float64{-0.5, 0.3, 0.9, 0.97} {
		p := AR1{Mean: 2, Rho: rho, Sigma: 0.2}
		c, err := p.Discretize(Settings{States: 25, Moments: 2})
		if err != nil {
			t.Fatal(err)
		}
		if c.Fallbacks() != 0 {
			t.Fatalf("rho=%g: %d states fell back; the identity needs mean and variance everywhere", rho, c.Fallbacks())
		}
		d := Diagnose(c, p)
		if !scalar.EqualWithinAbs(d.Chain.Autocorr, rho, 1e-11) {
			t.Errorf("rho=%g: chain autocorrelation %.15g", rho, d.Chain.Autocorr)
		}
		if want := 0.2 / math.Sqrt(1-rho*rho); !scalar.EqualWithinRel(d.Chain.SD, want, 1e-11) {
			t.Errorf("rho=%g: chain s.d. %.15g, want σ/√(1−ρ²) = %.15g", rho, d.Chain.SD, want)
		}
		if !scalar.EqualWithinAbs(d.Chain.Mean, 2, 1e-11) {
			t.Errorf("rho=%g: chain mean %.15g, want 2", rho, d.Chain.Mean)
		}
	}
}

// [derived, REFERENCES.md] Five even points on [−√(4π), √(4π)] cannot carry
// N(0,1)'s first four moments (the symmetric solution needs negative end
// weights) but can carry two: the solver must fall back to 2 and say so.
func TestMaxEntInfeasibleFallsBackToTwoMoments(t *testing.T) {
	d, err := IID{Dist: Normal{0, 1}}.Discretize(Settings{States: 5, Moments: 4, Width: math.Sqrt(4 * math.Pi)})
	if err != nil {
		t.Fatal(err)
	}
	if d.Matched != 2 || d.Moments != 4 {
		t.Fatalf("matched %d of %d moments, want 2 of 4", d.Matched, d.Moments)
	}
	m := WeightedMoments(d.Weights, d.Nodes)
	if !scalar.EqualWithinAbs(m.Mean, 0, 1e-12) || !scalar.EqualWithinAbs(m.Var, 1, 1e-12) {
		t.Errorf("fallback did not match mean and variance: %+v", m)
	}
	// The dual itself must report the four-moment problem infeasible.
	logq := make([]float64, 5)
	dev := make([]float64, 5*4)
	fillDeviations(d.Nodes, []float64{0, 1, 0, 3}, dev)
	var dual Dual
	if _, ok := dual.Solve(logq, dev, 4, nil, make([]float64, 5)); ok {
		t.Error("dual claims a four-moment solution exists")
	}
}

// E[e^X] for X ~ N(0,1) is e^{1/2} (REFERENCES.md). On an even 9-point grid
// the error falls as more moments are matched (Tanaka and Toda 2015: the
// discrete law converges as the moment set grows). By symmetry matching the
// third moment changes nothing, so L = 3 equals L = 2 to rounding.
func TestMaxEntExpectationOfExpNormal(t *testing.T) {
	exact := 1.6487212707001282
	errAt := func(L int) float64 {
		d, err := IID{Dist: Normal{0, 1}}.Discretize(Settings{States: 9, Moments: L})
		if err != nil || d.Matched != L {
			t.Fatalf("L=%d: matched %v, err %v", L, d, err)
		}
		var s float64
		for j, x := range d.Nodes {
			s += d.Weights[j] * math.Exp(x)
		}
		return math.Abs(s - exact)
	}
	e1, e2, e3, e4, e6 := errAt(1), errAt(2), errAt(3), errAt(4), errAt(6)
	if !(e2 < e1 && e4 < e2 && e6 < e4) {
		t.Errorf("errors do not shrink with moments: L1 %.3g, L2 %.3g, L4 %.3g, L6 %.3g", e1, e2, e4, e6)
	}
	if !scalar.EqualWithinAbs(e3, e2, 1e-12) {
		t.Errorf("odd moment changed a symmetric problem: L2 %.3g vs L3 %.3g", e2, e3)
	}
}

// For X ~ Beta(a, b), E[e^X] = 1F1(a; a+b; 1) (Abramowitz and Stegun 1964,
// 13.2.1); reference value from scipy.special.hyp1f1 at test time. On a
// 7-point Gauss-Legendre grid over the mean ± 2 standard deviations the
// error shrinks as moments 1..4 are matched. On the whole support [0, 1]
// the 7-point rule is exact for polynomials of degree ≤ 13 and the
// density is cubic, so the prior integrates x^k exactly for k ≤ 10; the
// rest of the series of e^x is below 1/11! ≈ 2.5e-8 and the rule's error
// on it far smaller, so any number of matched moments gives E[e^X] to
// 1e-13 (rounding over 7 terms of order one).
func TestMaxEntExpectationOfExpBeta(t *testing.T) {
	var exact float64
	scipyEval(t, `from scipy.special import hyp1f1; print(json.dumps(float(hyp1f1(2.0, 5.0, 1.0))))`, &exact)
	for L := 1; L <= 4; L++ {
		d, err := IID{Dist: Beta{Alpha: 2, Beta: 3}}.Discretize(Settings{States: 7, Moments: L, Nodes: NodesGaussLegendre})
		if err != nil || d.Matched != L {
			t.Fatalf("support grid, L=%d: %+v %v", L, d, err)
		}
		var s float64
		for j, x := range d.Nodes {
			s += d.Weights[j] * math.Exp(x)
		}
		if e := math.Abs(s - exact); e > 1e-13 {
			t.Errorf("support grid, L=%d: error %.3g, want below 1e-13", L, e)
		}
	}
	prev := math.Inf(1)
	for L := 1; L <= 4; L++ {
		d, err := IID{Dist: Beta{Alpha: 2, Beta: 3}}.Discretize(Settings{States: 7, Moments: L, Nodes: NodesGaussLegendre, Width: 2})
		if err != nil || d.Matched != L {
			t.Fatalf("L=%d: %+v %v", L, d, err)
		}
		var s float64
		for j, x := range d.Nodes {
			s += d.Weights[j] * math.Exp(x)
		}
		e := math.Abs(s - exact)
		if !(e < prev) {
			t.Errorf("L=%d: error %.3g did not shrink from %.3g", L, e, prev)
		}
		prev = e
	}
	if prev > 1e-5 {
		t.Errorf("4-moment error %.3g is larger than expected for a 7-point rule", prev)
	}
}

// Static distributions: every family matches its first four standardized
// moments exactly on a 15-point grid (closed-form moments; 1e-10 as above).
func TestIIDMatchesMoments(t *testing.T) {
	dists := map[string]Distribution{
		"normal":    Normal{Mu: 0.03, Sigma: 0.2},
		"lognormal": LogNormal{Mu: 0, Sigma: 0.25},
		"beta":      Beta{Alpha: 2, Beta: 5, Lo: -1, Hi: 3},
		"mixture":   Mixture{Weights: []float64{0.7, 0.3}, Means: []float64{0.1, -0.2}, SDs: []float64{0.1, 0.4}},
		"t":         StudentT{Nu: 9, Loc: 1, Scale: 0.5},
		"laplace":   Laplace{Loc: -1, Scale: 2},
	}
	for name, dist := range dists {
		for _, g := range []NodeRule{NodesLattice, NodesGaussLegendre, NodesEqualMass} {
			d, err := IID{Dist: dist}.Discretize(Settings{States: 15, Moments: 4, Nodes: g, Width: 4})
			if err != nil {
				t.Fatalf("%s/%s: %v", name, g, err)
			}
			if g == NodesLattice && d.Matched != 4 {
				t.Errorf("%s/%s: matched %d of 4", name, g, d.Matched)
			}
			got := WeightedMoments(d.Weights, d.Nodes)
			want := IID{Dist: dist}.Conditional(nil)
			sd := math.Sqrt(want.Var)
			errs := []float64{(got.Mean - want.Mean) / sd, got.Var/want.Var - 1, got.Skew - want.Skew, got.Kurt/want.Kurt - 1}
			for k := 0; k < d.Matched; k++ {
				if math.Abs(errs[k]) > matchTol {
					t.Errorf("%s/%s: moment %d off by %.3g", name, g, k+1, errs[k])
				}
			}
		}
	}
}

// Closed-form moments of the distribution families, checked against
// scipy.stats (mean, variance, skewness, excess kurtosis) at test time;
// tolerance 1e-12 relative (both sides evaluate closed forms).
func TestDistributionMomentsAgainstScipy(t *testing.T) {
	var ref map[string][4]float64
	scipyEval(t, `from scipy import stats
d = {"lognormal": stats.lognorm(s=0.25, scale=np.exp(0.1)), "beta": stats.beta(2, 5, loc=-1, scale=4),
     "t": stats.t(9, loc=1, scale=0.5), "laplace": stats.laplace(loc=-1, scale=2)}
print(json.dumps({k: [float(x) for x in v.stats(moments="mvsk")] for k, v in d.items()}))`, &ref)
	dists := map[string]Distribution{
		"lognormal": LogNormal{Mu: 0.1, Sigma: 0.25},
		"beta":      Beta{Alpha: 2, Beta: 5, Lo: -1, Hi: 3},
		"t":         StudentT{Nu: 9, Loc: 1, Scale: 0.5},
		"laplace":   Laplace{Loc: -1, Scale: 2},
	}
	for name, d := range dists {
		w := ref[name]
		sk, _ := d.StdMoment(3)
		ku, _ := d.StdMoment(4)
		got := [4]float64{d.Mean(), d.StdDev() * d.StdDev(), sk, ku - 3}
		for k := range got {
			if !scalar.EqualWithinAbsOrRel(got[k], w[k], 1e-12, 1e-12) {
				t.Errorf("%s moment %d: got %.15g, scipy %.15g", name, k, got[k], w[k])
			}
		}
	}
}
