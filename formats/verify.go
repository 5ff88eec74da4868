package formats

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"sync"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"gridstage/internal/version"
)

// RowSumTolerance is how far from 1 the sum of a transition row may be.
//
// The solver normalises each row by dividing by its floating-point sum, so
// the stored probabilities sum to 1 up to rounding: about √N·2⁻⁵³ for N
// states in practice (1e-14 at N = 10,000), and at worst N·2⁻⁵³ (1.1e-12
// at N = 10,000, five times the solver's cap, a bound no real row approaches because
// the rounding errors of the quotients are independent). Verify adds the
// row with compensated (Neumaier) summation, whose own error is about 2⁻⁵³
// whatever N, so 1e-12 accepts every row the solver writes and rejects any
// change to a probability larger than 1e-12 — far below the digits a
// downstream model uses.
const RowSumTolerance = 1e-12

// Report lists what Verify checked.
type Report struct {
	// Files lists every file checked, with its row count and content hash.
	Files []File
	// Sets is the number of complete sets checked (0 when a single file was
	// given).
	Sets int
	// Warnings are findings that do not make the output wrong, such as
	// temporary files left by an interrupted write.
	Warnings []string
	// SetPoints lists, for each set checked in a folder, its header and
	// every point with its hashes and swept values, so that a caller can
	// check them against a run record.
	SetPoints []SetPoints
}

// SetPoints is what a verified set holds: its header (run, process,
// manifest hash) and its points.
type SetPoints struct {
	Ref    SetRef
	Header Header
	Points []VerifiedPoint
}

// VerifiedPoint is one point of a verified set.
type VerifiedPoint struct {
	PointHash
	// Params are the swept values, by name.
	Params map[string]float64
}

// Verify checks a gridstage file or an output folder: every file's
// metadata is complete, its content hash recomputes, transition
// probabilities lie in [0, 1] and every row sums to 1 within
// RowSumTolerance; for a folder, also that the files of each set belong
// together (table hashes recorded in the points file, spec digests) and
// that every point's chain hash recomputes. It stops at the first
// problem. The error is a *NotOutputError when the path is not gridstage
// output, and a *MismatchError, *MetadataError or *DamagedError otherwise.
func Verify(path string) (*Report, error) { return verify(path, memory.DefaultAllocator) }

// VerifyOptions choose what VerifyWith does beyond Verify's checks.
type VerifyOptions struct {
	// SkipStructure skips the check that each file's bytes are
	// gridstage's own encoding of its values (StructureError), which
	// re-encodes every file; metadata, content hashes, rows and chain
	// hashes are checked as by Verify.
	SkipStructure bool
	// Visit, when set, receives every record of every set of a folder, in
	// set and record order, as verification reads them, so that a caller
	// needing the numbers reads the files once. Records are only known
	// good once VerifyWith returns without error. An error from Visit stops
	// verification and is returned.
	Visit func(ref SetRef, rec Record) error
}

// VerifyWith is Verify with options. The files of a set are checked
// concurrently; the error returned is the one Verify would return first.
func VerifyWith(path string, opt VerifyOptions) (*Report, error) {
	return verifyOpt(path, memory.DefaultAllocator, opt)
}

func verify(path string, mem memory.Allocator) (*Report, error) {
	return verifyOpt(path, mem, VerifyOptions{})
}

func verifyOpt(path string, mem memory.Allocator, opt VerifyOptions) (*Report, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, &NotOutputError{Path: path, Reason: "it does not exist or cannot be read"}
	}
	rep := &Report{}
	if !fi.IsDir() {
		f, _, err := verifyFile(path, mem, !opt.SkipStructure)
		if err != nil {
			return rep, err
		}
		rep.Files = append(rep.Files, f)
		return rep, nil
	}
	return rep, verifyFolder(path, mem, rep, opt)
}

