package manifests

import (
	"math"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// decoder walks a YAML node tree and records every problem with its
// position. Its methods never stop at the first error.
type decoder struct {
	file string // the manifest's name in messages
	dir  string // the folder relative paths are resolved against
	r    *reporter
}

func (d *decoder) at(n *yaml.Node, path string) loc {
	return loc{pos: Pos{File: d.file, Line: n.Line, Column: n.Column}, path: path}
}

// resolve follows aliases to the node they name.
func resolve(n *yaml.Node) *yaml.Node {
	for i := 0; n != nil && n.Kind == yaml.AliasNode && i < 100; i++ {
		n = n.Alias
	}
	return n
}

// describe names what a node holds, for "… is X: want Y" messages.
func describe(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		switch n.Tag {
		case "!!null":
			return "empty"
		case "!!bool":
			return n.Value + " (a boolean)"
		case "!!int", "!!float":
			return n.Value + " (a number)"
		case "!!str":
			return strconv.Quote(n.Value) + " (text)"
		}
		return strconv.Quote(n.Value) + " (" + strings.TrimPrefix(n.Tag, "!!") + ")"
	}
	return "an unexpected node"
}

// joinKey appends a key to a field path.
func joinKey(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// joinIndex appends a list index to a field path.
func joinIndex(path string, i int) string { return path + "[" + strconv.Itoa(i) + "]" }

type entry struct{ key, val *yaml.Node }

// mapping is a YAML mapping under decoding. Every key a caller asks for
// becomes known; finish reports the keys nobody asked for.
type mapping struct {
	d       *decoder
	node    *yaml.Node
	path    string
	order   []string
	entries map[string]entry
	known   []string
}

// mapping checks that n is a mapping and indexes its keys, reporting
// repeated keys and applying YAML merge keys (<<), whose entries yield to
// the mapping's own. It returns nil (after reporting) if n is not a mapping.
func (d *decoder) mapping(n *yaml.Node, path, want string) *mapping {
	n = resolve(n)
	if n == nil || n.Kind != yaml.MappingNode {
		if n != nil {
			d.r.add(d.at(n, path), ErrType, "the value is %s: want %s", describe(n), want)
		}
		return nil
	}
	m := &mapping{d: d, node: n, path: path, entries: map[string]entry{}}
	var merges []*yaml.Node
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := resolve(n.Content[i]), n.Content[i+1]
		if k.Kind != yaml.ScalarNode {
			d.r.add(d.at(k, path), ErrType, "a key is %s: want a name", describe(k))
			continue
		}
		if k.Tag == "!!merge" {
			merges = append(merges, v)
			continue
		}
		if first, dup := m.entries[k.Value]; dup {
			d.r.add(d.at(k, joinKey(path, k.Value)), ErrDuplicate, "key repeated: first given at line %d", first.key.Line)
			continue
		}
		m.entries[k.Value] = entry{k, v}
		m.order = append(m.order, k.Value)
	}
	for _, v := range merges {
		m.merge(v, 0)
	}
	return m
}

// merge adds the entries of a merged mapping (or list of mappings) that the
// mapping does not set itself.
func (m *mapping) merge(v *yaml.Node, depth int) {
	v = resolve(v)
	if v == nil || depth > 10 {
		return
	}
	switch v.Kind {
	case yaml.SequenceNode:
		for _, item := range v.Content {
			m.merge(item, depth+1)
		}
	case yaml.MappingNode:
		for i := 0; i+1 < len(v.Content); i += 2 {
			k := resolve(v.Content[i])
			if k.Kind != yaml.ScalarNode {
				continue
			}
			if k.Tag == "!!merge" {
				m.merge(v.Content[i+1], depth+1)
				continue
			}
			if _, ok := m.entries[k.Value]; !ok {
				m.entries[k.Value] = entry{k, v.Content[i+1]}
				m.order = append(m.order, k.Value)
			}
		}
	default:
		m.d.r.add(m.d.at(v, m.path), ErrType, "merge key << refers to %s: want a mapping", describe(v))
	}
}

// get marks key as known and returns its value node (resolved), or nil.
func (m *mapping) get(key string) *yaml.Node {
	m.known = append(m.known, key)
	e, ok := m.entries[key]
	if !ok {
		return nil
	}
	return resolve(e.val)
}

// has reports whether key is present without marking it known.
func (m *mapping) has(key string) bool { _, ok := m.entries[key]; return ok }

func (m *mapping) field(key string) string { return joinKey(m.path, key) }

// missing reports a required key that is absent, at the mapping.
func (m *mapping) missing(key, want string) {
	m.d.r.add(m.d.at(m.node, m.field(key)), ErrMissing, "missing: want %s", want)
}

