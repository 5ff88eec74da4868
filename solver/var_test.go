package solver

import (
	"errors"
	"math"
	"testing"
)

// Invented test processes (no real data): a two-sector "productivity and
// demand" VAR of moderate persistence, a highly persistent one (both
// eigenvalues of B above 0.95: 0.984 and 0.956), and a three-region one.
var (
	varModerate = VAR{Intercept: []float64{0.01, -0.02}, Coef: []float64{0.8, 0.1, 0.05, 0.7},
		Cov: []float64{0.01, 0.003, 0.003, 0.02}}
	varPersistent = VAR{Coef: []float64{0.97, 0.02, 0.01, 0.97}, Cov: []float64{0.0004, 0.0001, 0.0001, 0.0009}}
	varThree      = VAR{Intercept: []float64{0, 0.1, -0.05}, Coef: []float64{0.9, 0.05, 0, 0.02, 0.85, 0.03, 0, 0.1, 0.8},
		Cov: []float64{0.01, 0.002, 0, 0.002, 0.02, 0.001, 0, 0.001, 0.015}}
	varOne = VAR{Intercept: []float64{0.05}, Coef: []float64{0.9}, Cov: []float64{0.01}}
)

// momentTol bounds standardized conditional-moment errors in matched
// states: the dual stops at a moment error of 1e-13 and accepts up to
// 1e-11 at the floating-point floor; recomputing the moments from the row
// adds rounding of order n·1e-16. 1e-10 is the target.
const momentTol = 1e-10

func TestVARMatchesConditionalMoments(t *testing.T) {
	cases := []struct {
		name string
		p    VAR
		s    Settings
		// minFull is the least number of states that must match the full
		// requested set (a regression guard; infeasible states are checked
		// against scipy's linear program in TestVARFallbacksAreInfeasible).
		minFull int
	}{
		{"d1", varOne, Settings{States: 9}, 9},
		{"d1-4moments", varOne, Settings{States: 9, Moments: 4}, 7},
		{"d2-moderate-principal", varModerate, Settings{States: 9}, 81},
		{"d2-moderate-coordinate", varModerate, Settings{States: 9, Axes: AxesCoordinate}, 60},
		{"d2-moderate-4moments", varModerate, Settings{States: 9, Moments: 4}, 1},
		{"d2-persistent", varPersistent, Settings{States: 9}, 73},
		{"d2-gauss-hermite", varModerate, Settings{States: 7, Nodes: NodesGaussHermite}, 1},
		{"d3", varThree, Settings{States: 7}, 343},
		{"d3-5states", varThree, Settings{States: 5}, 100},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c, err := tc.p.Discretize(tc.s)
			if err != nil {
				t.Fatal(err)
			}
			if err := c.Check(1e-12); err != nil {
				t.Fatal(err)
			}
			dg := DiagnoseVector(c, tc.p)
			full := 0
			for i, st := range dg.States {
				if st.Matched >= 1 && maxAbs(st.MeanErr) > momentTol {
					t.Errorf("state %d: mean error %.3g > %g", i, maxAbs(st.MeanErr), momentTol)
				}
				if st.Matched >= 2 && maxAbs(st.CovErr) > momentTol {
					t.Errorf("state %d: covariance error %.3g > %g", i, maxAbs(st.CovErr), momentTol)
				}
				if st.Matched >= 4 && (maxAbs(st.SkewErr) > momentTol || maxAbs(st.KurtErr) > momentTol) {
					t.Errorf("state %d: marginal skewness/kurtosis error %.3g/%.3g > %g", i, maxAbs(st.SkewErr), maxAbs(st.KurtErr), momentTol)
				}
				if st.Matched < 1 {
					t.Errorf("state %d: even the conditional mean was not matched", i)
				}
				if st.Matched == c.Moments {
					full++
				}
			}
			if full < tc.minFull {
				t.Errorf("%d states matched all %d moment levels, want at least %d", full, c.Moments, tc.minFull)
			}
			t.Logf("%d of %d states matched level %d", full, c.States(), c.Moments)
		})
	}
}

