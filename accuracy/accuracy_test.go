package accuracy

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"

	"gridstage/internal/pyref"
	"gridstage/solver"
)

// persistentVAR is an invented, highly persistent two-sector VAR: the
// eigenvalues of B are 0.97 ± √0.0002 = 0.9841 and 0.9559 (closed form for
// [[a, b], [c, a]]: a ± √(bc)), both above 0.95.
var persistentVAR = solver.VAR{Coef: []float64{0.97, 0.02, 0.01, 0.97}, Cov: []float64{0.0004, 0.0001, 0.0001, 0.0009}}

// moderateVAR is an invented VAR where maximum entropy matches means and
// covariances in all 81 states of a 9×9 grid.
var moderateVAR = solver.VAR{Intercept: []float64{0.01, -0.02}, Coef: []float64{0.8, 0.1, 0.05, 0.7},
	Cov: []float64{0.01, 0.003, 0.003, 0.02}}

func population(t *testing.T, p solver.VAR, s solver.Settings) (Estimate, *solver.Chain) {
	t.Helper()
	c, err := p.Discretize(s)
	if err != nil {
		t.Fatal(err)
	}
	pi, err := solver.Stationary(c.Transition, c.States())
	if err != nil {
		t.Fatal(err)
	}
	e, err := Population(c, pi)
	if err != nil {
		t.Fatal(err)
	}
	return e, c
}

// TestPopulationPersistentTarget is issue 4's target: for a highly
// persistent 2-D VAR the VAR implied by the maximum-entropy chain has
// coefficient and innovation-covariance errors at least 100 times smaller
// than Tauchen's VAR chain with the same 9×9 states.
func TestPopulationPersistentTarget(t *testing.T) {
	truth := FromVAR(persistentVAR)
	me, mc := population(t, persistentVAR, solver.Settings{States: 9})
	te, _ := population(t, persistentVAR, solver.Settings{States: 9, Method: solver.Tauchen})
	mCoef, mCov := Errors(me, truth)
	tCoef, tCov := Errors(te, truth)
	t.Logf("maxent: coef %.3g cov %.3g (%d fallback states); tauchen: coef %.3g cov %.3g", mCoef, mCov, mc.Fallbacks(), tCoef, tCov)
	if !(100*mCoef <= tCoef) {
		t.Errorf("coefficient error: maxent %.3g, tauchen %.3g: want a ratio of at least 100", mCoef, tCoef)
	}
	if !(100*mCov <= tCov) {
		t.Errorf("innovation covariance error: maxent %.3g, tauchen %.3g: want a ratio of at least 100", mCov, tCov)
	}
}

// TestPopulationExactWithExactMoments [derived]: when every state's
// conditional mean is c + B x_i, population least squares recovers c and B
// exactly, and when every conditional covariance is Ψ as well, the residual
// covariance is Ψ. Tolerance 1e-10: the moment tolerance, amplified by the
// conditioning of Σ (≈ 10 here).
func TestPopulationExactWithExactMoments(t *testing.T) {
	e, c := population(t, moderateVAR, solver.Settings{States: 9})
	if c.Fallbacks() != 0 {
		t.Fatalf("%d fallback states; the identity needs all matched", c.Fallbacks())
	}
	coef, cov := Errors(e, FromVAR(moderateVAR))
	if coef > 1e-10 || cov > 1e-10 {
		t.Errorf("population VAR off the truth: coef %.3g, cov %.3g", coef, cov)
	}
}

// pyNumpy runs a reference program with numpy and input bound to data
// (see pyref.Eval).
func pyNumpy(t *testing.T, input any, program string, out any) {
	t.Helper()
	pyref.Eval(t, input, program, out)
}

// TestOLSAgainstNumpy compares OLS with numpy.linalg.lstsq on a simulated
// path (coefficients), and the residual covariance with the degrees of
// freedom T − 1 − (d + 1). Tolerance 1e-10 relative: two least-squares
// solvers on a well-conditioned 3-column problem.
func TestOLSAgainstNumpy(t *testing.T) {
	path := make([]float64, 500*2)
	NewVARSampler(moderateVAR).Path(rand.New(rand.NewPCG(7, 7)), path)
	got, err := OLS(path, 2)
	if err != nil {
		t.Fatal(err)
	}
	var ref Estimate
	pyNumpy(t, path, `
x = np.array(data).reshape(-1, 2)
X = np.column_stack([np.ones(len(x) - 1), x[:-1]]); Y = x[1:]
beta = np.linalg.lstsq(X, Y, rcond=None)[0]
res = Y - X @ beta
cov = res.T @ res / (len(Y) - 3)
print(json.dumps({"intercept": beta[0].tolist(), "coef": beta[1:].T.ravel().tolist(), "cov": cov.ravel().tolist()}))
`, &ref)
	g, w := got.Params(), ref.Params()
	for k := range w {
		if math.Abs(g[k]-w[k]) > 1e-10*math.Max(1e-3, math.Abs(w[k])) {
			t.Errorf("%s: %.15g, numpy %.15g", ParamNames(2)[k], g[k], w[k])
		}
	}
}

