package formats

import (
	"fmt"
	"math"
	"unicode/utf8"

	"gridstage/solver"
)

// checkSensitivities validates the shape of a chain's derivatives: distinct
// non-empty parameter names, and for each one the grid (n·dim values),
// transition (n·n) and stationary (n) derivatives, all finite.
func checkSensitivities(s *solver.Sensitivity, n, dim int) error {
	p := len(s.Params)
	if p == 0 {
		return fmt.Errorf("no parameters")
	}
	if len(s.Grid) != p || len(s.Transition) != p || len(s.Stationary) != p {
		return fmt.Errorf("%d parameters but %d grid, %d transition and %d stationary derivatives", p, len(s.Grid), len(s.Transition), len(s.Stationary))
	}
	seen := map[string]bool{}
	for k, name := range s.Params {
		if name == "" || !utf8.ValidString(name) || seen[name] {
			return fmt.Errorf("parameter names must be distinct non-empty text, got %q", s.Params)
		}
		seen[name] = true
		for _, part := range []struct {
			what string
			v    []float64
			want int
		}{{QuantityGrid, s.Grid[k], n * dim}, {QuantityTransition, s.Transition[k], n * n}, {QuantityStationary, s.Stationary[k], n}} {
			if len(part.v) != part.want {
				return fmt.Errorf("%s derivative in %s has %d values, want %d", part.what, name, len(part.v), part.want)
			}
			for _, v := range part.v {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return fmt.Errorf("%s derivative in %s is not finite", part.what, name)
				}
			}
		}
	}
	return nil
}

// appendSensitivities writes a record's derivatives, parameter by
// parameter in the order of Sensitivity.Params: the grid (state,
// coordinate), the transition matrix (state, to_state) and the stationary
// law (state), each in row-major order.
func appendSensitivities(t *tableWriter, r *Record, dim int) error {
	point, age, param, quantity, state, to, coord, deriv := t.i32(0), t.i32(1), t.str(2), t.str(3), t.i32(4), t.i32(5), t.i32(6), t.f64(7)
	s := r.Sensitivities
	n := r.Chain.States()
	row := func(name, q string, i, j, d int, v float64) error {
		point.Append(int32(r.Point))
		age.Append(int32(r.Age))
		param.Append(name)
		quantity.Append(q)
		state.Append(int32(i))
		if j >= 0 {
			to.Append(int32(j))
		} else {
			to.AppendNull()
		}
		if d >= 0 {
			coord.Append(int32(d))
		} else {
			coord.AppendNull()
		}
		deriv.Append(v)
		return t.endRow()
	}
	for k, name := range s.Params {
		for i := 0; i < n; i++ {
			for d := 0; d < dim; d++ {
				if err := row(name, QuantityGrid, i, -1, d, s.Grid[k][i*dim+d]); err != nil {
					return err
				}
			}
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if err := row(name, QuantityTransition, i, j, -1, s.Transition[k][i*n+j]); err != nil {
					return err
				}
			}
		}
		for i := 0; i < n; i++ {
			if err := row(name, QuantityStationary, i, -1, -1, s.Stationary[k][i]); err != nil {
				return err
			}
		}
	}
	return nil
}

// readSensitivities reads the derivatives of (point, age), a chain of n
// states of dimension dim, checking that the rows come in the order
// appendSensitivities writes them.
func (r *Reader) readSensitivities(point, age, n, dim int) (*solver.Sensitivity, error) {
	const table = TableSensitivities
	c := r.cur[table]
	s := &solver.Sensitivity{}
	for {
		if here, err := r.at(table, point, age); err != nil {
			return nil, err
		} else if !here {
			break
		}
		name := c.str(2)
		for _, prev := range s.Params {
			if prev == name {
				return nil, r.fail(table, c, point, age, "parameter %q appears in two runs of rows", name)
			}
		}
		grid, trans, stat := make([]float64, n*dim), make([]float64, n*n), make([]float64, n)
		for _, part := range []struct {
			q      string
			v      []float64
			state  func(k int) int
			to, co func(k int) int // −1: the column is null
		}{
			{QuantityGrid, grid, func(k int) int { return k / dim }, func(int) int { return -1 }, func(k int) int { return k % dim }},
			{QuantityTransition, trans, func(k int) int { return k / n }, func(k int) int { return k % n }, func(int) int { return -1 }},
			{QuantityStationary, stat, func(k int) int { return k }, func(int) int { return -1 }, func(int) int { return -1 }},
		} {
			for k := range part.v {
				if here, err := r.at(table, point, age); err != nil {
					return nil, err
				} else if !here {
					return nil, r.fail(table, c, point, age, "parameter %q has %d %s rows, want %d", name, k, part.q, len(part.v))
				}
				if c.str(2) != name || c.str(3) != part.q || int(c.i32(4)) != part.state(k) ||
					nullOr(c, 5) != part.to(k) || nullOr(c, 6) != part.co(k) {
					return nil, r.fail(table, c, point, age, "row (%s, %s, state %d, to_state %d, coordinate %d) where (%s, %s, %d, %d, %d) was expected",
						c.str(2), c.str(3), c.i32(4), nullOr(c, 5), nullOr(c, 6), name, part.q, part.state(k), part.to(k), part.co(k))
				}
				part.v[k] = c.f64(7)
				c.advance()
			}
		}
		s.Params = append(s.Params, name)
		s.Grid, s.Transition, s.Stationary = append(s.Grid, grid), append(s.Transition, trans), append(s.Stationary, stat)
	}
	if len(s.Params) == 0 {
		return nil, r.fail(table, c, point, age, "has no rows for a chain of a set with sensitivities")
	}
	return s, nil
}

// nullOr returns the int32 in column col, or −1 when it is null.
func nullOr(c *cursor, col int) int {
	if c.null(col) {
		return -1
	}
	return int(c.i32(col))
}
