package solver

import (
	"fmt"
	"math"

	"gridstage/internal/portablemath"
)

// IID is a static distribution to be replaced by a discrete one: the draws
// are independent over time, so a single probability vector suffices.
type IID struct{ Dist Distribution }

// Discrete is a discrete distribution on Nodes with probabilities Weights.
type Discrete struct {
	Nodes, Weights []float64
	// Moments is the number of moments requested; Matched the number matched.
	Moments, Matched int
	// Certificate says why Matched moments were matched (see Certificate).
	Certificate Certificate
	// PriorKL is the Kullback-Leibler divergence of Weights from the
	// quadrature prior.
	PriorKL float64
}

// Discretize returns a discrete distribution with s.States points whose
// first s.Moments standardized moments equal those of the distribution
// (falling back to fewer when infeasible). Only MaxEnt applies.
//
// Where the points go depends on the support:
//   - On a bounded support [lo, hi] (Beta), lattice and Gauss-Legendre
//     grids cover the whole support: the lattice takes the midpoints of n
//     equal cells, so no point sits where the density may vanish or blow
//     up, and Gauss-Legendre its nodes on [lo, hi]. A Width > 0 narrows the
//     grid to the mean ± Width standard deviations, clipped to the support.
//   - Elsewhere lattice and Gauss-Legendre grids span Width (0: DefaultWidth)
//     standard deviations about the mean, clipped to a half-bounded support
//     with cell midpoints.
//   - Gauss-Hermite nodes suit the real line, and the log-normal law in
//     logs: x_j = exp(μ + √2 σ z_j) for the Gauss-Hermite nodes z_j, whose
//     prior weights are then exactly the rule's weights.
func (p IID) Discretize(s Settings) (*Discrete, error) {
	if err := checkStates(s.States); err != nil {
		return nil, err
	}
	if s.Method != MaxEnt {
		return nil, badChoice("method", s.Method.String(), "maxent for i.i.d. distributions")
	}
	if !(s.Width >= 0) || math.IsInf(s.Width, 1) {
		return nil, badParam("width", s.Width, "finite and > 0")
	}
	L, err := resolveMoments(s, p.Dist)
	if err != nil {
		return nil, err
	}
	n := s.States
	mean, sd := p.Dist.Mean(), p.Dist.StdDev()
	lo, hi := p.Dist.Support()
	bounded := !math.IsInf(lo, -1) && !math.IsInf(hi, 1)
	width := s.Width
	if width == 0 {
		width = DefaultWidth(n)
	}
	a, b := math.Max(lo, mean-float64(width*sd)), math.Min(hi, mean+float64(width*sd))
	if bounded && s.Width == 0 {
		a, b = lo, hi
	}
	var nodes, logW []float64
	ln, isLogNormal := p.Dist.(LogNormal)
	switch {
	case s.Nodes == NodesGaussHermite && isLogNormal:
		nodes, logW = logHermiteGrid(n, ln.Mu, ln.Sigma)
	case s.Nodes == NodesGaussHermite && (!math.IsInf(lo, -1) || !math.IsInf(hi, 1)):
		return nil, fmt.Errorf("solver: %s nodes do not suit a distribution on a bounded or half-bounded support: want lattice, gauss-legendre or equal-mass", s.Nodes)
	case s.Nodes == NodesLattice && (a > mean-float64(width*sd) || b < mean+float64(width*sd)):
		h := (b - a) / float64(n)
		nodes, logW = make([]float64, n), make([]float64, n)
		for j := range nodes {
			nodes[j] = a + float64(h*(float64(j)+0.5))
			logW[j] = portablemath.Log(h)
		}
	case s.Nodes == NodesGaussLegendre:
		r := GaussLegendre(n, a, b)
		nodes, logW = r.Nodes, make([]float64, n)
		for j, w := range r.Weights {
			logW[j] = portablemath.Log(w)
		}
	default:
		nodes, logW = placeGrid(s.Nodes, n, mean, sd, width, p.Dist)
	}
	shock := Standardized{p.Dist}
	law := conditional{Mean: []float64{mean}, SD: []float64{sd}, Shock: shock}
	w := make([]float64, n)
	matched := []int{0}
	certs := []Certificate{CertNone}
	maxentRows(nodes, logW, law, L, s.Matching, w, matched, certs)
	kl := scalarPriorKL(nodes, logW, law, w)[0]
	return &Discrete{Nodes: nodes, Weights: w, Moments: L, Matched: matched[0], Certificate: certs[0], PriorKL: kl}, nil
}

// Conditional returns the distribution's moments (they do not depend on x).
func (p IID) Conditional([]float64) Moments {
	sk, _ := p.Dist.StdMoment(3)
	ku, _ := p.Dist.StdMoment(4)
	sd := p.Dist.StdDev()
	return Moments{Mean: p.Dist.Mean(), Var: float64(sd * sd), Skew: sk, Kurt: ku}
}

// Unconditional returns the distribution's moments with autocorrelation 0.
func (p IID) Unconditional() Summary {
	m := p.Conditional(nil)
	return Summary{Mean: m.Mean, SD: math.Sqrt(m.Var), Skew: m.Skew, Kurt: m.Kurt}
}

// Chain returns the Markov chain of the i.i.d. process: every row equals
// the weights, so downstream stages can treat static and persistent shocks
// alike.
func (d *Discrete) Chain() *Chain {
	n := len(d.Nodes)
	c := &Chain{Dim: 1, Grid: append([]float64(nil), d.Nodes...), Transition: make([]float64, n*n),
		Method: MaxEnt, Moments: d.Moments, Matched: make([]int, n), Certificates: make([]Certificate, n),
		PriorKL: make([]float64, n)}
	for i := 0; i < n; i++ {
		copy(c.Transition[i*n:(i+1)*n], d.Weights)
		c.Matched[i] = d.Matched
		c.Certificates[i] = d.Certificate
		c.PriorKL[i] = d.PriorKL
	}
	return c
}

// logHermiteGrid places n points at x_j = exp(μ + √2 σ z_j) for the
// Gauss-Hermite nodes z_j and returns them with the logarithm of their
// Lebesgue weights in x: with y = log x, ∫ g(x) dx = ∫ g(e^y) e^y dy, and
// the rule's weight in y is w_j e^{z_j²} √2 σ (as in placeGrid), so
//
//	log W_j = log w_j + z_j² + log(√2 σ) + y_j.
//
// Times the log-normal density at x_j this is w_j/√π: the prior is the
// Gauss-Hermite rule itself.
func logHermiteGrid(n int, mu, sigma float64) (nodes, logW []float64) {
	r := GaussHermite(n)
	scale := float64(math.Sqrt2 * sigma)
	nodes, logW = make([]float64, n), make([]float64, n)
	for j, z := range r.Nodes {
		y := mu + float64(scale*z)
		nodes[j] = portablemath.Exp(y)
		logW[j] = portablemath.Log(r.Weights[j]) + float64(z*z) + portablemath.Log(scale) + y
	}
	return nodes, logW
}