// TestPopulationAgainstNumpy: the population VAR of a chain is weighted
// least squares over all transitions (x_i → x_j) with weights π_i P_ij,
// which numpy solves directly. Tolerance 1e-10 relative.
func TestPopulationAgainstNumpy(t *testing.T) {
	got, c := population(t, persistentVAR, solver.Settings{States: 5, Method: solver.Tauchen})
	pi, _ := solver.Stationary(c.Transition, c.States())
	var ref Estimate
	pyNumpy(t, map[string]any{"grid": c.Grid, "P": c.Transition, "pi": pi}, `
g = np.array(data["grid"]).reshape(-1, 2); P = np.array(data["P"]).reshape(len(g), len(g)); pi = np.array(data["pi"])
n = len(g)
X = np.column_stack([np.ones(n * n), np.repeat(g, n, axis=0)]); Y = np.tile(g, (n, 1))
w = (pi[:, None] * P).ravel()
sw = np.sqrt(w)
beta = np.linalg.lstsq(X * sw[:, None], Y * sw[:, None], rcond=None)[0]
res = Y - X @ beta
cov = (res * w[:, None]).T @ res
print(json.dumps({"intercept": beta[0].tolist(), "coef": beta[1:].T.ravel().tolist(), "cov": cov.ravel().tolist()}))
`, &ref)
	g, w := got.Params(), ref.Params()
	for k := range w {
		if math.Abs(g[k]-w[k]) > 1e-10*math.Max(1e-4, math.Abs(w[k])) {
			t.Errorf("%s: %.15g, numpy %.15g", ParamNames(2)[k], g[k], w[k])
		}
	}
}

// TestRunIsDeterministic: the report does not depend on the number of
// workers, and repeats exactly for the same seed.
func TestRunIsDeterministic(t *testing.T) {
	c, _ := moderateVAR.Discretize(solver.Settings{States: 5})
	cands := []Candidate{{"maxent", c}}
	a, err := Run(moderateVAR, cands, Config{Reps: 20, Length: 100, Seed: 3, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Run(moderateVAR, cands, Config{Reps: 20, Length: 100, Seed: 3, Workers: 3})
	if err != nil {
		t.Fatal(err)
	}
	a.Config.Workers, b.Config.Workers = 0, 0
	if !reflect.DeepEqual(a, b) {
		t.Error("reports differ between 1 and 3 workers")
	}
}

// TestFloorAR1Bias checks the simulated true-process OLS bias of ρ̂ against
// the first-order approximation E ρ̂ − ρ ≈ −(1 + 3ρ)/T for an AR(1) with
// estimated intercept (Kendall 1954, Biometrika 41; Marriott and Pope 1954)
// [memory; the formula is the standard one]. With 4000 replications of
// T = 400 the Monte Carlo standard error of the bias is about
// √((1 − ρ²)/T)/√4000 ≈ 3.4e-4 for ρ = 0.9, and the approximation's own
// error is O(1/T²) ≈ 1e-4; tolerance 1.5e-3 is four standard errors plus
// that.
func TestFloorAR1Bias(t *testing.T) {
	if testing.Short() {
		t.Skip("long simulation")
	}
	rho, T := 0.9, 400
	p := solver.VAR{Intercept: []float64{0.1}, Coef: []float64{rho}, Cov: []float64{0.01}}
	rep, err := Run(p, nil, Config{Reps: 4000, Length: T, Seed: 11})
	if err != nil {
		t.Fatal(err)
	}
	want := -(1 + 3*rho) / float64(T)
	if got := rep.Floor.Bias[1]; math.Abs(got-want) > 1.5e-3 {
		t.Errorf("bias of rho-hat %.5f, Kendall approximation %.5f", got, want)
	}
}
