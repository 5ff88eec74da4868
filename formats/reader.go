package formats

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"gridstage/solver"
)

// SetRef locates the files of one Set.
type SetRef struct {
	Dir, Process string
	Format       Format
}

// Path returns the path of one of the set's table files.
func (s SetRef) Path(table string) string {
	return filepath.Join(s.Dir, FileName(s.Process, table, s.Format))
}

// FindSets lists the sets in a folder: every process with a points file,
// in name order (Parquet before Arrow for the same process).
func FindSets(dir string) ([]SetRef, error) {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	var out []SetRef
	for _, e := range entries {
		if process, table, f, ok := ParseFileName(e.Name()); ok && table == TablePoints && !e.IsDir() {
			out = append(out, SetRef{Dir: dir, Process: process, Format: f})
		}
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Process != out[j].Process {
			return out[i].Process < out[j].Process
		}
		return out[i].Format < out[j].Format
	})
	return out, nil
}

// RefOf returns the set that a gridstage file name belongs to.
func RefOf(path string) (SetRef, bool) {
	process, _, f, ok := ParseFileName(path)
	return SetRef{Dir: filepath.Dir(path), Process: process, Format: f}, ok
}

// MismatchError locates a check that failed in a gridstage file.
type MismatchError struct {
	Path string
	// Point and Age are −1 when the problem is not tied to one chain.
	Point, Age int
	// Row is the 0-based row in the file, −1 when not tied to a row.
	Row     int64
	Problem string
}

func (e *MismatchError) Error() string {
	s := e.Path + ":"
	if e.Point >= 0 {
		s += fmt.Sprintf(" point %d,", e.Point)
	}
	if e.Age >= 0 {
		s += fmt.Sprintf(" age %d,", e.Age)
	}
	if e.Row >= 0 {
		s += fmt.Sprintf(" row %d,", e.Row)
	}
	return s[:len(s)-1] + ": " + e.Problem
}

// Reader streams the records of a Set from its six files, checking as it
// goes that the tables fit together and that each point's chain hash
// matches the points table.
type Reader struct {
	// Header, Points and SpecDigest come from the points file's metadata.
	Header     Header
	Points     int
	SpecDigest string
	Ref        SetRef

	files map[string]*tableFile
	cur   map[string]*cursor
	names []string // the set's tables (tablesOf its header)

	// the point in progress
	point     *pointRow
	pointRow  int64
	agesLeft  int
	params    map[string]float64
	chainHash *chainHasher
	lastAge   int
}

// Open opens a set for reading. mem may be nil (memory.DefaultAllocator).
// Close the Reader when done.
func Open(ref SetRef, mem memory.Allocator) (*Reader, error) {
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	r := &Reader{Ref: ref, files: map[string]*tableFile{}, cur: map[string]*cursor{}}
	// The points file says which tables the set has.
	pf, err := openTable(ref.Path(TablePoints), mem)
	if err != nil {
		return nil, err
	}
	r.files[TablePoints], r.cur[TablePoints] = pf, &cursor{tf: pf}
	pm := pf.meta
	r.Header, r.Points, r.SpecDigest = pm.header, pm.points, pm.specDigest
	r.names = tablesOf(r.Header)
	for _, t := range r.names {
		if t == TablePoints {
			continue
		}
		tf, err := openTable(ref.Path(t), mem)
		if err != nil {
			r.Close()
			return nil, err
		}
		r.files[t], r.cur[t] = tf, &cursor{tf: tf}
	}
	for _, t := range r.names {
		m := r.files[t].meta
		if m.specDigest != pm.specDigest || m.points != pm.points {
			r.Close()
			return nil, &MismatchError{Path: ref.Path(t), Point: -1, Age: -1, Row: -1,
				Problem: "belongs to a different run than " + filepath.Base(ref.Path(TablePoints)) + " (spec digest or point count differ)"}
		}
	}
	return r, nil
}

// Close releases the files.
func (r *Reader) Close() {
	for _, tf := range r.files {
		tf.close()
	}
	r.files = nil
}

