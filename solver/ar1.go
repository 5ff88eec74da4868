package solver

import (
	"math"
	"strconv"

	"gridstage/internal/portablemath"
)

// AR1 is the first-order autoregression
//
//	x' = (1 − ρ) μ + ρ x + σ z,
//
// with z drawn from Shock, a distribution with mean 0 and variance 1
// (nil means standard normal; wrap other laws in Standardized).
type AR1 struct {
	Mean  float64 // μ, the unconditional mean
	Rho   float64 // ρ in (−1, 1)
	Sigma float64 // σ > 0, the innovation standard deviation
	Shock Distribution
}

// Settings choose how a process is discretized. The zero value of each
// optional field documents its default.
type Settings struct {
	// States is the number of grid points (per axis for vector processes); ≥ 2.
	States int
	// Method is the discretization method; the zero value is MaxEnt.
	Method Method
	// Moments is the number of conditional moments MaxEnt matches; 0 means
	// 4, or fewer when the innovation lacks finite moments of that order.
	// NoMoments matches none (AR(1) and i.i.d. laws): each row is then the
	// quadrature rule's own weights times the conditional density,
	// normalised — the prior maximum entropy starts from.
	Moments int
	// Nodes is the quadrature rule that places MaxEnt's grid points; the
	// zero value is NodesLattice.
	Nodes NodeRule
	// Width is the half-width of lattice, Gauss-Legendre and Tauchen grids in
	// unconditional standard deviations; 0 means √(N−1) for MaxEnt and 3 for
	// Tauchen.
	Width float64
	// Floden selects the Flodén (2008) base s.d. for Tauchen-Hussey.
	Floden bool
	// Axes orients the tensor grid of vector processes (VAR); the zero value
	// is AxesPrincipal. Univariate processes ignore it.
	Axes Axes
	// Matching is MaxEnt's per-state policy; the zero value is MatchExact.
	// Baselines ignore it.
	Matching Matching
}

// StationarySD returns σ/√(1−ρ²), the unconditional standard deviation.
func (p AR1) StationarySD() float64 { return p.Sigma / math.Sqrt(1-float64(p.Rho*p.Rho)) }

// Validate reports the first parameter outside its range.
func (p AR1) Validate() error {
	switch {
	case !(p.Rho > -1 && p.Rho < 1):
		return badParam("rho", p.Rho, "in (-1, 1)")
	case !(p.Sigma > 0) || math.IsInf(p.Sigma, 1):
		return badParam("sigma", p.Sigma, "finite and > 0")
	case math.IsNaN(p.Mean) || math.IsInf(p.Mean, 0):
		return badParam("mean", p.Mean, "finite")
	}
	return p.ranges()
}

// MaxMoments returns how many conditional moments can be matched for this
// innovation: the order of its highest finite moment, capped at 8.
func MaxMoments(shock Distribution) int {
	if shock == nil {
		return 8
	}
	for k := 1; k <= 8; k++ {
		if _, ok := shock.StdMoment(k); !ok {
			return k - 1
		}
	}
	return 8
}

// NoMoments, as Settings.Moments, asks MaxEnt to match no moment: the
// chain is the quadrature rule's prior, the baseline that shows what
// matching moments adds.
const NoMoments = -1

// resolveMoments applies the default and range rules for s.Moments.
func resolveMoments(s Settings, shock Distribution) (int, error) {
	if err := checkMatching(s.Matching); err != nil {
		return 0, err
	}
	limit := MaxMoments(shock)
	if s.Method != MaxEnt {
		if s.Moments != 0 && s.Moments != s.Method.ExactMoments() {
			return 0, badParam("moments", float64(s.Moments), "unset for method "+s.Method.String()+" (it matches a fixed set of moments)")
		}
		return s.Method.ExactMoments(), nil
	}
	if s.Moments == NoMoments {
		return 0, nil
	}
	if s.Moments == 0 {
		return min(4, limit), nil
	}
	if s.Moments < 1 || s.Moments > limit {
		return 0, badParam("moments", float64(s.Moments), rangeText(1, limit)+" for this innovation")
	}
	return s.Moments, nil
}

func rangeText(lo, hi int) string {
	return "an integer from " + strconv.Itoa(lo) + " to " + strconv.Itoa(hi)
}

// checkStates validates the number of states.
func checkStates(n int) error {
	if n < 2 || n > MaxStates {
		return badParam("states", float64(n), "an integer from 2 to "+strconv.Itoa(MaxStates)+" (the bound that keeps a job within its stated time and memory)")
	}
	return nil
}

