package manifests

import (
	"errors"
	"math"
	"strconv"

	"gridstage/solver"
)

func init() {
	registerKind(kindInfo{name: "var", keys: []string{"coef", "cov", "intercept", "axes"}, new: func() kindSpec { return &varSpec{} }})
}

// varSpec is a first-order vector autoregression x' = c + B x + ε,
// ε ~ N(0, Ψ), of dimension 1 to 4: coef is B and cov Ψ, each a list of
// rows, intercept c (default zeros). states counts grid points per axis.
type varSpec struct {
	coef, cov       *matrix
	coefBad, covBad bool
	intercept       *numList
	interceptGiven  bool
	interceptBad    bool
	axes            str
	at              loc // the process mapping
}

const interceptWant = "a list of numbers, one per row of coef"

func (v *varSpec) decode(m *mapping) {
	v.at = m.d.at(m.node, m.path)
	v.coef, v.coefBad = m.matrix("coef")
	v.cov, v.covBad = m.matrix("cov")
	v.intercept, v.interceptBad = m.numberList("intercept", interceptWant)
	v.interceptGiven = m.has("intercept")
	v.axes = m.choice("axes", solver.AxesNames())
	if !v.interceptGiven && v.coef != nil {
		// Zeros, so that intercept[k] can be swept without writing them.
		at := m.d.at(m.node, m.field("intercept"))
		v.intercept = &numList{at: at, values: make([]num, v.coef.dim())}
		for k := range v.intercept.values {
			v.intercept.values[k] = num{at: at, set: true}
		}
	}
}

func (v *varSpec) clone() kindSpec {
	c := *v
	c.coef, c.cov, c.intercept = v.coef.clone(), v.cov.clone(), v.intercept.clone()
	return &c
}

func (v *varSpec) params(add func(string, *num)) {
	v.coef.params("coef", add)
	v.cov.params("cov", add)
	v.intercept.params("intercept", add)
}

func (v *varSpec) check(r *reporter, at loc) bool {
	ok := true
	if v.coef == nil {
		if !v.coefBad {
			r.add(loc{pos: at.pos, path: joinKey(at.path, "coef")}, ErrMissing, "missing: want %s", matrixWant)
		}
		ok = false
	} else {
		ok = v.coef.checkFinite(r) && ok
	}
	if v.cov == nil {
		if !v.covBad {
			r.add(loc{pos: at.pos, path: joinKey(at.path, "cov")}, ErrMissing, "missing: want %s (the innovation covariance)", matrixWant)
		}
		ok = false
	} else {
		ok = v.cov.checkFinite(r) && ok
	}
	if v.intercept == nil {
		ok = ok && !v.interceptBad
	} else {
		for _, n := range v.intercept.values {
			ok = checkFinite(r, n) && ok
		}
	}
	if !ok {
		return false
	}
	d := v.coef.dim()
	if v.cov.dim() != d {
		r.add(v.cov.at, ErrRule, "the matrix is %s: want %s to match coef", sizeText(v.cov.dim()), sizeText(d))
		return false
	}
	if len(v.intercept.values) != d {
		r.add(v.intercept.at, ErrRule, "the list has %d numbers: want %d, one per row of coef", len(v.intercept.values), d)
		return false
	}
	for k := 0; k < d; k++ {
		for l := 0; l < k; l++ {
			if a, b := v.cov.rows[k][l], v.cov.rows[l][k]; a.v != b.v {
				r.add(a.at, ErrRule, "%s differs from cov[%d][%d] = %s: want a symmetric matrix", a, l, k, b)
				ok = false
			}
		}
	}
	if !ok {
		return false
	}
	err := v.process().Validate()
	var pe *solver.ParamError
	switch {
	case err == nil:
		return true
	case errors.As(err, &pe) && pe.Param == "cov smallest eigenvalue":
		r.add(v.cov.at, ErrRange, "the matrix is not positive definite (its smallest eigenvalue is %s): want a positive definite covariance", formatNumber(roundSig(pe.Value)))
	case errors.As(err, &pe) && pe.Param == "coef spectral radius":
		r.add(v.coef.at, ErrRange, "the VAR is not stationary: coef has spectral radius %s, want < 1", formatNumber(roundSig(pe.Value)))
	default:
		r.add(v.at, ErrRange, "the VAR is invalid: %v", err)
	}
	return false
}

// roundSig rounds to 6 significant digits for messages.
func roundSig(x float64) float64 {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	f, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 6, 64), 64)
	return f
}

// process returns the solver's VAR. An intercept of zeros is left nil, so
// that writing it out or leaving it out gives the same numbers (their
// canonical specs are the same).
func (v *varSpec) process() solver.VAR {
	p := solver.VAR{Coef: v.coef.flat(), Cov: v.cov.flat()}
	for _, n := range v.intercept.values {
		if n.v != 0 {
			p.Intercept = v.intercept.floats()
			break
		}
	}
	return p
}

var varMethods = []solver.Method{solver.MaxEnt, solver.Tauchen}

func (v *varSpec) methods() []solver.Method   { return varMethods }
func (v *varSpec) baselines() []solver.Method { return varMethods }

// defaultBaseline compares maxent with Tauchen's (1986) VAR construction,
// and Tauchen with maxent.
func (v *varSpec) defaultBaseline(m solver.Method) (solver.Method, bool) {
	if m == solver.Tauchen {
		return solver.MaxEnt, true
	}
	return solver.Tauchen, true
}

func (v *varSpec) momentLimit() (int, string) {
	return 4, "a VAR matches at most the conditional means (1), covariances (2) and marginal third (3) and fourth (4) moments"
}

// defaultMoments: conditional means and covariances.
func (v *varSpec) defaultMoments() int { return 2 }

func (v *varSpec) rules(r *reporter, p *processSpec) bool {
	ok := true
	if v.axes.set && p.chosenMethod() != solver.MaxEnt {
		r.add(v.axes.at, ErrRule, "applies to method maxent only: %s places its own grid", p.chosenMethod())
		ok = false
	}
	d, n := v.coef.dim(), int(p.states.v)
	total := 1
	for k := 0; k < d; k++ {
		total *= n
	}
	if total > maxTotalStates {
		r.add(p.states.at, ErrRange, "%s per axis gives %d states in %d dimensions: want at most %d in all (at most %d per axis)",
			p.states, total, d, maxTotalStates, perAxisLimit(d))
		ok = false
	}
	return ok
}

// maxTotalStates bounds the states of one chain, as the solver does.
const maxTotalStates = solver.MaxStates

// perAxisLimit is the largest N with N^d ≤ maxTotalStates.
func perAxisLimit(d int) int {
	n := 1
	for {
		t := 1
		for k := 0; k < d; k++ {
			t *= n + 1
		}
		if t > maxTotalStates {
			return n
		}
		n++
	}
}

func (v *varSpec) settings(s *solver.Settings) {
	if s.Method == solver.MaxEnt && v.axes.set {
		s.Axes, _ = solver.ParseAxes(v.axes.v)
	}
}

func (v *varSpec) chainStates(s solver.Settings) int {
	total := 1
	for k := 0; k < v.coef.dim(); k++ {
		total *= s.States
	}
	return total
}

func (v *varSpec) canonical(o object) {
	o["coef"] = v.coef.canonical()
	o["cov"] = v.cov.canonical()
	o["intercept"] = v.intercept.canonical()
	if o["method"] == solver.MaxEnt.String() {
		axes := solver.AxesPrincipal.String()
		if v.axes.set {
			axes = v.axes.v
		}
		o["axes"] = axes
	}
}

func (v *varSpec) model() Model { return v.process() }
