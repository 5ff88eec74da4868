package solver

import (
	"math"
	"testing"

	"gridstage/internal/pyref"
)

// Rows made by hand, with the stranded mass worked out by hand from the
// definition in Shape.
func TestShapeHandRows(t *testing.T) {
	for _, c := range []struct {
		name string
		p, x []float64
		want float64
	}{
		{"unimodal", []float64{0.1, 0.2, 0.4, 0.2, 0.1}, []float64{0, 1, 2, 3, 4}, 0},
		{"two peaks", []float64{0.5, 0.01, 0.49}, []float64{0, 1, 2}, 0.49},
		// 0.031 is not below 0.1·0.3: a shallow dip is no valley.
		{"shallow dip", []float64{0.6, 0.031, 0.3, 0.069}, []float64{0, 1, 2, 3}, 0},
		// 0.029 is: the point beyond and the one after it are stranded.
		{"deep dip", []float64{0.6, 0.029, 0.3, 0.071}, []float64{0, 1, 2, 3}, 0.371},
		// Levels in any order: the same row as "two peaks", shuffled.
		{"unsorted levels", []float64{0.01, 0.49, 0.5}, []float64{1, 2, 0}, 0.49},
		// A far spike behind near-zero probabilities on both sides.
		{"tail spikes", []float64{1e-6, 1e-30, 0.3, 0.7, 1e-40, 2e-6}, []float64{0, 1, 2, 3, 4, 5}, 3e-6},
	} {
		got := Shape(c.p, c.x)
		// Tolerance: sums of at most three numbers, a few ulps.
		if math.Abs(got.StrandedMass-c.want) > 1e-15 {
			t.Errorf("%s: stranded mass %g, want %g", c.name, got.StrandedMass, c.want)
		}
		if got.FarFromUnimodal != (c.want >= StrandedFlag) {
			t.Errorf("%s: far from unimodal %v with stranded mass %g", c.name, got.FarFromUnimodal, got.StrandedMass)
		}
	}
}

// The two shapes issue 10 reported: examples/wage-risk.yaml at ρ 0.9,
// σ 0.12 (25 lattice states, 4 moments), whose row 0 reads 0.4220 0.0223
// 0.4897 0.0660 …, and the i.i.d. lognormal (log-s.d. 0.5) on 15 points,
// whose top point holds 0.0504 with neighbours near 1e-18 and 1e-13.
func TestShapeIssueExamples(t *testing.T) {
	c, err := AR1{Rho: 0.9, Sigma: 0.12}.Discretize(Settings{States: 25, Moments: 4})
	if err != nil {
		t.Fatal(err)
	}
	d := Diagnose(c, AR1{Rho: 0.9, Sigma: 0.12})
	row := c.Row(0)
	// The issue printed four decimals.
	for j, want := range []float64{0.4220, 0.0223, 0.4897, 0.0660} {
		if math.Abs(row[j]-want) > 5e-5 {
			t.Fatalf("row 0 entry %d is %.5f, the issue reported %.4f: the example changed", j, row[j], want)
		}
	}
	s0 := d.States[0].Shape
	// The mode is point 2; point 0 lies beyond the valley at point 1. The
	// far right end of the row holds a further spike of about 8e-6 behind
	// probabilities below 1e-30, stranded too.
	if !s0.FarFromUnimodal || s0.StrandedMass < row[0] || s0.StrandedMass > row[0]+1e-5 {
		t.Errorf("row 0: %+v, want point 0's %g stranded", *s0, row[0])
	}
	if s := d.States[12].Shape; s.StrandedMass != 0 || s.FarFromUnimodal {
		t.Errorf("centre row: %+v, want unimodal", *s)
	}
	if d.FarFromUnimodal == 0 {
		t.Error("no state counted far from unimodal")
	}

	ln, err := IID{Dist: LogNormal{Mu: 0, Sigma: 0.5}}.Discretize(Settings{States: 15, Moments: 4})
	if err != nil {
		t.Fatal(err)
	}
	top := ln.Weights[14]
	if math.Abs(top-0.0504) > 5e-5 {
		t.Fatalf("top weight %.5f, the issue reported 0.0504", top)
	}
	s := Shape(ln.Weights, ln.Nodes)
	if !s.FarFromUnimodal || s.StrandedMass < top {
		t.Errorf("lognormal: %+v, want at least the top point's %g stranded", s, top)
	}
}

// Rouwenhorst rows are convolutions of two binomial laws, and binomial
// laws are log-concave, a property convolution keeps (Ibragimov 1956), so
// every row is unimodal; Tauchen's rows integrate a unimodal density over
// equal cells, which keeps unimodality. Neither may ever be flagged.
func TestShapeBaselinesUnimodal(t *testing.T) {
	for _, m := range []Method{Rouwenhorst, Tauchen} {
		for _, rho := range []float64{0, 0.5, 0.9, 0.99, 0.999} {
			for _, n := range []int{5, 25, 101} {
				c, err := AR1{Rho: rho, Sigma: 0.1}.Discretize(Settings{States: n, Method: m})
				if err != nil {
					t.Fatal(err)
				}
				for i := 0; i < n; i++ {
					// Exact: a unimodal row has no valley at all.
					if s := Shape(c.Row(i), c.Grid); s.StrandedMass != 0 {
						t.Errorf("%s rho=%g N=%d row %d: stranded %g", m, rho, n, i, s.StrandedMass)
					}
				}
			}
		}
	}
}

