package lineage

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"gridstage/internal/atomicfile"
)

// LedgerVersion is the layout version stored in the ledger's metadata.
// Version 2 added the numeric_version column and writes the chain and
// estimate paths relative to the ledger's folder; version 1 ledgers (with
// absolute paths) are still read, and rewritten as version 2 on append.
const LedgerVersion = "2"

const (
	metaKind    = "gridstage.kind"
	metaVersion = "gridstage.ledger_version"
	kindLedger  = "lineage-ledger"
	// createdBy names the layout and the encoding: encoding 2 writes no
	// dictionaries. With them, a ledger past about 15,000 rows fell back
	// to plain pages part way through a column, and the Parquet library
	// lists the two page encodings of such a column in map order, so the
	// same rows did not always give the same bytes and the reader's
	// byte-for-byte check refused the ledger it had just written. Ledgers
	// written before (created_by without the encoding) get the structural
	// checks of other writers' files.
	createdBy = "gridstage lineage ledger " + LedgerVersion + " encoding 2"
)

// columns lists the ledger's columns in order.
var columns = []arrow.Field{
	{Name: "estimate_id", Type: arrow.BinaryTypes.String},
	{Name: "estimate_path", Type: arrow.BinaryTypes.String},
	{Name: "pipeline", Type: arrow.BinaryTypes.String},
	{Name: "stage", Type: arrow.BinaryTypes.String},
	{Name: "stage_version", Type: arrow.BinaryTypes.String},
	{Name: "model", Type: arrow.BinaryTypes.String},
	{Name: "chain_hash", Type: arrow.BinaryTypes.String},
	{Name: "spec_hash", Type: arrow.BinaryTypes.String},
	{Name: "manifest_hash", Type: arrow.BinaryTypes.String},
	{Name: "chain_path", Type: arrow.BinaryTypes.String},
	{Name: "file_hash", Type: arrow.BinaryTypes.String},
	{Name: "process", Type: arrow.BinaryTypes.String},
	{Name: "point", Type: arrow.PrimitiveTypes.Int32},
	{Name: "time", Type: &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}},
	{Name: "numeric_version", Type: arrow.BinaryTypes.String},
}

// columnsV1 is the layout of version 1: the same columns without
// numeric_version.
var columnsV1 = columns[:14]

func schema() *arrow.Schema {
	md := arrow.NewMetadata([]string{metaKind, metaVersion}, []string{kindLedger, LedgerVersion})
	return arrow.NewSchema(columns, &md)
}

func (r *Record) strings() []string {
	return []string{r.EstimateID, r.EstimatePath, r.Pipeline, r.Stage, r.StageVersion, r.Model,
		r.ChainHash, r.SpecHash, r.ManifestHash, r.ChainPath, r.FileHash, r.Process}
}

// Read returns every record of the ledger at path, oldest first. A missing
// ledger is an error wrapping fs.ErrNotExist.
func Read(path string) ([]Record, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return read(f, path)
}

