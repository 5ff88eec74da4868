package manifests

import "gridstage/solver"

func init() {
	registerKind(kindInfo{name: "ar1", keys: []string{"rho", "sigma", "mean", "innovation"}, new: func() kindSpec { return &ar1Spec{} }})
}

// ar1Spec is a first-order autoregression x' = (1 − ρ) μ + ρ x + σ z whose
// innovation z follows a law rescaled to mean 0 and variance 1.
type ar1Spec struct {
	rho, sigma, mean num
	innovation       *law
}

func (a *ar1Spec) decode(m *mapping) {
	a.rho = m.number("rho")
	a.sigma = m.number("sigma")
	a.mean = m.number("mean")
	a.innovation = decodeLaw(m, "innovation", innovationLaws, true)
}

func (a *ar1Spec) clone() kindSpec {
	c := *a
	c.innovation = a.innovation.clone()
	return &c
}

func (a *ar1Spec) params(add func(string, *num)) {
	add("rho", &a.rho)
	add("sigma", &a.sigma)
	add("mean", &a.mean)
	a.innovation.params("innovation", add)
}

func (a *ar1Spec) check(r *reporter, at loc) bool {
	ok := present(r, a.rho, at, "rho", "a number in (-1, 1)") && checkOpen(r, a.rho, -1, 1)
	ok = present(r, a.sigma, at, "sigma", "a finite number > 0") && checkPositive(r, a.sigma) && ok
	if a.mean.set || a.mean.bad {
		ok = checkFinite(r, a.mean) && ok
	}
	return a.innovation.check(r) && ok
}

var allMethods = []solver.Method{solver.MaxEnt, solver.Tauchen, solver.TauchenHussey, solver.Rouwenhorst, solver.AddaCooper}

func (a *ar1Spec) methods() []solver.Method   { return allMethods }
func (a *ar1Spec) baselines() []solver.Method { return allMethods }

// defaultBaseline compares with Rouwenhorst (1995), exact in the
// conditional mean and variance and the most accurate of the classic
// methods for persistent processes (Kopecky and Suen 2010), or with maxent
// when Rouwenhorst is the main method: the rule of kind lifecycle too.
func (a *ar1Spec) defaultBaseline(m solver.Method) (solver.Method, bool) {
	if m == solver.Rouwenhorst {
		return solver.MaxEnt, true
	}
	return solver.Rouwenhorst, true
}

func (a *ar1Spec) momentLimit() (int, string) {
	return momentLimit(a.innovation, "innovation")
}

// rules: Adda and Cooper (2003) cut the normal stationary law into
// equal-probability intervals, so their method (as the chain or as the
// baseline) needs a normal innovation.
func (a *ar1Spec) rules(r *reporter, p *processSpec) bool {
	if a.innovation.fam.name == "normal" {
		return true
	}
	why := "needs a normal innovation (Adda and Cooper 2003 cut the normal stationary law into equal-probability intervals); the innovation is " + a.innovation.fam.name
	ok := true
	if p.chosenMethod() == solver.AddaCooper {
		r.add(p.method.at, ErrRule, "adda-cooper %s", why)
		ok = false
	}
	if p.compare.set && p.compare.v == solver.AddaCooper.String() {
		r.add(p.compare.at, ErrRule, "adda-cooper %s", why)
		ok = false
	}
	return ok
}

func (a *ar1Spec) canonical(o object) {
	o["rho"] = a.rho.v
	o["sigma"] = a.sigma.v
	o["mean"] = a.mean.v
	o["innovation"] = a.innovation.canonical()
}

func (a *ar1Spec) model() Model {
	return solver.AR1{Mean: a.mean.v, Rho: a.rho.v, Sigma: a.sigma.v, Shock: a.innovation.dist()}
}
