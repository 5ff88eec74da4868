package manifests

import (
	"math"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"gridstage/solver"
)

// lawParam is one numeric parameter of a distribution family.
type lawParam struct {
	key      string
	def      float64 // used when the key is absent and not required
	required bool
	want     string // the valid range, for "missing" messages
	check    func(r *reporter, n num) bool
}

// family is a distribution family as it appears in a manifest:
// law: NAME plus its parameters (or a components list for mixtures).
type family struct {
	name       string
	params     []lawParam
	components bool // a normal mixture given by components
	// build returns the solver's distribution from parameter values in the
	// order of params.
	build func(v []float64, mix solver.Mixture) solver.Distribution
	// cross checks rules between parameters (e.g. upper > lower).
	cross func(r *reporter, l *law) bool
}

var (
	finiteParam   = func(r *reporter, n num) bool { return checkFinite(r, n) }
	positiveParam = func(r *reporter, n num) bool { return checkPositive(r, n) }
	nuParam       = func(r *reporter, n num) bool {
		return checkAbove(r, n, 2, " (the t law needs a finite variance)")
	}
)

// innovationLaws are the laws of an AR(1) innovation z. The tool rescales
// each to mean 0 and variance 1, so only shape parameters appear.
var innovationLaws = []family{
	{name: "normal", build: func([]float64, solver.Mixture) solver.Distribution { return nil }},
	{name: "t", params: []lawParam{{key: "nu", required: true, want: "a finite number > 2", check: nuParam}},
		build: func(v []float64, _ solver.Mixture) solver.Distribution {
			return solver.Standardized{Base: solver.StudentT{Nu: v[0], Scale: 1}}
		}},
	{name: "laplace", build: func([]float64, solver.Mixture) solver.Distribution {
		return solver.Standardized{Base: solver.Laplace{Scale: 1}}
	}},
	{name: "mixture", components: true, build: func(_ []float64, mix solver.Mixture) solver.Distribution {
		return solver.Standardized{Base: mix}
	}},
}

// distributionLaws are the laws an iid process may take, with their
// location and scale.
var distributionLaws = []family{
	{name: "normal", params: []lawParam{
		{key: "mean", def: 0, check: finiteParam},
		{key: "sd", def: 1, check: positiveParam},
	}, build: func(v []float64, _ solver.Mixture) solver.Distribution { return solver.Normal{Mu: v[0], Sigma: v[1]} }},
	{name: "lognormal", params: []lawParam{
		{key: "log_mean", def: 0, check: finiteParam},
		{key: "log_sd", def: 1, check: positiveParam},
	}, build: func(v []float64, _ solver.Mixture) solver.Distribution {
		return solver.LogNormal{Mu: v[0], Sigma: v[1]}
	}},
	{name: "beta", params: []lawParam{
		{key: "alpha", required: true, want: "a finite number > 0", check: positiveParam},
		{key: "beta", required: true, want: "a finite number > 0", check: positiveParam},
		{key: "lower", def: 0, check: finiteParam},
		{key: "upper", def: 1, check: finiteParam},
	}, build: func(v []float64, _ solver.Mixture) solver.Distribution {
		return solver.Beta{Alpha: v[0], Beta: v[1], Lo: v[2], Hi: v[3]}
	}, cross: func(r *reporter, l *law) bool {
		lo, hi := l.values[2], l.values[3]
		if !(hi.v > lo.v) {
			r.add(hi.at, ErrRule, "%s is out of range: want a number above lower (%s)", hi, lo)
			return false
		}
		return true
	}},
	{name: "mixture", components: true, build: func(_ []float64, mix solver.Mixture) solver.Distribution {
		return mix
	}},
	{name: "t", params: []lawParam{
		{key: "nu", required: true, want: "a finite number > 2", check: nuParam},
		{key: "location", def: 0, check: finiteParam},
		{key: "scale", def: 1, check: positiveParam},
	}, build: func(v []float64, _ solver.Mixture) solver.Distribution {
		return solver.StudentT{Nu: v[0], Loc: v[1], Scale: v[2]}
	}},
	{name: "laplace", params: []lawParam{
		{key: "location", def: 0, check: finiteParam},
		{key: "scale", def: 1, check: positiveParam},
	}, build: func(v []float64, _ solver.Mixture) solver.Distribution {
		return solver.Laplace{Loc: v[0], Scale: v[1]}
	}},
}