func (r *Reader) fail(table string, c *cursor, point, age int, format string, a ...any) error {
	row := int64(-1)
	if c != nil {
		row = c.fileRow()
	}
	return &MismatchError{Path: r.Ref.Path(table), Point: point, Age: age, Row: row, Problem: fmt.Sprintf(format, a...)}
}

// Next returns the next record, or io.EOF after the last.
func (r *Reader) Next() (Record, error) {
	var rec Record
	err := guard(func() error {
		var err error
		rec, err = r.next()
		return err
	})
	return rec, err
}

func (r *Reader) next() (Record, error) {
	if r.agesLeft == 0 {
		if err := r.nextPoint(); err != nil {
			return Record{}, err
		}
	}
	p := r.point
	rec := Record{Point: p.point, Params: r.params, SpecHash: p.specHash, Spec: p.spec, ChainHash: p.chainHash}
	if err := r.readAge(&rec); err != nil {
		return Record{}, err
	}
	r.agesLeft--
	if r.agesLeft == 0 {
		if got := r.chainHash.sum(); got != p.chainHash {
			return Record{}, &MismatchError{Path: r.Ref.Path(TablePoints), Point: p.point, Age: -1, Row: r.pointRow,
				Problem: fmt.Sprintf("chain hash recomputed from the transitions and states is %s, the points table says %s", got, p.chainHash)}
		}
	}
	return rec, nil
}

// nextPoint reads the next points row; at the end it checks that no table
// has rows left.
func (r *Reader) nextPoint() error {
	c := r.cur[TablePoints]
	ok, err := c.ok()
	if err != nil {
		return err
	}
	if !ok {
		for _, t := range r.names {
			if more, err := r.cur[t].ok(); err != nil {
				return err
			} else if more {
				pt, age := r.cur[t].key()
				return r.fail(t, r.cur[t], int(pt), int(age), "rows for a point the points table does not list")
			}
		}
		return io.EOF
	}
	prev := -1
	if r.point != nil {
		prev = r.point.point
	}
	p := &pointRow{point: int(c.i32(0)), ages: int(c.i32(1)), specHash: c.str(2), chainHash: c.str(3), spec: []byte(c.str(4))}
	if p.point <= prev {
		return r.fail(TablePoints, c, p.point, -1, "points are not in increasing order (previous %d)", prev)
	}
	if p.ages < 1 {
		return r.fail(TablePoints, c, p.point, -1, "ages is %d, want at least 1", p.ages)
	}
	r.params = make(map[string]float64, len(r.Header.Params))
	for k, name := range r.Header.Params {
		r.params[name] = c.f64(5 + k)
	}
	r.pointRow = c.fileRow()
	c.advance()
	r.point, r.agesLeft, r.chainHash, r.lastAge = p, p.ages, newChainHasher(), -1
	return nil
}

// at reports whether cursor c is on a row of (point, age); it fails if the
// table has ended.
func (r *Reader) at(table string, point, age int) (bool, error) {
	c := r.cur[table]
	ok, err := c.ok()
	if err != nil || !ok {
		return false, err
	}
	p, a := c.key()
	return int(p) == point && int(a) == age, nil
}

