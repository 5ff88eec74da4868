package manifests

import (
	"math"
	"strconv"

	"go.yaml.in/yaml/v3"

	"gridstage/solver"
)

func init() {
	registerKind(kindInfo{name: "lifecycle", keys: []string{"rho", "sigma", "initial_sd", "initial", "innovation", "years_per_period"},
		new: func() kindSpec { return &lifecycleSpec{} }})
}

// lifecycleSpec is an age-varying AR(1) with mean zero,
//
//	z_0 = σ_0 u,   z_{t+1} = ρ_t z_t + σ_t ε_{t+1},   t = 0 … T−1,
//
// with rho and sigma the lists ρ_t and σ_t (T entries each), initial_sd
// σ_0, initial the law of u, and innovation the law of ε: one law for every
// age, or a list of T laws. Laws are rescaled to mean 0 and variance 1.
// The chain has T + 1 ages with states grid points each, numbered as model
// periods t = 0 … T; years_per_period, when given, says how long a period
// is, for the labels of figures (it is not sweepable and changes no
// number, but enters the canonical spec so that files carry it).
type lifecycleSpec struct {
	yearsPerPeriod   num
	rho, sigma       *numList
	rhoBad, sigmaBad bool
	initialSD        num
	initial          *law
	// shared is the innovation law of every age; perAge the list of laws
	// when innovation is a list (then shared is nil).
	shared        *law
	perAge        []*law
	innovationAt  loc
	innovationBad bool
}

const ageListWant = "a list of numbers, one per move from an age to the next"

func (s *lifecycleSpec) decode(m *mapping) {
	s.rho, s.rhoBad = m.numberList("rho", ageListWant)
	s.sigma, s.sigmaBad = m.numberList("sigma", ageListWant)
	s.initialSD = m.number("initial_sd")
	s.yearsPerPeriod = m.number("years_per_period")
	s.initial = decodeLaw(m, "initial", innovationLaws, true)
	n := m.get("innovation")
	if n != nil && n.Kind == yaml.SequenceNode {
		path := m.field("innovation")
		s.innovationAt = m.d.at(n, path)
		if len(n.Content) == 0 {
			m.d.r.add(s.innovationAt, ErrRange, "the list is empty: want one law per entry of rho, or a single law for every age")
			s.innovationBad = true
		}
		for i, item := range n.Content {
			l := m.d.decodeLawNode(resolve(item), joinIndex(path, i), innovationLaws)
			s.innovationBad = s.innovationBad || l == nil
			s.perAge = append(s.perAge, l)
		}
		return
	}
	s.shared = decodeLaw(m, "innovation", innovationLaws, true)
	s.innovationBad = s.shared == nil
}

func (s *lifecycleSpec) clone() kindSpec {
	c := *s
	c.rho, c.sigma = s.rho.clone(), s.sigma.clone()
	c.initial, c.shared = s.initial.clone(), s.shared.clone()
	if s.perAge != nil {
		c.perAge = make([]*law, len(s.perAge))
		for i, l := range s.perAge {
			c.perAge[i] = l.clone()
		}
	}
	return &c
}

func (s *lifecycleSpec) params(add func(string, *num)) {
	s.rho.params("rho", add)
	s.sigma.params("sigma", add)
	add("initial_sd", &s.initialSD)
	s.initial.params("initial", add)
	s.shared.params("innovation", add)
	for i, l := range s.perAge {
		l.params(joinIndex("innovation", i), add)
	}
}

func (s *lifecycleSpec) check(r *reporter, at loc) bool {
	ok := present(r, s.initialSD, at, "initial_sd", "a finite number > 0 (the s.d. at the first age)") && checkPositive(r, s.initialSD)
	if s.yearsPerPeriod.set {
		ok = checkPositive(r, s.yearsPerPeriod) && ok
	}
	field := func(key string) loc { return loc{pos: at.pos, path: joinKey(at.path, key)} }
	switch {
	case s.rho != nil:
		for _, n := range s.rho.values {
			ok = checkFinite(r, n) && ok
		}
	case !s.rhoBad:
		r.add(field("rho"), ErrMissing, "missing: want %s", ageListWant)
		fallthrough
	default:
		ok = false
	}
	switch {
	case s.sigma != nil:
		for _, n := range s.sigma.values {
			ok = checkPositive(r, n) && ok
		}
	case !s.sigmaBad:
		r.add(field("sigma"), ErrMissing, "missing: want %s", ageListWant)
		fallthrough
	default:
		ok = false
	}
	if s.rho != nil && s.sigma != nil && len(s.sigma.values) != len(s.rho.values) {
		r.add(s.sigma.at, ErrRule, "the list has %d numbers: want %d, one per entry of rho", len(s.sigma.values), len(s.rho.values))
		ok = false
	}
	ok = s.initial.check(r) && ok
	if s.innovationBad {
		ok = false
	}
	if s.shared != nil {
		ok = s.shared.check(r) && ok
	}
	for _, l := range s.perAge {
		ok = l.check(r) && ok
	}
	if s.perAge != nil && s.rho != nil && len(s.perAge) != len(s.rho.values) {
		r.add(s.innovationAt, ErrRule, "the list has %d laws: want %d, one per entry of rho (or a single law for every age)", len(s.perAge), len(s.rho.values))
		ok = false
	}
	return ok
}

var lifecycleMethods = []solver.Method{solver.MaxEnt, solver.Rouwenhorst, solver.Tauchen}

