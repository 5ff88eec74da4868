package manifests

import "gridstage/solver"

func init() {
	registerKind(kindInfo{name: "ar1-volatility", keys: []string{"rho", "mean", "log_variance"}, new: func() kindSpec { return &volatilitySpec{} }})
}

// defaultVolStates is the number of log-variance states when log_variance
// gives none: volatility regimes are usually few (common practice).
const defaultVolStates = 5

// volatilitySpec is a first-order autoregression with stochastic volatility,
//
//	y' = (1 − ρ) μ + ρ y + exp(h/2) ε,   h' = (1 − ρ_h) μ_h + ρ_h h + σ_h z,
//
// with rho and mean the level's ρ and μ and log_variance the AR(1) of the
// log-variance h. states, method, moments, nodes and width set the level's
// grid; log_variance has its own states and method.
type volatilitySpec struct {
	rho, mean num
	vol       *volSpec
	volBad    bool
}

// volSpec is the log-variance AR(1) of an ar1-volatility process and how to
// discretize it; the other settings are the AR(1) defaults of its method.
type volSpec struct {
	at                       loc
	rho, sigma, mean, states num
	method                   str
}

const volWant = "a mapping with rho, sigma and mean of the log-variance AR(1), and optionally states and method"

func (s *volatilitySpec) decode(m *mapping) {
	s.rho = m.number("rho")
	s.mean = m.number("mean")
	n := m.get("log_variance")
	if n == nil {
		return
	}
	sub := m.d.mapping(n, m.field("log_variance"), volWant)
	if sub == nil {
		s.volBad = true
		return
	}
	s.vol = &volSpec{at: m.d.at(n, m.field("log_variance")),
		rho: sub.number("rho"), sigma: sub.number("sigma"), mean: sub.number("mean"),
		states: sub.number("states"), method: sub.choice("method", solver.MethodNames())}
	sub.finish(nil)
	s.volBad = s.vol.method.bad
}

func (s *volatilitySpec) clone() kindSpec {
	c := *s
	if s.vol != nil {
		v := *s.vol
		c.vol = &v
	}
	return &c
}

func (s *volatilitySpec) params(add func(string, *num)) {
	add("rho", &s.rho)
	add("mean", &s.mean)
	if s.vol != nil {
		add("log_variance.rho", &s.vol.rho)
		add("log_variance.sigma", &s.vol.sigma)
		add("log_variance.mean", &s.vol.mean)
		add("log_variance.states", &s.vol.states)
	}
}

func (s *volatilitySpec) check(r *reporter, at loc) bool {
	ok := present(r, s.rho, at, "rho", "a number in (-1, 1)") && checkOpen(r, s.rho, -1, 1)
	if s.mean.set || s.mean.bad {
		ok = checkFinite(r, s.mean) && ok
	}
	v := s.vol
	if v == nil {
		if !s.volBad {
			r.add(loc{pos: at.pos, path: joinKey(at.path, "log_variance")}, ErrMissing, "missing: want %s", volWant)
		}
		return false
	}
	ok = present(r, v.rho, v.at, "rho", "a number in (-1, 1)") && checkOpen(r, v.rho, -1, 1) && ok
	ok = present(r, v.sigma, v.at, "sigma", "a finite number > 0") && checkPositive(r, v.sigma) && ok
	ok = present(r, v.mean, v.at, "mean", "a finite number (the mean of the log-variance)") && checkFinite(r, v.mean) && ok
	if v.states.set || v.states.bad {
		ok = checkInt(r, v.states, 2, maxTotalStates) && ok
	} else {
		v.states.v = defaultVolStates
	}
	return ok && !s.volBad
}

var volatilityMethods = []solver.Method{solver.MaxEnt, solver.Tauchen}

func (s *volatilitySpec) methods() []solver.Method   { return volatilityMethods }
func (s *volatilitySpec) baselines() []solver.Method { return volatilityMethods }

// defaultBaseline compares maxent with Tauchen's interval masses for the
// level, and Tauchen with maxent.
func (s *volatilitySpec) defaultBaseline(m solver.Method) (solver.Method, bool) {
	if m == solver.Tauchen {
		return solver.MaxEnt, true
	}
	return solver.Tauchen, true
}

// momentLimit: given the joint state the level is exactly normal.
func (s *volatilitySpec) momentLimit() (int, string) { return 8, "" }

func (s *volatilitySpec) rules(r *reporter, p *processSpec) bool {
	ny, nh := int(p.states.v), int(s.vol.states.v)
	if ny*nh > maxTotalStates {
		r.add(p.states.at, ErrRange, "%s level states times %d log-variance states give %d states: want at most %d in all",
			p.states, nh, ny*nh, maxTotalStates)
		return false
	}
	return true
}

func (s *volatilitySpec) chainStates(set solver.Settings) int {
	return set.States * int(s.vol.states.v)
}

func (s *volatilitySpec) volMethod() solver.Method {
	if s.vol.method.set {
		m, _ := solver.ParseMethod(s.vol.method.v)
		return m
	}
	return solver.MaxEnt
}

func (s *volatilitySpec) canonical(o object) {
	o["rho"] = s.rho.v
	o["mean"] = s.mean.v
	o["log_variance"] = object{"rho": s.vol.rho.v, "sigma": s.vol.sigma.v, "mean": s.vol.mean.v,
		"states": s.vol.states.v, "method": s.volMethod().String()}
}

func (s *volatilitySpec) model() Model {
	return volatilityModel{
		SV: solver.SV{Mean: s.mean.v, Rho: s.rho.v,
			LogVar: solver.AR1{Mean: s.vol.mean.v, Rho: s.vol.rho.v, Sigma: s.vol.sigma.v}},
		Vol: solver.Settings{States: int(s.vol.states.v), Method: s.volMethod()},
	}
}

// volatilityModel discretizes the level with the job's settings and the
// log-variance with Vol (its method's AR(1) defaults otherwise).
type volatilityModel struct {
	solver.SV
	Vol solver.Settings
}

func (m volatilityModel) Discretize(level solver.Settings) (*solver.Chain, error) {
	return m.SV.Discretize(level, m.Vol)
}