// TestVARFallbacksAreInfeasible checks the fallback record against an
// independent feasibility test: scipy's linear program (HiGHS) maximizes
// the smallest probability t subject to matching the standardized means and
// second moments on the grid. A state can match them with maximum entropy
// iff t > 0 (Tanaka and Toda 2013: the target must lie in the interior of
// the convex hull). States the solver reports as matched must have t > 0;
// states it reports as fallbacks must have t ≤ 1e-9 (the LP's own
// feasibility tolerance is about 1e-9, so smaller t counts as zero).
func TestVARFallbacksAreInfeasible(t *testing.T) {
	for _, tc := range []struct {
		name string
		p    VAR
		s    Settings
	}{
		{"persistent-principal", varPersistent, Settings{States: 9}},
		{"moderate-coordinate", varModerate, Settings{States: 9, Axes: AxesCoordinate}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := tc.p.Discretize(tc.s)
			if err != nil {
				t.Fatal(err)
			}
			d, n := c.Dim, c.States()
			means := make([][]float64, n)
			for i := range means {
				means[i] = tc.p.ConditionalMean(c.State(i), make([]float64, d))
			}
			var lp []float64
			vecScipy(t, map[string]any{"grid": c.Grid, "d": d, "means": means, "cov": tc.p.Cov}, `
d = data["d"]
g = np.array(data["grid"]).reshape(-1, d)
L = np.linalg.cholesky(np.array(data["cov"]).reshape(d, d))
n = len(g)
out = []
for m in data["means"]:
    z = scipy.linalg.solve_triangular(L, (g - np.array(m)).T, lower=True).T
    cols = [z[:, k] for k in range(d)]
    cols += [z[:, k] * z[:, l] - (1.0 if k == l else 0.0) for k in range(d) for l in range(k, d)]
    T = np.column_stack(cols)
    m_ = T.shape[1]
    c = np.zeros(n + 1); c[-1] = -1.0
    Aeq = np.zeros((m_ + 1, n + 1)); Aeq[:m_, :n] = T.T; Aeq[m_, :n] = 1.0
    beq = np.zeros(m_ + 1); beq[m_] = 1.0
    Aub = np.hstack([-np.eye(n), np.ones((n, 1))])
    r = scipy.optimize.linprog(c, A_ub=Aub, b_ub=np.zeros(n), A_eq=Aeq, b_eq=beq,
                               bounds=[(0, None)] * n + [(None, 1.0)], method="highs")
    out.append(float(-r.fun) if r.status == 0 else -1.0)
print(json.dumps(out))
`, &lp)
			for i, tmin := range lp {
				switch {
				case c.Matched[i] >= 2 && !(tmin > 0):
					t.Errorf("state %d matched means and covariances but the LP finds no interior solution (t = %g)", i, tmin)
				case c.Matched[i] < 2 && tmin > 1e-9:
					t.Errorf("state %d fell back to level %d but the LP finds an interior solution with smallest weight %g", i, c.Matched[i], tmin)
				}
			}
		})
	}
}

// TestVARStationaryCovarianceLyapunov checks that a chain matching the
// conditional means and covariances in every state has the stationary
// covariance of the VAR: under π, Σ_π = B Σ_π Bᵀ + Ψ exactly, whose unique
// solution scipy.linalg.solve_discrete_lyapunov(B, Ψ) computes. Tolerance
// 1e-8 relative to √(Σ_kk Σ_ll): moment errors ≤ 1e-11 are amplified by
// 1/(1 − λ_max²) (≤ 3 here) and by the GTH elimination's rounding on a few
// hundred states.
func TestVARStationaryCovarianceLyapunov(t *testing.T) {
	for _, tc := range []struct {
		name string
		p    VAR
		s    Settings
	}{
		{"d2-moderate", varModerate, Settings{States: 9}},
		{"d2-moderate-narrow", varModerate, Settings{States: 9, Width: 2.5}},
		{"d2-moderate-gauss-legendre", varModerate, Settings{States: 7, Nodes: NodesGaussLegendre}},
		{"d3", varThree, Settings{States: 7}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := tc.p.Discretize(tc.s)
			if err != nil {
				t.Fatal(err)
			}
			if c.Fallbacks() != 0 {
				t.Fatalf("%d fallback states: the identity needs every state matched", c.Fallbacks())
			}
			d := c.Dim
			var ref []float64
			vecScipy(t, map[string]any{"b": tc.p.Coef, "q": tc.p.Cov, "d": d}, `
d = data["d"]
S = scipy.linalg.solve_discrete_lyapunov(np.array(data["b"]).reshape(d, d), np.array(data["q"]).reshape(d, d))
print(json.dumps(S.ravel().tolist()))
`, &ref)
			dg := DiagnoseVector(c, tc.p)
			if dg.StationaryErr != "" {
				t.Fatal(dg.StationaryErr)
			}
			for k := 0; k < d; k++ {
				for l := 0; l < d; l++ {
					scale := math.Sqrt(ref[k*d+k] * ref[l*d+l])
					if e := math.Abs(dg.Chain.Cov[k*d+l]-ref[k*d+l]) / scale; e > 1e-8 {
						t.Errorf("Σ[%d][%d]: chain %.12g, scipy %.12g (error %.2g)", k, l, dg.Chain.Cov[k*d+l], ref[k*d+l], e)
					}
					// Our own Lyapunov solver against scipy, 1e-12: a
					// d²×d² LU solve of a well-conditioned system.
					if e := math.Abs(dg.True.Cov[k*d+l]-ref[k*d+l]) / scale; e > 1e-12 {
						t.Errorf("Lyapunov Σ[%d][%d]: %.15g, scipy %.15g", k, l, dg.True.Cov[k*d+l], ref[k*d+l])
					}
				}
			}
			// Exact conditional means make the lag-one autocovariance B Σ.
			if dg.AutocorrErr > 1e-8 {
				t.Errorf("autocorrelation matrix error %.2g > 1e-8", dg.AutocorrErr)
			}
		})
	}
}

