package models

import (
	"math"
)

// BrockMirman is the stochastic growth model of Brock and Mirman (1972) with
// log utility, full depreciation and output y = z k^α, ln z following the
// chain:
//
//	V(k, z) = max_{0 < k' < z k^α} ln(z k^α − k') + β E[V(k', z') | z].
//
// Its optimal policy is k' = αβ z k^α on any chain, which makes it the check
// for a value-function-iteration solver: the discrete policy must match the
// closed form to the capital grid's resolution.
//
// Reference: Brock, W. A. and Mirman, L. J. (1972), "Optimal economic growth
// and uncertainty: the discounted case", Journal of Economic Theory 4,
// 479–513.
type BrockMirman struct {
	Alpha float64 // capital share α in (0, 1)
	Beta  float64 // discount factor β in (0, 1)

	// Capital is the number of capital grid points; 0 means 501.
	Capital int
	// Low and High bound the even capital grid; zero values mean 0.8 times
	// the steady state at the lowest productivity and 1.2 times the steady
	// state at the highest. The steady state k*(z) = (αβz)^(1/(1−α)) makes
	// that interval map into itself under the optimal policy.
	Low, High float64
	// Tol is the sup-norm change in V at which iteration stops; 0 means 1e-10.
	Tol float64
	// MaxIter caps the policy improvements; 0 means 1000.
	MaxIter int
}

// Growth is the solution of a BrockMirman model on a chain with S states
// and a capital grid of K points; arrays are indexed [s*K + i] for
// productivity state s and capital point i.
type Growth struct {
	Capital    []float64 // the capital grid, increasing and even
	Policy     []float64 // next-period capital k'(k_i, z_s), a grid point
	Value      []float64 // V(k_i, z_s)
	Iterations int       // policy improvements performed
}

// Spacing returns the distance between neighbouring capital grid points,
// the resolution to which Policy can match the closed form.
func (g *Growth) Spacing() float64 { return g.Capital[1] - g.Capital[0] }

// Validate reports the first parameter outside its range.
func (m BrockMirman) Validate() error {
	switch {
	case !(m.Alpha > 0 && m.Alpha < 1):
		return badParam("alpha", m.Alpha, "in (0, 1)")
	case !(m.Beta > 0 && m.Beta < 1):
		return badParam("beta", m.Beta, "in (0, 1)")
	case m.Capital != 0 && (m.Capital < 3 || m.Capital > 20000):
		return badParam("capital_points", float64(m.Capital), "an integer from 3 to 20000")
	case m.Low < 0 || math.IsInf(m.Low, 0) || math.IsNaN(m.Low):
		return badParam("capital_low", m.Low, "finite and > 0")
	case m.High < 0 || math.IsInf(m.High, 0) || math.IsNaN(m.High):
		return badParam("capital_high", m.High, "finite and > capital_low")
	case m.Tol < 0 || math.IsNaN(m.Tol):
		return badParam("tol", m.Tol, "> 0")
	}
	return nil
}

// SteadyState returns k*(z) = (αβz)^(1/(1−α)), the fixed point of the
// optimal policy at constant productivity z.
func (m BrockMirman) SteadyState(z float64) float64 {
	return math.Pow(m.Alpha*m.Beta*z, 1/(1-m.Alpha))
}

// howardSteps is the number of policy-evaluation sweeps between two policy
// improvements (modified policy iteration, Puterman and Shin 1978): it
// speeds convergence without changing the fixed point.
const howardSteps = 50

// Solve runs value-function iteration on the capital grid. Each improvement
// step searches k' over grid points only, from the previous capital point's
// choice upward: the objective has increasing differences in (k, k'), so the
// smallest maximiser is non-decreasing in k (Topkis 1978). c is not
// modified.
func (m BrockMirman) Solve(c Chain) (*Growth, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	if err := c.Validate(); err != nil {
		return nil, err
	}
	nk := m.Capital
	if nk == 0 {
		nk = 501
	}
	tol := m.Tol
	if tol == 0 {
		tol = 1e-10
	}
	maxIter := m.MaxIter
	if maxIter == 0 {
		maxIter = 1000
	}
	ns := c.N()
	z := make([]float64, ns)
	zlo, zhi := math.Inf(1), math.Inf(-1)
	for s, x := range c.Levels {
		z[s] = math.Exp(x)
		zlo, zhi = math.Min(zlo, z[s]), math.Max(zhi, z[s])
	}
	lo, hi := m.Low, m.High
	if lo == 0 {
		lo = 0.8 * m.SteadyState(zlo)
	}
	if hi == 0 {
		hi = 1.2 * m.SteadyState(zhi)
	}
	if !(hi > lo) || !(lo > 0) {
		return nil, badParam("capital_high", hi, "> capital_low")
	}
	g := &Growth{Capital: make([]float64, nk), Policy: make([]float64, ns*nk), Value: make([]float64, ns*nk)}
	for i := range g.Capital {
		g.Capital[i] = lo + (hi-lo)*float64(i)/float64(nk-1)
	}
	// output[s*nk+i] = z_s k_i^α
	output := make([]float64, ns*nk)
	for s := range z {
		for i, k := range g.Capital {
			output[s*nk+i] = z[s] * math.Pow(k, m.Alpha)
		}
	}
	if output[0] <= g.Capital[0] {
		return nil, badParam("capital_low", lo, "small enough that output exceeds it at the lowest productivity")
	}
	v := g.Value
	ev := make([]float64, ns*nk)
	next := make([]float64, ns*nk)
	choice := make([]int, ns*nk)
	util := make([]float64, ns*nk)
	expect := func() { // ev[s*nk+j] = Σ_t P_st v[t*nk+j]
		for s := 0; s < ns; s++ {
			e := ev[s*nk : (s+1)*nk]
			clear(e)
			for t, p := range c.row(s) {
				if p == 0 {
					continue
				}
				vt := v[t*nk : (t+1)*nk]
				for j := range e {
					e[j] += p * vt[j]
				}
			}
		}
	}
	for it := 1; it <= maxIter; it++ {
		expect()
		var change float64
		for s := 0; s < ns; s++ {
			j := 0
			for i := 0; i < nk; i++ {
				y := output[s*nk+i]
				best, bestJ := math.Inf(-1), -1
				for jj := j; jj < nk && g.Capital[jj] < y; jj++ {
					u := math.Log(y-g.Capital[jj]) + m.Beta*ev[s*nk+jj]
					if u > best {
						best, bestJ = u, jj
					}
				}
				if bestJ < 0 {
					return nil, badParam("capital_low", lo, "small enough that some grid capital is affordable in every state")
				}
				j = bestJ
				choice[s*nk+i] = bestJ
				next[s*nk+i] = best
				change = math.Max(change, math.Abs(best-v[s*nk+i]))
			}
		}
		copy(v, next)
		g.Iterations = it
		if change < tol {
			for k, j := range choice {
				g.Policy[k] = g.Capital[j]
			}
			return g, nil
		}
		// Howard steps: evaluate the current policy, whose period utility
		// is fixed.
		for k, j := range choice {
			util[k] = math.Log(output[k] - g.Capital[j])
		}
		for h := 0; h < howardSteps; h++ {
			expect()
			for k, j := range choice {
				s := k / nk
				v[k] = util[k] + m.Beta*ev[s*nk+j]
			}
		}
	}
	return nil, ErrNoConvergence
}
