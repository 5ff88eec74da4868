package solver

import (
	"math"
	"testing"
)

// cumulantsOfRow returns the first four cumulants of the law that puts
// probability p[j] on x[j].
func cumulantsOfRow(p, x []float64) [4]float64 {
	m := WeightedMoments(p, x)
	return [4]float64{m.Mean, m.Var, m.Skew * math.Pow(m.Var, 1.5), (m.Kurt - 3) * m.Var * m.Var}
}

// Persistent plus transitory income as one life-cycle chain: at every age
// and in every state (z_i, e_k), the product chain's conditional
// cumulants of next period's y = z + e equal (a) the sums of the
// components' own chains' conditional cumulants, to rounding (1e-12
// relative: the same numbers summed in another order), and (b) the closed
// form of the process, the sum of the cumulants of ρ_t z_i + σ_t v and of
// e: mean ρ_t z_i + μ_e, variance σ_t² + σ_e², third cumulant
// σ_t³ skew(v), fourth σ_t⁴ (kurt(v) − 3) (a normal e adds none), for as
// many of them as both components matched in that state (1e-9: the
// solver's moment tolerance).
func TestProductAgesConditionalMomentsAreSums(t *testing.T) {
	mix := Mixture{Weights: []float64{0.9, 0.1}, Means: []float64{0.02, -0.18}, SDs: []float64{0.1, 0.4}}
	shock := Standardized{Base: mix}
	lc := LifeCycle{InitialSD: 0.35, Rho: []float64{0.88, 0.92, 0.96, 1}, Sigma: []float64{0.26, 0.2, 0.16, 0.15},
		Shocks: []Distribution{shock, shock, shock, shock}}
	ages, err := lc.Discretize(Settings{States: 15, Moments: 4})
	if err != nil {
		t.Fatal(err)
	}
	const muE, sdE = 0.05, 0.2
	d, err := IID{Dist: Normal{Mu: muE, Sigma: sdE}}.Discretize(Settings{States: 5, Moments: 4, Nodes: NodesGaussHermite})
	if err != nil || d.Matched != 4 {
		t.Fatalf("transitory part: %+v, %v", d, err)
	}
	trans := d.Chain()
	a, err := ProductAges(AgePart{Ages: ages}, AgePart{Chain: trans})
	if err != nil {
		t.Fatal(err)
	}
	if a.Transitions() != 4 || a.Ages[0].Dim != 2 || a.Ages[0].States() != 75 || len(a.Final) != 150 || len(a.Initial) != 75 {
		t.Fatalf("shape: %d transitions, dim %d, %d states, final %d, initial %d", a.Transitions(), a.Ages[0].Dim, a.Ages[0].States(), len(a.Final), len(a.Initial))
	}
	sk, _ := shock.StdMoment(3)
	ku, _ := shock.StdMoment(4)
	checked := [4]int{}
	for t0, c := range a.Ages {
		next := a.Grid(t0 + 1)
		sums := make([]float64, len(next)/2)
		for j := range sums {
			sums[j] = next[2*j] + next[2*j+1]
		}
		for s := 0; s < c.States(); s++ {
			i, k := s/5, s%5
			got := cumulantsOfRow(c.Row(s), sums)
			zNext := ages.Grid(t0 + 1)
			cz := cumulantsOfRow(ages.Ages[t0].Row(i), zNext)
			ce := cumulantsOfRow(trans.Row(k), trans.Grid)
			for q := range got {
				want := cz[q] + ce[q]
				if math.Abs(got[q]-want) > 1e-12*math.Max(1e-3, math.Abs(want)) {
					t.Fatalf("age %d state %d cumulant %d: product %.15g, sum of the components %.15g", t0, s, q+1, got[q], want)
				}
			}
			z, s3 := ages.Ages[t0].Grid[i], lc.Sigma[t0]
			closed := [4]float64{lc.Rho[t0]*z + muE, s3*s3 + sdE*sdE, s3 * s3 * s3 * sk, s3 * s3 * s3 * s3 * (ku - 3)}
			matched := min(ages.Ages[t0].Matched[i], d.Matched)
			if c.Matched[s] != matched {
				t.Errorf("age %d state %d: matched %d, want the smaller of the components' %d", t0, s, c.Matched[s], matched)
			}
			// The standardized scale of each cumulant: sd^q.
			scale := math.Sqrt(closed[1])
			for q := 0; q < matched; q++ {
				if e := math.Abs(got[q]-closed[q]) / math.Pow(scale, float64(q+1)); e > 1e-9 {
					t.Errorf("age %d state %d: cumulant %d = %.12g, closed form %.12g (standardized error %.2g)", t0, s, q+1, got[q], closed[q], e)
				}
				checked[q]++
			}
		}
	}
	if checked[3] < 100 {
		t.Errorf("only %v states checked per cumulant; want the four-moment states of every age", checked)
	}
	// The initial law is the persistent part's initial law times the
	// transitory part's weights (which the stationary law of its chain
	// reproduces to rounding, 1e-13 relative), and every age's law sums to
	// one.
	for s, p := range a.Initial {
		if want := ages.Initial[s/5] * d.Weights[s%5]; math.Abs(p-want) > 1e-13*want {
			t.Fatalf("initial %d = %g, want %g", s, p, want)
		}
	}
	for t0, m := range a.Marginals() {
		var sum float64
		for _, p := range m {
			sum += p
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Errorf("age %d: law sums to %.15g", t0, sum)
		}
	}
}

// A persistent AR(1) component enters in its stationary law and moves with
// its own matrix at every age.
func TestProductAgesWithAR1(t *testing.T) {
	lc := LifeCycle{InitialSD: 0.3, Rho: []float64{0.9, 0.95}, Sigma: []float64{0.2, 0.15}}
	ages, err := lc.Discretize(Settings{States: 5, Method: Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	ar, err := AR1{Rho: 0.5, Sigma: 0.1}.Discretize(Settings{States: 3, Method: Rouwenhorst})
	if err != nil {
		t.Fatal(err)
	}
	a, err := ProductAges(AgePart{Chain: ar}, AgePart{Ages: ages})
	if err != nil {
		t.Fatal(err)
	}
	pi, _ := Stationary(ar.Transition, 3)
	for s, p := range a.Initial {
		if want := pi[s/5] * ages.Initial[s%5]; math.Abs(p-want) > 1e-17 {
			t.Fatalf("initial %d = %g, want %g", s, p, want)
		}
	}
	for t0, c := range a.Ages {
		for s := 0; s < c.States(); s++ {
			i, k := s/5, s%5
			for j, p := range c.Row(s) {
				if want := ar.Row(i)[j/5] * ages.Ages[t0].Row(k)[j%5]; math.Abs(p-want) > 1e-17 {
					t.Fatalf("age %d P[%d][%d] = %g, want %g", t0, s, j, p, want)
				}
			}
		}
	}
	if got := a.Final[2*7 : 2*7+2]; got[0] != ar.Grid[1] || got[1] != ages.Final[2] {
		t.Errorf("final state 7 = %v, want (%g, %g)", got, ar.Grid[1], ages.Final[2])
	}
}