// TestVAROneDimensionClosedForm: for d = 1 the stationary variance is
// σ²/(1 − ρ²) (closed form) and the mean c/(1 − ρ).
func TestVAROneDimensionClosedForm(t *testing.T) {
	c, err := varOne.Discretize(Settings{States: 9})
	if err != nil {
		t.Fatal(err)
	}
	dg := DiagnoseVector(c, varOne)
	rho, s2 := varOne.Coef[0], varOne.Cov[0]
	wantVar, wantMean := s2/(1-rho*rho), varOne.Intercept[0]/(1-rho)
	// 1e-10 relative: exact identity up to the moment tolerance, amplified
	// by 1/(1 − ρ²) ≈ 5.
	if e := math.Abs(dg.Chain.Cov[0]-wantVar) / wantVar; e > 1e-10 {
		t.Errorf("stationary variance %.15g, closed form %.15g", dg.Chain.Cov[0], wantVar)
	}
	if e := math.Abs(dg.Chain.Mean[0]-wantMean) / math.Sqrt(wantVar); e > 1e-10 {
		t.Errorf("stationary mean %.15g, closed form %.15g", dg.Chain.Mean[0], wantMean)
	}
	if e := math.Abs(dg.True.Cov[0]-wantVar) / wantVar; e > 1e-14 {
		t.Errorf("Lyapunov solution %.17g, closed form %.17g", dg.True.Cov[0], wantVar)
	}
}

func TestLyapunovAgainstScipy(t *testing.T) {
	// A 4-dimensional stable B with complex eigenvalues and a dense Ψ
	// (invented values).
	b := []float64{0.6, -0.3, 0.1, 0, 0.4, 0.7, 0, 0.05, 0, 0.1, 0.9, -0.2, 0.02, 0, 0.1, 0.5}
	q := []float64{2, 0.3, 0.1, 0, 0.3, 1, 0.2, 0.1, 0.1, 0.2, 1.5, 0.4, 0, 0.1, 0.4, 0.8}
	got, err := Lyapunov(b, q, 4)
	if err != nil {
		t.Fatal(err)
	}
	var ref []float64
	vecScipy(t, map[string]any{"b": b, "q": q}, `
S = scipy.linalg.solve_discrete_lyapunov(np.array(data["b"]).reshape(4, 4), np.array(data["q"]).reshape(4, 4))
print(json.dumps(S.ravel().tolist()))
`, &ref)
	for k := range ref {
		// 1e-12 relative to the largest entry: two direct solvers of a
		// system with condition number of order 10.
		if math.Abs(got[k]-ref[k]) > 1e-12*maxAbs(ref) {
			t.Errorf("entry %d: %.15g, scipy %.15g", k, got[k], ref[k])
		}
	}
}

