package formats

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strconv"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"gridstage/internal/version"
	"gridstage/solver"
)

// Options choose how a Set is written. The zero value writes Parquet with
// the default batch size and allocator.
type Options struct {
	// Format is the file format; the zero value is Parquet.
	Format Format
	// BatchRows is the number of rows per Parquet row group or Arrow record
	// batch; 0 means DefaultBatchRows. Memory use is proportional to it.
	BatchRows int
	// Allocator allocates Arrow buffers; nil means memory.DefaultAllocator.
	Allocator memory.Allocator
	// NoPointList leaves Result.Points nil, for a caller that takes each
	// point's hashes from EndPoint: a set of a million points need not
	// keep them all.
	NoPointList bool
}

// DefaultBatchRows is the default number of rows per row group or batch.
const DefaultBatchRows = 1 << 16

// File describes one written file.
type File struct {
	Table       string
	Path        string
	Rows        int64
	ContentHash string
	// Bytes is the SHA-256 of the file's bytes, in hex (docs/HASHES.md,
	// "Byte digest"): unlike the content hash it changes when the file is
	// re-encoded or anything in it besides the values changes.
	Bytes string
}

// PointHash gives the hashes of one written sweep point.
type PointHash struct {
	Point     int
	SpecHash  string
	ChainHash string
}

// Result describes a written Set.
type Result struct {
	// Files lists the files in Tables order.
	Files []File
	// Points lists every point in order with its spec and chain hashes.
	Points []PointHash
	// SpecDigest is the digest of the per-point spec hashes.
	SpecDigest string
}

// Writer streams the records of one Set into its files. Append records in
// (Point, Age) order, then Close; until Close succeeds no file of the set
// exists under its final name. A Writer is not safe for concurrent use.
type Writer struct {
	dir    string
	h      Header
	mem    memory.Allocator
	tables map[string]*tableWriter
	names  []string // the set's tables, in writing order (tablesOf)
	sinks  []sink
	specs  *specDigest
	done   []PointHash
	points int  // points finished
	list   bool // keep done

	cur      *pointRow
	curHash  *chainHasher
	curEnded bool // the point in progress was finished by EndPoint
	lastAge  int
	terminal bool // the last record appended had no transition

	err    error // sticky: set by an I/O failure; the writer is unusable
	closed bool
}

// Create starts writing a Set for header h into folder dir, which must
// exist. Files already there under the set's names are replaced only on
// Close.
func Create(dir string, h Header, opt Options) (*Writer, error) {
	if err := checkName(h.Process); err != nil {
		return nil, err
	}
	if h.Dim < 1 {
		return nil, fmt.Errorf("formats: header dimension %d, want ≥ 1", h.Dim)
	}
	if h.Kind == "" || h.Method == "" {
		return nil, fmt.Errorf("formats: header needs a kind and a method")
	}
	if h.Tool == "" {
		h.Tool = version.Tool
	}
	if h.Numeric == "" {
		h.Numeric = version.Numeric
	}
	h.Params = append([]string(nil), h.Params...)
	sort.Strings(h.Params)
	for i, p := range h.Params {
		if p == "" || (i > 0 && p == h.Params[i-1]) {
			return nil, fmt.Errorf("formats: swept parameter names must be non-empty and distinct, got %q", h.Params)
		}
	}
	if fi, err := os.Stat(dir); err != nil || !fi.IsDir() {
		return nil, fmt.Errorf("formats: output folder %s does not exist", dir)
	}
	mem := opt.Allocator
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	limit := opt.BatchRows
	if limit <= 0 {
		limit = DefaultBatchRows
	}
	w := &Writer{dir: dir, h: h, mem: mem, tables: map[string]*tableWriter{}, names: tablesOf(h), specs: newSpecDigest()}
	w.list = !opt.NoPointList
	// As many tables encode at once as the process may use cores: more
	// would not be faster, and each holds a compressor and a row group.
	slots := make(chan struct{}, runtime.GOMAXPROCS(0))
	for _, name := range w.names {
		schema := schemaFor(name, h.Dim, h.Params)
		path := filepath.Join(dir, FileName(h.Process, name, opt.Format))
		var s sink
		var err error
		if opt.Format == Arrow {
			s, err = newArrowSink(path, schema, mem)
		} else {
			s, err = newParquetSink(path, schema, mem)
		}
		if err != nil {
			w.Abort()
			return nil, err
		}
		w.sinks = append(w.sinks, s)
		w.tables[name] = newTableWriter(name, schema, s, mem, limit, slots)
	}
	return w, nil
}

