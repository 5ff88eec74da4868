package manifests

import (
	"strconv"

	"go.yaml.in/yaml/v3"
)

// numList is a list of numbers as written, with the list's own location.
type numList struct {
	at     loc
	values []num
}

func (l *numList) clone() *numList {
	if l == nil {
		return nil
	}
	c := *l
	c.values = append([]num(nil), l.values...)
	return &c
}

// floats returns the values; valid after every value was checked.
func (l *numList) floats() []float64 {
	out := make([]float64, len(l.values))
	for i, n := range l.values {
		out[i] = n.v
	}
	return out
}

// canonical returns the values as a canonical JSON list.
func (l *numList) canonical() []any {
	out := make([]any, len(l.values))
	for i, n := range l.values {
		out[i] = n.v
	}
	return out
}

// params registers each entry under name[i].
func (l *numList) params(name string, add func(string, *num)) {
	if l == nil {
		return
	}
	for i := range l.values {
		add(joinIndex(name, i), &l.values[i])
	}
}

// numberList reads a list of at least one number under key. It returns nil
// when the key is absent or the value is not such a list (reported; bad is
// then true).
func (m *mapping) numberList(key, want string) (l *numList, bad bool) {
	n := m.get(key)
	if n == nil {
		return nil, false
	}
	l, ok := m.d.numberListNode(n, m.field(key), want)
	return l, !ok
}

// numberListNode reads node n as a list of numbers; ok is false after a
// reported problem.
func (d *decoder) numberListNode(n *yaml.Node, path, want string) (*numList, bool) {
	at := d.at(n, path)
	if n.Kind != yaml.SequenceNode {
		d.r.add(at, ErrType, "the value is %s: want %s", describe(n), want)
		return nil, false
	}
	if len(n.Content) == 0 {
		d.r.add(at, ErrRange, "the list is empty: want %s", want)
		return nil, false
	}
	l := &numList{at: at}
	ok := true
	for i, item := range n.Content {
		v := d.number(resolve(item), joinIndex(path, i))
		ok = ok && v.set
		l.values = append(l.values, v)
	}
	if !ok {
		return nil, false
	}
	return l, true
}

// matrix is a square matrix as written: a list of rows of numbers.
type matrix struct {
	at   loc
	rows [][]num
}

// matrixWant describes a matrix in messages.
const matrixWant = "a square matrix as a list of rows, such as [[0.9, 0.1], [0, 0.8]]"

// maxMatrixRows is the largest matrix a manifest may give (the largest
// VAR dimension the solver accepts).
const maxMatrixRows = 4

func (x *matrix) dim() int { return len(x.rows) }

func (x *matrix) clone() *matrix {
	if x == nil {
		return nil
	}
	c := *x
	c.rows = make([][]num, len(x.rows))
	for i, r := range x.rows {
		c.rows[i] = append([]num(nil), r...)
	}
	return &c
}

// flat returns the entries row-major.
func (x *matrix) flat() []float64 {
	d := x.dim()
	out := make([]float64, 0, d*d)
	for _, r := range x.rows {
		for _, n := range r {
			out = append(out, n.v)
		}
	}
	return out
}

// canonical returns the matrix as a canonical JSON list of rows.
func (x *matrix) canonical() []any {
	out := make([]any, len(x.rows))
	for i, r := range x.rows {
		row := make([]any, len(r))
		for j, n := range r {
			row[j] = n.v
		}
		out[i] = row
	}
	return out
}

// params registers each entry under name[i][j].
func (x *matrix) params(name string, add func(string, *num)) {
	if x == nil {
		return
	}
	for i := range x.rows {
		for j := range x.rows[i] {
			add(joinIndex(joinIndex(name, i), j), &x.rows[i][j])
		}
	}
}

// checkFinite reports every entry that is not a finite number.
func (x *matrix) checkFinite(r *reporter) bool {
	ok := true
	for _, row := range x.rows {
		for _, n := range row {
			ok = checkFinite(r, n) && ok
		}
	}
	return ok
}

// matrix reads a square matrix of 1 to maxMatrixRows rows under key. It
// returns nil when the key is absent or the value is malformed (reported;
// bad is then true).
func (m *mapping) matrix(key string) (x *matrix, bad bool) {
	n := m.get(key)
	if n == nil {
		return nil, false
	}
	d, path := m.d, m.field(key)
	at := d.at(n, path)
	switch {
	case n.Kind != yaml.SequenceNode:
		d.r.add(at, ErrType, "the value is %s: want %s", describe(n), matrixWant)
		return nil, true
	case len(n.Content) == 0:
		d.r.add(at, ErrRange, "the matrix is empty: want %s", matrixWant)
		return nil, true
	case len(n.Content) > maxMatrixRows:
		d.r.add(at, ErrRange, "the matrix has %d rows: want 1 to %d (the largest dimension the solver takes)", len(n.Content), maxMatrixRows)
		return nil, true
	}
	if flatList(n) {
		d.r.add(at, ErrType, "the value is a flat list of numbers: want %s (rows, not one row-major list)", matrixWant)
		return nil, true
	}
	size := len(n.Content)
	x = &matrix{at: at}
	ok := true
	for i, item := range n.Content {
		item = resolve(item)
		rowPath := joinIndex(path, i)
		if item.Kind != yaml.SequenceNode {
			d.r.add(d.at(item, rowPath), ErrType, "the value is %s: want a row of %d numbers (%s)", describe(item), size, matrixWant)
			ok = false
			continue
		}
		if len(item.Content) != size {
			d.r.add(d.at(item, rowPath), ErrRange, "the row has %d numbers: want %d, as many as the matrix has rows", len(item.Content), size)
			ok = false
			continue
		}
		row := make([]num, size)
		for j, e := range item.Content {
			row[j] = d.number(resolve(e), joinIndex(rowPath, j))
			ok = ok && row[j].set
		}
		x.rows = append(x.rows, row)
	}
	if !ok {
		return nil, true
	}
	return x, false
}

// flatList reports whether every item of the sequence n is a scalar.
func flatList(n *yaml.Node) bool {
	for _, item := range n.Content {
		if resolve(item).Kind != yaml.ScalarNode {
			return false
		}
	}
	return true
}

// sizeText writes d×d.
func sizeText(d int) string { return strconv.Itoa(d) + "×" + strconv.Itoa(d) }
