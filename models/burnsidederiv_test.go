package models

import (
	"math"
	"testing"

	"gridstage/internal/pyref"
	"gridstage/solver"
)

// mpmathSeriesDerivative is the outside check: mpmath (Debian's
// python3-mpmath) sums the Burnside (1998) series for v(x) at 40 digits and
// differentiates it in ρ numerically (mpmath.diff), independently of the
// term-by-term derivative in BurnsideClosedForm.
const mpmathSeriesDerivative = `
mpmath.mp.dps = 40
beta, theta, mu, sigma, x = [mpmath.mpf(str(v)) for v in (data["beta"], data["theta"], data["mu"], data["sigma"], data["x"])]
def v(rho):
    k = theta**2 * sigma**2 / (2 * (1 - rho)**2)
    s = mpmath.mpf(0)
    n = 1
    while True:
        a = theta*mu*n + k*(n - 2*rho*(1 - rho**n)/(1 - rho) + rho**2*(1 - rho**(2*n))/(1 - rho**2))
        b = theta*rho*(1 - rho**n)/(1 - rho)
        t = beta**n * mpmath.exp(a + b*(x - mu))
        s += t
        if t < mpmath.mpf(10)**-45 * s:
            return s
        n += 1
        if n > 100000:
            raise ValueError("the series does not converge")
rho = mpmath.mpf(str(data["rho"]))
print(json.dumps({"v": float(v(rho)), "dv": float(mpmath.diff(v, rho))}))
`

// TestBurnsideClosedFormDerivative: the term-by-term derivative in ρ
// agrees with mpmath's numerical derivative of the 40-digit series to 1e-10
// relative (both are near machine precision; the Go sum rounds each of a
// few hundred terms).
func TestBurnsideClosedFormDerivative(t *testing.T) {
	for _, c := range []struct{ beta, theta, mu, rho, sigma, x float64 }{
		{0.95, -1.5, 0.0179, -0.139, 0.0348, 0.0179}, // Burnside (1998) calibration (REFERENCES.md)
		{0.95, -1.5, 0.0179, 0.9, 0.01, 0.0179},
		{0.96, -2, 0.01, 0.95, 0.005, 0.05},
	} {
		var ref struct{ V, Dv float64 }
		pyref.Eval(t, map[string]float64{"beta": c.beta, "theta": c.theta, "mu": c.mu, "rho": c.rho, "sigma": c.sigma, "x": c.x},
			mpmathSeriesDerivative, &ref, "mpmath")
		v, dv, err := Burnside{Beta: c.beta, Theta: c.theta}.BurnsideClosedForm(c.mu, c.rho, c.sigma, c.x)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(v-ref.V) > 1e-12*ref.V || math.Abs(dv-ref.Dv) > 1e-10*math.Abs(ref.Dv) {
			t.Errorf("%+v: v = %.15g, dv/drho = %.15g; mpmath %.15g, %.15g", c, v, dv, ref.V, ref.Dv)
		}
	}
}

// TestBurnsideDerivativeOnChain: d v(μ)/dρ from the chain's sensitivities
// (implicit differentiation of the pricing equation) against the closed
// form's derivative. The middle state of an odd grid sits at μ for every ρ,
// so the two are the same quantity. The tolerance, 1e-6 relative, is set
// by the chain's discretization error, which the derivative inherits: with
// 31 states and 4 moments it measures 5e-11 to 1e-8 here (with 15 states,
// 1e-4 at rho 0.9).
func TestBurnsideDerivativeOnChain(t *testing.T) {
	m := Burnside{Beta: 0.95, Theta: -1.5}
	mu := 0.0179
	for _, c := range []struct {
		rho, sigma float64
		matching   solver.Matching
	}{{-0.139, 0.0348, solver.MatchExact}, {0.5, 0.0348, solver.MatchSmooth}, {0.9, 0.01, solver.MatchSmooth}, {0.9, 0.01, solver.MatchExact}} {
		sigma := c.sigma
		p := solver.AR1{Mean: mu, Rho: c.rho, Sigma: sigma}
		ch, sens, err := p.Sensitivities(solver.Settings{States: 31, Moments: 4, Matching: c.matching})
		if err != nil {
			t.Fatal(err)
		}
		k := 1 // "rho"
		if sens.Params[k] != "rho" {
			t.Fatalf("params %v", sens.Params)
		}
		_, dv, err := m.PriceDividendDerivative(Chain{Levels: ch.Grid, Transition: ch.Transition}, sens.Grid[k], sens.Transition[k])
		if err != nil {
			t.Fatal(err)
		}
		_, want, err := m.BurnsideClosedForm(mu, c.rho, sigma, mu)
		if err != nil {
			t.Fatal(err)
		}
		got := dv[len(dv)/2]
		if math.Abs(got-want) > 1e-6*math.Abs(want) {
			t.Errorf("rho %g (%s): chain dv/drho = %.10g, closed form %.10g (rel %.2g)", c.rho, c.matching, got, want, math.Abs(got-want)/math.Abs(want))
		}
		t.Logf("rho %g (%s): chain dv/drho = %.10g, closed form %.10g (rel %.2g)", c.rho, c.matching, got, want, math.Abs(got-want)/math.Abs(want))
	}
}
