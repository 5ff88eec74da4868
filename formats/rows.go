package formats

import (
	"gridstage/solver"
)

// The functions below append one record's rows to a table, in the column
// order of schemaFor. Each calls endRow after every row so that a chain
// with many states is split across batches rather than held whole.

func appendTransitions(t *tableWriter, r *Record) error {
	return appendMatrix(t, r, r.Chain.Transition, r.Chain.States())
}

// appendBaseline writes the baseline method's matrix, if any.
func appendBaseline(t *tableWriter, r *Record) error {
	if r.Baseline == nil {
		return nil
	}
	return appendMatrix(t, r, r.BaselineTransition, len(r.Baseline.States))
}

// appendMatrix writes an n×n row-major matrix in long form. It appends
// runs of rows at once, each ending where the table's batch fills, so the
// batches are those of one endRow per row.
func appendMatrix(t *tableWriter, r *Record, m []float64, n int) error {
	point, age, from, to, prob := t.i32(0), t.i32(1), t.i32(2), t.i32(3), t.f64(4)
	for done := 0; done < n*n; {
		k := min(n*n-done, max(t.limit-point.Len(), 1))
		point.Reserve(k)
		age.Reserve(k)
		from.Reserve(k)
		to.Reserve(k)
		prob.Reserve(k)
		for e := done; e < done+k; e++ {
			point.UnsafeAppend(int32(r.Point))
			age.UnsafeAppend(int32(r.Age))
			from.UnsafeAppend(int32(e / n))
			to.UnsafeAppend(int32(e % n))
		}
		prob.AppendValues(m[done:done+k], nil)
		done += k
		if err := t.endRows(k); err != nil {
			return err
		}
	}
	return nil
}

func appendStates(t *tableWriter, r *Record, dim int) error {
	point, age, state := t.i32(0), t.i32(1), t.i32(2)
	stat, init, matched := t.f64(3+dim), t.f64(4+dim), t.i32(5+dim)
	for i := 0; i < r.Chain.States(); i++ {
		point.Append(int32(r.Point))
		age.Append(int32(r.Age))
		state.Append(int32(i))
		for k, x := range r.Chain.State(i) {
			t.f64(3 + k).Append(x)
		}
		appendNullable(stat, r.Diag.Stationary, i)
		appendNullable(init, r.Initial, i)
		matched.Append(int32(r.Chain.Matched[i]))
		if err := t.endRow(); err != nil {
			return err
		}
	}
	return nil
}

func momentValues(m solver.Moments) [4]float64 { return [4]float64{m.Mean, m.Var, m.Skew, m.Kurt} }

func appendDiagnostics(t *tableWriter, r *Record, dim int) error {
	if err := appendDiagnosticRows(t, r, &r.Diag, r.Vector, false, dim); err != nil {
		return err
	}
	if r.Baseline != nil {
		return appendDiagnosticRows(t, r, r.Baseline, r.BaselineVector, true, dim)
	}
	return nil
}

func appendDiagnosticRows(t *tableWriter, r *Record, d *solver.Diagnostics, v *VectorDiag, baseline bool, dim int) error {
	point, age, base, state := t.i32(0), t.i32(1), t.boolean(2), t.i32(3)
	stat, matched := t.f64(4+dim), t.i32(5+dim)
	first := 6 + dim
	names := diagnosticMomentColumns()
	reasons := nullReasons{table: TableDiagnostics}
	for i, s := range d.States {
		point.Append(int32(r.Point))
		age.Append(int32(r.Age))
		base.Append(baseline)
		state.Append(int32(i))
		for k, x := range s.Level {
			t.f64(4 + k).Append(x)
		}
		appendNullable(stat, d.Stationary, i)
		matched.Append(int32(s.Matched))
		for g, m := range []solver.Moments{s.Chain, s.True, s.AbsErr, s.RelErr} {
			for k, x := range momentValues(m) {
				reasons.f64(t.f64(first+4*g+k), names[4*g+k], x)
			}
		}
		if v == nil {
			t.f64(first + 16).AppendNull()
			t.f64(first + 17).AppendNull()
		} else {
			t.f64(first + 16).Append(v.MeanErr[i])
			t.f64(first + 17).Append(v.CovErr[i])
		}
		if s.PriorKL == nil {
			t.f64(first + 18).AppendNull()
		} else {
			reasons.f64(t.f64(first+18), ColPriorKL, *s.PriorKL)
		}
		if s.Shape == nil {
			t.f64(first + 19).AppendNull()
			t.boolean(first + 20).AppendNull()
		} else {
			t.f64(first + 19).Append(s.Shape.StrandedMass)
			t.boolean(first + 20).Append(s.Shape.FarFromUnimodal)
		}
		reasons.flush(t.str(first + 21))
		if err := t.endRow(); err != nil {
			return err
		}
	}
	return nil
}