// Discretize builds a Markov chain for the process with the chosen method.
// Baselines ignore Nodes and use their own grids; MaxEnt uses Nodes and Width.
// AddaCooper needs a normal innovation (Shock nil) and returns
// ErrNeedsNormal otherwise.
func (p AR1) Discretize(s Settings) (*Chain, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	if err := checkStates(s.States); err != nil {
		return nil, err
	}
	if !(s.Width >= 0) || math.IsInf(s.Width, 1) {
		return nil, badParam("width", s.Width, "finite and > 0")
	}
	L, err := resolveMoments(s, p.Shock)
	if err != nil {
		return nil, err
	}
	n := s.States
	sdY := p.StationarySD()
	c := &Chain{Dim: 1, Method: s.Method, Moments: L, Transition: make([]float64, n*n), Matched: make([]int, n)}
	law := conditional{Mean: make([]float64, n), SD: make([]float64, n), Shock: p.Shock}
	setLaw := func(nodes []float64) {
		for i, x := range nodes {
			law.Mean[i] = float64((1-p.Rho)*p.Mean) + float64(p.Rho*x)
			law.SD[i] = p.Sigma
		}
	}
	switch s.Method {
	case MaxEnt:
		nodes, logW := placeGrid(s.Nodes, n, p.Mean, sdY, s.Width, Normal{p.Mean, sdY})
		setLaw(nodes)
		c.Certificates = make([]Certificate, n)
		maxentRows(nodes, logW, law, L, s.Matching, c.Transition, c.Matched, c.Certificates)
		c.PriorKL = scalarPriorKL(nodes, logW, law, c.Transition)
		c.Grid = nodes
	case Tauchen:
		width := s.Width
		if width == 0 {
			width = DefaultTauchenWidth
		}
		r := Trapezoid(n, p.Mean-float64(width*sdY), p.Mean+float64(width*sdY))
		setLaw(r.Nodes)
		tauchenRows(r.Nodes, r.Nodes[1]-r.Nodes[0], law, c.Transition)
		c.Grid = r.Nodes
	case TauchenHussey:
		base := p.Sigma
		if s.Floden {
			w := FlodenWeight(p.Rho)
			base = float64(w*p.Sigma) + float64((1-w)*sdY)
		}
		r := GaussHermite(n)
		logOmega := make([]float64, n)
		for j, xi := range r.Nodes {
			r.Nodes[j] = p.Mean + float64(math.Sqrt2*base*xi)
			logOmega[j] = portablemath.Log(r.Weights[j])
		}
		setLaw(r.Nodes)
		tauchenHusseyRows(r.Nodes, logOmega, p.Mean, base, law, c.Transition)
		c.Grid = r.Nodes
	case Rouwenhorst:
		psi := float64(RouwenhorstWidth(n) * sdY)
		r := Trapezoid(n, p.Mean-psi, p.Mean+psi)
		pq := (1 + p.Rho) / 2
		rouwenhorstMatrix(n, pq, pq, c.Transition)
		c.Grid = r.Nodes
		for i := range c.Matched {
			c.Matched[i] = 2
		}
	case AddaCooper:
		if p.Shock != nil {
			return nil, ErrNeedsNormal
		}
		c.Grid = addaCooperGrid(n, p.Mean, sdY)
		addaCooperMatrix(n, p.Rho, c.Transition)
	default:
		return nil, badChoice("method", s.Method.String(), "a known method")
	}
	return c, nil
}

// Conditional returns the true conditional moments of x' given x.
func (p AR1) Conditional(x []float64) Moments {
	skew, kurt := 0.0, 3.0
	if p.Shock != nil {
		skew, _ = p.Shock.StdMoment(3)
		kurt, _ = p.Shock.StdMoment(4)
	}
	return Moments{Mean: float64((1-p.Rho)*p.Mean) + float64(p.Rho*x[0]), Var: float64(p.Sigma * p.Sigma), Skew: skew, Kurt: kurt}
}

// Unconditional returns the true stationary moments and the first-order
// autocorrelation ρ. With i.i.d. innovations the cumulants of the
// stationary law are κ_k(x) = κ_k(σz)/(1 − ρ^k).
func (p AR1) Unconditional() Summary {
	c := p.Conditional([]float64{p.Mean})
	s2 := float64(p.Sigma * p.Sigma)
	varY := s2 / (1 - float64(p.Rho*p.Rho))
	k3 := c.Skew * s2 * p.Sigma / (1 - float64(p.Rho*p.Rho*p.Rho))
	k4 := (c.Kurt - 3) * s2 * s2 / (1 - portablemath.Pow(p.Rho, 4))
	return Summary{
		Mean:     p.Mean,
		SD:       math.Sqrt(varY),
		Skew:     k3 / portablemath.Pow(varY, 1.5),
		Kurt:     3 + k4/(varY*varY),
		Autocorr: p.Rho,
	}
}