// readAge fills rec with the next age of the current point.
func (r *Reader) readAge(rec *Record) error {
	dim := r.Header.Dim
	st := r.cur[TableStates]
	ok, err := st.ok()
	if err != nil {
		return err
	}
	if !ok {
		return r.fail(TableStates, nil, rec.Point, -1, "table ends before the ages the points table lists")
	}
	if p, a := st.key(); int(p) != rec.Point || int(a) <= r.lastAge {
		return r.fail(TableStates, st, rec.Point, -1, "found point %d age %d where the next age of point %d was expected", p, a, rec.Point)
	} else {
		rec.Age = int(a)
	}
	r.lastAge = rec.Age
	point, age := rec.Point, rec.Age

	// states
	c := &solver.Chain{Dim: dim}
	var stationary, initial []float64
	var statNulls, initNulls int
	var matched []int32
	for {
		if here, err := r.at(TableStates, point, age); err != nil {
			return err
		} else if !here {
			break
		}
		i := len(matched)
		if s := int(st.i32(2)); s != i {
			return r.fail(TableStates, st, point, age, "state %d where state %d was expected", s, i)
		}
		for k := 0; k < dim; k++ {
			c.Grid = append(c.Grid, st.f64(3+k))
		}
		if st.null(3 + dim) {
			statNulls++
			stationary = append(stationary, 0)
		} else {
			stationary = append(stationary, st.f64(3+dim))
		}
		if st.null(4 + dim) {
			initNulls++
			initial = append(initial, 0)
		} else {
			initial = append(initial, st.f64(4+dim))
		}
		matched = append(matched, st.i32(5+dim))
		st.advance()
	}
	n := len(matched)
	if stationary, err = allOrNone(stationary, statNulls); err != nil {
		return r.fail(TableStates, nil, point, age, "stationary column %v", err)
	}
	if rec.Initial, err = allOrNone(initial, initNulls); err != nil {
		return r.fail(TableStates, nil, point, age, "initial column %v", err)
	}
	c.Matched = make([]int, n)
	for i, m := range matched {
		c.Matched[i] = int(m)
	}

	// A terminal age (a grid no transition leaves) is the last age of a
	// point and has states only.
	if r.agesLeft == 1 {
		inTr, err := r.at(TableTransitions, point, age)
		if err != nil {
			return err
		}
		inSu, err := r.at(TableSummary, point, age)
		if err != nil {
			return err
		}
		if !inTr && !inSu {
			if r.Header.Sensitivities {
				if here, err := r.at(TableSensitivities, point, age); err != nil {
					return err
				} else if here {
					return r.fail(TableSensitivities, r.cur[TableSensitivities], point, age, "has rows for a terminal age (no transition)")
				}
			}
			if c.Method, err = solver.ParseMethod(r.Header.Method); err != nil {
				return r.fail(TablePoints, nil, point, age, "method %q is not one this gridstage knows", r.Header.Method)
			}
			r.chainHash.add(age, n, dim, c.Grid, nil, matched, rec.Initial)
			rec.Chain = c
			return nil
		}
	}

	// transitions
	if c.Transition, err = r.readMatrix(TableTransitions, point, age, n); err != nil {
		return err
	}
	r.chainHash.add(age, n, dim, c.Grid, c.Transition, matched, rec.Initial)

	// summary: primary row, then an optional baseline row
	su := r.cur[TableSummary]
	// states[0] and states[1] are the primary and baseline state counts
	// the summary rows give.
	var states [2]int
	// vectors[0] and vectors[1] are the primary and baseline vector
	// diagnostics the summary rows give (nil: none).
	var vectors [2]*VectorDiag
	readSummary := func(baseline bool) (*solver.Diagnostics, int32, bool, error) {
		if here, err := r.at(TableSummary, point, age); err != nil || !here {
			return nil, 0, false, err
		}
		if su.boolean(2) != baseline {
			return nil, 0, false, nil
		}
		v, err := vectorSummaryFrom(su, 22, dim)
		if err != nil {
			return nil, 0, false, r.fail(TableSummary, su, point, age, "%v", err)
		}
		d := &solver.Diagnostics{Method: su.str(3), Fallbacks: int(su.i32(6))}
		if baseline {
			states[1], vectors[1] = int(su.i32(4)), v
		} else {
			states[0], vectors[0] = int(su.i32(4)), v
		}
		d.Chain = summaryFrom(su, 7)
		d.True = summaryFrom(su, 12)
		d.WorstRelErr = momentsFrom(su, 17)
		if !su.null(21) {
			d.StationaryErr = su.str(21)
		}
		tail := 22 + summaryVecColumns(dim)
		if !su.null(tail) {
			d.Degenerate = su.str(tail)
		}
		d.FarFromUnimodal = int(su.i32(tail + 1))
		moments := int32(-1)
		if !su.null(5) {
			moments = su.i32(5)
		}
		su.advance()
		return d, moments, true, nil
	}
	d, moments, ok, err := readSummary(false)
	if err != nil {
		return err
	}
	if !ok {
		return r.fail(TableSummary, su, point, age, "no summary row for the chain")
	}
	if c.Method, err = solver.ParseMethod(d.Method); err != nil {
		return r.fail(TableSummary, su, point, age, "method %q is not one this gridstage knows", d.Method)
	}
	c.Moments = int(moments)
	base, _, hasBase, err := readSummary(true)
	if err != nil {
		return err
	}

	// diagnostics: the primary chain's states, then the baseline's
	dg := r.cur[TableDiagnostics]
	readDiag := func(d *solver.Diagnostics, v *VectorDiag, baseline bool) error {
		var stat []float64
		var nulls int
		first := 6 + dim
		for {
			if here, err := r.at(TableDiagnostics, point, age); err != nil {
				return err
			} else if !here || dg.boolean(2) != baseline {
				break
			}
			i := len(d.States)
			if s := int(dg.i32(3)); s != i {
				return r.fail(TableDiagnostics, dg, point, age, "state %d where state %d was expected", s, i)
			}
			sc := solver.StateCheck{Level: make([]float64, dim)}
			for k := range sc.Level {
				sc.Level[k] = dg.f64(4 + k)
			}
			if dg.null(4 + dim) {
				nulls++
				stat = append(stat, 0)
			} else {
				stat = append(stat, dg.f64(4+dim))
			}
			sc.Matched = int(dg.i32(5 + dim))
			sc.Chain = momentsFrom(dg, first)
			sc.True = momentsFrom(dg, first+4)
			sc.AbsErr = momentsFrom(dg, first+8)
			sc.RelErr = momentsFrom(dg, first+12)
			if nm, nc := dg.null(first+16), dg.null(first+17); nm != (v == nil) || nc != (v == nil) {
				return r.fail(TableDiagnostics, dg, point, age, "vector columns %s and %s are null where the summary says %s",
					ColVecMeanErr, ColVecCovErr, map[bool]string{true: "they are absent", false: "they are present"}[v == nil])
			}
			if v != nil {
				v.MeanErr = append(v.MeanErr, dg.f64(first+16))
				v.CovErr = append(v.CovErr, dg.f64(first+17))
			}
			if !dg.null(first + 18) {
				kl := dg.f64(first + 18)
				sc.PriorKL = &kl
			}
			if dg.null(first+19) != dg.null(first+20) {
				return r.fail(TableDiagnostics, dg, point, age, "columns %s and %s are not null together", ColStranded, ColFarFromUnimodal)
			}
			if !dg.null(first + 19) {
				sc.Shape = &solver.RowShape{StrandedMass: dg.f64(first + 19), FarFromUnimodal: dg.boolean(first + 20)}
			}
			d.States = append(d.States, sc)
			dg.advance()
		}
		var err error
		if d.Stationary, err = allOrNone(stat, nulls); err != nil {
			return r.fail(TableDiagnostics, nil, point, age, "stationary column %v", err)
		}
		return nil
	}
	if err := readDiag(d, vectors[0], false); err != nil {
		return err
	}
	if len(d.States) != n || states[0] != n {
		return r.fail(TableDiagnostics, dg, point, age, "has %d rows for the chain and the summary says %d states, want %d", len(d.States), states[0], n)
	}
	d.Stationary = stationary
	if hasBase {
		if err := readDiag(base, vectors[1], true); err != nil {
			return err
		}
		if len(base.States) != states[1] {
			return r.fail(TableDiagnostics, dg, point, age, "has %d rows for the baseline chain, the summary says %d states", len(base.States), states[1])
		}
		rec.Baseline, rec.BaselineVector = base, vectors[1]
		if rec.BaselineTransition, err = r.readMatrix(TableBaseline, point, age, len(base.States)); err != nil {
			return err
		}
	}
	if here, err := r.at(TableBaseline, point, age); err != nil {
		return err
	} else if here && !hasBase {
		return r.fail(TableBaseline, r.cur[TableBaseline], point, age, "has rows for a chain whose summary lists no baseline")
	} else if here {
		return r.fail(TableBaseline, r.cur[TableBaseline], point, age, "has more rows for this chain than its %d states fill", len(base.States))
	}
	rec.Chain, rec.Diag, rec.Vector = c, *d, vectors[0]
	if r.Header.Sensitivities {
		if rec.Sensitivities, err = r.readSensitivities(point, age, n, dim); err != nil {
			return err
		}
	}
	return nil
}

