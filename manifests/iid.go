package manifests

import (
	"math"

	"gridstage/solver"
)

func init() {
	registerKind(kindInfo{name: "iid", keys: []string{"distribution"}, new: func() kindSpec { return &iidSpec{} }})
}

// iidSpec is a static distribution (returns, transitory income) replaced by
// weighted points; as a chain every row holds the same weights.
type iidSpec struct {
	dist *law
	// onSupport is set by rules for a law on a bounded support whose
	// process sets no node rule: it then gets Gauss-Legendre nodes on the
	// whole support (see settings).
	onSupport bool
}

func (s *iidSpec) decode(m *mapping) {
	s.dist = decodeLaw(m, "distribution", distributionLaws, false)
}

func (s *iidSpec) clone() kindSpec {
	return &iidSpec{dist: s.dist.clone(), onSupport: s.onSupport}
}
func (s *iidSpec) params(add func(string, *num))                       { s.dist.params("distribution", add) }
func (s *iidSpec) check(r *reporter, _ loc) bool                       { return s.dist.check(r) }
func (s *iidSpec) methods() []solver.Method                            { return []solver.Method{solver.MaxEnt} }
func (s *iidSpec) baselines() []solver.Method                          { return nil }
func (s *iidSpec) defaultBaseline(solver.Method) (solver.Method, bool) { return 0, false }

func (s *iidSpec) momentLimit() (int, string) {
	return momentLimit(s.dist, "distribution")
}

// rules: Gauss-Hermite nodes cover the whole real line, so they suit laws
// on it, and the log-normal law in logs; not a law on a bounded support.
// A law on a bounded support gets its grid on the whole support unless the
// process sets a width (solver.IID.Discretize): the default width is
// dropped, and with it the width key of the canonical spec.
func (s *iidSpec) rules(r *reporter, p *processSpec) bool {
	lo, hi := s.dist.dist().Support()
	if !math.IsInf(lo, -1) && !math.IsInf(hi, 1) && !p.width.set {
		p.width.v = 0
		s.onSupport = !p.nodes.set
	}
	if p.nodes.v != solver.NodesGaussHermite.String() || !p.nodes.set {
		return true
	}
	if (math.IsInf(lo, -1) && math.IsInf(hi, 1)) || s.dist.fam.name == "lognormal" {
		return true
	}
	r.add(p.nodes.at, ErrRule, "gauss-hermite does not suit the %s law, whose support [%s, %s] is bounded: want lattice, gauss-legendre or equal-mass (gauss-hermite suits laws on the whole line, and the lognormal in logs)",
		s.dist.fam.name, formatNumber(lo), formatNumber(hi))
	return false
}

// settings: a law on a bounded support with no node rule set gets
// Gauss-Legendre nodes on its support, the rule for a bounded interval
// (for Beta(a, b) with integer shapes the prior alone then integrates the
// first 2n−a−b+1 moments exactly; a lattice of cell midpoints often
// cannot carry four moments on few points: Beta(2, 5) on 5 midpoints of
// [0, 1] needs a negative weight).
func (s *iidSpec) settings(st *solver.Settings) {
	if s.onSupport {
		st.Nodes = solver.NodesGaussLegendre
	}
}

func (s *iidSpec) canonical(o object) { o["distribution"] = s.dist.canonical() }
func (s *iidSpec) model() Model       { return iidModel{solver.IID{Dist: s.dist.dist()}} }

// iidModel presents an i.i.d. discretization as a chain with identical rows
// so that run, formats and downstream stages treat both kinds alike.
type iidModel struct{ solver.IID }

func (m iidModel) Discretize(s solver.Settings) (*solver.Chain, error) {
	d, err := m.IID.Discretize(s)
	if err != nil {
		return nil, err
	}
	return d.Chain(), nil
}
