package solver

import (
	"errors"
	"math"

	"gridstage/internal/portablemath"
)

// SV is a first-order autoregression with stochastic volatility:
//
//	y' = (1 − ρ) μ + ρ y + exp(h/2) ε,     ε ~ N(0, 1),
//	h' = (1 − ρ_h) μ_h + ρ_h h + σ_h z,    z ~ N(0, 1),
//
// with ε and z independent. The log-variance h is known when the level's
// next value is drawn: this period's volatility scales next period's
// shock, so given the joint state (y, h) the next level is exactly
// N((1 − ρ) μ + ρ y, e^h).
type SV struct {
	Mean float64 // μ, the unconditional mean of the level
	Rho  float64 // ρ in (−1, 1), the persistence of the level
	// LogVar is the log-variance process: Mean μ_h, Rho ρ_h, Sigma σ_h.
	// Its Shock must be nil (normal).
	LogVar AR1
}

// Dim returns 2: the state vector is (level, log-variance).
func (SV) Dim() int { return 2 }

// Validate reports the first parameter outside its range.
func (p SV) Validate() error {
	switch {
	case !(p.Rho > -1 && p.Rho < 1):
		return badParam("rho", p.Rho, "in (-1, 1)")
	case math.IsNaN(p.Mean) || math.IsInf(p.Mean, 0):
		return badParam("mean", p.Mean, "finite")
	case p.LogVar.Shock != nil:
		return badParam("logvar shock", 0, "normal (nil): the level's variance needs the normal moment generating function")
	}
	if err := prefixParam(p.LogVar.Validate(), "logvar "); err != nil {
		return err
	}
	return p.ranges()
}

// prefixParam prefixes the parameter name of a *ParamError (other errors
// and nil pass through), so errors from a component name the component.
func prefixParam(err error, prefix string) error {
	var pe *ParamError
	if !errors.As(err, &pe) {
		return err
	}
	q := *pe
	q.Param = prefix + q.Param
	return &q
}

// meanExpH returns E e^{kh} under the stationary law of h: exp(k μ_h + k² V_h/2).
func (p SV) meanExpH(k float64) float64 {
	v := p.LogVar.StationarySD()
	return portablemath.Exp(float64(k*p.LogVar.Mean) + k*k*v*v/2)
}

// LevelSD returns the stationary standard deviation of the level,
// √(E e^h / (1 − ρ²)).
func (p SV) LevelSD() float64 { return math.Sqrt(p.meanExpH(1) / (1 - float64(p.Rho*p.Rho))) }

// Discretize builds the joint chain on N_y × N_h states: the log-variance
// is discretized first with vol (any AR(1) method), then in every joint
// state (y_i, h_k) the level's row matches the exact conditional moments of
// N((1 − ρ) μ + ρ y_i, e^{h_k}) (MaxEnt, up to level.Moments, default 4,
// with the fallback ladder) or takes Tauchen's interval masses (Tauchen).
// The level grid spans ±level.Width stationary standard deviations of the
// level (default √(N_y − 1) for MaxEnt, 3 for Tauchen).
//
// State s = i·N_h + k has vector (y_i, h_k), and
//
//	P[(i,k) → (j,m)] = P_y^k[i, j] · P_h[k, m],
//
// exact because y' and h' are independent given (y, h). Matched[s] is the
// smaller of the level's and the log-variance's count in that state, and
// Moments the smaller of the two requests.
func (p SV) Discretize(level, vol Settings) (*Chain, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	if err := checkStates(level.States); err != nil {
		return nil, err
	}
	if !(level.Width >= 0) || math.IsInf(level.Width, 1) {
		return nil, badParam("width", level.Width, "finite and > 0")
	}
	volChain, err := p.LogVar.Discretize(vol)
	if err != nil {
		return nil, prefixParam(err, "logvar ")
	}
	L, err := resolveMoments(level, nil)
	if err != nil {
		return nil, err
	}
	ny, nh := level.States, volChain.States()
	sdY := p.LevelSD()
	var nodes, logW []float64
	switch level.Method {
	case MaxEnt:
		nodes, logW = placeGrid(level.Nodes, ny, p.Mean, sdY, level.Width, Normal{p.Mean, sdY})
	case Tauchen:
		w := level.Width
		if w == 0 {
			w = DefaultTauchenWidth
		}
		nodes = Trapezoid(ny, p.Mean-float64(w*sdY), p.Mean+float64(w*sdY)).Nodes
	default:
		return nil, badChoice("method", level.Method.String(), "maxent or tauchen for the level of a stochastic-volatility process")
	}
	levelRows := make([][]float64, nh)
	levelMatched := make([][]int, nh)
	levelCerts := make([][]Certificate, nh)
	levelKL := make([][]float64, nh)
	for k := 0; k < nh; k++ {
		law := conditional{Mean: make([]float64, ny), SD: make([]float64, ny)}
		sd := portablemath.Exp(volChain.Grid[k] / 2)
		for i, y := range nodes {
			law.Mean[i] = float64((1-p.Rho)*p.Mean) + float64(p.Rho*y)
			law.SD[i] = sd
		}
		levelRows[k] = make([]float64, ny*ny)
		levelMatched[k] = make([]int, ny)
		levelCerts[k] = make([]Certificate, ny)
		if level.Method == MaxEnt {
			maxentRows(nodes, logW, law, L, level.Matching, levelRows[k], levelMatched[k], levelCerts[k])
			levelKL[k] = scalarPriorKL(nodes, logW, law, levelRows[k])
		} else {
			tauchenRows(nodes, nodes[1]-nodes[0], law, levelRows[k])
		}
	}
	n := ny * nh
	c := &Chain{Dim: 2, Grid: make([]float64, 2*n), Transition: make([]float64, n*n), Matched: make([]int, n),
		Method: level.Method, Moments: min(L, volChain.Moments)}
	if level.Method == MaxEnt && volChain.PriorKL != nil {
		c.PriorKL = make([]float64, n)
	}
	for i := 0; i < ny; i++ {
		for k := 0; k < nh; k++ {
			s := i*nh + k
			c.Grid[2*s], c.Grid[2*s+1] = nodes[i], volChain.Grid[k]
			c.Matched[s] = min(levelMatched[k][i], volChain.Matched[k])
			if level.Method == MaxEnt || volChain.Certificates != nil {
				if c.Certificates == nil {
					c.Certificates = make([]Certificate, n)
				}
				c.Certificates[s] = combineCerts(levelCerts[k][i], volChain.Certificate(k))
			}
			if c.PriorKL != nil {
				// The row is the product of the level's and the volatility's
				// rows, and so is its prior: the divergences add.
				c.PriorKL[s] = levelKL[k][i] + volChain.PriorKL[k]
			}
			row := c.Row(s)
			py := levelRows[k][i*ny : (i+1)*ny]
			ph := volChain.Row(k)
			for j, a := range py {
				for m, b := range ph {
					row[j*nh+m] = float64(a * b)
				}
			}
		}
	}
	return c, nil
}

