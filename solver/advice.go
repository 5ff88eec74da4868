package solver

import (
	"errors"
	"fmt"
	"math"
)

// AdviceMassFloor is the stationary mass below which a state's fallback
// does not count against a grid: states the chain visits less than 0.1 %
// of the time.
const AdviceMassFloor = 1e-3

// AdviceMaxStates is the largest number of chain states Advise tries by
// default.
const AdviceMaxStates = 201

// Advice says what grid would carry the requested moments.
type Advice struct {
	// States is the smallest value of the states setting (per axis for a
	// VAR, the level's for a stochastic-volatility process) on the same
	// node rule and width rule at which every state holding at least
	// AdviceMassFloor of the stationary mass (for a life cycle, of the
	// marginal mass at its age) matches all moments; 0 when no chain of at
	// most Cap states does.
	States int
	// Total is the number of chain states at States (States^d for a
	// d-dimensional VAR); 0 with States.
	Total int
	// Width is, when States is 0 and the node rule has a width, the
	// half-width (in stationary standard deviations) closest to the
	// requested one at which the requested number of states carries the
	// moments; 0 when none in the range searched does.
	Width float64
	// WidthRange is the range of half-widths searched when States is 0.
	WidthRange [2]float64
	// Cap is the largest number of chain states tried.
	Cap int
	// PerAxis: States counts grid points per axis (a VAR).
	PerAxis bool
	// Grid describes what was held fixed ("lattice nodes, width √(N−1)").
	Grid string
	// Ages: the mass floor applies to the marginal law at each age.
	Ages bool
}

func (a Advice) mass() string {
	if a.Ages {
		return "every state holding at least 0.1% of its age's mass"
	}
	return "every state holding at least 0.1% of the stationary mass"
}

func (a Advice) String() string {
	switch {
	case a.States > 0 && a.PerAxis:
		return fmt.Sprintf("%d states per axis (%d in all; %s) carry them in %s", a.States, a.Total, a.Grid, a.mass())
	case a.States > 0:
		return fmt.Sprintf("%d states (%s) carry them in %s", a.States, a.Grid, a.mass())
	case a.Width > 0:
		return fmt.Sprintf("no grid of up to %d states with %s carries them in %s; width %.4g at the requested number of states does", a.Cap, a.Grid, a.mass(), a.Width)
	case a.WidthRange[1] > 0:
		return fmt.Sprintf("no grid of up to %d states with %s carries them in %s, nor does any width from %.4g to %.4g at the requested number of states", a.Cap, a.Grid, a.mass(), a.WidthRange[0], a.WidthRange[1])
	}
	return fmt.Sprintf("no grid of up to %d states with %s carries them in %s", a.Cap, a.Grid, a.mass())
}

// Carries reports whether the maximum-entropy chain c matches all its
// requested moments in every state holding at least AdviceMassFloor of its
// stationary mass (all states when the stationary law is not unique).
func Carries(c *Chain) bool {
	if c.Fallbacks() == 0 {
		return true
	}
	pi, err := Stationary(c.Transition, c.States())
	return carriesUnder(c, pi, err == nil)
}

// carriesUnder is Carries with the mass of each state given (all states
// count when !ok).
func carriesUnder(c *Chain, mass []float64, ok bool) bool {
	for i, m := range c.Matched {
		if m < c.Moments && (!ok || mass[i] >= AdviceMassFloor) {
			return false
		}
	}
	return true
}

// CarriesAges reports whether every transition of the life-cycle chain a
// carries its moments in every age-t state holding at least
// AdviceMassFloor of the marginal law at age t (AgeChain.Marginals).
func CarriesAges(a *AgeChain) bool {
	marg := a.Marginals()
	for t, c := range a.Ages {
		if c.Fallbacks() > 0 && !carriesUnder(c, marg[t], true) {
			return false
		}
	}
	return true
}

// gridDescription names the node rule and width rule held fixed by a
// search with settings s.
func gridDescription(s Settings) string {
	switch {
	case !widthApplies(s):
		return s.Nodes.String() + " nodes"
	case s.Width == 0:
		return s.Nodes.String() + " nodes, width √(N−1)"
	}
	return fmt.Sprintf("%s nodes, width %.4g", s.Nodes, s.Width)
}

// widthApplies reports whether s's node rule spans a half-width.
func widthApplies(s Settings) bool {
	return s.Method == MaxEnt && (s.Nodes == NodesLattice || s.Nodes == NodesGaussLegendre)
}

