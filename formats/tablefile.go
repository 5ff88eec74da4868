package formats

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"gridstage/internal/pqcheck"
)

// NotOutputError reports a path that is not gridstage output at all (as
// opposed to gridstage output that is damaged or fails a check).
type NotOutputError struct {
	Path, Reason string
}

func (e *NotOutputError) Error() string {
	return fmt.Sprintf("%s is not gridstage output: %s", e.Path, e.Reason)
}

// DamagedError reports a gridstage file that cannot be read: truncated,
// overwritten or corrupted.
type DamagedError struct {
	Path string
	Err  error
}

func (e *DamagedError) Error() string {
	return fmt.Sprintf("%s is damaged or truncated: %v", e.Path, e.Err)
}

func (e *DamagedError) Unwrap() error { return e.Err }

// guard runs f and turns a panic inside the Arrow or Parquet libraries —
// which can happen on corrupted bytes — into an error.
func guard(f func() error) (err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("reading failed: %v", p)
			if os.Getenv("GRIDSTAGE_DEBUG") != "" {
				err = fmt.Errorf("%w\n%s", err, debug.Stack())
			}
		}
	}()
	return f()
}

// tableFile reads the record batches of one table file in order.
type tableFile struct {
	path   string
	format Format
	meta   *fileMeta
	schema *arrow.Schema
	f      *os.File

	// canonical: the file claims to be gridstage's own encoding (every
	// Arrow IPC file; a Parquet file whose created_by is CreatedBy), which
	// verify checks by re-encoding its values.
	canonical bool

	// Parquet
	pq *file.Reader
	rr pqarrow.RecordReader
	// Arrow IPC
	ipcr *ipc.FileReader
	next int

	cur arrow.RecordBatch
}

// hasGridstageKeys reports whether metadata looks like gridstage's.
func hasGridstageKeys(raw map[string]string) bool {
	for k := range raw {
		if strings.HasPrefix(k, "gridstage.") {
			return true
		}
	}
	return false
}

// readBatchRows is the batch size used when reading Parquet whose row
// groups are empty or larger than maxBatchRows.
const (
	readBatchRows = 1 << 16
	maxBatchRows  = 1 << 20
)

// readBufferBytes is the buffer through which Parquet pages are read, one
// page at a time, instead of reading each column chunk whole (a merge
// keeps several sets open at once).
const readBufferBytes = 1 << 16

// openTable opens a table file of either format and checks its metadata
// and columns. A file not named like gridstage output that cannot be read
// or lacks gridstage metadata gives a *NotOutputError; one named like it
// gives a *DamagedError or a *MetadataError.
func openTable(path string, mem memory.Allocator) (*tableFile, error) {
	_, nameTable, nameFormat, named := ParseFileName(path)
	fi, err := os.Stat(path)
	if err != nil {
		return nil, &NotOutputError{Path: path, Reason: "cannot read it: " + errors.Unwrap(err).Error()}
	}
	if fi.IsDir() {
		return nil, &NotOutputError{Path: path, Reason: "it is a folder"}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, &NotOutputError{Path: path, Reason: err.Error()}
	}
	t := &tableFile{path: path, f: f}
	format, err := sniffFormat(f)
	if err != nil {
		f.Close()
		if named {
			return nil, &DamagedError{Path: path, Err: err}
		}
		return nil, &NotOutputError{Path: path, Reason: "neither a Parquet nor an Arrow IPC file"}
	}
	t.format = format
	t.canonical = format == Arrow
	var raw map[string]string
	err = guard(func() error {
		var err error
		raw, err = t.open(mem)
		return err
	})
	if err != nil {
		t.close()
		if named {
			return nil, &DamagedError{Path: path, Err: err}
		}
		return nil, &NotOutputError{Path: path, Reason: "cannot read it as " + format.String() + ": " + err.Error()}
	}
	if !hasGridstageKeys(raw) {
		t.close()
		if named {
			// Named as gridstage output but stripped of its metadata: a
			// writer that keeps only the values (a plain DuckDB COPY, say)
			// rewrote it. That is a failed check, not a wrong path.
			return nil, &MetadataError{Path: path, Key: "gridstage.*", Problem: "is missing: the file carries none of gridstage's metadata, so another writer has rewritten it without its key/value metadata and its provenance cannot be checked"}
		}
		return nil, &NotOutputError{Path: path, Reason: "it has no gridstage metadata"}
	}
	if t.meta, err = parseMeta(path, raw); err != nil {
		t.close()
		return nil, err
	}
	if named && (nameTable != t.meta.table || nameFormat != format) {
		t.close()
		return nil, &MetadataError{Path: path, Key: KeyTable,
			Problem: fmt.Sprintf("says %s (%s) but the file name says %s (%s)", t.meta.table, format, nameTable, nameFormat)}
	}
	want := schemaFor(t.meta.table, t.meta.header.Dim, t.meta.header.Params)
	if err := sameColumns(t.schema, want); err != nil {
		t.close()
		return nil, &DamagedError{Path: path, Err: fmt.Errorf("%s table %v", t.meta.table, err)}
	}
	if t.pq != nil && !t.canonical {
		// Another writer's Parquet: check what standard readers rely on.
		if err := guard(func() error { return pqcheck.Check(t.pq, t.f, fi.Size(), want) }); err != nil {
			t.close()
			return nil, &DamagedError{Path: path, Err: err}
		}
	}
	t.schema = want
	return t, nil
}