// RecordError reports a record that does not fit its Set; nothing of it
// was written and the Writer remains usable.
type RecordError struct {
	Point, Age int
	Problem    string
}

func (e *RecordError) Error() string {
	return fmt.Sprintf("formats: record for point %d, age %d: %s", e.Point, e.Age, e.Problem)
}

// check validates a record against the header and the records before it.
func (w *Writer) check(r *Record) error {
	bad := func(format string, a ...any) error {
		return &RecordError{Point: r.Point, Age: r.Age, Problem: fmt.Sprintf(format, a...)}
	}
	c := r.Chain
	switch {
	case r.Point < 0 || r.Point > math.MaxInt32:
		return bad("point index out of range")
	case r.Age < 0 || r.Age > math.MaxInt32:
		return bad("age out of range")
	case c == nil:
		return bad("no chain")
	case c.Dim != w.h.Dim:
		return bad("chain dimension %d, header says %d", c.Dim, w.h.Dim)
	case r.SpecHash == "":
		return bad("empty spec hash")
	case !utf8.Valid(r.Spec) || !utf8.ValidString(r.SpecHash):
		return bad("spec or spec hash is not UTF-8 text")
	}
	n := c.States()
	switch {
	case n < 1 || n > math.MaxInt32:
		return bad("chain has %d states", n)
	case len(c.Grid) != n*c.Dim:
		return bad("grid has %d values, want %d", len(c.Grid), n*c.Dim)
	case c.Transition != nil && len(c.Transition) != n*n:
		return bad("transition has %d entries, want %d", len(c.Transition), n*n)
	case c.Transition == nil && (len(r.Diag.States) != 0 || r.Baseline != nil || r.Vector != nil):
		return bad("a terminal age (no transition) has no diagnostics")
	case (r.Baseline == nil) != (r.BaselineTransition == nil):
		return bad("a baseline needs both its diagnostics and its transition matrix")
	case r.Baseline != nil && len(r.BaselineTransition) != len(r.Baseline.States)*len(r.Baseline.States):
		return bad("baseline transition has %d entries, want %d", len(r.BaselineTransition), len(r.Baseline.States)*len(r.Baseline.States))
	case r.BaselineVector != nil && r.Baseline == nil:
		return bad("baseline vector diagnostics without baseline diagnostics")
	case len(c.Matched) != n:
		return bad("matched has %d entries, want %d", len(c.Matched), n)
	case r.Initial != nil && len(r.Initial) != n:
		return bad("initial distribution has %d entries, want %d", len(r.Initial), n)
	case r.Sensitivities != nil && !w.h.Sensitivities:
		return bad("has sensitivities but the set has no sensitivities table (Header.Sensitivities)")
	case r.Sensitivities == nil && w.h.Sensitivities && c.Transition != nil:
		return bad("has no sensitivities but the set's header asks for them")
	case r.Sensitivities != nil && c.Transition == nil:
		return bad("a terminal age (no transition) has no sensitivities")
	}
	if r.Sensitivities != nil {
		if err := checkSensitivities(r.Sensitivities, n, c.Dim); err != nil {
			return bad("sensitivities: %v", err)
		}
	}
	if c.Transition != nil {
		if err := checkDiag(&r.Diag, n, w.h.Dim); err != nil {
			return bad("diagnostics: %v", err)
		}
	}
	if r.Baseline != nil {
		if err := checkDiag(r.Baseline, len(r.Baseline.States), w.h.Dim); err != nil {
			return bad("baseline diagnostics: %v", err)
		}
	}
	if r.Vector != nil {
		if err := r.Vector.check(n, w.h.Dim); err != nil {
			return bad("vector diagnostics: %v", err)
		}
	}
	if r.BaselineVector != nil {
		if err := r.BaselineVector.check(len(r.Baseline.States), w.h.Dim); err != nil {
			return bad("baseline vector diagnostics: %v", err)
		}
	}
	if len(r.Params) != len(w.h.Params) {
		return bad("%d swept parameters, header lists %d", len(r.Params), len(w.h.Params))
	}
	for _, p := range w.h.Params {
		if _, ok := r.Params[p]; !ok {
			return bad("no value for swept parameter %q", p)
		}
	}
	if w.cur != nil {
		switch {
		case r.Point < w.cur.point:
			return bad("points must be appended in increasing order (previous point %d)", w.cur.point)
		case r.Point == w.cur.point && w.curEnded:
			return bad("the point was already finished (EndPoint)")
		case r.Point == w.cur.point && w.terminal:
			return bad("the point's terminal age %d (a grid without transition) must be its last", w.lastAge)
		case r.Point == w.cur.point && r.Age <= w.lastAge:
			return bad("ages of a point must be appended in increasing order (previous age %d)", w.lastAge)
		case r.Point == w.cur.point && (r.SpecHash != w.cur.specHash || string(r.Spec) != string(w.cur.spec)):
			return bad("spec differs from the point's earlier ages")
		case r.Point == w.cur.point:
			for k, p := range w.h.Params {
				if math.Float64bits(r.Params[p]) != math.Float64bits(w.cur.params[k]) {
					return bad("swept parameter %q differs from the point's earlier ages", p)
				}
			}
		}
	}
	return nil
}

