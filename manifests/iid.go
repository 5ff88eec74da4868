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
}

func (s *iidSpec) decode(m *mapping) {
	s.dist = decodeLaw(m, "distribution", distributionLaws, false)
}

func (s *iidSpec) clone() kindSpec                                     { return &iidSpec{dist: s.dist.clone()} }
func (s *iidSpec) params(add func(string, *num))                       { s.dist.params("distribution", add) }
func (s *iidSpec) check(r *reporter, _ loc) bool                       { return s.dist.check(r) }
func (s *iidSpec) methods() []solver.Method                            { return []solver.Method{solver.MaxEnt} }
func (s *iidSpec) baselines() []solver.Method                          { return nil }
func (s *iidSpec) defaultBaseline(solver.Method) (solver.Method, bool) { return 0, false }

func (s *iidSpec) momentLimit() (int, string) {
	return momentLimit(s.dist, "distribution")
}

// rules: Gauss-Hermite nodes cover the whole real line, so they do not suit
// a law on a bounded or half-bounded support (the solver refuses them too).
func (s *iidSpec) rules(r *reporter, p *processSpec) bool {
	if p.nodes.v != solver.NodesGaussHermite.String() || !p.nodes.set {
		return true
	}
	lo, hi := s.dist.dist().Support()
	if math.IsInf(lo, -1) && math.IsInf(hi, 1) {
		return true
	}
	r.add(p.nodes.at, ErrRule, "gauss-hermite does not suit the %s law, whose support is bounded: want lattice, gauss-legendre or equal-mass", s.dist.fam.name)
	return false
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