// VectorConditional returns the moments of (y', h') given x = (y, h):
// means (1 − ρ) μ + ρ y and (1 − ρ_h) μ_h + ρ_h h, covariance diag(e^h, σ_h²),
// skewness 0 and kurtosis 3.
func (p SV) VectorConditional(x []float64) VectorMoments {
	h := p.LogVar
	return VectorMoments{
		Mean: []float64{float64((1-p.Rho)*p.Mean) + float64(p.Rho*x[0]), float64((1-h.Rho)*h.Mean) + float64(h.Rho*x[1])},
		Cov:  []float64{portablemath.Exp(x[1]), 0, 0, float64(h.Sigma * h.Sigma)},
		Skew: []float64{0, 0}, Kurt: []float64{3, 3},
	}
}

// VectorUnconditional returns the stationary moments: means (μ, μ_h),
// covariance diag(E e^h/(1 − ρ²), σ_h²/(1 − ρ_h²)) (the level is
// uncorrelated with h because ε is independent of h), and autocovariance
// diag(ρ Var y, ρ_h Var h).
func (p SV) VectorUnconditional() VectorSummary {
	vy := float64(p.LevelSD() * p.LevelSD())
	vh := float64(p.LogVar.StationarySD() * p.LogVar.StationarySD())
	return VectorSummary{
		Mean:    []float64{p.Mean, p.LogVar.Mean},
		Cov:     []float64{vy, 0, 0, vh},
		Autocov: []float64{float64(p.Rho * vy), 0, 0, float64(p.LogVar.Rho * vh)},
	}
}

// Conditional returns the level's conditional moments given x = (y, h).
func (p SV) Conditional(x []float64) Moments {
	return Moments{Mean: float64((1-p.Rho)*p.Mean) + float64(p.Rho*x[0]), Var: portablemath.Exp(x[1]), Skew: 0, Kurt: 3}
}

// Unconditional returns the level's stationary moments. Its kurtosis is
//
//	E(y − μ)⁴ / Var² with E(y − μ)⁴ = 3/(1 − ρ⁴) [g(0) + 2 Σ_{m≥1} ρ^{2m} g(m)],
//	g(m) = E e^{h_t + h_{t+m}} = exp(2μ_h + V_h (1 + ρ_h^m)),
//
// which follows from writing y − μ = Σ_k ρ^k e^{h_{t−1−k}/2} ε_{t−k} and
// taking expectations (the series is summed to double precision).
func (p SV) Unconditional() Summary {
	vh := float64(p.LogVar.StationarySD() * p.LogVar.StationarySD())
	g := func(m int) float64 {
		return portablemath.Exp(float64(2*p.LogVar.Mean) + float64(vh*(1+portablemath.Pow(p.LogVar.Rho, float64(m)))))
	}
	r2 := float64(p.Rho * p.Rho)
	sum := g(0)
	pow := 1.0
	for m := 1; m < 10_000_000; m++ {
		pow = float64(pow * r2)
		t := float64(2 * pow * g(m))
		sum += t
		if t <= 1e-17*sum {
			break
		}
	}
	m4 := float64(3 / (1 - float64(r2*r2)) * sum)
	v := float64(p.LevelSD() * p.LevelSD())
	return Summary{Mean: p.Mean, SD: math.Sqrt(v), Skew: 0, Kurt: m4 / (v * v), Autocorr: p.Rho}
}