func familyNames(fs []family) []string {
	out := make([]string, len(fs))
	for i, f := range fs {
		out[i] = f.name
	}
	return out
}

// component is one normal component of a mixture.
type component struct {
	at               loc
	weight, mean, sd num
}

// law is a distribution as written: a family and its parameter values.
type law struct {
	fam    *family // nil when the family is unknown (already reported)
	at     loc
	values []num // parallel to fam.params
	comps  []component
	compAt loc // the components list
}

// decodeLaw reads the law under key in m. An absent key gives the first
// family with no parameters set (the normal law) when optional is true.
func decodeLaw(m *mapping, key string, families []family, optional bool) *law {
	n := m.get(key)
	names := familyNames(families)
	if n == nil {
		if optional {
			return &law{fam: &families[0], at: m.d.at(m.node, m.field(key))}
		}
		m.missing(key, "a mapping with law: one of "+joinNames(names))
		return nil
	}
	return m.d.decodeLawNode(n, m.field(key), families)
}

// decodeLawNode reads the law held by node n (a mapping with law: NAME)
// at the field path path.
func (d *decoder) decodeLawNode(n *yaml.Node, path string, families []family) *law {
	names := familyNames(families)
	sub := d.mapping(n, path, "a mapping with law: one of "+joinNames(names))
	if sub == nil {
		return nil
	}
	l := &law{at: d.at(n, path)}
	name := sub.choice("law", names)
	if !name.set {
		if !sub.has("law") {
			sub.missing("law", "one of "+joinNames(names))
		}
		return nil
	}
	for i := range families {
		if families[i].name == name.v {
			l.fam = &families[i]
		}
	}
	for _, p := range l.fam.params {
		l.values = append(l.values, sub.number(p.key))
	}
	if l.fam.components {
		l.decodeComponents(sub)
	}
	sub.finish(func(k string) string {
		var owners []string
		for _, f := range families {
			for _, p := range f.params {
				if p.key == k {
					owners = append(owners, f.name)
				}
			}
			if f.components && k == "components" {
				owners = append(owners, f.name)
			}
		}
		switch len(owners) {
		case 0:
			return ""
		case 1:
			return k + " belongs to the " + owners[0] + " law, not " + l.fam.name
		}
		return k + " belongs to the " + strings.Join(owners[:len(owners)-1], ", ") + " and " + owners[len(owners)-1] + " laws, not " + l.fam.name
	})
	return l
}

func (l *law) decodeComponents(sub *mapping) {
	l.compAt = sub.d.at(sub.node, sub.field("components"))
	list, ok := sub.list("components", "a list of {weight, mean, sd}")
	if !ok {
		if !sub.has("components") {
			sub.missing("components", "a list of {weight, mean, sd}")
		}
		return
	}
	l.compAt = sub.d.at(list, sub.field("components"))
	if len(list.Content) == 0 {
		sub.d.r.add(l.compAt, ErrRange, "the list is empty: want at least one component")
	}
	for i, item := range list.Content {
		path := joinIndex(sub.field("components"), i)
		cm := sub.d.mapping(item, path, "a mapping {weight, mean, sd}")
		if cm == nil {
			continue
		}
		c := component{at: sub.d.at(resolve(item), path), weight: cm.number("weight"), mean: cm.number("mean"), sd: cm.number("sd")}
		for _, k := range []string{"weight", "mean", "sd"} {
			if !cm.has(k) {
				cm.missing(k, map[string]string{"weight": "a probability in (0, 1]", "mean": "a finite number", "sd": "a finite number > 0"}[k])
			}
		}
		cm.finish(nil)
		l.comps = append(l.comps, c)
	}
}

