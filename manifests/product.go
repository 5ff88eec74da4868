package manifests

import (
	"fmt"
	"strings"

	"gridstage/solver"
)

func init() {
	registerKind(kindInfo{name: "product", keys: []string{"components"}, new: func() kindSpec { return &productSpec{} }})
}

// productSpec combines independent processes into one chain (solver.Product):
// components lists them, each a process entry without name, sweep or
// baseline, of kind ar1, ar1-volatility, iid, var or lifecycle, with its
// own settings. With a life-cycle component the product is a life cycle
// too (solver.ProductAges): its components are then univariate (ar1, iid,
// lifecycle, life cycles with the same number of ages). The state
// vector concatenates the components' vectors, the first component's
// first, and states are numbered with the last component varying fastest.
type productSpec struct {
	at    loc // the components list
	parts []*processSpec
	bad   bool
}

const componentsWant = "a list of at least two processes (each with kind ar1, ar1-volatility, iid, var or lifecycle and its own settings)"

func (s *productSpec) decode(m *mapping) {
	list, ok := m.list("components", componentsWant)
	if !ok {
		s.bad = m.has("components")
		return
	}
	path := m.field("components")
	s.at = m.d.at(list, path)
	if len(list.Content) < 2 {
		m.d.r.add(s.at, ErrRange, "the list has %d process: want %s", len(list.Content), componentsWant)
		s.bad = true
	}
	for i, item := range list.Content {
		p := m.d.decodeProcess(item, joinIndex(path, i), roleComponent)
		if p == nil || p.spec == nil {
			s.bad = true
			continue
		}
		s.parts = append(s.parts, p)
	}
}

func (s *productSpec) clone() kindSpec {
	c := *s
	c.parts = make([]*processSpec, len(s.parts))
	for i, p := range s.parts {
		c.parts[i] = p.clone()
	}
	return &c
}

func (s *productSpec) params(add func(string, *num)) {
	for i, p := range s.parts {
		names, refs := p.params()
		for _, name := range names {
			add(joinIndex("components", i)+"."+name, refs[name])
		}
	}
}

func (s *productSpec) check(r *reporter, at loc) bool {
	if s.parts == nil && !s.bad {
		r.add(loc{pos: at.pos, path: joinKey(at.path, "components")}, ErrMissing, "missing: want %s", componentsWant)
		return false
	}
	ok := !s.bad
	for _, p := range s.parts {
		ok = p.check(r) && ok
	}
	if !ok {
		return false
	}
	if !s.checkAges(r) {
		return false
	}
	total := 1
	var sizes []string
	for _, p := range s.parts {
		n := p.chainStates()
		sizes = append(sizes, fmt.Sprint(n))
		total *= n
		if total > maxTotalStates {
			break
		}
	}
	if total > maxTotalStates {
		r.add(s.at, ErrRange, "the components' chains have %s states: their product exceeds %d, want at most %d states in all",
			strings.Join(sizes, " × "), maxTotalStates, maxTotalStates)
		return false
	}
	return true
}

// checkAges checks a product with a life-cycle component: every component
// univariate, every life cycle with the same number of ages.
func (s *productSpec) checkAges(r *reporter) bool {
	if !s.hasAges() {
		return true
	}
	moves := -1
	for _, p := range s.parts {
		if !contains(ageComponentKinds, p.kind.v) {
			r.add(p.kind.at, ErrRule, "kind %s cannot join a life-cycle product: want %s (univariate, so that the chain describes the sum of the components)", p.kind.v, strings.Join(ageComponentKinds, ", "))
			return false
		}
		if lc, ok := p.spec.(*lifecycleSpec); ok {
			n := len(lc.rho.values)
			if moves >= 0 && n != moves {
				what := fmt.Sprintf("%d numbers", n)
				if n == 1 {
					what = "1 number"
				}
				r.add(lc.rho.at, ErrRule, "the list has %s: want %d, as the first life-cycle component (its ages must line up)", what, moves)
				return false
			}
			moves = n
		}
	}
	return true
}

// hasAges reports whether a component is a life cycle.
func (s *productSpec) hasAges() bool {
	for _, p := range s.parts {
		if _, ok := p.spec.(*lifecycleSpec); ok {
			return true
		}
	}
	return false
}

// ageModel: a product with a life-cycle component is a life cycle
// (productAges); without one it has a single chain (model).
func (s *productSpec) ageModel() AgeModel {
	if !s.hasAges() {
		return nil
	}
	m := productAges{}
	for _, p := range s.parts {
		part := agePart{settings: p.settings}
		if lc, ok := p.spec.(*lifecycleSpec); ok {
			part.ages = lc.ageModel().(lifecycleModel)
		} else {
			part.model = p.spec.model()
		}
		m.parts = append(m.parts, part)
	}
	return m
}

func (s *productSpec) composite() {}

// The common settings keys do not apply to a product (see compositeKind);
// these methods answer for the check's sake only.
func (s *productSpec) methods() []solver.Method                            { return []solver.Method{solver.MaxEnt} }
func (s *productSpec) baselines() []solver.Method                          { return nil }
func (s *productSpec) defaultBaseline(solver.Method) (solver.Method, bool) { return 0, false }
func (s *productSpec) momentLimit() (int, string)                          { return 8, "" }
func (s *productSpec) rules(*reporter, *processSpec) bool                  { return true }

func (s *productSpec) canonical(o object) {
	list := make([]any, len(s.parts))
	for i, p := range s.parts {
		list[i] = p.canonicalSpec()
	}
	o["components"] = list
}

func (s *productSpec) model() Model {
	if s.hasAges() {
		return nil
	}
	m := productModel{}
	for _, p := range s.parts {
		part := p.spec.model()
		m.Parts = append(m.Parts, part)
		m.Settings = append(m.Settings, p.settings)
		m.defaultWidth = append(m.defaultWidth, p.defaultWidth())
		vt, ok := part.(solver.VectorTruth)
		if !ok {
			vt = solver.AsVector(part)
		}
		m.truth = append(m.truth, vt)
	}
	return m
}

// productModel discretizes each component with its own settings and
// combines the chains with solver.Product. Its Truth is the first
// component's (the univariate diagnostics look at the first coordinate);
// as a VectorTruth it is solver.Independent over the components.
type productModel struct {
	Parts    []Model
	Settings []solver.Settings
	truth    solver.Independent
	// defaultWidth[i] reports that component i's width follows √(N−1).
	defaultWidth []bool
}

var _ solver.VectorTruth = productModel{}

// Discretize ignores s: every component has its own settings.
func (m productModel) Discretize(solver.Settings) (*solver.Chain, error) {
	chains := make([]*solver.Chain, len(m.Parts))
	for i, p := range m.Parts {
		c, err := p.Discretize(m.Settings[i])
		if err != nil {
			return nil, fmt.Errorf("components[%d]: %w", i, err)
		}
		chains[i] = c
	}
	return solver.Product(chains...), nil
}

// Conditional returns the first component's conditional moments.
func (m productModel) Conditional(x []float64) solver.Moments {
	return m.Parts[0].Conditional(x[:m.truth[0].Dim()])
}

// Unconditional returns the first component's stationary moments.
func (m productModel) Unconditional() solver.Summary { return m.Parts[0].Unconditional() }

func (m productModel) Dim() int { return m.truth.Dim() }

func (m productModel) VectorConditional(x []float64) solver.VectorMoments {
	return m.truth.VectorConditional(x)
}

func (m productModel) VectorUnconditional() solver.VectorSummary {
	return m.truth.VectorUnconditional()
}
