package models

import (
	"fmt"
	"math"
	"sort"
)

// Savings is an income-fluctuation problem: a consumer with CRRA utility
// u(c) = c^(1−γ)/(1−γ) (ln c when γ = 1) earns income y = exp(x), x
// following the chain, saves at the gross rate 1 + r and may not let assets
// fall below −b:
//
//	V(a, s) = max_{c, a'} u(c) + β E[V(a', s') | s],
//	c + a' = (1 + r) a + y_s,   a' ≥ −b.
//
// With β(1 + r) < 1 wealth has a stationary distribution (Aiyagari 1994).
type Savings struct {
	Beta  float64 // discount factor β in (0, 1)
	Gamma float64 // relative risk aversion γ > 0
	Rate  float64 // net interest rate r > −1, with β(1 + r) ≤ 1
	// Limit is the borrowing limit b ≥ 0 (assets a ≥ −b). It must lie
	// inside the natural limit y_min / r so that consumption stays positive.
	Limit float64

	// Assets is the number of asset grid points; 0 means 400.
	Assets int
	// AssetMax is the top of the asset grid; 0 means 100 times mean income
	// at the chain's stationary distribution. Points crowd near −b, where
	// the policy bends, by a quadratic spacing (common practice).
	AssetMax float64
	// Tol is the sup-norm change in consumption at which iteration stops,
	// and the total-variation change at which the wealth distribution
	// stops; 0 means 1e-10.
	Tol float64
	// MaxIter caps either iteration; 0 means 10000.
	MaxIter int
}

// Wealth is the solution of a Savings problem on a chain with S states and
// an asset grid of A points; arrays are indexed [s*A + i].
type Wealth struct {
	Assets      []float64 // the asset grid, increasing from −b
	Income      []float64 // y_s = exp(x_s)
	Consumption []float64 // c(a_i, s)
	Saving      []float64 // a'(a_i, s)
	// Distribution is the stationary joint distribution of (s, a_i), with
	// mass between grid points split by the lottery of Young (2010).
	Distribution []float64
	Moments      WealthMoments
	Iterations   int // policy iterations performed
}

// WealthMoments summarise the stationary distribution of assets.
type WealthMoments struct {
	Mean    float64 // mean assets
	SD      float64 // standard deviation of assets
	Median  float64 // median assets (by linear interpolation of the CDF)
	AtLimit float64 // share of households at the borrowing limit −b
	Top     float64 // mass on the top grid point (should be ~0)
}

// Validate reports the first parameter outside its range.
func (m Savings) Validate() error {
	switch {
	case !(m.Beta > 0 && m.Beta < 1):
		return badParam("beta", m.Beta, "in (0, 1)")
	case !(m.Gamma > 0) || math.IsInf(m.Gamma, 1):
		return badParam("gamma", m.Gamma, "finite and > 0")
	case !(m.Rate > -1) || math.IsInf(m.Rate, 1):
		return badParam("rate", m.Rate, "finite and > -1")
	case m.Beta*(1+m.Rate) > 1:
		return badParam("rate", m.Rate, "at most 1/beta − 1 (otherwise wealth grows without bound)")
	case !(m.Limit >= 0) || math.IsInf(m.Limit, 1):
		return badParam("limit", m.Limit, "finite and ≥ 0")
	case m.Assets != 0 && (m.Assets < 4 || m.Assets > 100000):
		return badParam("asset_points", float64(m.Assets), "an integer from 4 to 100000")
	case !(m.AssetMax >= 0) || math.IsInf(m.AssetMax, 1):
		return badParam("asset_max", m.AssetMax, "finite and > -limit")
	case m.Tol < 0 || math.IsNaN(m.Tol):
		return badParam("tol", m.Tol, "> 0")
	}
	return nil
}

// marginal is u'(c) = c^(−γ).
func (m Savings) marginal(c float64) float64 { return math.Pow(c, -m.Gamma) }

// inverseMarginal is (u')^(−1)(q) = q^(−1/γ).
func (m Savings) inverseMarginal(q float64) float64 { return math.Pow(q, -1/m.Gamma) }

