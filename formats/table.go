package formats

import (
	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// tableWriter buffers the rows of one table in Arrow builders and hands a
// record batch to its sink whenever limit rows have accumulated.
type tableWriter struct {
	name   string
	schema *arrow.Schema
	b      *array.RecordBuilder
	hash   *contentHasher
	sink   sink
	limit  int
	rows   int64
}

func newTableWriter(name string, schema *arrow.Schema, s sink, mem memory.Allocator, limit int) *tableWriter {
	return &tableWriter{name: name, schema: schema, b: array.NewRecordBuilder(mem, schema),
		hash: newContentHasher(name, schema), sink: s, limit: limit}
}

func (t *tableWriter) i32(col int) *array.Int32Builder { return t.b.Field(col).(*array.Int32Builder) }
func (t *tableWriter) f64(col int) *array.Float64Builder {
	return t.b.Field(col).(*array.Float64Builder)
}
func (t *tableWriter) str(col int) *array.StringBuilder { return t.b.Field(col).(*array.StringBuilder) }
func (t *tableWriter) boolean(col int) *array.BooleanBuilder {
	return t.b.Field(col).(*array.BooleanBuilder)
}

// endRow counts a completed row and flushes a full batch.
func (t *tableWriter) endRow() error {
	t.rows++
	if t.b.Field(0).Len() >= t.limit {
		return t.flush()
	}
	return nil
}

// flush hashes and writes the buffered rows as one batch (one Parquet row
// group).
func (t *tableWriter) flush() error {
	if t.b.Field(0).Len() == 0 {
		return nil
	}
	rec := t.b.NewRecordBatch()
	defer rec.Release()
	if err := t.hash.add(rec); err != nil {
		return err
	}
	return t.sink.write(rec)
}

func (t *tableWriter) release() { t.b.Release() }

// appendNullable appends v, or a null when absent.
func appendNullable(b *array.Float64Builder, v []float64, i int) {
	if v == nil {
		b.AppendNull()
		return
	}
	b.Append(v[i])
}
