package formats

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"hash"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// canonicalNaN is the bit pattern every NaN is hashed as, so that a reader
// that changes NaN payloads does not change the hash.
const canonicalNaN = 0x7FF8000000000000

// contentHasher accumulates the content hash of one table, one record batch
// at a time: one SHA-256 per column over its values in row order, combined
// at the end with the table name, the row count and the column names and
// types (docs/HASHES.md, "Content hash").
type contentHasher struct {
	table  string
	schema *arrow.Schema
	cols   []hash.Hash
	rows   int64
	buf    []byte
}

func newContentHasher(table string, schema *arrow.Schema) *contentHasher {
	h := &contentHasher{table: table, schema: schema, cols: make([]hash.Hash, schema.NumFields())}
	for i := range h.cols {
		h.cols[i] = sha256.New()
	}
	return h
}

// typeName is the name a column type is hashed under.
func typeName(t arrow.DataType) string {
	switch t.ID() {
	case arrow.INT32:
		return "int32"
	case arrow.FLOAT64:
		return "float64"
	case arrow.BOOL:
		return "bool"
	case arrow.STRING:
		return "utf8"
	}
	return t.String()
}

// add hashes the rows of rec, whose columns must match the hasher's schema.
func (h *contentHasher) add(rec arrow.RecordBatch) error {
	if err := sameColumns(rec.Schema(), h.schema); err != nil {
		return err
	}
	for i := range h.cols {
		b, err := encodeColumn(h.buf[:0], rec.Column(i))
		if err != nil {
			return fmt.Errorf("column %q: %w", h.schema.Field(i).Name, err)
		}
		h.cols[i].Write(b)
		h.buf = b
	}
	h.rows += rec.NumRows()
	return nil
}

// encodeColumn appends the canonical encoding of every value of a to b:
// a null is the byte 0x00; any other value is 0x01 followed by its bytes
// (int32: 4 bytes little-endian; float64: the 8 bytes of its IEEE 754 bit
// pattern little-endian, NaN as 0x7FF8000000000000; bool: one byte 0 or 1;
// utf8: its byte length as 8 bytes little-endian, then the bytes).
func encodeColumn(b []byte, a arrow.Array) ([]byte, error) {
	n := a.Len()
	switch c := a.(type) {
	case *array.Int32:
		for i := 0; i < n; i++ {
			if c.IsNull(i) {
				b = append(b, 0)
				continue
			}
			b = append(b, 1)
			b = binary.LittleEndian.AppendUint32(b, uint32(c.Value(i)))
		}
	case *array.Float64:
		for i := 0; i < n; i++ {
			if c.IsNull(i) {
				b = append(b, 0)
				continue
			}
			b = append(b, 1)
			b = binary.LittleEndian.AppendUint64(b, floatBits(c.Value(i)))
		}
	case *array.Boolean:
		for i := 0; i < n; i++ {
			switch {
			case c.IsNull(i):
				b = append(b, 0)
			case c.Value(i):
				b = append(b, 1, 1)
			default:
				b = append(b, 1, 0)
			}
		}
	case *array.String:
		for i := 0; i < n; i++ {
			if c.IsNull(i) {
				b = append(b, 0)
				continue
			}
			s := c.Value(i)
			b = append(b, 1)
			b = binary.LittleEndian.AppendUint64(b, uint64(len(s)))
			b = append(b, s...)
		}
	default:
		return b, fmt.Errorf("type %s has no canonical encoding", a.DataType())
	}
	return b, nil
}

func floatBits(v float64) uint64 {
	if math.IsNaN(v) {
		return canonicalNaN
	}
	return math.Float64bits(v)
}

// sum returns the content hash in lower-case hex.
func (h *contentHasher) sum() string {
	top := sha256.New()
	fmt.Fprintf(top, "gridstage content hash v1\ntable %s\nrows %d\n", h.table, h.rows)
	for i, c := range h.cols {
		f := h.schema.Field(i)
		fmt.Fprintf(top, "column %s %s %x\n", f.Name, typeName(f.Type), c.Sum(nil))
	}
	return hex.EncodeToString(top.Sum(nil))
}
