package manifests

import (
	"math/big"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// maxJobs bounds the jobs of one manifest (all processes and sweep points),
// so that a typo in a range cannot ask for billions of chains. A million
// is the estimation scale docs/BENCHMARKS.md plans for; a loaded job costs
// about 250 bytes.
const maxJobs = 1000000

// sweepSpec is a process's sweep: Cartesian axes and a table of draws. The
// points are every draw (in file order) combined with every combination of
// the axes, the last axis varying fastest.
type sweepSpec struct {
	at    loc
	axes  []axis
	draws *drawTable
	// broken marks a sweep with errors of its own: its points are unknown,
	// so the process is not checked point by point.
	broken bool
}

// axis is one swept parameter of the Cartesian part.
type axis struct {
	name   string
	at     loc
	values []num
}

// points returns the number of sweep points.
func (s *sweepSpec) points() int {
	n := 1
	if s.draws != nil {
		n = s.draws.numRows()
	}
	for _, a := range s.axes {
		n *= len(a.values)
		if n > maxJobs {
			return maxJobs + 1
		}
	}
	return n
}

const sweepWant = "a mapping with vary (parameter lists or ranges), draws (a CSV or Parquet table), or both"

// decodeSweep reads a process's sweep. Parameter names are checked against
// the process's numeric parameters.
func (d *decoder) decodeSweep(n *yaml.Node, path string, p *processSpec) *sweepSpec {
	m := d.mapping(n, path, sweepWant)
	if m == nil {
		return nil
	}
	s := &sweepSpec{at: d.at(m.node, path)}
	before := d.r.count()
	defer func() { s.broken = d.r.count() > before }()
	names, _ := p.params()
	if vn := m.get("vary"); vn != nil {
		vm := d.mapping(vn, m.field("vary"), "a mapping from parameter names to lists or ranges")
		if vm != nil {
			for _, key := range vm.order {
				e := vm.entries[key]
				vm.get(key)
				apath := vm.field(key)
				if !contains(names, key) {
					d.r.add(d.at(e.key, apath), ErrUnknown, "unknown parameter: %s", hint(key, names))
					continue
				}
				if values := d.decodeAxis(resolve(e.val), apath); values != nil {
					s.axes = append(s.axes, axis{name: key, at: d.at(e.key, apath), values: values})
				}
			}
			if len(vm.order) == 0 {
				d.r.add(d.at(vm.node, vm.path), ErrMissing, "the mapping is empty: want at least one parameter")
			}
		}
	}
	if dn := m.get("draws"); dn != nil {
		s.draws = d.decodeDraws(dn, m.field("draws"), names)
	}
	if !m.has("vary") && !m.has("draws") {
		d.r.add(s.at, ErrMissing, "nothing to sweep: want vary, draws or both")
	}
	m.finish(nil)
	if s.draws != nil {
		for _, a := range s.axes {
			if contains(s.draws.columns, a.name) {
				d.r.add(a.at, ErrDuplicate, "%s is also a column of the draw table %s: sweep it in one place", a.name, s.draws.file)
			}
		}
	}
	return s
}

// decodeAxis reads a list of numbers or a range.
func (d *decoder) decodeAxis(n *yaml.Node, path string) []num {
	switch n.Kind {
	case yaml.SequenceNode:
		if len(n.Content) == 0 {
			d.r.add(d.at(n, path), ErrRange, "the list is empty: want at least one number")
			return nil
		}
		var out []num
		first := map[float64]int{}
		for i, item := range n.Content {
			item = resolve(item)
			v := d.number(item, joinIndex(path, i))
			if !v.set {
				continue
			}
			if line, dup := first[v.v]; dup {
				d.r.add(v.at, ErrDuplicate, "%s is repeated: first given at line %d", v, line)
				continue
			}
			first[v.v] = item.Line
			out = append(out, v)
		}
		if len(out) > maxJobs {
			d.r.add(d.at(n, path), ErrRange, "the list has %d values: want at most %d", len(out), maxJobs)
			return nil
		}
		return out
	case yaml.MappingNode:
		return d.decodeRange(n, path)
	}
	d.r.add(d.at(n, path), ErrType, "the value is %s: want a list of numbers or a range {from, to, step or count}", describe(n))
	return nil
}

// decodeRange expands {from, to, step} or {from, to, count}. The values are
// computed in exact rational arithmetic from the decimals as written and
// rounded once to float64, so from 0.9 by 0.01 gives 0.93, not
// 0.9299999999999999. Both ends are included (the upper one when it falls
// on a step).
func (d *decoder) decodeRange(n *yaml.Node, path string) []num {
	m := d.mapping(n, path, "a range")
	from, to := m.number("from"), m.number("to")
	step, count := m.number("step"), m.number("count")
	m.finish(nil)
	at := d.at(n, path)
	ok := present(d.r, from, at, "from", "a finite number") && checkFinite(d.r, from)
	ok = present(d.r, to, at, "to", "a finite number") && checkFinite(d.r, to) && ok
	switch {
	case step.set && count.set:
		d.r.add(count.at, ErrRule, "give step or count, not both")
		return nil
	case !step.set && !count.set:
		if !step.bad && !count.bad {
			d.r.add(at, ErrMissing, "missing step or count: want one of them")
		}
		return nil
	case step.set:
		ok = checkPositive(d.r, step) && ok
	default:
		ok = checkInt(d.r, count, 2, maxJobs) && ok
	}
	if !ok {
		return nil
	}
	if to.v < from.v {
		d.r.add(to.at, ErrRange, "%s is out of range: want a number ≥ from (%s)", to, from)
		return nil
	}
	lo, hi := exact(from), exact(to)
	span := new(big.Rat).Sub(hi, lo)
	var inc *big.Rat
	var k int64
	if step.set {
		inc = exact(step)
		q := new(big.Rat).Quo(span, inc)
		fl := new(big.Int).Quo(q.Num(), q.Denom()) // floor: q ≥ 0
		if !fl.IsInt64() || fl.Int64() >= maxJobs {
			d.r.add(step.at, ErrRange, "%s gives more than %d values from %s to %s: want a larger step", step, maxJobs, from, to)
			return nil
		}
		k = fl.Int64() + 1
	} else {
		k = int64(count.v)
		inc = new(big.Rat).Quo(span, new(big.Rat).SetInt64(k-1))
	}
	out := make([]num, k)
	x := new(big.Rat)
	for i := int64(0); i < k; i++ {
		x.Mul(inc, new(big.Rat).SetInt64(i))
		x.Add(x, lo)
		v, _ := x.Float64()
		out[i] = num{v: v, text: formatNumber(v), at: at, set: true}
	}
	return out
}

// exact returns the number as the exact decimal written in the manifest,
// or the float64's exact value when the text is not a short plain decimal.
// Long texts and huge exponents are refused because the exact value of
// "1e-1000000" takes seconds to build.
func exact(n num) *big.Rat {
	if shortDecimal(n.text) {
		if r, ok := new(big.Rat).SetString(n.text); ok {
			if f, _ := r.Float64(); f == n.v {
				return r
			}
		}
	}
	return new(big.Rat).SetFloat64(n.v)
}

// shortDecimal accepts texts of at most 40 bytes with digits, sign and
// point, and an exponent of at most 400 in size.
func shortDecimal(s string) bool {
	if s == "" || len(s) > 40 {
		return false
	}
	mant, exp, hasExp := strings.Cut(strings.ToLower(s), "e")
	if strings.Trim(mant, "+-.0123456789") != "" {
		return false
	}
	if !hasExp {
		return true
	}
	e, err := strconv.Atoi(exp)
	return err == nil && e >= -400 && e <= 400
}
