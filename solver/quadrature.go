package solver

import (
	"fmt"
	"math"
	"strings"

	"gridstage/internal/portablemath"
)

// Rule is a quadrature rule: ∫ g(x) ω(x) dx ≈ Σ_i Weights[i] g(Nodes[i]) for
// the rule's weight function ω (documented by each constructor).
// Nodes are in ascending order.
type Rule struct {
	Nodes   []float64
	Weights []float64
}

// GaussHermite returns the n-point Gauss-Hermite rule for ω(x) = exp(−x²),
// computed by Golub and Welsch (1969). It panics if n < 1.
func GaussHermite(n int) Rule {
	if n < 1 {
		panic("solver: GaussHermite needs n ≥ 1")
	}
	j := jacobi{alpha: make([]float64, n), beta: make([]float64, n), mu0: math.Sqrt(math.Pi)}
	for k := 0; k < n; k++ {
		j.beta[k] = math.Sqrt(float64(k+1) / 2)
	}
	x, w := gaussRule(j, n)
	return Rule{Nodes: x, Weights: w}
}

// GaussLegendre returns the n-point Gauss-Legendre rule for ω(x) = 1 on
// [a, b]. It panics if n < 1 or b ≤ a.
func GaussLegendre(n int, a, b float64) Rule {
	if n < 1 || !(b > a) {
		panic("solver: GaussLegendre needs n ≥ 1 and b > a")
	}
	j := jacobi{alpha: make([]float64, n), beta: make([]float64, n), mu0: 2}
	for k := 0; k < n; k++ {
		kk := float64(k + 1)
		j.beta[k] = kk / math.Sqrt(float64(4*kk*kk)-1)
	}
	x, w := gaussRule(j, n)
	half, mid := (b-a)/2, (a+b)/2
	for i := range x {
		x[i] = mid + float64(half*x[i])
		w[i] = float64(w[i] * half)
	}
	return Rule{Nodes: x, Weights: w}
}

// Trapezoid returns n even-spaced nodes on [a, b] with trapezoid weights for
// ω(x) = 1. It panics if n < 2 or b ≤ a.
func Trapezoid(n int, a, b float64) Rule {
	if n < 2 || !(b > a) {
		panic("solver: Trapezoid needs n ≥ 2 and b > a")
	}
	h := (b - a) / float64(n-1)
	r := Rule{Nodes: make([]float64, n), Weights: make([]float64, n)}
	for i := range r.Nodes {
		r.Nodes[i] = a + float64(h*float64(i))
		r.Weights[i] = h
	}
	r.Nodes[n-1] = b
	r.Weights[0], r.Weights[n-1] = h/2, h/2
	return r
}

// Quantiles returns n nodes at the quantiles (i − ½)/n of d, each carrying
// probability weight 1/n, so that ∫ g dF ≈ Σ_i g(x_i)/n (ω is d's density).
// It panics if n < 1.
func Quantiles(n int, d Distribution) Rule {
	if n < 1 {
		panic("solver: Quantiles needs n ≥ 1")
	}
	r := Rule{Nodes: make([]float64, n), Weights: make([]float64, n)}
	for i := range r.Nodes {
		r.Nodes[i] = d.Quantile((float64(i) + 0.5) / float64(n))
		r.Weights[i] = 1 / float64(n)
	}
	return r
}

// NodeRule names the quadrature rule that places a chain's grid points and
// gives the prior weights.
type NodeRule int

const (
	// NodesLattice places equally spaced points over ± the width
	// (trapezoid weights).
	NodesLattice NodeRule = iota
	// NodesGaussHermite places Gauss-Hermite nodes for a normal density with the
	// target distribution's mean and standard deviation.
	NodesGaussHermite
	// NodesGaussLegendre places Gauss-Legendre nodes on the grid's interval.
	NodesGaussLegendre
	// NodesEqualMass places points at quantiles of the (stationary)
	// distribution, each carrying equal probability mass.
	NodesEqualMass
)

var nodeRuleNames = [...]string{"lattice", "gauss-hermite", "gauss-legendre", "equal-mass"}

func (g NodeRule) String() string {
	if int(g) >= 0 && int(g) < len(nodeRuleNames) {
		return nodeRuleNames[g]
	}
	return fmt.Sprintf("NodeRule(%d)", int(g))
}

// ParseNodeRule maps a name ("lattice", "gauss-hermite", "gauss-legendre",
// "equal-mass") to its NodeRule.
func ParseNodeRule(s string) (NodeRule, error) {
	for i, n := range nodeRuleNames {
		if n == s {
			return NodeRule(i), nil
		}
	}
	return 0, fmt.Errorf("solver: unknown node rule %q (want one of %s)", s, strings.Join(nodeRuleNames[:], ", "))
}

// NodeRuleNames lists the accepted node-rule names.
func NodeRuleNames() []string { return append([]string(nil), nodeRuleNames[:]...) }

// DefaultWidth is the half-width, in standard deviations, of lattice and
// Gauss-Legendre grids with n points when none is given: √(n−1), the rule
// Farmer and Toda (2017) recommend for evenly spaced grids and the span of the
// Rouwenhorst grid (Kopecky and Suen 2010).
func DefaultWidth(n int) float64 { return math.Sqrt(float64(n - 1)) }

// placeGrid lays n points for a distribution with the given mean and standard
// deviation and returns the nodes with the logarithm of their Lebesgue
// weights (∫ g(x) dx ≈ Σ_i exp(logW[i]) g(x_i)). width is the half-width in
// standard deviations for lattice and Gauss-Legendre grids (0 means DefaultWidth).
// shape is the distribution used by equal-mass grids.
func placeGrid(rule NodeRule, n int, mean, sd, width float64, shape Distribution) (nodes, logW []float64) {
	if width <= 0 {
		width = DefaultWidth(n)
	}
	var r Rule
	logW = make([]float64, n)
	switch rule {
	case NodesLattice:
		r = Trapezoid(n, mean-float64(width*sd), mean+float64(width*sd))
		for i, w := range r.Weights {
			logW[i] = portablemath.Log(w)
		}
	case NodesGaussLegendre:
		r = GaussLegendre(n, mean-float64(width*sd), mean+float64(width*sd))
		for i, w := range r.Weights {
			logW[i] = portablemath.Log(w)
		}
	case NodesGaussHermite:
		r = GaussHermite(n)
		scale := float64(math.Sqrt2 * sd)
		for i, z := range r.Nodes {
			// ω(z) = e^{−z²}: Lebesgue weight in x = μ + √2 s z is w e^{z²} √2 s.
			logW[i] = portablemath.Log(r.Weights[i]) + float64(z*z) + portablemath.Log(scale)
			r.Nodes[i] = mean + float64(scale*z)
		}
	case NodesEqualMass:
		r = Quantiles(n, shape)
		for i, x := range r.Nodes {
			logW[i] = -portablemath.Log(float64(n)) - shape.LogProb(x)
		}
	default:
		panic(fmt.Sprintf("solver: unknown node rule %d", int(rule)))
	}
	return r.Nodes, logW
}
