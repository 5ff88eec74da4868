package manifests

import (
	"fmt"
	"math"
	"regexp"
	"strings"

	"go.yaml.in/yaml/v3"

	"gridstage/solver"
)

// defaultStates is the number of grid points when a process gives none.
const defaultStates = 9

// namePattern keeps run and process names usable in file names on every
// system: letters, digits, '.', '_' and '-', starting with a letter or digit.
var namePattern = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$`)

const nameWant = "a name of 1 to 64 letters, digits, '.', '_' or '-', starting with a letter or digit"

// processRole says where a process mapping appears.
type processRole int

const (
	// roleEntry is an entry of the manifest's processes: it has a name
	// and may have a sweep.
	roleEntry processRole = iota
	// roleSpec is a canonical spec read back: no name, no sweep.
	roleSpec
	// roleComponent is a component of a product: no name, no sweep, no
	// baseline, and only the kinds in componentKinds.
	roleComponent
)

// processSpec is one process as written, or as set for one sweep point.
type processSpec struct {
	at                     loc // the process mapping
	role                   processRole
	name, kind             str
	method, nodes, compare str
	matching               str
	states, moments, width num
	floden                 toggle
	// auto is set by states: auto, and statesCap by states_cap; autoN is
	// the number of states the grid search chose (0 before it ran).
	auto      toggle
	statesCap num
	// sensitivities asks for the chains' parameter derivatives as a table
	// of their own (entries only: an output choice, not part of the spec).
	sensitivities toggle
	autoN         int
	spec          kindSpec // nil when the kind is unknown
	sweep         *sweepSpec

	// Filled by check.
	settings solver.Settings
	baseline *solver.Settings
}

// decodeProcess reads processes[i] (or a canonical spec, or a component
// of a product, as role says). It returns nil if the entry is not a
// mapping.
func (d *decoder) decodeProcess(n *yaml.Node, path string, role processRole) *processSpec {
	m := d.mapping(n, path, "a mapping describing a process")
	if m == nil {
		return nil
	}
	needName := role == roleEntry
	p := &processSpec{at: d.at(m.node, path), role: role}
	if needName {
		p.sensitivities = m.boolean("sensitivities")
		p.name = m.text("name", nameWant)
		if !p.name.set && !m.has("name") {
			m.missing("name", nameWant)
		} else if p.name.set && !namePattern.MatchString(p.name.v) {
			d.r.add(p.name.at, ErrRange, "%q is not a valid name: want %s", p.name.v, nameWant)
		}
	}
	p.kind = m.choice("kind", kindNames())
	if !m.has("kind") {
		m.missing("kind", "one of "+strings.Join(kindNames(), ", "))
	}
	p.method = m.choice("method", solver.MethodNames())
	p.states, p.auto = m.statesValue()
	p.statesCap = m.number("states_cap")
	p.moments = m.number("moments")
	p.nodes = m.choice("nodes", solver.NodeRuleNames())
	p.matching = m.choice("matching", solver.MatchingNames())
	p.width = m.number("width")
	p.floden = m.boolean("floden")
	p.compare = m.choice("compare", append(solver.MethodNames(), "none"))
	if p.kind.set && role == roleComponent && !contains(componentKinds, p.kind.v) {
		d.r.add(p.kind.at, ErrRule, "kind %s cannot be a component of a product: want %s", p.kind.v, strings.Join(componentKinds, ", "))
		p.kind.set, p.kind.bad = false, true
	}
	if !p.kind.set {
		// Without a kind the other keys cannot be judged; mark them known
		// so that only the kind is reported.
		for _, k := range kinds {
			for _, key := range k.keys {
				m.get(key)
			}
		}
		m.get("sweep")
		if !needName {
			m.get("name")
		}
		m.finish(nil)
		return p
	}
	info, _ := lookupKind(p.kind.v)
	p.spec = info.new()
	p.spec.decode(m)
	if sn := m.get("sweep"); sn != nil {
		switch role {
		case roleSpec:
			d.r.add(d.at(sn, m.field("sweep")), ErrUnknown, "a canonical spec has no sweep")
		case roleComponent:
			d.r.add(d.at(sn, m.field("sweep")), ErrUnknown, "a component has no sweep of its own: sweep the product's parameters (components[0].rho, …)")
		default:
			p.sweep = d.decodeSweep(sn, m.field("sweep"), p)
		}
	}
	m.finish(func(k string) string {
		for _, o := range kinds {
			if o.name != p.kind.v && contains(o.keys, k) {
				return fmt.Sprintf("%s belongs to kind %s, not %s", k, o.name, p.kind.v)
			}
		}
		return ""
	})
	if p.sensitivities.v {
		p.checkSensitivities(d.r)
	}
	return p
}

// clone returns a deep copy for one sweep point.
func (p *processSpec) clone() *processSpec {
	c := *p
	if p.spec != nil {
		c.spec = p.spec.clone()
	}
	c.baseline = nil
	return &c
}

// params returns the numeric parameters a sweep may set, in a stable order,
// and a pointer to each.
func (p *processSpec) params() ([]string, map[string]*num) {
	var names []string
	refs := map[string]*num{}
	add := func(name string, n *num) {
		names = append(names, name)
		refs[name] = n
	}
	if p.spec != nil {
		p.spec.params(add)
	}
	add("states", &p.states)
	add("moments", &p.moments)
	add("width", &p.width)
	return names, refs
}

// check validates the process for one point, fills in every default and
// sets settings and baseline. It reports false on any error.
func (p *processSpec) check(r *reporter) bool {
	if p.spec == nil {
		return false
	}
	ok := p.spec.check(r, p.at)
	if p.method.bad || p.nodes.bad || p.matching.bad || p.compare.bad {
		// Already reported; rules that depend on them would only add noise.
		return false
	}
	if _, composite := p.spec.(compositeKind); composite {
		return p.checkComposite(r, ok)
	}

	methods := p.spec.methods()
	method := methods[0]
	if p.method.set {
		m, _ := solver.ParseMethod(p.method.v)
		if !containsMethod(methods, m) {
			r.add(p.method.at, ErrRule, "%s does not apply to kind %s: want %s", m, p.kind.v, methodList(methods))
			return false
		}
		method = m
	}
	maxent := method == solver.MaxEnt

	ok = p.checkAuto(r, method) && ok
	switch {
	case p.autoN > 0:
		p.states.v = float64(p.autoN)
	case p.states.set:
		ok = checkInt(r, p.states, 2, solver.MaxStates) && ok
	default:
		// With states: auto, a provisional value until the search runs.
		p.states.v = defaultStates
	}

	if p.role == roleSpec && p.moments.set && p.moments.v == solver.NoMoments {
		// A canonical spec records moments 0 as solver.NoMoments.
		p.moments.v = 0
	}
	if p.moments.set {
		switch {
		case !maxent:
			r.add(p.moments.at, ErrRule, "applies to method maxent only: %s matches a fixed set of moments", method)
			ok = false
		case !checkInt(r, p.moments, 0, 8):
			ok = false
		case p.moments.v == 0 && !priorKind(p.spec):
			r.add(p.moments.at, ErrRule, "0 (the node rule's own weights, no moment matched) applies to kinds ar1 and iid only")
			ok = false
		case ok:
			if limit, why := p.spec.momentLimit(); int(p.moments.v) > limit {
				r.add(p.moments.at, ErrRule, "%s is out of range: want an integer from 1 to %d, since %s", p.moments, limit, why)
				ok = false
			}
		}
	} else if maxent && ok {
		limit, _ := p.spec.momentLimit()
		def := 4
		if md, has := p.spec.(momentDefaulter); has {
			def = md.defaultMoments()
		}
		p.moments.v = float64(min(def, limit))
	}

	nodes := solver.NodesLattice
	if p.nodes.set {
		if !maxent {
			r.add(p.nodes.at, ErrRule, "applies to method maxent only: %s places its own grid", method)
			ok = false
		}
		nodes, _ = solver.ParseNodeRule(p.nodes.v)
	}

	matching := solver.MatchExact
	if p.matching.set {
		if !maxent {
			r.add(p.matching.at, ErrRule, "applies to method maxent only: %s solves no moment-matching problem", method)
			ok = false
		}
		matching, _ = solver.ParseMatching(p.matching.v)
	}

	widthApplies := method == solver.Tauchen || (maxent && (nodes == solver.NodesLattice || nodes == solver.NodesGaussLegendre))
	if p.width.set {
		switch {
		case !checkPositive(r, p.width):
			ok = false
		case !maxent && !widthApplies:
			r.add(p.width.at, ErrRule, "does not apply to method %s: it sets its own grid", method)
			ok = false
		case !widthApplies:
			r.add(p.width.at, ErrRule, "applies to lattice and gauss-legendre nodes only: %s nodes have no width", nodes)
			ok = false
		}
	} else if ok {
		switch {
		case method == solver.Tauchen:
			p.width.v = solver.DefaultTauchenWidth
		case widthApplies:
			p.width.v = solver.DefaultWidth(int(p.states.v))
		}
	}

	if p.floden.set && p.floden.v && method != solver.TauchenHussey {
		r.add(p.floden.at, ErrRule, "applies to method tauchen-hussey only")
		ok = false
	}

	var base solver.Method
	hasBase := false
	switch {
	case p.role == roleComponent:
		if p.compare.set && p.compare.v != "none" {
			r.add(p.compare.at, ErrRule, "a component has no baseline of its own: want none, or leave compare out")
			ok = false
		}
	case p.compare.set && p.compare.v == "none":
	case p.compare.set:
		base, _ = solver.ParseMethod(p.compare.v)
		if !containsMethod(p.spec.baselines(), base) {
			want := "none"
			if bl := p.spec.baselines(); len(bl) > 0 {
				want = methodList(bl) + " or none"
			}
			r.add(p.compare.at, ErrRule, "%s is not a baseline for kind %s: want %s", base, p.kind.v, want)
			ok = false
		}
		hasBase = true
	default:
		base, hasBase = p.spec.defaultBaseline(method)
	}

	ok = ok && p.spec.rules(r, p) && checkNumericRanges(r, p)
	if !ok {
		return false
	}
	p.settings = solver.Settings{
		States: int(p.states.v), Method: method, Nodes: nodes, Matching: matching,
		Width: p.width.v, Floden: p.floden.v && method == solver.TauchenHussey,
	}
	if maxent {
		p.settings.Moments = int(p.moments.v)
		if p.moments.set && p.moments.v == 0 {
			p.settings.Moments = solver.NoMoments
		}
	}
	if sk, has := p.spec.(settingsKind); has {
		sk.settings(&p.settings)
	}
	if hasBase {
		p.baseline = &solver.Settings{States: int(p.states.v), Method: base}
	}
	return true
}

// checkComposite checks a kind whose components carry their own settings:
// none of the common settings keys applies, and there is no baseline.
// kindOK is the result of the kind's own check.
func (p *processSpec) checkComposite(r *reporter, kindOK bool) bool {
	ok := kindOK
	why := fmt.Sprintf("does not apply to kind %s: each component sets its own", p.kind.v)
	for _, at := range []struct {
		set bool
		at  loc
	}{{p.method.set, p.method.at}, {p.states.set || p.states.bad || p.auto.set, p.states.at}, {p.statesCap.set || p.statesCap.bad, p.statesCap.at},
		{p.moments.set || p.moments.bad, p.moments.at},
		{p.nodes.set, p.nodes.at}, {p.matching.set, p.matching.at}, {p.width.set || p.width.bad, p.width.at}, {p.floden.set, p.floden.at}} {
		if at.set {
			r.add(at.at, ErrRule, "%s", why)
			ok = false
		}
	}
	if p.compare.set && p.compare.v != "none" {
		r.add(p.compare.at, ErrRule, "kind %s has no baseline: want none, or leave compare out", p.kind.v)
		ok = false
	}
	ok = ok && p.spec.rules(r, p) && checkNumericRanges(r, p)
	if !ok {
		return false
	}
	p.settings = solver.Settings{}
	return true
}

// chosenMethod is the method the process asks for (its kind's default when
// it names none). Valid once the method key decoded without error.
func (p *processSpec) chosenMethod() solver.Method {
	if p.method.set {
		m, _ := solver.ParseMethod(p.method.v)
		return m
	}
	return p.spec.methods()[0]
}

// defaultWidth reports that the process's grid has a width that follows
// the default rule √(N−1): not given, or given equal to it (a canonical
// spec always gives the width). Valid after check passed.
func (p *processSpec) defaultWidth() bool {
	s := p.settings
	if s.Method != solver.MaxEnt || (s.Nodes != solver.NodesLattice && s.Nodes != solver.NodesGaussLegendre) {
		return false
	}
	return !p.width.set || math.Abs(s.Width-solver.DefaultWidth(s.States)) <= 1e-12*s.Width
}

// chainStates returns the number of states of the process's chain. Valid
// after check passed.
func (p *processSpec) chainStates() int {
	if sc, ok := p.spec.(stateCounter); ok {
		return sc.chainStates(p.settings)
	}
	return p.settings.States
}

func containsMethod(list []solver.Method, m solver.Method) bool {
	for _, x := range list {
		if x == m {
			return true
		}
	}
	return false
}

func methodList(list []solver.Method) string {
	names := make([]string, len(list))
	for i, m := range list {
		names[i] = m.String()
	}
	return strings.Join(names, ", ")
}

// canonicalSpec returns the job's canonical spec object: the fields that
// affect numbers, with every default filled in. Valid after check.
func (p *processSpec) canonicalSpec() object {
	if _, composite := p.spec.(compositeKind); composite {
		o := object{"kind": p.kind.v, "compare": "none"}
		p.spec.canonical(o)
		return o
	}
	s := p.settings
	o := object{"kind": p.kind.v, "method": s.Method.String(), "states": s.States}
	switch s.Method {
	case solver.MaxEnt:
		o["moments"] = s.Moments
		o["nodes"] = s.Nodes.String()
		// The exact policy, the default, is left out so that specs written
		// before there was a choice keep their hashes.
		if s.Matching != solver.MatchExact {
			o["matching"] = s.Matching.String()
		}
		// Width 0: a law on a bounded support, gridded on all of it.
		if (s.Nodes == solver.NodesLattice || s.Nodes == solver.NodesGaussLegendre) && s.Width > 0 {
			o["width"] = s.Width
		}
	case solver.Tauchen:
		o["width"] = s.Width
	case solver.TauchenHussey:
		o["floden"] = s.Floden
	}
	o["compare"] = "none"
	if p.baseline != nil {
		o["compare"] = p.baseline.Method.String()
	}
	p.spec.canonical(o)
	return o
}

// priorKind reports whether a kind accepts moments: 0, the quadrature
// rule's own weights with no moment matched (solver.NoMoments).
func priorKind(s kindSpec) bool {
	switch s.(type) {
	case *ar1Spec, *iidSpec:
		return true
	}
	return false
}