// TestTauchenVARAgainstScipy recomputes Tauchen's (1986) probabilities with
// scipy.stats.norm.cdf from the definition: with Ψ = L Lᵀ, y = L⁻¹x has
// independent unit innovations; y-axis k has an even grid over ±3 stationary
// s.d. of y_k; the probability of y_j from y_i is the product over axes of
// the normal mass of the interval around y_jk (end intervals open).
// Tolerance 1e-13: both sides difference the normal CDF in double precision.
func TestTauchenVARAgainstScipy(t *testing.T) {
	p := varModerate
	c, err := p.Discretize(Settings{States: 5, Method: Tauchen})
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Grid, P []float64
	}
	vecScipy(t, map[string]any{"c": p.Intercept, "b": p.Coef, "q": p.Cov, "n": 5}, `
import itertools
c = np.array(data["c"]); B = np.array(data["b"]).reshape(2, 2); Q = np.array(data["q"]).reshape(2, 2); N = data["n"]
L = np.linalg.cholesky(Q); Li = np.linalg.inv(L)
mu = np.linalg.solve(np.eye(2) - B, c)
S = scipy.linalg.solve_discrete_lyapunov(B, Q)
Sy = Li @ S @ Li.T; muy = Li @ mu
axes = [np.linspace(muy[k] - 3*np.sqrt(Sy[k, k]), muy[k] + 3*np.sqrt(Sy[k, k]), N) for k in range(2)]
ys = np.array(list(itertools.product(*axes)))
xs = (L @ ys.T).T
P = np.zeros((len(ys), len(ys)))
for i, x in enumerate(xs):
    m = Li @ (c + B @ x)
    probs = []
    for k in range(2):
        a = axes[k]; h = a[1] - a[0]
        lo = np.concatenate([[-np.inf], a[1:] - h/2]); hi = np.concatenate([a[:-1] + h/2, [np.inf]])
        probs.append(scipy.stats.norm.cdf(hi - m[k]) - scipy.stats.norm.cdf(lo - m[k]))
    P[i] = np.outer(probs[0], probs[1]).ravel()
    P[i] /= P[i].sum()
print(json.dumps({"Grid": xs.ravel().tolist(), "P": P.ravel().tolist()}))
`, &ref)
	for k := range ref.Grid {
		if math.Abs(c.Grid[k]-ref.Grid[k]) > 1e-13 {
			t.Fatalf("grid entry %d: %.15g, scipy %.15g", k, c.Grid[k], ref.Grid[k])
		}
	}
	for k := range ref.P {
		if math.Abs(c.Transition[k]-ref.P[k]) > 1e-13 {
			t.Errorf("P entry %d: %.15g, scipy %.15g", k, c.Transition[k], ref.P[k])
		}
	}
}

// TestTauchenVAROneDimension: a one-dimensional VAR with Tauchen's method
// is the univariate Tauchen chain of the same AR(1).
func TestTauchenVAROneDimension(t *testing.T) {
	rho, sigma, c0 := varOne.Coef[0], math.Sqrt(varOne.Cov[0]), varOne.Intercept[0]
	v, err := varOne.Discretize(Settings{States: 7, Method: Tauchen})
	if err != nil {
		t.Fatal(err)
	}
	a, err := AR1{Mean: c0 / (1 - rho), Rho: rho, Sigma: sigma}.Discretize(Settings{States: 7, Method: Tauchen})
	if err != nil {
		t.Fatal(err)
	}
	// 1e-14: the same formula evaluated in a different order.
	for k := range a.Transition {
		if math.Abs(a.Transition[k]-v.Transition[k]) > 1e-14 {
			t.Fatalf("entry %d: VAR %.16g, AR1 %.16g", k, v.Transition[k], a.Transition[k])
		}
	}
	for k := range a.Grid {
		if math.Abs(a.Grid[k]-v.Grid[k]) > 1e-14 {
			t.Fatalf("grid %d: VAR %.16g, AR1 %.16g", k, v.Grid[k], a.Grid[k])
		}
	}
}

