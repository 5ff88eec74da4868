package figures

import (
	"fmt"
	"slices"

	"gridstage/solver"
)

// Case is one chain with everything its figures need. Figures read it and
// never modify it.
type Case struct {
	// Label names the chain in titles, e.g. "wage shock, point 3".
	Label string
	// Units names the unit of the state levels in axis labels, e.g.
	// "log wage"; empty means "state level (units of the process)".
	Units string
	// Chain is the chain under study.
	Chain *solver.Chain
	// Diag holds the chain's diagnostics; nil omits the error figure.
	Diag *solver.Diagnostics
	// BaselineDiag optionally holds the diagnostics of a baseline method's
	// chain for the same process, drawn beside the chain's errors.
	BaselineDiag *solver.Diagnostics
	// Law is the true stationary law of the process.
	Law Law
	// SumDiag reports that Diag describes the sum of the state's
	// coordinates (an age of a life-cycle product), not its first one.
	SumDiag bool
	// Components optionally holds, for a vector chain whose Diag describes
	// its first coordinate, the checks of each coordinate k at index k
	// (solver.ComponentChecks); each gets an error figure of its own.
	// Components[0] is unused (Diag is coordinate 0's); nil draws
	// coordinate 0 only.
	Components []*solver.Diagnostics
	// component is the coordinate an error figure draws.
	component int
}

// Law is the true stationary law of a process, as far as figures draw it.
type Law struct {
	// Mean and SD are the stationary mean and standard deviation of the
	// first component; SD = 0 means unknown and no overlay is drawn.
	Mean, SD float64
	// Gaussian reports whether the stationary law is exactly normal (a
	// Gaussian AR(1) or VAR). Otherwise the overlay is a normal reference
	// with the same mean and s.d. and is labelled as such.
	Gaussian bool
	// Cov is the true stationary covariance of a vector process, Dim×Dim
	// row-major, and MeanVec its mean; nil if unknown.
	Cov, MeanVec []float64
}

// units returns the axis label for state levels.
func (c Case) units() string {
	if c.Units == "" {
		return "state level (units of the process)"
	}
	return c.Units
}

// stationary returns the chain's stationary distribution: the one in the
// diagnostics when present, else computed afresh.
func stationaryOf(c *solver.Chain, d *solver.Diagnostics) ([]float64, error) {
	if d != nil && len(d.Stationary) == c.States() {
		return d.Stationary, nil
	}
	pi, err := solver.Stationary(c.Transition, c.States())
	if err != nil {
		return nil, fmt.Errorf("figures: %w", err)
	}
	return pi, nil
}

// independent reports whether every row of the chain's transition matrix
// is the same distribution, as for an iid law: next period's state does
// not depend on this period's, and a heat map of the matrix would draw the
// same row N times.
func independent(c *solver.Chain) bool {
	first := c.Row(0)
	for i := 1; i < c.States(); i++ {
		if !slices.Equal(c.Row(i), first) {
			return false
		}
	}
	return true
}

// independentNote is the sentence the first figure of an independent
// chain adds to its caption, saying why no heat map follows.
const independentNote = " The draws are independent over time: every row of the transition matrix is this distribution, so no heat map of the matrix is drawn."

// checkChain panics on a malformed chain: a programmer error, since
// readers validate shapes before building a Case.
func checkChain(c *solver.Chain) {
	if c == nil || c.Dim < 1 || len(c.Grid)%c.Dim != 0 || len(c.Transition) != c.States()*c.States() {
		panic("figures: malformed chain")
	}
}