// checkDiag validates the shape of diagnostics for a chain of n states.
func checkDiag(d *solver.Diagnostics, n, dim int) error {
	switch {
	case d.Method == "":
		return fmt.Errorf("no method name")
	case len(d.States) != n:
		return fmt.Errorf("%d states, want %d", len(d.States), n)
	case d.Stationary != nil && len(d.Stationary) != n:
		return fmt.Errorf("stationary distribution has %d entries, want %d", len(d.Stationary), n)
	case !utf8.ValidString(d.Method) || !utf8.ValidString(d.StationaryErr):
		return fmt.Errorf("method or stationary error is not UTF-8 text")
	}
	for i, s := range d.States {
		if len(s.Level) != dim {
			return fmt.Errorf("state %d has a level of %d values, want %d", i, len(s.Level), dim)
		}
	}
	return nil
}

// Append writes one record. A *RecordError means the record was rejected
// and nothing was written; any other error leaves the Writer unusable
// (call Abort).
func (w *Writer) Append(r Record) error {
	if w.closed {
		return errors.New("formats: Append after Close or Abort")
	}
	if w.err != nil {
		return w.err
	}
	if err := w.check(&r); err != nil {
		return err
	}
	if w.cur == nil || r.Point != w.cur.point {
		if err := w.endPoint(); err != nil {
			return w.fail(err)
		}
		params := make([]float64, len(w.h.Params))
		for k, p := range w.h.Params {
			params[k] = r.Params[p]
		}
		w.cur = &pointRow{point: r.Point, specHash: r.SpecHash, spec: append([]byte(nil), r.Spec...), params: params}
		w.curHash, w.curEnded = newChainHasher(), false
	}
	w.cur.ages++
	w.lastAge, w.terminal = r.Age, r.Chain.Transition == nil
	matched := make([]int32, len(r.Chain.Matched))
	for i, m := range r.Chain.Matched {
		matched[i] = int32(m)
	}
	w.curHash.add(r.Age, r.Chain.States(), r.Chain.Dim, r.Chain.Grid, r.Chain.Transition, matched, r.Initial)
	steps := []func() error{
		func() error { return appendTransitions(w.tables[TableTransitions], &r) },
		func() error { return appendBaseline(w.tables[TableBaseline], &r) },
		func() error { return appendStates(w.tables[TableStates], &r, w.h.Dim) },
		func() error { return appendDiagnostics(w.tables[TableDiagnostics], &r, w.h.Dim) },
		func() error { return appendSummary(w.tables[TableSummary], &r, w.h.Dim) },
	}
	if w.terminal {
		steps = steps[2:3]
	} else if w.h.Sensitivities {
		steps = append(steps, func() error { return appendSensitivities(w.tables[TableSensitivities], &r, w.h.Dim) })
	}
	for _, step := range steps {
		if err := step(); err != nil {
			return w.fail(err)
		}
	}
	return nil
}

func (w *Writer) fail(err error) error {
	w.err = err
	return err
}

// EndPoint finishes the point of the records appended last and returns
// its chain hash (docs/HASHES.md): no more ages of it may follow. Calling
// it is optional — the next point or Close finishes a point — and spares a
// caller that needs the hash at once from computing it a second time.
func (w *Writer) EndPoint() (string, error) {
	if w.closed {
		return "", errors.New("formats: EndPoint after Close or Abort")
	}
	if w.err != nil {
		return "", w.err
	}
	if w.cur == nil {
		return "", errors.New("formats: EndPoint before any record")
	}
	if err := w.endPoint(); err != nil {
		return "", w.fail(err)
	}
	return w.cur.chainHash, nil
}