func verifyFolder(dir string, mem memory.Allocator, rep *Report, opt VerifyOptions) error {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return &NotOutputError{Path: dir, Reason: err.Error()}
	}
	sets := map[SetRef]map[string]bool{}
	for _, e := range entries {
		name := e.Name()
		if strings.HasPrefix(name, ".") && strings.Contains(name, ".tmp-") {
			rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s is a temporary file left by an interrupted write (safe to delete)", filepath.Join(dir, name)))
			continue
		}
		process, table, f, ok := ParseFileName(name)
		if !ok || e.IsDir() {
			continue
		}
		ref := SetRef{Dir: dir, Process: process, Format: f}
		if sets[ref] == nil {
			sets[ref] = map[string]bool{}
		}
		sets[ref][table] = true
	}
	if len(sets) == 0 {
		return &NotOutputError{Path: dir, Reason: "the folder holds no gridstage files (<process>.<table>.parquet or .arrow)"}
	}
	refs := make([]SetRef, 0, len(sets))
	for ref := range sets {
		refs = append(refs, ref)
	}
	sort.Slice(refs, func(i, j int) bool {
		if refs[i].Process != refs[j].Process {
			return refs[i].Process < refs[j].Process
		}
		return refs[i].Format < refs[j].Format
	})
	for _, ref := range refs {
		for _, t := range Tables {
			if !sets[ref][t] {
				why := ""
				if t == TablePoints {
					why = " (the points file is written last: the write of this set was interrupted)"
				}
				return &MismatchError{Path: ref.Path(t), Point: -1, Age: -1, Row: -1, Problem: "is missing from the set" + why}
			}
		}
		tables := Tables
		if sets[ref][TableSensitivities] {
			tables = tablesOf(Header{Sensitivities: true})
		}
		if err := verifySet(ref, tables, mem, rep, opt); err != nil {
			return err
		}
		rep.Sets++
	}
	return nil
}

// verifySet checks the set's files: tables lists those found in the folder.
func verifySet(ref SetRef, tables []string, mem memory.Allocator, rep *Report, opt VerifyOptions) error {
	// The files are independent until they are compared: check them at
	// once, then report the first failure in table order.
	type result struct {
		f   File
		m   *fileMeta
		err error
	}
	results := make([]result, len(tables))
	var wg sync.WaitGroup
	for i, t := range tables {
		wg.Add(1)
		go func() {
			defer wg.Done()
			r := &results[i]
			r.f, r.m, r.err = verifyFile(ref.Path(t), mem, !opt.SkipStructure)
		}()
	}
	wg.Wait()
	metas := map[string]*fileMeta{}
	for i, t := range tables {
		r := results[i]
		if r.err != nil {
			return r.err
		}
		rep.Files = append(rep.Files, r.f)
		metas[t] = r.m
	}
	pm := metas[TablePoints]
	if pm.header.Sensitivities && metas[TableSensitivities] == nil {
		return &MismatchError{Path: ref.Path(TableSensitivities), Point: -1, Age: -1, Row: -1,
			Problem: "is missing from the set (its points file lists a sensitivities table)"}
	}
	for _, t := range tables {
		m := metas[t]
		path := ref.Path(t)
		if m.header.Process != ref.Process {
			return &MetadataError{Path: path, Key: KeyProcess, Problem: fmt.Sprintf("is %q but the file name says %q", m.header.Process, ref.Process)}
		}
		if !reflect.DeepEqual(m.header, pm.header) || m.points != pm.points || m.specDigest != pm.specDigest {
			return &MismatchError{Path: path, Point: -1, Age: -1, Row: -1,
				Problem: "its metadata (run, spec digest, header) differs from " + filepath.Base(ref.Path(TablePoints)) + ": the files come from different runs"}
		}
		if t != TablePoints && pm.tableHashes[t] != m.contentHash {
			return &MismatchError{Path: path, Point: -1, Age: -1, Row: -1,
				Problem: fmt.Sprintf("content hash %s differs from the one the points file records (%s): the file was replaced after the set was written", m.contentHash, pm.tableHashes[t])}
		}
	}
	r, err := Open(ref, mem)
	if err != nil {
		return err
	}
	defer r.Close()
	sp := SetPoints{Ref: ref, Header: r.Header}
	for {
		rec, err := r.Next()
		if err == io.EOF {
			rep.SetPoints = append(rep.SetPoints, sp)
			return nil
		} else if err != nil {
			return err
		}
		if opt.Visit != nil {
			if err := opt.Visit(ref, rec); err != nil {
				return err
			}
		}
		if n := len(sp.Points); n == 0 || sp.Points[n-1].Point != rec.Point {
			sp.Points = append(sp.Points, VerifiedPoint{PointHash: PointHash{Point: rec.Point, SpecHash: rec.SpecHash, ChainHash: r.point.chainHash}, Params: rec.Params})
		}
	}
}

