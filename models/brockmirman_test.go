package models

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"gridstage/solver"
)

// testChains returns chains of several kinds for ln z: the claim under test
// holds on any chain, so include a random one.
func testChains(t *testing.T) map[string]Chain {
	t.Helper()
	out := map[string]Chain{}
	// Productivity ln z: ρ = 0.9, σ = 0.05 (common practice for annual TFP).
	p := solver.AR1{Rho: 0.9, Sigma: 0.05}
	for _, s := range []solver.Settings{
		{States: 9, Method: solver.MaxEnt},
		{States: 5, Method: solver.Tauchen},
		{States: 7, Method: solver.Rouwenhorst},
	} {
		c, err := p.Discretize(s)
		if err != nil {
			t.Fatal(err)
		}
		out[s.Method.String()] = Chain{Levels: c.Grid, Transition: c.Transition}
	}
	// A random 4-state chain with unsorted levels.
	r := rand.New(rand.NewPCG(1, 1))
	n := 4
	rc := Chain{Levels: make([]float64, n), Transition: make([]float64, n*n)}
	for i := 0; i < n; i++ {
		rc.Levels[i] = 0.2 * (r.Float64() - 0.5)
		var s float64
		for j := 0; j < n; j++ {
			rc.Transition[i*n+j] = r.Float64()
			s += rc.Transition[i*n+j]
		}
		for j := 0; j < n; j++ {
			rc.Transition[i*n+j] /= s
		}
	}
	out["random"] = rc
	return out
}

func TestBrockMirmanPolicyClosedForm(t *testing.T) {
	m := BrockMirman{Alpha: 0.33, Beta: 0.95, Capital: 301}
	for name, c := range testChains(t) {
		g, err := m.Solve(c)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		h := g.Spacing()
		nk := len(g.Capital)
		// Closed form (Brock and Mirman 1972): k' = αβ z k^α. The grid
		// maximiser lies within one spacing h of it: the objective is
		// strictly concave in k', so the best grid point is one of the two
		// neighbours of the continuous optimum (tolerance h, plus 1e-12 for
		// rounding).
		var worst float64
		for s, x := range c.Levels {
			for i, k := range g.Capital {
				want := m.Alpha * m.Beta * math.Exp(x) * math.Pow(k, m.Alpha)
				worst = math.Max(worst, math.Abs(g.Policy[s*nk+i]-want)/h)
			}
		}
		if worst > 1+1e-12 {
			t.Errorf("%s: policy off the closed form by %.3f grid spacings, want ≤ 1", name, worst)
		}

		// Closed-form value V = A + B ln k + D(z), B = α/(1−αβ),
		// D = (I − βP)^{-1} ln z/(1−αβ), A = [ln(1−αβ) + βB ln(αβ)]/(1−β).
		// The grid solution can only be lower. Restricting k' to the grid
		// costs at most |f''| h²/8 per period where f is the objective in k'
		// (the best grid point is within h/2 of the optimum), so at most
		// that over (1−β) in total.
		ab := m.Alpha * m.Beta
		B := m.Alpha / (1 - ab)
		A := (math.Log(1-ab) + m.Beta*B*math.Log(ab)) / (1 - m.Beta)
		n := c.N()
		I := mat.NewDense(n, n, nil)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				v := -m.Beta * c.Transition[i*n+j]
				if i == j {
					v++
				}
				I.Set(i, j, v)
			}
		}
		rhs := mat.NewVecDense(n, nil)
		for s, x := range c.Levels {
			rhs.SetVec(s, x/(1-ab))
		}
		var D mat.VecDense
		if err := D.SolveVec(I, rhs); err != nil {
			t.Fatal(err)
		}
		var curv float64
		for _, x := range c.Levels {
			for _, k := range g.Capital {
				y := math.Exp(x) * math.Pow(k, m.Alpha)
				cons, kp := (1-ab)*y, ab*y
				curv = math.Max(curv, 1/(cons*cons)+m.Beta*B/(kp*kp))
			}
		}
		bound := curv*h*h/8/(1-m.Beta) + 1e-8 // + 1e-8: iteration tolerance 1e-10/(1−β) with margin
		for s := range c.Levels {
			for i, k := range g.Capital {
				want := A + B*math.Log(k) + D.AtVec(s)
				got := g.Value[s*nk+i]
				if got > want+1e-8 || want-got > bound {
					t.Fatalf("%s: V(k=%g, state %d) = %.10g, closed form %.10g (allowed loss %.3g)", name, k, s, got, want, bound)
				}
			}
		}
	}
}

func TestBrockMirmanBadInput(t *testing.T) {
	c := Chain{Levels: []float64{0}, Transition: []float64{1}}
	for _, m := range []BrockMirman{{Alpha: 1, Beta: 0.9}, {Alpha: 0.3, Beta: 0}, {Alpha: 0.3, Beta: 0.9, Capital: 2}, {Alpha: 0.3, Beta: 0.9, Low: 2, High: 1}} {
		if _, err := m.Solve(c); err == nil {
			t.Errorf("%+v: no error", m)
		}
	}
}

func BenchmarkBrockMirman501x9(b *testing.B) {
	p := solver.AR1{Rho: 0.9, Sigma: 0.05}
	sc, err := p.Discretize(solver.Settings{States: 9})
	if err != nil {
		b.Fatal(err)
	}
	c := Chain{Levels: sc.Grid, Transition: sc.Transition}
	for b.Loop() {
		if _, err := (BrockMirman{Alpha: 0.33, Beta: 0.95}).Solve(c); err != nil {
			b.Fatal(err)
		}
	}
}