// finish reports every key no caller asked for, with the closest known key.
// other, if not nil, may explain a key that belongs elsewhere.
func (m *mapping) finish(other func(key string) string) {
	for _, k := range m.order {
		if contains(m.known, k) {
			continue
		}
		e := m.entries[k]
		msg := "unknown key: " + hint(k, unique(m.known))
		if other != nil {
			if s := other(k); s != "" {
				msg = "unknown key: " + s
			}
		}
		m.d.r.add(m.d.at(e.key, m.field(k)), ErrUnknown, "%s", msg)
	}
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func unique(list []string) []string {
	var out []string
	for _, s := range list {
		if !contains(out, s) {
			out = append(out, s)
		}
	}
	return out
}

// str is a text value with where it came from.
type str struct {
	v   string
	at  loc
	set bool
	bad bool // present but not valid (already reported)
}

// text reads a text value. An absent key gives the zero str (set false).
func (m *mapping) text(key, want string) str {
	n := m.get(key)
	if n == nil {
		return str{at: m.d.at(m.node, m.field(key))}
	}
	at := m.d.at(n, m.field(key))
	if n.Kind != yaml.ScalarNode || n.Tag != "!!str" {
		m.d.r.add(at, ErrType, "the value is %s: want %s", describe(n), want)
		return str{at: at, bad: true}
	}
	return str{v: n.Value, at: at, set: true}
}

// choice reads a text value that must be one of names.
func (m *mapping) choice(key string, names []string) str {
	s := m.text(key, "one of "+strings.Join(names, ", "))
	if s.set && !contains(names, s.v) {
		m.d.r.add(s.at, ErrUnknown, "%q is not recognised: %s", s.v, hint(s.v, names))
		s.set, s.bad = false, true
	}
	return s
}

// num is a number with where it came from. text is the number as written,
// used in messages.
type num struct {
	v    float64
	text string
	at   loc
	set  bool
	bad  bool // present but not a number (already reported)
}

func (n num) String() string {
	if n.text != "" {
		return n.text
	}
	return formatNumber(n.v)
}

// number reads a numeric value; an absent key gives the zero num.
func (m *mapping) number(key string) num {
	n := m.get(key)
	if n == nil {
		return num{at: m.d.at(m.node, m.field(key))}
	}
	return m.d.number(n, m.field(key))
}

// number decodes a scalar node holding a number.
func (d *decoder) number(n *yaml.Node, path string) num {
	at := d.at(n, path)
	if n.Kind == yaml.ScalarNode && (n.Tag == "!!str" || n.Tag == "!!float") {
		if p := rangeProblem(n.Value); p != "" {
			d.r.add(at, ErrRange, "%s %s", n.Value, p)
			return num{at: at, bad: true}
		}
	}
	if n.Kind != yaml.ScalarNode || (n.Tag != "!!int" && n.Tag != "!!float") {
		d.r.add(at, ErrType, "the value is %s: want a number", describe(n))
		return num{at: at, bad: true}
	}
	var v float64
	if err := n.Decode(&v); err != nil {
		// Integers beyond the float range of YAML's int resolver, for one.
		d.r.add(at, ErrType, "%s is not a number the tool can read", n.Value)
		return num{at: at, bad: true}
	}
	return num{v: v, text: n.Value, at: at, set: true}
}

// toggle is a boolean with where it came from.
type toggle struct {
	v   bool
	at  loc
	set bool
}

func (m *mapping) boolean(key string) toggle {
	n := m.get(key)
	if n == nil {
		return toggle{at: m.d.at(m.node, m.field(key))}
	}
	at := m.d.at(n, m.field(key))
	if n.Kind != yaml.ScalarNode || n.Tag != "!!bool" {
		m.d.r.add(at, ErrType, "the value is %s: want true or false", describe(n))
		return toggle{at: at}
	}
	var v bool
	_ = n.Decode(&v)
	return toggle{v: v, at: at, set: true}
}

// list reads a sequence; it reports and returns nil for anything else.
func (m *mapping) list(key, want string) (*yaml.Node, bool) {
	n := m.get(key)
	if n == nil {
		return nil, false
	}
	if n.Kind != yaml.SequenceNode {
		m.d.r.add(m.d.at(n, m.field(key)), ErrType, "the value is %s: want %s", describe(n), want)
		return nil, false
	}
	return n, true
}

// formatNumber is the canonical text of a number: the shortest decimal that
// reads back to the same float64 (strconv 'g', precision −1), with −0
// written as 0.
func formatNumber(v float64) string {
	if v == 0 {
		return "0"
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