func summaryValues(s solver.Summary) [5]float64 {
	return [5]float64{s.Mean, s.SD, s.Skew, s.Kurt, s.Autocorr}
}

func appendSummary(t *tableWriter, r *Record, dim int) error {
	if err := appendSummaryRow(t, r, &r.Diag, r.Vector, false, dim); err != nil {
		return err
	}
	if r.Baseline != nil {
		return appendSummaryRow(t, r, r.Baseline, r.BaselineVector, true, dim)
	}
	return nil
}

func appendSummaryRow(t *tableWriter, r *Record, d *solver.Diagnostics, v *VectorDiag, baseline bool, dim int) error {
	t.i32(0).Append(int32(r.Point))
	t.i32(1).Append(int32(r.Age))
	t.boolean(2).Append(baseline)
	t.str(3).Append(d.Method)
	t.i32(4).Append(int32(len(d.States)))
	if baseline {
		t.i32(5).AppendNull()
	} else {
		t.i32(5).Append(int32(r.Chain.Moments))
	}
	t.i32(6).Append(int32(d.Fallbacks))
	col := 7
	names := summaryMomentColumns()
	reasons := nullReasons{table: TableSummary}
	var values []float64
	for _, s := range []solver.Summary{d.Chain, d.True} {
		v := summaryValues(s)
		values = append(values, v[:]...)
	}
	worst := momentValues(d.WorstRelErr)
	values = append(values, worst[:]...)
	for k, x := range values {
		reasons.f64(t.f64(col), names[k], x)
		col++
	}
	if d.StationaryErr == "" {
		t.str(col).AppendNull()
	} else {
		t.str(col).Append(d.StationaryErr)
	}
	appendVectorSummary(t, col+1, v, dim)
	col += 1 + summaryVecColumns(dim)
	if d.Degenerate == "" {
		t.str(col).AppendNull()
	} else {
		t.str(col).Append(d.Degenerate)
	}
	t.i32(col + 1).Append(int32(d.FarFromUnimodal))
	reasons.flush(t.str(col + 2))
	return t.endRow()
}

// appendVectorSummary appends the vector columns of a summary row from
// column col on, all null when v is nil (docs/FORMATS.md).
func appendVectorSummary(t *tableWriter, col int, v *VectorDiag, dim int) {
	if v == nil {
		for k := 0; k < summaryVecColumns(dim); k++ {
			t.f64(col + k).AppendNull()
		}
		return
	}
	var statErr []float64 // nil (null) when the chain has no stationary distribution
	if v.ChainCov != nil {
		statErr = []float64{v.StationaryCovErr}
	}
	t.f64(col).Append(v.WorstMeanErr)
	t.f64(col + 1).Append(v.WorstCovErr)
	appendNullable(t.f64(col+2), statErr, 0)
	col += 3
	for _, g := range vectorGroups(v, dim) {
		for k := 0; k < g.n; k++ {
			appendNullable(t.f64(col), *g.vals, k)
			col++
		}
	}
}

// vectorGroup is one block of summary vector columns: a slice of v and its
// length in dimension d.
type vectorGroup struct {
	vals *[]float64
	n    int
}

// vectorGroups lists the mean and covariance blocks of the summary vector
// columns in column order: true means, chain means, true covariance,
// chain covariance.
func vectorGroups(v *VectorDiag, dim int) []vectorGroup {
	return []vectorGroup{{&v.TrueMean, dim}, {&v.ChainMean, dim}, {&v.TrueCov, dim * dim}, {&v.ChainCov, dim * dim}}
}

// pointRow is the points-table row of one finished sweep point.
type pointRow struct {
	point, ages int
	specHash    string
	chainHash   string
	spec        []byte
	params      []float64 // in Header.Params order
}

func appendPoint(t *tableWriter, p *pointRow) error {
	t.i32(0).Append(int32(p.point))
	t.i32(1).Append(int32(p.ages))
	t.str(2).Append(p.specHash)
	t.str(3).Append(p.chainHash)
	t.str(4).Append(string(p.spec))
	for k, v := range p.params {
		t.f64(5 + k).Append(v)
	}
	return t.endRow()
}
