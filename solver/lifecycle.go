package solver

import (
	"math"
	"strconv"

	"gridstage/internal/portablemath"
)

// LifeCycle is an age-varying (life-cycle) first-order autoregression with
// mean zero:
//
//	z_0 = σ_0 u,                     u ~ Initial,
//	z_{t+1} = ρ_t z_t + σ_t ε_{t+1},  ε_{t+1} ~ Shocks[t],   t = 0, …, T−1,
//
// where T = len(Rho) is the number of transitions (ages 0 … T). Initial and
// each Shocks[t] are laws with mean 0 and variance 1 (nil means standard
// normal; wrap others in Standardized). ρ_t may be any finite number (a
// random walk, ρ_t = 1, is common over a finite life).
type LifeCycle struct {
	InitialSD float64      // σ_0 > 0
	Initial   Distribution // law of z_0/σ_0; nil means N(0, 1)
	Rho       []float64    // ρ_t, t = 0 … T−1
	Sigma     []float64    // σ_t > 0, t = 0 … T−1
	Shocks    []Distribution
}

// Ages returns T + 1, the number of ages with a grid.
func (p LifeCycle) Ages() int { return len(p.Rho) + 1 }

func (p LifeCycle) shock(t int) Distribution {
	if p.Shocks == nil {
		return nil
	}
	return p.Shocks[t]
}

// Validate reports the first parameter outside its range.
func (p LifeCycle) Validate() error {
	switch {
	case !(p.InitialSD > 0) || math.IsInf(p.InitialSD, 1):
		return badParam("initial_sd", p.InitialSD, "finite and > 0")
	case len(p.Rho) == 0:
		return badParam("rho entries", 0, "at least 1 (one per transition between ages)")
	case len(p.Sigma) != len(p.Rho):
		return badParam("sigma entries", float64(len(p.Sigma)), strconv.Itoa(len(p.Rho))+", one per entry of rho")
	case p.Shocks != nil && len(p.Shocks) != len(p.Rho):
		return badParam("shocks entries", float64(len(p.Shocks)), strconv.Itoa(len(p.Rho))+", one per entry of rho, or none")
	}
	for t := range p.Rho {
		if math.IsNaN(p.Rho[t]) || math.IsInf(p.Rho[t], 0) {
			return badParam("rho["+strconv.Itoa(t)+"]", p.Rho[t], "finite")
		}
		if !(p.Sigma[t] > 0) || math.IsInf(p.Sigma[t], 1) {
			return badParam("sigma["+strconv.Itoa(t)+"]", p.Sigma[t], "finite and > 0")
		}
	}
	return p.ranges()
}

// Variances returns V_t = Var z_t for t = 0 … T: V_0 = σ_0², V_{t+1} = ρ_t² V_t + σ_t².
func (p LifeCycle) Variances() []float64 {
	v := make([]float64, p.Ages())
	v[0] = float64(p.InitialSD * p.InitialSD)
	for t, r := range p.Rho {
		v[t+1] = float64(r*r*v[t]) + float64(p.Sigma[t]*p.Sigma[t])
	}
	return v
}

// Marginal returns the exact mean, standard deviation, skewness and
// kurtosis of z_t at every age (Autocorr is Corr(z_t, z_{t−1}), 0 at age 0),
// from the cumulant recursion κ_k(z_{t+1}) = ρ_t^k κ_k(z_t) + σ_t^k κ_k(ε).
func (p LifeCycle) Marginal() []Summary {
	std := func(d Distribution, k int) float64 {
		if d == nil {
			return normalStdMoment(k)
		}
		m, _ := d.StdMoment(k)
		return m
	}
	out := make([]Summary, p.Ages())
	s0 := p.InitialSD
	k2 := float64(s0 * s0)
	k3 := float64(std(p.Initial, 3) * s0 * s0 * s0)
	k4 := float64((std(p.Initial, 4) - 3) * k2 * k2)
	out[0] = Summary{SD: s0, Skew: k3 / portablemath.Pow(k2, 1.5), Kurt: 3 + k4/(k2*k2)}
	for t, r := range p.Rho {
		s := p.Sigma[t]
		prev := k2
		k2 = float64(r*r*k2) + float64(s*s)
		k3 = float64(r*r*r*k3) + float64(std(p.shock(t), 3)*s*s*s)
		k4 = float64(r*r*r*r*k4) + float64((std(p.shock(t), 4)-3)*s*s*s*s)
		out[t+1] = Summary{SD: math.Sqrt(k2), Skew: k3 / portablemath.Pow(k2, 1.5), Kurt: 3 + k4/(k2*k2),
			Autocorr: float64(r * math.Sqrt(prev/k2))}
	}
	return out
}

// AgeChain is a life-cycle Markov chain: one transition matrix per
// transition between consecutive ages, each on age-specific grids.
//
// Ages[t] (t = 0 … T−1) holds the grid of age t and, in Transition, the
// N×N matrix of moves from age-t states to age-(t+1) states; the grid of
// age t+1 is Ages[t+1].Grid, or Final for the last age. Initial is the
// distribution over the states of age 0. Stacking the transitions gives the
// T × N × N tensor.
type AgeChain struct {
	Ages    []*Chain
	Final   []float64
	Initial []float64
	// InitialMoments is the number of moments of z_0 requested and
	// InitialMatched the number matched by Initial.
	InitialMoments, InitialMatched int
	// InitialCertificate says why InitialMatched moments were matched.
	InitialCertificate Certificate
	Method             Method
}

// Transitions returns T, the number of transition matrices.
func (a *AgeChain) Transitions() int { return len(a.Ages) }