// endPoint writes the points row of the point in progress, once.
func (w *Writer) endPoint() error {
	if w.cur == nil || w.curEnded {
		return nil
	}
	w.curEnded = true
	w.cur.chainHash = w.curHash.sum()
	w.specs.add(w.cur.point, w.cur.specHash)
	w.points++
	if w.list {
		w.done = append(w.done, PointHash{Point: w.cur.point, SpecHash: w.cur.specHash, ChainHash: w.cur.chainHash})
	}
	return appendPoint(w.tables[TablePoints], w.cur)
}

// Close finishes every file and renames them into place, the points file
// last, then syncs the folder. On error every temporary file is removed
// and no file of the set is renamed (files renamed before a failing rename
// stay, but the points file, renamed last, does not).
func (w *Writer) Close() (Result, error) {
	if w.closed {
		return Result{}, errors.New("formats: Close after Close or Abort")
	}
	if w.err != nil {
		w.Abort()
		return Result{}, w.err
	}
	res, err := w.close()
	w.closed = true
	w.release()
	if err != nil {
		for _, s := range w.sinks {
			s.discard()
		}
		return Result{}, err
	}
	return res, nil
}

func (w *Writer) close() (Result, error) {
	if err := w.endPoint(); err != nil {
		return Result{}, err
	}
	var single *pointRow // the only point, the last one appended
	if w.points == 1 {
		single = w.cur
	}
	res := Result{Points: w.done, SpecDigest: w.specs.sum()}
	base := baseMeta(w.h, w.points, res.SpecDigest)
	if single != nil {
		base[KeySpecHash] = single.specHash
		base[KeySpec] = string(single.spec)
	}
	hashes := map[string]string{}
	// Hand every table's last batch over first, so that their encoders
	// finish side by side.
	for _, name := range w.names {
		if err := w.tables[name].flush(); err != nil {
			return Result{}, err
		}
	}
	for i, name := range w.names {
		t := w.tables[name]
		if err := t.finish(); err != nil {
			return Result{}, err
		}
		meta := make(map[string]string, len(base)+4)
		for k, v := range base {
			meta[k] = v
		}
		meta[KeyTable] = name
		meta[KeyRows] = strconv.FormatInt(t.rows, 10)
		meta[KeyContentHash] = t.hash.sum()
		if name == TablePoints {
			b, _ := json.Marshal(hashes) // map keys are sorted by encoding/json
			meta[KeyTableHashes] = string(b)
		} else {
			hashes[name] = meta[KeyContentHash]
		}
		meta[KeyMetadataHash] = metadataHash(meta)
		if err := w.sinks[i].finish(meta); err != nil {
			return Result{}, err
		}
		res.Files = append(res.Files, File{Table: name, Rows: t.rows, ContentHash: meta[KeyContentHash], Bytes: w.sinks[i].digest(),
			Path: filepath.Join(w.dir, FileName(w.h.Process, name, w.format()))})
	}
	for _, s := range w.sinks {
		if err := s.commit(); err != nil {
			return Result{}, err
		}
	}
	if err := syncDir(w.dir); err != nil {
		return Result{}, err
	}
	return res, nil
}

func (w *Writer) format() Format {
	if _, ok := w.sinks[0].(*arrowSink); ok {
		return Arrow
	}
	return Parquet
}

func (w *Writer) release() {
	for _, t := range w.tables {
		t.release()
	}
	w.tables = nil
}

// Abort discards everything written so far; no file of the set is created.
// It is safe to call after a failed Append or Close, and more than once.
func (w *Writer) Abort() {
	if w.closed {
		return
	}
	w.closed = true
	w.release() // stops the encoders before their files go
	for _, s := range w.sinks {
		s.discard()
	}
}

// Write writes a whole Set in memory to folder dir (a convenience over
// Create, Append and Close).
func Write(dir string, s *Set, opt Options) (Result, error) {
	w, err := Create(dir, s.Header, opt)
	if err != nil {
		return Result{}, err
	}
	for _, r := range s.Records {
		if err := w.Append(r); err != nil {
			w.Abort()
			return Result{}, err
		}
	}
	return w.Close()
}