// readMatrix reads the n×n row-major matrix of (point, age) from a table
// in the layout of the transitions table.
func (r *Reader) readMatrix(table string, point, age, n int) ([]float64, error) {
	tr := r.cur[table]
	m := make([]float64, n*n)
	for k := 0; k < n*n; k++ {
		if here, err := r.at(table, point, age); err != nil {
			return nil, err
		} else if !here {
			return nil, r.fail(table, tr, point, age, "has %d rows for this chain, want %d (%d states)", k, n*n, n)
		}
		if f, t := int(tr.i32(2)), int(tr.i32(3)); f != k/n || t != k%n {
			return nil, r.fail(table, tr, point, age, "from_state %d, to_state %d where %d, %d was expected", f, t, k/n, k%n)
		}
		m[k] = tr.f64(4)
		tr.advance()
	}
	return m, nil
}

// vectorSummaryFrom reads the vector columns of a summary row from column
// col on: nil when they are null (a univariate chain).
func vectorSummaryFrom(c *cursor, col, dim int) (*VectorDiag, error) {
	if c.null(col) {
		for k := 0; k < summaryVecColumns(dim); k++ {
			if !c.null(col + k) {
				return nil, fmt.Errorf("%s is null but other vector columns are not", ColWorstVecMeanErr)
			}
		}
		return nil, nil
	}
	v := &VectorDiag{WorstMeanErr: c.f64(col)}
	if c.null(col + 1) {
		return nil, fmt.Errorf("%s is null beside a value of %s", ColWorstVecCovErr, ColWorstVecMeanErr)
	}
	v.WorstCovErr = c.f64(col + 1)
	hasChain := !c.null(col + 2)
	if hasChain {
		v.StationaryCovErr = c.f64(col + 2)
	}
	at := col + 3
	for g, grp := range vectorGroups(v, dim) {
		chain := g%2 == 1
		vals := make([]float64, grp.n)
		for k := range vals {
			null := c.null(at)
			if null != (chain && !hasChain) {
				return nil, fmt.Errorf("%s is null where %s is %s", c.rec.Schema().Field(at).Name, ColStationaryCovErr, map[bool]string{true: "given", false: "null"}[hasChain])
			}
			if !null {
				vals[k] = c.f64(at)
			}
			at++
		}
		if !chain || hasChain {
			*grp.vals = vals
		}
	}
	return v, nil
}

// allOrNone returns v, or nil when every entry was null; a column that is
// null in some rows of a chain and not others is an error.
func allOrNone(v []float64, nulls int) ([]float64, error) {
	switch nulls {
	case 0:
		return v, nil
	case len(v):
		return nil, nil
	}
	return nil, fmt.Errorf("is null in %d of %d rows (want all or none)", nulls, len(v))
}

func momentsFrom(c *cursor, col int) solver.Moments {
	return solver.Moments{Mean: c.value(col), Var: c.value(col + 1), Skew: c.value(col + 2), Kurt: c.value(col + 3)}
}

func summaryFrom(c *cursor, col int) solver.Summary {
	return solver.Summary{Mean: c.value(col), SD: c.value(col + 1), Skew: c.value(col + 2), Kurt: c.value(col + 3), Autocorr: c.value(col + 4)}
}

// Read reads a whole set into memory.
func Read(ref SetRef, mem memory.Allocator) (*Set, error) {
	r, err := Open(ref, mem)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	s := &Set{Header: r.Header}
	for {
		rec, err := r.Next()
		if err == io.EOF {
			return s, nil
		}
		if err != nil {
			return nil, err
		}
		s.Records = append(s.Records, rec)
	}
}