func (s *lifecycleSpec) methods() []solver.Method   { return lifecycleMethods }
func (s *lifecycleSpec) baselines() []solver.Method { return lifecycleMethods }

// defaultBaseline compares with the age-varying Rouwenhorst method (Fella,
// Gallipoli and Pan 2019), or with maxent when that is the main method.
func (s *lifecycleSpec) defaultBaseline(m solver.Method) (solver.Method, bool) {
	if m == solver.Rouwenhorst {
		return solver.MaxEnt, true
	}
	return solver.Rouwenhorst, true
}

// momentLimit is the smallest over the initial law and every innovation.
func (s *lifecycleSpec) momentLimit() (int, string) {
	limit, why := momentLimit(s.initial, "initial law")
	try := func(l *law, role string) {
		if k, w := momentLimit(l, role); k < limit {
			limit, why = k, w
		}
	}
	if s.shared != nil {
		try(s.shared, "innovation")
	}
	for i, l := range s.perAge {
		try(l, "innovation of age "+strconv.Itoa(i))
	}
	return limit, why
}

func (s *lifecycleSpec) rules(*reporter, *processSpec) bool { return true }

func (s *lifecycleSpec) canonical(o object) {
	o["rho"] = s.rho.canonical()
	o["sigma"] = s.sigma.canonical()
	o["initial_sd"] = s.initialSD.v
	o["initial"] = s.initial.canonical()
	// One law per age whichever way the manifest wrote them, so that both
	// spellings of the same process have the same spec.
	laws := make([]any, len(s.rho.values))
	for t := range laws {
		laws[t] = s.innovation(t).canonical()
	}
	o["innovation"] = laws
	if s.yearsPerPeriod.set {
		o["years_per_period"] = s.yearsPerPeriod.v
	}
}

// innovation returns the law of the move from age t.
func (s *lifecycleSpec) innovation(t int) *law {
	if s.shared != nil {
		return s.shared
	}
	return s.perAge[t]
}

// model: a life cycle has no single chain; see ageModel.
func (s *lifecycleSpec) model() Model { return nil }

func (s *lifecycleSpec) ageModel() AgeModel {
	p := solver.LifeCycle{InitialSD: s.initialSD.v, Initial: s.initial.dist(), Rho: s.rho.floats(), Sigma: s.sigma.floats()}
	for t := range p.Rho {
		if d := s.innovation(t).dist(); d != nil {
			if p.Shocks == nil {
				p.Shocks = make([]solver.Distribution, len(p.Rho))
			}
			p.Shocks[t] = d
		}
	}
	return lifecycleModel{p}
}

// lifecycleModel is the AgeModel of kind lifecycle.
type lifecycleModel struct{ solver.LifeCycle }

func (m lifecycleModel) DiscretizeAges(s solver.Settings) (*solver.AgeChain, error) {
	return m.LifeCycle.Discretize(s)
}

// DiagnoseAges compares each transition with the truth, in the units of
// solver.Diagnose: for the move from age t, the conditional moments of
// ρ_t z + σ_t ε over the age-(t+1) grid in every age-t state z, and the
// marginal law of z_{t+1} (from solver.DiagnoseAges) as unconditional
// moments.
func (m lifecycleModel) DiagnoseAges(a *solver.AgeChain) []solver.Diagnostics {
	p := m.LifeCycle
	summary := solver.DiagnoseAges(a, p)
	out := make([]solver.Diagnostics, len(a.Ages))
	for t, c := range a.Ages {
		var shock solver.Distribution
		if p.Shocks != nil {
			shock = p.Shocks[t]
		}
		// AR1.Conditional with mean 0 gives ρ_t z and σ_t²; it does not
		// range-check ρ_t, so a random walk (ρ_t = 1) is fine.
		step := solver.AR1{Rho: p.Rho[t], Sigma: p.Sigma[t], Shock: shock}
		next := a.Grid(t + 1)
		d := solver.Diagnostics{Method: c.Method.String(), States: make([]solver.StateCheck, c.States()),
			Fallbacks: c.Fallbacks(), Chain: summary.Ages[t].Chain, True: summary.Ages[t].True}
		for i := range d.States {
			cm := solver.WeightedMoments(c.Row(i), next)
			tm := step.Conditional(c.State(i))
			sd := math.Sqrt(tm.Var)
			abs := solver.Moments{Mean: cm.Mean - tm.Mean, Var: cm.Var - tm.Var, Skew: cm.Skew - tm.Skew, Kurt: cm.Kurt - tm.Kurt}
			rel := solver.Moments{Mean: abs.Mean / sd, Var: abs.Var / tm.Var, Skew: abs.Skew, Kurt: abs.Kurt / tm.Kurt}
			d.States[i] = solver.StateCheck{Level: append([]float64(nil), c.State(i)...), Chain: cm, True: tm,
				AbsErr: abs, RelErr: rel, Matched: c.Matched[i]}
			d.WorstRelErr.Mean = math.Max(d.WorstRelErr.Mean, math.Abs(rel.Mean))
			d.WorstRelErr.Var = math.Max(d.WorstRelErr.Var, math.Abs(rel.Var))
			d.WorstRelErr.Skew = math.Max(d.WorstRelErr.Skew, math.Abs(rel.Skew))
			d.WorstRelErr.Kurt = math.Max(d.WorstRelErr.Kurt, math.Abs(rel.Kurt))
		}
		out[t] = d
	}
	return out
}