// The divergence from the prior against scipy (Debian python3-scipy):
// Σ p (log p − log q) with log q normalized by scipy.special.logsumexp
// (in logs, since far from the conditional mean q underflows where the
// chain's p, also kept in logs, does not), the prior rebuilt
// independently in numpy:
// q_j ∝ w_j exp(−z_j²/2) on the lattice (the trapezoid rule: equal
// weights, halved at the two ends) and
// q_j ∝ w_j exp(−z_j²/2) with w_j the Gauss-Hermite weights of
// numpy.polynomial.hermite.hermgauss times exp(ξ_j²) on the Gauss-Hermite
// grid, z_j = (x_j − (1−ρ)μ − ρ x_i)/σ.
func TestPriorKLAgainstScipy(t *testing.T) {
	type job struct {
		Grid, Trans, KL []float64
		N               int
		Hermite         bool
		Rho, Sigma, Mu  float64
	}
	var jobs []job
	for _, c := range []struct {
		rho float64
		n   int
		g   NodeRule
	}{{0.9, 25, NodesLattice}, {0.95, 9, NodesGaussHermite}, {0.99, 15, NodesLattice}} {
		p := AR1{Mean: 0.2, Rho: c.rho, Sigma: 0.1}
		ch, err := p.Discretize(Settings{States: c.n, Moments: 4, Nodes: c.g})
		if err != nil {
			t.Fatal(err)
		}
		jobs = append(jobs, job{ch.Grid, ch.Transition, ch.PriorKL, c.n, c.g == NodesGaussHermite, c.rho, 0.1, 0.2})
	}
	const program = `
from scipy.special import logsumexp
out = []
for j in data:
    n, x = j["N"], np.array(j["Grid"])
    P = np.array(j["Trans"]).reshape(n, n)
    if j["Hermite"]:
        xi, w = np.polynomial.hermite.hermgauss(n)
        logw = np.log(w) + xi**2
    else:
        logw = np.zeros(n)
        logw[0] = logw[-1] = np.log(0.5)
    kl = []
    for i in range(n):
        z = (x - (1 - j["Rho"]) * j["Mu"] - j["Rho"] * x[i]) / j["Sigma"]
        lq = logw - z**2 / 2
        lq = lq - logsumexp(lq)
        p = P[i]
        pos = p > 0
        kl.append(float(np.sum(p[pos] * (np.log(p[pos]) - lq[pos]))))
    out.append(kl)
print(json.dumps(out))
`
	var ref [][]float64
	pyref.Eval(t, jobs, program, &ref, "scipy.special")
	for k, j := range jobs {
		for i, want := range ref[k] {
			// Tolerance: both sum n terms p log(p/q) of magnitude ≤ 50 in
			// double precision; 1e-12 absolute leaves room for the
			// different log-sum-exp orderings.
			if math.Abs(j.KL[i]-want) > 1e-12+1e-10*want {
				t.Errorf("job %d row %d: KL %.15g, scipy %.15g", k, i, j.KL[i], want)
			}
		}
	}
}

// A row that is its own prior has divergence 0 (exactly, after the clamp
// of rounding), and the product of two chains adds the divergences.
func TestPriorKLPriorRowsAndProducts(t *testing.T) {
	c, err := AR1{Rho: 0.9, Sigma: 0.1}.Discretize(Settings{States: 9, Moments: NoMoments})
	if err != nil {
		t.Fatal(err)
	}
	for i, kl := range c.PriorKL {
		// Tolerance: the prior row is rebuilt from the same logs; rounding
		// of n = 9 terms.
		if kl > 1e-15 {
			t.Errorf("prior row %d: KL %g, want 0", i, kl)
		}
	}
	a, _ := AR1{Rho: 0.9, Sigma: 0.1}.Discretize(Settings{States: 5, Moments: 4})
	b, _ := AR1{Rho: 0.5, Sigma: 0.2}.Discretize(Settings{States: 3, Moments: 2})
	pr := Product(a, b)
	for i := range 5 {
		for k := range 3 {
			if got, want := pr.PriorKL[i*3+k], a.PriorKL[i]+b.PriorKL[k]; got != want {
				t.Errorf("product state (%d,%d): %g, want %g", i, k, got, want)
			}
		}
	}
	r, _ := AR1{Rho: 0.9, Sigma: 0.1}.Discretize(Settings{States: 5, Method: Rouwenhorst})
	if Product(a, r).PriorKL != nil {
		t.Error("product with a baseline keeps a divergence")
	}
}