func (l *law) clone() *law {
	if l == nil {
		return nil
	}
	c := *l
	c.values = append([]num(nil), l.values...)
	c.comps = append([]component(nil), l.comps...)
	return &c
}

// params registers the law's numeric parameters under prefix.
func (l *law) params(prefix string, add func(string, *num)) {
	if l == nil || l.fam == nil {
		return
	}
	for i, p := range l.fam.params {
		add(prefix+"."+p.key, &l.values[i])
	}
	for i := range l.comps {
		c := &l.comps[i]
		base := prefix + ".components[" + strconv.Itoa(i) + "]."
		add(base+"weight", &c.weight)
		add(base+"mean", &c.mean)
		add(base+"sd", &c.sd)
	}
}

// check fills defaults and validates the values; it returns false if any
// value is invalid.
func (l *law) check(r *reporter) bool {
	if l == nil || l.fam == nil {
		return false
	}
	ok := true
	for i, p := range l.fam.params {
		v := &l.values[i]
		if !v.set && !v.bad && !p.required {
			v.v = p.def
			ok = p.check(r, *v) && ok
			continue
		}
		ok = present(r, *v, l.at, p.key, p.want) && p.check(r, *v) && ok
	}
	if l.fam.components && len(l.comps) > 0 {
		var total float64
		for _, c := range l.comps {
			if c.weight.set && !(c.weight.v > 0 && c.weight.v <= 1) {
				r.add(c.weight.at, ErrRange, "%s is out of range: want a probability in (0, 1]", c.weight)
				ok = false
			}
			if c.mean.set {
				ok = checkFinite(r, c.mean) && ok
			}
			if c.sd.set {
				ok = checkPositive(r, c.sd) && ok
			}
			// Absent or mistyped fields were reported while decoding.
			ok = ok && c.weight.set && c.mean.set && c.sd.set
			total += c.weight.v
		}
		if ok && math.Abs(total-1) > 1e-9 {
			r.add(l.compAt, ErrRule, "the weights sum to %s: want 1 (within 1e-9)", formatNumber(total))
			ok = false
		}
	} else if l.fam.components {
		ok = false
	}
	if ok && l.fam.cross != nil {
		ok = l.fam.cross(r, l)
	}
	return ok
}

// dist returns the solver's distribution; valid only after check passed.
func (l *law) dist() solver.Distribution {
	v := make([]float64, len(l.values))
	for i, n := range l.values {
		v[i] = n.v
	}
	var mix solver.Mixture
	for _, c := range l.comps {
		mix.Weights = append(mix.Weights, c.weight.v)
		mix.Means = append(mix.Means, c.mean.v)
		mix.SDs = append(mix.SDs, c.sd.v)
	}
	return l.fam.build(v, mix)
}

// canonical returns the law's canonical object.
func (l *law) canonical() object {
	o := object{"law": l.fam.name}
	for i, p := range l.fam.params {
		o[p.key] = l.values[i].v
	}
	if l.fam.components {
		list := make([]any, len(l.comps))
		for i, c := range l.comps {
			list[i] = object{"weight": c.weight.v, "mean": c.mean.v, "sd": c.sd.v}
		}
		o["components"] = list
	}
	return o
}

func joinNames(names []string) string {
	s := ""
	for i, n := range names {
		if i > 0 {
			s += ", "
		}
		s += n
	}
	return s
}

// momentLimit returns how many moments of l are finite (at most 8) and, if
// fewer than 8, why; role names the law in the process ("innovation").
func momentLimit(l *law, role string) (int, string) {
	limit := solver.MaxMoments(l.dist())
	if limit >= 8 {
		return limit, ""
	}
	why := "the " + l.fam.name + " " + role + " has no finite moment of order " + strconv.Itoa(limit+1)
	if l.fam.name == "t" {
		why += " (that needs nu > " + strconv.Itoa(limit+1) + "; nu is " + l.values[0].String() + ")"
	}
	return limit, why
}
