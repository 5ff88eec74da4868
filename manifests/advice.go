package manifests

import (
	"fmt"
	"strings"

	"gridstage/solver"
)

// Advise says what grid would carry the job's requested moments: the
// smallest number of states on the same node rule and width rule at which
// every state holding at least 0.1 % of the stationary mass matches them,
// or a width that would, or that no grid of up to limit states would
// (solver.AdviseGrid; limit 0 means solver.AdviceMaxStates). A product is
// advised component by component, for those that fall back. It solves
// one chain per candidate: call it for warnings, not in inner loops.
func (p Problem) Advise(limit int) (string, error) {
	if pm, ok := p.Model.(productModel); ok {
		return pm.advise(limit)
	}
	a, err := p.advice(limit)
	return a.String(), err
}

// advice searches the grids of a process that is not a product.
func (p Problem) advice(limit int) (solver.Advice, error) {
	s := p.adviceSettings()
	switch {
	case p.AgeModel != nil:
		lc, ok := p.AgeModel.(lifecycleModel)
		if !ok {
			return solver.Advice{}, fmt.Errorf("manifests: no grid advice for %T", p.AgeModel)
		}
		return lc.LifeCycle.Advise(s, limit)
	case p.Model == nil:
		return solver.Advice{}, errAgeModel
	case isProduct(p.Model):
		return solver.Advice{}, fmt.Errorf("manifests: a product is advised component by component")
	}
	return adviseModel(p.Model, s, limit)
}

// adviceSettings returns the settings the search starts from: a width
// that followed the default rule is left to follow it (0).
func (p Problem) adviceSettings() solver.Settings {
	s := p.Settings
	if p.DefaultWidth {
		s.Width = 0
	}
	return s
}

// adviseModel searches the grids of a time-invariant process.
func adviseModel(m Model, s solver.Settings, limit int) (solver.Advice, error) {
	_, perAxis := m.(solver.VAR)
	if v, ok := m.(solver.VAR); ok && v.Dim() == 1 {
		perAxis = false
	}
	return solver.AdviseGrid(s, limit, solver.ChainProbe(m.Discretize), perAxis, false)
}

// advise advises each component whose own chain does not carry its
// moments.
func (m productModel) advise(limit int) (string, error) {
	var parts []string
	for i, part := range m.Parts {
		s := m.Settings[i]
		if s.Method != solver.MaxEnt {
			continue
		}
		c, err := part.Discretize(s)
		if err != nil {
			return "", fmt.Errorf("components[%d]: %w", i, err)
		}
		if solver.Carries(c) {
			continue
		}
		if m.defaultWidth[i] {
			s.Width = 0
		}
		a, err := adviseModel(part, s, limit)
		if err != nil {
			return "", fmt.Errorf("components[%d]: %w", i, err)
		}
		parts = append(parts, fmt.Sprintf("components[%d]: %s", i, a))
	}
	if len(parts) == 0 {
		return "every component carries its moments in every state holding at least 0.1% of its stationary mass", nil
	}
	return strings.Join(parts, "; "), nil
}

// Carries reports whether the solved chain matches all its requested
// moments in every state holding at least 0.1 % of its stationary mass
// (for a life cycle, of its age's marginal mass): solver.Carries.
func (s Solution) Carries() bool {
	if s.Ages != nil {
		return solver.CarriesAges(s.Ages)
	}
	return solver.Carries(s.Chain)
}

// FallbackAdvice is the advice that goes with the fallback warning of the
// solved job sol: "" when no state fell back or the method solves for no
// moments; a note when only states holding less than 0.1 % of the mass
// fell back; otherwise Advise's answer (or why it has none).
func (p Problem) FallbackAdvice(sol Solution, limit int) string {
	if sol.Fallbacks() == 0 || (p.AgeModel == nil && p.Settings.Method != solver.MaxEnt && !isProduct(p.Model)) ||
		(p.AgeModel != nil && p.Settings.Method != solver.MaxEnt) {
		return ""
	}
	if sol.Carries() {
		return "the states that fell back each hold less than 0.1% of the stationary mass; this grid carries the moments wherever the chain spends its time"
	}
	a, err := p.Advise(limit)
	if err != nil {
		return "no grid advice: " + err.Error()
	}
	if strings.HasPrefix(a, "no grid") {
		a += " (ask for fewer moments, or for more states than the cap)"
	}
	return a
}

func isProduct(m Model) bool {
	_, ok := m.(productModel)
	return ok
}