// verifyFile checks one file on its own; structure adds the check that its
// bytes are gridstage's canonical encoding of its values.
func verifyFile(path string, mem memory.Allocator, structure bool) (File, *fileMeta, error) {
	tf, err := openTable(path, mem)
	if err != nil {
		return File{}, nil, err
	}
	defer tf.close()
	m := tf.meta
	h := newContentHasher(m.table, tf.schema)
	check := newRowChecker(path, m)
	var enc *canonicalEncoder
	if tf.canonical && structure {
		if enc, err = newCanonicalEncoder(tf, mem); err != nil {
			return File{}, nil, &DamagedError{Path: path, Err: err}
		}
		defer enc.close()
	}
	var rows int64
	for {
		rec, err := tf.batch()
		if err == io.EOF {
			break
		}
		if err != nil {
			return File{}, nil, err
		}
		if enc != nil {
			enc.add(rec)
		}
		if err := guard(func() error { return check.batch(rec, rows) }); err != nil {
			return File{}, nil, err
		}
		if err := h.add(rec); err != nil {
			return File{}, nil, &DamagedError{Path: path, Err: err}
		}
		rows += rec.NumRows()
	}
	if err := check.end(rows); err != nil {
		return File{}, nil, err
	}
	if rows != m.rows {
		return File{}, nil, &MismatchError{Path: path, Point: -1, Age: -1, Row: -1,
			Problem: fmt.Sprintf("has %d rows, its metadata says %d", rows, m.rows)}
	}
	if got := h.sum(); got != m.contentHash {
		return File{}, nil, &MismatchError{Path: path, Point: -1, Age: -1, Row: -1,
			Problem: fmt.Sprintf("content hash recomputed from the values is %s, the metadata says %s: the numbers changed after the file was written", got, m.contentHash)}
	}
	digest, err := fileDigest(tf.f)
	if err != nil {
		return File{}, nil, &DamagedError{Path: path, Err: err}
	}
	if enc != nil {
		want, err := enc.sum()
		if err != nil {
			return File{}, nil, &DamagedError{Path: path, Err: err}
		}
		if want != digest {
			return File{}, nil, &StructureError{Path: path, Format: tf.format}
		}
	}
	return File{Table: m.table, Path: path, Rows: rows, ContentHash: m.contentHash, Bytes: digest}, m, nil
}

// StructureError reports a file whose values check but whose bytes are not
// gridstage's encoding of them: its footer, page or message headers, types
// or padding were altered, so other readers may read it differently.
type StructureError struct {
	Path   string
	Format Format
}

func (e *StructureError) Error() string {
	return fmt.Sprintf("%s: its values check, but its bytes are not gridstage's %s encoding of them: the file's structure (footer, headers, types) was altered, so other readers may not read these values", e.Path, e.Format)
}