// Grid returns the grid of age t (0 ≤ t ≤ T).
func (a *AgeChain) Grid(t int) []float64 {
	if t == len(a.Ages) {
		return a.Final
	}
	return a.Ages[t].Grid
}

// Marginals returns the distribution over states at every age 0 … T,
// starting from Initial and applying each transition in turn.
func (a *AgeChain) Marginals() [][]float64 {
	out := make([][]float64, len(a.Ages)+1)
	out[0] = append([]float64(nil), a.Initial...)
	for t, c := range a.Ages {
		n := len(a.Grid(t+1)) / c.Dim
		next := make([]float64, n)
		for i, w := range out[t] {
			if w == 0 {
				continue
			}
			for j, q := range c.Transition[i*n : (i+1)*n] {
				next[j] += float64(w * q)
			}
		}
		out[t+1] = next
	}
	return out
}

// Discretize builds the life-cycle chain with s.States points at every
// age. All methods lay age t's grid over ±(width) √V_t about 0:
//
//   - Rouwenhorst, age-varying (Fella, Gallipoli and Pan 2019): even grids
//     with half-width √(N−1) √V_t, transition t the Rouwenhorst matrix with
//     p_t = q_t = (1 + ρ_t √V_t/√V_{t+1})/2, and Initial the
//     Binomial(N−1, ½) weights. Conditional means and variances are exact at
//     every age, and so are the marginal variances V_t.
//   - MaxEnt: the node rule s.Nodes (lattice by default, which with the default
//     width is the age-varying Rouwenhorst grid), and in every state the
//     transition row matches the first s.Moments conditional moments of
//     ρ_t z + σ_t ε (default 4, fewer when the shock lacks them), with the
//     fallback ladder; Initial matches the moments of z_0 on the age-0 grid.
//   - Tauchen: even grids over ±3 √V_t (or s.Width) with Tauchen's (1986)
//     interval masses, Initial likewise from the law of z_0.
func (p LifeCycle) Discretize(s Settings) (*AgeChain, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	if err := checkStates(s.States); err != nil {
		return nil, err
	}
	if !(s.Width >= 0) || math.IsInf(s.Width, 1) {
		return nil, badParam("width", s.Width, "finite and > 0")
	}
	n, T := s.States, len(p.Rho)
	vars := p.Variances()
	grids := make([][]float64, T+1)
	logWs := make([][]float64, T+1)
	for t := range grids {
		sd := math.Sqrt(vars[t])
		switch s.Method {
		case MaxEnt:
			grids[t], logWs[t] = placeGrid(s.Nodes, n, 0, sd, s.Width, Normal{0, sd})
		case Rouwenhorst:
			psi := float64(RouwenhorstWidth(n) * sd)
			grids[t] = Trapezoid(n, -psi, psi).Nodes
		case Tauchen:
			w := s.Width
			if w == 0 {
				w = DefaultTauchenWidth
			}
			grids[t] = Trapezoid(n, float64(-w*sd), float64(w*sd)).Nodes
		default:
			return nil, badChoice("method", s.Method.String(), "maxent, rouwenhorst or tauchen for a life-cycle process")
		}
	}
	ac := &AgeChain{Ages: make([]*Chain, T), Final: grids[T], Method: s.Method}
	for t := 0; t < T; t++ {
		L, err := resolveMoments(s, p.shock(t))
		if err != nil {
			return nil, err
		}
		c := &Chain{Dim: 1, Grid: grids[t], Transition: make([]float64, n*n), Matched: make([]int, n), Method: s.Method, Moments: L}
		law := conditional{Mean: make([]float64, n), SD: make([]float64, n), Shock: p.shock(t)}
		for i, z := range grids[t] {
			law.Mean[i] = float64(p.Rho[t] * z)
			law.SD[i] = p.Sigma[t]
		}
		switch s.Method {
		case MaxEnt:
			c.Certificates = make([]Certificate, n)
			maxentRows(grids[t+1], logWs[t+1], law, L, s.Matching, c.Transition, c.Matched, c.Certificates)
			c.PriorKL = scalarPriorKL(grids[t+1], logWs[t+1], law, c.Transition)
		case Rouwenhorst:
			pt := (1 + float64(p.Rho[t]*math.Sqrt(vars[t]/vars[t+1]))) / 2
			rouwenhorstMatrix(n, pt, pt, c.Transition)
			for i := range c.Matched {
				c.Matched[i] = 2
			}
		case Tauchen:
			tauchenRows(grids[t+1], grids[t+1][1]-grids[t+1][0], law, c.Transition)
		}
		ac.Ages[t] = c
	}
	L0, err := resolveMoments(s, p.Initial)
	if err != nil {
		return nil, err
	}
	ac.InitialMoments = L0
	ac.Initial = make([]float64, n)
	law0 := conditional{Mean: []float64{0}, SD: []float64{p.InitialSD}, Shock: p.Initial}
	switch s.Method {
	case MaxEnt:
		m := []int{0}
		cert := []Certificate{CertNone}
		maxentRows(grids[0], logWs[0], law0, L0, s.Matching, ac.Initial, m, cert)
		ac.InitialMatched, ac.InitialCertificate = m[0], cert[0]
	case Rouwenhorst:
		for i := range ac.Initial {
			ac.Initial[i] = float64(binomial(n-1, i) * portablemath.Pow(0.5, float64(n-1)))
		}
		ac.InitialMatched = 2
	case Tauchen:
		full := make([]float64, n*n)
		lawN := conditional{Mean: make([]float64, n), SD: make([]float64, n), Shock: p.Initial}
		for i := range lawN.SD {
			lawN.SD[i] = p.InitialSD
		}
		tauchenRows(grids[0], grids[0][1]-grids[0][0], lawN, full)
		copy(ac.Initial, full[:n])
	}
	return ac, nil
}
