package manifests

import (
	"fmt"
	"strings"

	"go.yaml.in/yaml/v3"

	"gridstage/solver"
)

// statesWant describes the values of the states key.
var statesWant = fmt.Sprintf("an integer from 2 to %d, or auto", solver.MaxStates)

// statesValue reads the states key: a number, or the word auto (which
// sets the returned toggle and leaves the number unset).
func (m *mapping) statesValue() (num, toggle) {
	n := m.get("states")
	if n == nil {
		return num{at: m.d.at(m.node, m.field("states"))}, toggle{}
	}
	at := m.d.at(n, m.field("states"))
	if n.Kind == yaml.ScalarNode && n.Tag == "!!str" {
		if strings.TrimSpace(n.Value) == "auto" {
			return num{at: at}, toggle{v: true, at: at, set: true}
		}
		m.d.r.add(at, ErrType, "%q is not a number: want %s", n.Value, statesWant)
		return num{at: at, bad: true}, toggle{}
	}
	return m.d.number(n, m.field("states")), toggle{}
}

// checkAuto checks states: auto and states_cap against the role, the
// method and a swept states.
func (p *processSpec) checkAuto(r *reporter, method solver.Method) bool {
	ok := true
	if p.auto.v {
		switch {
		case p.role == roleComponent:
			r.add(p.auto.at, ErrRule, "auto applies to a whole process, not to a component of a product: give the component's states")
			ok = false
		case method != solver.MaxEnt:
			r.add(p.auto.at, ErrRule, "auto applies to method maxent only: %s solves for no moments that a grid must carry", method)
			ok = false
		case p.states.set && p.autoN == 0:
			// A sweep set states at this point.
			r.add(p.auto.at, ErrRule, "auto chooses the number of states, so states cannot also be swept")
			ok = false
		}
	}
	if p.statesCap.set || p.statesCap.bad {
		switch {
		case !p.auto.v:
			r.add(p.statesCap.at, ErrRule, "applies to states: auto only")
			ok = false
		case !checkInt(r, p.statesCap, 2, solver.MaxStates):
			ok = false
		}
	}
	return ok
}

// cap returns the largest number of chain states the search for states:
// auto tries.
func (p *processSpec) cap() int {
	if p.statesCap.set {
		return int(p.statesCap.v)
	}
	return solver.AdviceMaxStates
}

// resolveAuto runs the grid search of a checked process with states:
// auto and checks it again with the number of states chosen: the
// smallest that carries the moments (Problem.advice). It reports false,
// naming the states key, when no grid up to the cap does.
func (p *processSpec) resolveAuto(r *reporter) bool {
	if !p.auto.v || p.autoN > 0 {
		return true
	}
	prob := p.problem()
	prob.Settings.States = 0 // no requested number: no width search
	a, err := prob.advice(p.cap())
	if err != nil {
		r.add(p.auto.at, ErrRule, "auto: %v", err)
		return false
	}
	if a.States == 0 {
		r.add(p.auto.at, ErrRule, "auto: %s; give states, raise states_cap, or ask for fewer moments", a)
		return false
	}
	return p.applyAuto(r, a.States)
}

// applyAuto checks the process again with n states chosen by auto.
func (p *processSpec) applyAuto(r *reporter, n int) bool {
	p.autoN = n
	p.baseline = nil
	return p.check(r)
}