// fileDigest returns the SHA-256 of all of f's bytes, in hex.
func fileDigest(f *os.File) (string, error) {
	h := sha256.New()
	if _, err := io.Copy(h, io.NewSectionReader(f, 0, 1<<62)); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// rowChecker checks row order and values within one file.
type rowChecker struct {
	path string
	meta *fileMeta

	started    bool
	point, age int32
	// transitions: the row in progress
	from, to  int32
	sum, comp float64
	rowStart  int64
	width     int32 // states of the current chain, from its first row
	// points
	specs *specDigest
	count int
}

func newRowChecker(path string, m *fileMeta) *rowChecker {
	return &rowChecker{path: path, meta: m, specs: newSpecDigest()}
}

func (c *rowChecker) fail(point, age int32, row int64, format string, a ...any) error {
	return &MismatchError{Path: c.path, Point: int(point), Age: int(age), Row: row, Problem: fmt.Sprintf(format, a...)}
}

func (c *rowChecker) batch(rec arrow.RecordBatch, base int64) error {
	pts := rec.Column(0).(*array.Int32)
	if c.meta.table == TablePoints {
		return c.points(rec, base)
	}
	ages := rec.Column(1).(*array.Int32)
	for i := 0; i < int(rec.NumRows()); i++ {
		p, a, row := pts.Value(i), ages.Value(i), base+int64(i)
		if p < 0 || a < 0 {
			return c.fail(p, a, row, "negative point or age")
		}
		if c.started && (p < c.point || (p == c.point && a < c.age)) {
			return c.fail(p, a, row, "rows are out of (point, age) order: follows point %d, age %d", c.point, c.age)
		}
		if c.meta.table == TableTransitions || c.meta.table == TableBaseline {
			if err := c.transition(rec, i, p, a, row); err != nil {
				return err
			}
		}
		if c.meta.table == TableStates {
			if err := c.state(rec, i, p, a, row); err != nil {
				return err
			}
		}
		c.point, c.age, c.started = p, a, true
	}
	return nil
}

// transition checks one row of the transitions table and closes a
// transition row (a from_state) when it ends.
func (c *rowChecker) transition(rec arrow.RecordBatch, i int, p, a int32, row int64) error {
	from := rec.Column(2).(*array.Int32).Value(i)
	to := rec.Column(3).(*array.Int32).Value(i)
	prob := rec.Column(4).(*array.Float64).Value(i)
	newChain := !c.started || p != c.point || a != c.age
	if newChain || from != c.from {
		if c.started {
			if err := c.endRow(); err != nil {
				return err
			}
		}
		switch {
		case newChain && from != 0:
			return c.fail(p, a, row, "the chain starts at from_state %d, want 0", from)
		case !newChain && from != c.from+1:
			return c.fail(p, a, row, "from_state %d follows %d", from, c.from)
		}
		if newChain && c.started && c.from+1 != c.width {
			return c.fail(c.point, c.age, row-1, "the chain has %d from-states and %d to-states: the matrix is not square", c.from+1, c.width)
		}
		if to != 0 {
			return c.fail(p, a, row, "from_state %d starts at to_state %d, want 0", from, to)
		}
		c.from, c.sum, c.comp, c.rowStart = from, 0, 0, row
		if newChain {
			c.width = 0
		}
	} else if to != c.to+1 {
		return c.fail(p, a, row, "to_state %d follows %d in from_state %d", to, c.to, from)
	}
	c.to = to
	if from == 0 {
		c.width = to + 1
	}
	if !(prob >= 0 && prob <= 1) {
		return c.fail(p, a, row, "probability %v (from_state %d, to_state %d) is not in [0, 1]", prob, from, to)
	}
	// Neumaier's compensated summation.
	t := c.sum + prob
	if math.Abs(c.sum) >= prob {
		c.comp += (c.sum - t) + prob
	} else {
		c.comp += (prob - t) + c.sum
	}
	c.sum = t
	return nil
}

// endRow checks the sum of the transition row in progress.
func (c *rowChecker) endRow() error {
	if c.to+1 != c.width {
		return c.fail(c.point, c.age, c.rowStart, "from_state %d has %d entries, from_state 0 had %d", c.from, c.to+1, c.width)
	}
	s := c.sum + c.comp
	if d := s - 1; math.Abs(d) > RowSumTolerance {
		return c.fail(c.point, c.age, c.rowStart, "transition row from_state %d (rows %d-%d) sums to 1%+.3g, want 1 within %g",
			c.from, c.rowStart, c.rowStart+int64(c.to), d, RowSumTolerance)
	}
	return nil
}

// state checks one row of the states table.
func (c *rowChecker) state(rec arrow.RecordBatch, i int, p, a int32, row int64) error {
	s := rec.Column(2).(*array.Int32).Value(i)
	newChain := !c.started || p != c.point || a != c.age
	if (newChain && s != 0) || (!newChain && s != c.from+1) {
		return c.fail(p, a, row, "state %d is out of order", s)
	}
	c.from = s
	dim := c.meta.header.Dim
	for k := 0; k < dim; k++ {
		if x := rec.Column(3 + k).(*array.Float64).Value(i); math.IsNaN(x) || math.IsInf(x, 0) {
			return c.fail(p, a, row, "level %s of state %d is %v, want a finite number", LevelColumn(k), s, x)
		}
	}
	for _, col := range []int{3 + dim, 4 + dim} {
		arr := rec.Column(col).(*array.Float64)
		if v := arr.Value(i); arr.IsValid(i) && !(v >= 0 && v <= 1) {
			return c.fail(p, a, row, "%s probability %v of state %d is not in [0, 1]", rec.Schema().Field(col).Name, v, s)
		}
	}
	return nil
}

// points checks the points table: increasing points and the spec digest.
func (c *rowChecker) points(rec arrow.RecordBatch, base int64) error {
	pts := rec.Column(0).(*array.Int32)
	ages := rec.Column(1).(*array.Int32)
	specHash := rec.Column(2).(*array.String)
	chainHash := rec.Column(3).(*array.String)
	spec := rec.Column(4).(*array.String)
	for i := 0; i < int(rec.NumRows()); i++ {
		p, row := pts.Value(i), base+int64(i)
		switch {
		case c.started && p <= c.point:
			return c.fail(p, -1, row, "point %d follows point %d: want increasing order", p, c.point)
		case p < 0 || ages.Value(i) < 1:
			return c.fail(p, -1, row, "negative point or fewer than one age")
		case specHash.Value(i) == "":
			return c.fail(p, -1, row, "empty spec hash")
		case !isHexHash(chainHash.Value(i)):
			return c.fail(p, -1, row, "chain hash %q is not a SHA-256 in hex", chainHash.Value(i))
		case version.SpecHash(c.meta.header.Numeric, []byte(spec.Value(i))) != specHash.Value(i):
			return c.fail(p, -1, row, "spec hash %s is not the hash of the point's spec under numeric version %s (%s): the spec, its hash or the version was changed",
				specHash.Value(i), c.meta.header.Numeric, KeyNumeric)
		}
		if c.meta.points == 1 && (specHash.Value(i) != c.meta.specHash || spec.Value(i) != c.meta.spec) {
			return c.fail(p, -1, row, "spec hash or spec differs from the file metadata (%s, %s)", KeySpecHash, KeySpec)
		}
		c.specs.add(int(p), specHash.Value(i))
		c.point, c.started = p, true
		c.count++
	}
	return nil
}

// end runs the checks that need the whole file.
func (c *rowChecker) end(rows int64) error {
	switch c.meta.table {
	case TableTransitions, TableBaseline:
		if c.started {
			if err := c.endRow(); err != nil {
				return err
			}
			if c.from+1 != c.width {
				return c.fail(c.point, c.age, rows-1, "the chain has %d from-states and %d to-states: the matrix is not square", c.from+1, c.width)
			}
		}
	case TablePoints:
		if c.count != c.meta.points {
			return c.fail(-1, -1, -1, "has %d points, the metadata says %d", c.count, c.meta.points)
		}
		if got := c.specs.sum(); got != c.meta.specDigest {
			return c.fail(-1, -1, -1, "spec digest recomputed from the spec_hash column is %s, the metadata says %s", got, c.meta.specDigest)
		}
	}
	return nil
}

// IsNotOutput reports whether err says the path is not gridstage output.
func IsNotOutput(err error) bool {
	var e *NotOutputError
	return errors.As(err, &e)
}