// TestVARDiagonalIsProduct: with diagonal B and Ψ on coordinate axes the
// prior factorizes and the product of the two univariate maximum-entropy
// solutions satisfies every VAR constraint (the cross-moment vanishes by
// independence) and has the exponential-family form of the VAR solution
// with a zero multiplier on z₁z₂; by uniqueness of the maximum-entropy
// solution the VAR chain is the Kronecker product of the AR(1) chains.
// Tolerance 1e-9 per probability: each side solves its duals to 1e-13 in
// moments, and probabilities inherit that up to the Hessian's conditioning.
func TestVARDiagonalIsProduct(t *testing.T) {
	for _, tc := range []struct {
		rho1, rho2 float64
		n, L       int
	}{{0.9, 0.6, 7, 2}, {0.5, 0.6, 9, 4}} {
		p := VAR{Coef: []float64{tc.rho1, 0, 0, tc.rho2}, Cov: []float64{0.01, 0, 0, 0.04}}
		v, err := p.Discretize(Settings{States: tc.n, Axes: AxesCoordinate, Moments: tc.L})
		if err != nil {
			t.Fatal(err)
		}
		a, _ := AR1{Rho: tc.rho1, Sigma: 0.1}.Discretize(Settings{States: tc.n, Moments: tc.L})
		b, _ := AR1{Rho: tc.rho2, Sigma: 0.2}.Discretize(Settings{States: tc.n, Moments: tc.L})
		if v.Fallbacks()+a.Fallbacks()+b.Fallbacks() != 0 {
			t.Fatalf("%+v: fallbacks %d/%d/%d, the comparison needs all states matched", tc, v.Fallbacks(), a.Fallbacks(), b.Fallbacks())
		}
		prod := Product(a, b)
		for k := range prod.Grid {
			if math.Abs(prod.Grid[k]-v.Grid[k]) > 1e-14 {
				t.Fatalf("%+v grid %d: product %.16g, VAR %.16g", tc, k, prod.Grid[k], v.Grid[k])
			}
		}
		for k := range prod.Transition {
			if math.Abs(prod.Transition[k]-v.Transition[k]) > 1e-9 {
				t.Fatalf("%+v entry %d: product %.16g, VAR %.16g", tc, k, prod.Transition[k], v.Transition[k])
			}
		}
	}
}

func TestVARRejectsBadParameters(t *testing.T) {
	cases := []struct {
		name  string
		p     VAR
		param string
	}{
		{"unit root", VAR{Coef: []float64{1, 0, 0, 0.5}, Cov: []float64{1, 0, 0, 1}}, "coef spectral radius"},
		{"explosive complex pair", VAR{Coef: []float64{0.8, -0.7, 0.7, 0.8}, Cov: []float64{1, 0, 0, 1}}, "coef spectral radius"},
		{"indefinite cov", VAR{Coef: []float64{0.5, 0, 0, 0.5}, Cov: []float64{1, 2, 2, 1}}, "cov smallest eigenvalue"},
		{"singular cov", VAR{Coef: []float64{0.5, 0, 0, 0.5}, Cov: []float64{1, 1, 1, 1}}, "cov smallest eigenvalue"},
		{"asymmetric cov", VAR{Coef: []float64{0.5, 0, 0, 0.5}, Cov: []float64{1, 0.1, 0.2, 1}}, "cov asymmetry"},
		{"not square", VAR{Coef: []float64{0.5, 0, 0}, Cov: []float64{1}}, "coef entries"},
		{"too large", VAR{Coef: make([]float64, 25), Cov: make([]float64, 25)}, "coef entries"},
		{"cov shape", VAR{Coef: []float64{0.5, 0, 0, 0.5}, Cov: []float64{1}}, "cov entries"},
		{"intercept shape", VAR{Intercept: []float64{0}, Coef: []float64{0.5, 0, 0, 0.5}, Cov: []float64{1, 0, 0, 1}}, "intercept entries"},
		{"NaN", VAR{Coef: []float64{math.NaN(), 0, 0, 0.5}, Cov: []float64{1, 0, 0, 1}}, "coef entry"},
	}
	for _, tc := range cases {
		_, err := tc.p.Discretize(Settings{States: 5})
		var pe *ParamError
		if !errors.As(err, &pe) || pe.Param != tc.param {
			t.Errorf("%s: got %v, want a *ParamError for %q", tc.name, err, tc.param)
		}
	}
	// ρ(B) = |0.8 ± 0.7i| = √1.13 (closed form).
	_, err := VAR{Coef: []float64{0.8, -0.7, 0.7, 0.8}, Cov: []float64{1, 0, 0, 1}}.Discretize(Settings{States: 5})
	var pe *ParamError
	if errors.As(err, &pe) && math.Abs(pe.Value-math.Sqrt(1.13)) > 1e-12 {
		t.Errorf("spectral radius %v, want √1.13", pe.Value)
	}
	for _, s := range []Settings{{States: 1}, {States: 101}, {States: 5, Method: Rouwenhorst}, {States: 5, Moments: 5}, {States: 5, Method: Tauchen, Moments: 2}, {States: 5, Axes: 7}} {
		if _, err := varModerate.Discretize(s); !errors.As(err, &pe) {
			t.Errorf("settings %+v: got %v, want a *ParamError", s, err)
		}
	}
}
