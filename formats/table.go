package formats

import (
	"sync"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// tableWriter buffers the rows of one table in Arrow builders and, whenever
// limit rows have accumulated, hands a record batch to its encoder: a
// goroutine of its own that hashes the batch and writes it to the sink. The
// five tables of a set are thus hashed, encoded and compressed side by side
// while the next rows are built, and each table's batches still reach its
// file one at a time, in order, so the bytes do not depend on timing.
type tableWriter struct {
	name   string
	schema *arrow.Schema
	b      *array.RecordBuilder
	hash   *contentHasher
	sink   sink
	limit  int
	rows   int64

	queue   chan arrow.RecordBatch // batches waiting for the encoder
	slots   chan struct{}          // shared by the set's tables: encodes at once
	stopped chan struct{}          // closed when the encoder has returned
	mu      sync.Mutex
	err     error // the encoder's first error; later batches are dropped
	ended   bool  // queue closed
}

// newTableWriter starts a table's encoder; slots bounds how many of a set's
// tables encode at once (each encode holds a compressor and a row group's
// pages), nil for no bound.
func newTableWriter(name string, schema *arrow.Schema, s sink, mem memory.Allocator, limit int, slots chan struct{}) *tableWriter {
	t := &tableWriter{name: name, schema: schema, b: array.NewRecordBuilder(mem, schema),
		hash: newContentHasher(name, schema), sink: s, limit: limit, slots: slots,
		// Unbuffered: a batch is built while the one before it is encoded,
		// so a table holds at most two batches.
		queue: make(chan arrow.RecordBatch), stopped: make(chan struct{})}
	go t.encode()
	return t
}

// encode hashes and writes the queued batches in order until the queue is
// closed. After a failure it releases the remaining batches unwritten.
func (t *tableWriter) encode() {
	defer close(t.stopped)
	for rec := range t.queue {
		if t.failed() == nil {
			if t.slots != nil {
				t.slots <- struct{}{}
			}
			err := t.hash.add(rec)
			if err == nil {
				err = t.sink.write(rec)
			}
			if t.slots != nil {
				<-t.slots
			}
			if err != nil {
				t.mu.Lock()
				t.err = err
				t.mu.Unlock()
			}
		}
		rec.Release()
	}
}

func (t *tableWriter) failed() error {
	t.mu.Lock()
	defer t.mu.Unlock()
	return t.err
}

func (t *tableWriter) i32(col int) *array.Int32Builder { return t.b.Field(col).(*array.Int32Builder) }
func (t *tableWriter) f64(col int) *array.Float64Builder {
	return t.b.Field(col).(*array.Float64Builder)
}
func (t *tableWriter) str(col int) *array.StringBuilder { return t.b.Field(col).(*array.StringBuilder) }
func (t *tableWriter) boolean(col int) *array.BooleanBuilder {
	return t.b.Field(col).(*array.BooleanBuilder)
}

// endRow counts a completed row and hands over a full batch.
func (t *tableWriter) endRow() error { return t.endRows(1) }

// endRows counts k completed rows and hands over a full batch; the rows
// must not overfill it (k ≤ the room left, or 1).
func (t *tableWriter) endRows(k int) error {
	t.rows += int64(k)
	if t.b.Field(0).Len() >= t.limit {
		return t.flush()
	}
	return nil
}

// flush hands the buffered rows to the encoder as one batch (one Parquet
// row group). It returns the encoder's error, if it has failed.
func (t *tableWriter) flush() error {
	if err := t.failed(); err != nil {
		return err
	}
	if t.b.Field(0).Len() == 0 {
		return nil
	}
	t.queue <- t.b.NewRecordBatch()
	return nil
}

// finish hands over the last rows and waits until every batch is hashed
// and written; the content hash is complete once it returns nil.
func (t *tableWriter) finish() error {
	err := t.flush()
	t.stop()
	if err != nil {
		return err
	}
	return t.failed()
}

// stop closes the queue and waits for the encoder.
func (t *tableWriter) stop() {
	if !t.ended {
		t.ended = true
		close(t.queue)
	}
	<-t.stopped
}

// release stops the encoder and frees the builders.
func (t *tableWriter) release() {
	t.stop()
	t.b.Release()
}

// appendNullable appends v, or a null when absent.
func appendNullable(b *array.Float64Builder, v []float64, i int) {
	if v == nil {
		b.AppendNull()
		return
	}
	b.Append(v[i])
}