// Solve finds the policy by the endogenous grid method of Carroll (2006):
// on a grid of next-period assets a'_j, the Euler equation
//
//	u'(c) = β(1 + r) E[u'(c(a'_j, s'))]
//
// gives consumption today and so the assets a = (c + a'_j − y_s)/(1 + r)
// that lead to a'_j; the policy on the asset grid interpolates linearly
// between those points, and below the first of them the limit binds
// (a' = −b). It then finds the stationary wealth distribution. c is not
// modified.
//
// Reference: Carroll, C. D. (2006), "The method of endogenous gridpoints for
// solving dynamic stochastic optimization problems", Economics Letters 91,
// 312–320. Young, E. R. (2010), "Solving the incomplete markets model with
// aggregate uncertainty using the Krusell-Smith algorithm and
// non-stochastic simulations", Journal of Economic Dynamics and Control 34,
// 36–41.
func (m Savings) Solve(c Chain) (*Wealth, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	if err := c.Validate(); err != nil {
		return nil, err
	}
	na, tol, maxIter := m.Assets, m.Tol, m.MaxIter
	if na == 0 {
		na = 400
	}
	if tol == 0 {
		tol = 1e-10
	}
	if maxIter == 0 {
		maxIter = 10000
	}
	ns := c.N()
	w := &Wealth{Income: make([]float64, ns)}
	ymin := math.Inf(1)
	for s, x := range c.Levels {
		w.Income[s] = math.Exp(x)
		ymin = math.Min(ymin, w.Income[s])
	}
	if m.Rate > 0 && m.Limit >= ymin/m.Rate {
		return nil, badParam("limit", m.Limit, "below the natural borrowing limit y_min/r = "+formatG(ymin/m.Rate))
	}
	if m.Rate <= 0 && m.Limit > 0 && m.Rate*(-m.Limit)+ymin <= 0 {
		return nil, badParam("limit", m.Limit, "small enough that income covers interest at the limit")
	}
	top := m.AssetMax
	if top == 0 {
		pi, err := stationary(c)
		if err != nil {
			return nil, err
		}
		var mean float64
		for s, p := range pi {
			mean += p * w.Income[s]
		}
		top = 100 * mean
	}
	if !(top > -m.Limit) {
		return nil, badParam("asset_max", top, "above the borrowing limit -limit")
	}
	w.Assets = make([]float64, na)
	for i := range w.Assets {
		u := float64(i) / float64(na-1)
		w.Assets[i] = -m.Limit + (top+m.Limit)*u*u
	}
	R := 1 + m.Rate
	cons := make([]float64, ns*na)
	for s := 0; s < ns; s++ { // start from eating all cash above the limit
		for i, a := range w.Assets {
			cons[s*na+i] = R*a + w.Income[s] + m.Limit
		}
	}
	next := make([]float64, ns*na)
	endoA := make([]float64, na)
	endoC := make([]float64, na)
	converged := false
	mu := make([]float64, ns*na) // u'(c) at every (state, asset point)
	for it := 1; it <= maxIter; it++ {
		var change float64
		for k, ck := range cons {
			mu[k] = m.marginal(ck)
		}
		for s := 0; s < ns; s++ {
			for j, ap := range w.Assets {
				var e float64
				for t, p := range c.row(s) {
					if p != 0 {
						e += p * mu[t*na+j]
					}
				}
				endoC[j] = m.inverseMarginal(m.Beta * R * e)
				endoA[j] = (endoC[j] + ap - w.Income[s]) / R
			}
			for i, a := range w.Assets {
				cash := R*a + w.Income[s]
				var cnew float64
				if a <= endoA[0] {
					cnew = cash + m.Limit // the limit binds: a' = −b
				} else {
					ap := interp(endoA, w.Assets, a)
					cnew = cash - ap
				}
				change = math.Max(change, math.Abs(cnew-cons[s*na+i]))
				next[s*na+i] = cnew
			}
		}
		cons, next = next, cons
		w.Iterations = it
		if change < tol {
			converged = true
			break
		}
	}
	if !converged {
		return nil, ErrNoConvergence
	}
	w.Consumption = cons
	w.Saving = make([]float64, ns*na)
	for s := 0; s < ns; s++ {
		for i, a := range w.Assets {
			w.Saving[s*na+i] = R*a + w.Income[s] - cons[s*na+i]
			if !(cons[s*na+i] > 0) {
				return nil, ErrDiverges
			}
		}
	}
	if m.Beta*R < 1 {
		dist, err := m.distribution(c, w, tol, maxIter)
		if err != nil {
			return nil, err
		}
		w.Distribution = dist
		w.Moments = wealthMoments(w.Assets, dist, ns)
		// Savings beyond the grid's top are clipped to it, which breaks the
		// distribution's accounting: refuse rather than report wrong moments.
		if w.Moments.Top > 1e-9 {
			return nil, fmt.Errorf("models: %.2g of households sit at the top of the asset grid (%g): raise asset_max", w.Moments.Top, top)
		}
	}
	return w, nil
}