// sniffFormat tells Parquet from Arrow IPC by their magic bytes.
func sniffFormat(f *os.File) (Format, error) {
	head := make([]byte, 6)
	if _, err := f.ReadAt(head, 0); err != nil {
		return 0, fmt.Errorf("too short to hold a header")
	}
	switch {
	case string(head[:4]) == "PAR1":
		return Parquet, nil
	case string(head) == "ARROW1":
		return Arrow, nil
	}
	return 0, fmt.Errorf("unknown leading bytes %q", head)
}

// open reads the footer and prepares batch reading; it returns the
// key/value metadata.
func (t *tableFile) open(mem memory.Allocator) (map[string]string, error) {
	raw := map[string]string{}
	if t.format == Arrow {
		fi, err := t.f.Stat()
		if err != nil {
			return nil, err
		}
		if err := checkIPCFile(t.f, fi.Size()); err != nil {
			return nil, err
		}
		r, err := ipc.NewFileReader(t.f, ipc.WithAllocator(mem))
		if err != nil {
			return nil, err
		}
		t.ipcr = r
		t.schema = r.Schema()
		// Stream readers take the schema (and metadata) from the message
		// at the start of the file; it must say what the footer says.
		sr, err := ipc.NewReader(io.NewSectionReader(t.f, 8, fi.Size()-8), ipc.WithAllocator(mem))
		if err != nil {
			return nil, fmt.Errorf("leading schema message: %w", err)
		}
		lead := sr.Schema()
		sr.Release()
		if !lead.Equal(t.schema) || !lead.Metadata().Equal(t.schema.Metadata()) {
			return nil, fmt.Errorf("the schema at the start of the file differs from the one in its footer")
		}
		md := t.schema.Metadata()
		for i, k := range md.Keys() {
			raw[k] = md.Values()[i]
		}
		return raw, nil
	}
	props := parquet.NewReaderProperties(mem)
	props.BufferedStreamEnabled = true
	props.BufferSize = readBufferBytes
	pr, err := file.NewParquetReader(t.f, file.WithReadProps(props))
	if err != nil {
		return nil, err
	}
	for _, kv := range pr.MetaData().KeyValueMetadata() {
		if kv.Value != nil {
			raw[kv.Key] = *kv.Value
		}
	}
	t.canonical = isOwnParquet(pr.MetaData().GetCreatedBy())
	// Batches of one row group each (gridstage writes row groups of equal
	// size but the last), so that re-encoding them gives the file's own
	// row groups.
	batch := int64(readBatchRows)
	if pr.NumRowGroups() > 0 {
		if n := pr.MetaData().RowGroup(0).NumRows(); n > 0 && n <= maxBatchRows {
			batch = n
		}
	}
	t.pq = pr
	fr, err := pqarrow.NewFileReader(pr, pqarrow.ArrowReadProperties{BatchSize: batch}, mem)
	if err != nil {
		return nil, err
	}
	if t.schema, err = fr.Schema(); err != nil {
		return nil, err
	}
	t.rr, err = fr.GetRecordReader(context.Background(), nil, nil)
	return raw, err
}

// batch returns the next record batch, or io.EOF after the last. The batch
// stays valid until the next call or close.
func (t *tableFile) batch() (arrow.RecordBatch, error) {
	if t.cur != nil {
		t.cur.Release()
		t.cur = nil
	}
	var rec arrow.RecordBatch
	err := guard(func() error {
		if t.ipcr != nil {
			if t.next >= t.ipcr.NumRecords() {
				return io.EOF
			}
			r, err := t.ipcr.RecordBatch(t.next)
			if err != nil {
				return err
			}
			t.next++
			r.Retain()
			rec = r
		} else {
			if !t.rr.Next() {
				if err := t.rr.Err(); err != nil && err != io.EOF {
					return err
				}
				return io.EOF
			}
			rec = t.rr.RecordBatch()
			rec.Retain()
		}
		if err := sameColumns(rec.Schema(), t.schema); err != nil {
			return err
		}
		for i, c := range rec.Columns() {
			if int64(c.Len()) != rec.NumRows() {
				return fmt.Errorf("column %q has %d values in a batch of %d rows", t.schema.Field(i).Name, c.Len(), rec.NumRows())
			}
		}
		return validateBatch(rec)
	})
	if err == io.EOF {
		if rec != nil {
			rec.Release()
		}
		return nil, io.EOF
	}
	if err != nil {
		if rec != nil {
			rec.Release()
		}
		return nil, &DamagedError{Path: t.path, Err: err}
	}
	t.cur = rec
	return rec, nil
}

func (t *tableFile) close() {
	if t.cur != nil {
		t.cur.Release()
		t.cur = nil
	}
	if t.rr != nil {
		t.rr.Release()
	}
	if t.ipcr != nil {
		t.ipcr.Close()
	}
	t.f.Close()
}

// validateBatch checks every column's buffers (offsets of strings, buffer
// sizes), so that corrupted Arrow IPC bytes fail here rather than when a
// value is read.
func validateBatch(rec arrow.RecordBatch) error {
	for i, c := range rec.Columns() {
		if err := array.ValidateFull(c); err != nil {
			return fmt.Errorf("column %q: %w", rec.Schema().Field(i).Name, err)
		}
	}
	return nil
}