// errAdviceMethod is returned when advice is asked for a method that
// matches no moments by a solve.
var errAdviceMethod = errors.New("solver: grid advice applies to method maxent only")

// ChainProbe makes the probe of a time-invariant process from its
// Discretize.
func ChainProbe(build func(Settings) (*Chain, error)) func(Settings) (bool, int, error) {
	return func(s Settings) (bool, int, error) {
		c, err := build(s)
		if err != nil {
			return false, 0, err
		}
		return Carries(c), c.States(), nil
	}
}

// AgeProbe makes the probe of a life-cycle process from its Discretize.
func AgeProbe(build func(Settings) (*AgeChain, error)) func(Settings) (bool, int, error) {
	return func(s Settings) (bool, int, error) {
		a, err := build(s)
		if err != nil {
			return false, 0, err
		}
		return CarriesAges(a), s.States, nil
	}
}

// AdviseGrid searches the grids of a maximum-entropy process: it returns
// the smallest states setting n = 2, 3, … (s.States ignored) whose chain
// from try carries its moments (Carries), stopping once a chain has more
// than limit states (0 means AdviceMaxStates). s.Width 0 keeps the
// default width rule √(n−1); any other width is held fixed. When no n
// carries and the node rule has a width, it searches half-widths from 0.5
// to twice the requested one (at least 2√(N−1)) at s.States, in steps of
// 0.1 outward from the requested width, and returns the first that
// carries. It solves one chain per candidate, so it is meant for warnings
// and for `states: auto`, not for inner loops. perAxis and ages only
// shape the advice's wording.
func AdviseGrid(s Settings, limit int, try func(Settings) (bool, int, error), perAxis, ages bool) (Advice, error) {
	if s.Method != MaxEnt {
		return Advice{}, errAdviceMethod
	}
	if limit <= 0 {
		limit = AdviceMaxStates
	}
	adv := Advice{Cap: limit, PerAxis: perAxis, Ages: ages, Grid: gridDescription(s)}
	requested := s.States
	for n := 2; ; n++ {
		s.States = n
		ok, total, err := try(s)
		if err != nil {
			if n == 2 {
				return adv, err
			}
			break // past the solver's own limit on states
		}
		if total > limit {
			break
		}
		if ok {
			adv.States, adv.Total = n, total
			return adv, nil
		}
	}
	if !widthApplies(s) || requested < 2 {
		return adv, nil
	}
	s.States = requested
	w0 := s.Width
	if w0 == 0 {
		w0 = DefaultWidth(requested)
	}
	lo, hi := 0.5, math.Max(float64(2*w0), float64(2*DefaultWidth(requested)))
	adv.WidthRange = [2]float64{lo, hi}
	for k := 1; ; k++ {
		tried := false
		for _, w := range []float64{w0 - float64(0.1*float64(k)), w0 + float64(0.1*float64(k))} {
			if w < lo-1e-9 || w > hi+1e-9 {
				continue
			}
			tried = true
			s.Width = math.Round(float64(w*10)) / 10
			ok, _, err := try(s)
			if err != nil {
				return adv, err
			}
			if ok {
				adv.Width = s.Width
				return adv, nil
			}
		}
		if !tried {
			return adv, nil
		}
	}
}

// Advise returns the grid advice of the AR(1) chain with settings s (see
// AdviseGrid).
func (p AR1) Advise(s Settings, limit int) (Advice, error) {
	return AdviseGrid(s, limit, ChainProbe(p.Discretize), false, false)
}

// Advise returns the grid advice of the VAR chain with settings s: States
// counts points per axis, and limit the chain's states in all.
func (p VAR) Advise(s Settings, limit int) (Advice, error) {
	return AdviseGrid(s, limit, ChainProbe(p.Discretize), true, false)
}

// Advise returns the grid advice of the life-cycle chain with settings s:
// the mass floor applies to the marginal law at each age.
func (p LifeCycle) Advise(s Settings, limit int) (Advice, error) {
	return AdviseGrid(s, limit, AgeProbe(p.Discretize), false, true)
}

// Advise returns the grid advice of the i.i.d. discretization with
// settings s.
func (p IID) Advise(s Settings, limit int) (Advice, error) {
	return AdviseGrid(s, limit, ChainProbe(func(s Settings) (*Chain, error) {
		d, err := p.Discretize(s)
		if err != nil {
			return nil, err
		}
		return d.Chain(), nil
	}), false, false)
}
