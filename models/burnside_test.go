package models

import (
	"errors"
	"math"
	"testing"

	"gridstage/solver"
)

// burnsideSeries is the closed form of Burnside (1998, eq. for v(x)) for the
// Gaussian AR(1) x' = (1−ρ)μ + ρx + ε, ε ~ N(0, σ²):
//
//	v(x) = Σ_{n≥1} β^n exp(a_n + b_n (x − μ)),
//	a_n = θμn + θ²σ²/(2(1−ρ)²) [n − 2ρ(1−ρ^n)/(1−ρ) + ρ²(1−ρ^{2n})/(1−ρ²)],
//	b_n = θρ(1−ρ^n)/(1−ρ),
//
// summed until the terms fall below 1e-18 of the total. It is recomputed
// here, independently of the package, as the outside check value.
func burnsideSeries(t *testing.T, beta, theta, mu, rho, sigma, x float64) float64 {
	t.Helper()
	if beta*math.Exp(theta*mu+theta*theta*sigma*sigma/(2*(1-rho)*(1-rho))) >= 1 {
		t.Fatalf("closed form infinite for beta=%g theta=%g mu=%g rho=%g sigma=%g", beta, theta, mu, rho, sigma)
	}
	k := theta * theta * sigma * sigma / (2 * (1 - rho) * (1 - rho))
	var v float64
	for n := 1; n < 1_000_000; n++ {
		fn := float64(n)
		rn := math.Pow(rho, fn)
		a := theta*mu*fn + k*(fn-2*rho*(1-rn)/(1-rho)+rho*rho*(1-rn*rn)/(1-rho*rho))
		b := theta * rho * (1 - rn) / (1 - rho)
		term := math.Pow(beta, fn) * math.Exp(a+b*(x-mu))
		v += term
		if term < 1e-18*v {
			return v
		}
	}
	t.Fatal("closed-form series did not converge")
	return 0
}

func TestBurnsideSeriesReferenceValues(t *testing.T) {
	// REFERENCES.md [derived] from Burnside (1998): v(μ) = 12.4812365818 at
	// β = 0.95, θ = −1.5, μ = 0.0179, ρ = −0.139, σ = 0.0348, and with ρ = 0
	// v = g/(1−g), g = β exp(θμ + θ²σ²/2), = 12.5304745152. The values are
	// quoted to 10 decimals, so the tolerance is 1e-9 absolute.
	got := burnsideSeries(t, 0.95, -1.5, 0.0179, -0.139, 0.0348, 0.0179)
	if math.Abs(got-12.4812365818) > 1e-9 {
		t.Errorf("series v(mu) = %.10f, want 12.4812365818", got)
	}
	g := 0.95 * math.Exp(-1.5*0.0179+1.5*1.5*0.0348*0.0348/2)
	got0 := burnsideSeries(t, 0.95, -1.5, 0.0179, 0, 0.0348, 0.0179)
	for _, v := range []float64{got0, g / (1 - g)} {
		if math.Abs(v-12.5304745152) > 1e-9 {
			t.Errorf("rho = 0: v = %.10f, want 12.5304745152", v)
		}
	}
}

func TestBurnsideDeterministicGrowth(t *testing.T) {
	// One state with growth x: v = β e^{θx}(1 + v), so v = g/(1−g) with
	// g = β e^{θx} (the geometric series; exact up to rounding, tolerance
	// 1e-13 relative for a 1×1 solve).
	m := Burnside{Beta: 0.96, Theta: -2}
	v, err := m.PriceDividend(Chain{Levels: []float64{0.02}, Transition: []float64{1}})
	if err != nil {
		t.Fatal(err)
	}
	g := 0.96 * math.Exp(-2*0.02)
	if want := g / (1 - g); math.Abs(v[0]/want-1) > 1e-13 {
		t.Errorf("v = %.15g, want %.15g", v[0], want)
	}
}

func TestBurnsideTwoStateEquation(t *testing.T) {
	// The solution must satisfy v_i = β Σ_j P_ij e^{θx_j}(1 + v_j) in every
	// state; residual tolerance 1e-12 relative (a 2×2 solve, condition ~20).
	m := Burnside{Beta: 0.95, Theta: 2}
	c := Chain{Levels: []float64{-0.03, 0.01}, Transition: []float64{0.7, 0.3, 0.4, 0.6}}
	v, err := m.PriceDividend(c)
	if err != nil {
		t.Fatal(err)
	}
	for i := range v {
		var rhs float64
		for j, p := range c.row(i) {
			rhs += m.Beta * p * math.Exp(m.Theta*c.Levels[j]) * (1 + v[j])
		}
		if math.Abs(rhs/v[i]-1) > 1e-12 {
			t.Errorf("state %d: v = %g but the right-hand side is %g", i, v[i], rhs)
		}
	}
}

func TestBurnsideDiverges(t *testing.T) {
	// β e^{θx} = 0.95 e^{0.1} > 1 in the only state: the series diverges.
	_, err := Burnside{Beta: 0.95, Theta: -1}.PriceDividend(Chain{Levels: []float64{-0.1}, Transition: []float64{1}})
	if !errors.Is(err, ErrDiverges) {
		t.Errorf("err = %v, want ErrDiverges", err)
	}
}

func TestBurnsideBadInput(t *testing.T) {
	cases := []struct {
		name string
		m    Burnside
		c    Chain
	}{
		{"beta", Burnside{Beta: 1, Theta: -1}, Chain{[]float64{0}, []float64{1}}},
		{"theta", Burnside{Beta: 0.9, Theta: math.NaN()}, Chain{[]float64{0}, []float64{1}}},
		{"size", Burnside{Beta: 0.9, Theta: -1}, Chain{[]float64{0, 1}, []float64{1}}},
		{"row", Burnside{Beta: 0.9, Theta: -1}, Chain{[]float64{0, 1}, []float64{0.5, 0.4, 0, 1}}},
		{"empty", Burnside{Beta: 0.9, Theta: -1}, Chain{}},
	}
	for _, tc := range cases {
		if _, err := tc.m.PriceDividend(tc.c); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
}

func BenchmarkBurnside21(b *testing.B) {
	sc, err := solver.AR1{Mean: 0.0179, Rho: -0.139, Sigma: 0.0348}.Discretize(solver.Settings{States: 21})
	if err != nil {
		b.Fatal(err)
	}
	c := Chain{Levels: sc.Grid, Transition: sc.Transition}
	for b.Loop() {
		if _, err := (Burnside{Beta: 0.95, Theta: -1.5}).PriceDividend(c); err != nil {
			b.Fatal(err)
		}
	}
}