// interp evaluates at x the piecewise-linear function through (xs[k], ys[k])
// (xs increasing), extending the end segments linearly.
func interp(xs, ys []float64, x float64) float64 {
	n := len(xs)
	k := sort.SearchFloat64s(xs, x) // first xs[k] ≥ x
	switch {
	case k <= 0:
		k = 1
	case k >= n:
		k = n - 1
	}
	t := (x - xs[k-1]) / (xs[k] - xs[k-1])
	return ys[k-1] + t*(ys[k]-ys[k-1])
}

// distribution iterates the wealth distribution to its fixed point: mass at
// (a_i, s) moves to s' with probability P_ss' and to the two grid points
// around a'(a_i, s) in proportions that preserve the mean (Young 2010).
func (m Savings) distribution(c Chain, w *Wealth, tol float64, maxIter int) ([]float64, error) {
	ns, na := c.N(), len(w.Assets)
	lower := make([]int, ns*na)
	wLow := make([]float64, ns*na)
	for k, ap := range w.Saving {
		j := sort.SearchFloat64s(w.Assets, ap)
		switch {
		case j <= 0:
			lower[k], wLow[k] = 0, 1
		case j >= na:
			lower[k], wLow[k] = na-2, 0
		default:
			lower[k] = j - 1
			wLow[k] = (w.Assets[j] - ap) / (w.Assets[j] - w.Assets[j-1])
		}
	}
	pi, err := stationary(c)
	if err != nil {
		return nil, err
	}
	dist := make([]float64, ns*na)
	for s := 0; s < ns; s++ {
		dist[s*na] = pi[s] // everyone starts at the limit
	}
	nextDist := make([]float64, ns*na)
	for it := 0; it < maxIter; it++ {
		clear(nextDist)
		for s := 0; s < ns; s++ {
			for i := 0; i < na; i++ {
				mass := dist[s*na+i]
				if mass == 0 {
					continue
				}
				k := s*na + i
				lo, wl := lower[k], wLow[k]
				for t, p := range c.row(s) {
					if p == 0 {
						continue
					}
					nextDist[t*na+lo] += p * mass * wl
					nextDist[t*na+lo+1] += p * mass * (1 - wl)
				}
			}
		}
		var tv float64
		for k := range dist {
			tv += math.Abs(nextDist[k] - dist[k])
		}
		dist, nextDist = nextDist, dist
		if tv < tol {
			return dist, nil
		}
	}
	return nil, ErrNoConvergence
}

// wealthMoments summarises the asset marginal of the joint distribution.
func wealthMoments(assets, dist []float64, ns int) WealthMoments {
	na := len(assets)
	marg := make([]float64, na)
	for s := 0; s < ns; s++ {
		for i := 0; i < na; i++ {
			marg[i] += dist[s*na+i]
		}
	}
	var wm WealthMoments
	for i, p := range marg {
		wm.Mean += p * assets[i]
	}
	for i, p := range marg {
		d := assets[i] - wm.Mean
		wm.SD += p * d * d
	}
	wm.SD = math.Sqrt(wm.SD)
	wm.AtLimit = marg[0]
	wm.Top = marg[na-1]
	var cum float64
	for i, p := range marg {
		if cum+p >= 0.5 {
			if i == 0 || p == 0 {
				wm.Median = assets[i]
			} else {
				wm.Median = assets[i-1] + (assets[i]-assets[i-1])*(0.5-cum)/p
			}
			break
		}
		cum += p
	}
	return wm
}