func read(f parquet.ReaderAtSeeker, path string) (recs []Record, err error) {
	defer func() { // the Parquet reader panics on some damaged files
		if r := recover(); r != nil {
			recs, err = nil, fmt.Errorf("lineage: %s is damaged: the Parquet reader failed on it", path)
			if os.Getenv("GRIDSTAGE_DEBUG") != "" {
				err = fmt.Errorf("%w (%v)", err, r)
			}
		}
	}()
	pf, err := file.NewParquetReader(f)
	if err != nil {
		return nil, fmt.Errorf("lineage: %s is not a Parquet file: %w", path, err)
	}
	defer pf.Close()
	kv := pf.MetaData().KeyValueMetadata()
	if kv.FindValue(metaKind) == nil || *kv.FindValue(metaKind) != kindLedger {
		return nil, fmt.Errorf("lineage: %s is not a lineage ledger (metadata %s is not %q)", path, metaKind, kindLedger)
	}
	want := columns
	switch v := kv.FindValue(metaVersion); {
	case v != nil && *v == LedgerVersion:
	case v != nil && *v == "1":
		want = columnsV1
	default:
		return nil, fmt.Errorf("lineage: %s has an unsupported ledger version (this gridstage reads 1 and %s)", path, LedgerVersion)
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		return nil, fmt.Errorf("lineage: %s: %w", path, err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		return nil, fmt.Errorf("lineage: %s: %w", path, err)
	}
	defer tbl.Release()
	if int(tbl.NumCols()) != len(want) {
		return nil, fmt.Errorf("lineage: %s has %d columns, want %d", path, tbl.NumCols(), len(want))
	}
	for i, c := range want {
		if got := tbl.Schema().Field(i); got.Name != c.Name || !arrow.TypeEqual(got.Type, c.Type) {
			return nil, fmt.Errorf("lineage: %s column %d is %s %s, want %s %s", path, i, got.Name, got.Type, c.Name, c.Type)
		}
	}
	tr := array.NewTableReader(tbl, 1<<16)
	defer tr.Release()
	for tr.Next() {
		rec := tr.RecordBatch()
		n := int(rec.NumRows())
		for row := 0; row < n; row++ {
			var r Record
			ptrs := []*string{&r.EstimateID, &r.EstimatePath, &r.Pipeline, &r.Stage, &r.StageVersion, &r.Model,
				&r.ChainHash, &r.SpecHash, &r.ManifestHash, &r.ChainPath, &r.FileHash, &r.Process}
			for c, p := range ptrs {
				*p = rec.Column(c).(*array.String).Value(row)
			}
			r.Point = int(rec.Column(12).(*array.Int32).Value(row))
			r.Time = rec.Column(13).(*array.Timestamp).Value(row).ToTime(arrow.Microsecond).UTC()
			if len(want) > 14 {
				r.Numeric = rec.Column(14).(*array.String).Value(row)
			}
			recs = append(recs, r)
		}
	}
	if err := tr.Err(); err != nil && !errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("lineage: %s: %w", path, err)
	}
	if err := checkStructure(f, pf, recs, want); err != nil {
		return nil, fmt.Errorf("lineage: %s is damaged: %w", path, err)
	}
	return recs, nil
}

// Append adds recs to the ledger at path, creating it (and its folder) if
// needed. It holds an exclusive lock on the ledger's folder (no lock file
// is created) while it reads the old rows and writes old and new rows
// through internal/atomicfile: temporary file in the same folder, fsync,
// rename, folder fsync. The ledger's permissions follow the umask, as
// every other output's do. On any error the old ledger is untouched.
func Append(path string, recs []Record) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o777); err != nil {
		return fmt.Errorf("lineage: %w", err)
	}
	unlock, err := lockDir(dir)
	if err != nil {
		return fmt.Errorf("lineage: lock the folder of %s: %w", path, err)
	}
	defer unlock()
	old, err := Read(path)
	if err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	all := append(old, recs...)
	if err := atomicfile.Write(path, 0o666, func(w io.Writer) error { return write(w, all) }); err != nil {
		return fmt.Errorf("lineage: %w", err)
	}
	return nil
}

// write encodes recs as one Parquet file.
func write(w io.Writer, recs []Record) error {
	mem := memory.DefaultAllocator
	sc := schema()
	b := array.NewRecordBuilder(mem, sc)
	defer b.Release()
	for _, r := range recs {
		for c, s := range r.strings() {
			b.Field(c).(*array.StringBuilder).Append(s)
		}
		b.Field(12).(*array.Int32Builder).Append(int32(r.Point))
		ts, err := arrow.TimestampFromTime(r.Time.UTC(), arrow.Microsecond)
		if err != nil {
			return err
		}
		b.Field(13).(*array.TimestampBuilder).Append(ts)
		b.Field(14).(*array.StringBuilder).Append(r.Numeric)
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	props := parquet.NewWriterProperties(parquet.WithCreatedBy(createdBy), parquet.WithCompression(compress.Codecs.Zstd),
		parquet.WithDictionaryDefault(false))
	fw, err := pqarrow.NewFileWriter(sc, nopCloser{w}, props, pqarrow.DefaultWriterProps())
	if err != nil {
		return err
	}
	if err := fw.Write(rec); err != nil {
		fw.Close()
		return err
	}
	return fw.Close()
}

// nopCloser keeps the Parquet writer from closing the file before Sync.
type nopCloser struct{ w io.Writer }

func (n nopCloser) Write(b []byte) (int, error) { return n.w.Write(b) }

// Now returns the current time at the ledger's resolution.
func Now() time.Time { return time.Now().UTC().Truncate(time.Microsecond) }
