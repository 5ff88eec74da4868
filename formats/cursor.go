package formats

import (
	"io"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// cursor walks the rows of a table file one at a time across batches.
type cursor struct {
	tf   *tableFile
	rec  arrow.RecordBatch
	row  int   // row within rec
	base int64 // file row number of rec's first row
	eof  bool
}

// ok reports whether a row is available, loading the next batch if needed.
func (c *cursor) ok() (bool, error) {
	for !c.eof && (c.rec == nil || c.row >= int(c.rec.NumRows())) {
		if c.rec != nil {
			c.base += c.rec.NumRows()
		}
		rec, err := c.tf.batch()
		if err == io.EOF {
			c.eof, c.rec = true, nil
			return false, nil
		}
		if err != nil {
			return false, err
		}
		c.rec, c.row = rec, 0
	}
	return !c.eof, nil
}

func (c *cursor) advance() { c.row++ }

// fileRow is the current row's number in the file, counting from 0.
func (c *cursor) fileRow() int64 { return c.base + int64(c.row) }

func (c *cursor) i32(col int) int32 { return c.rec.Column(col).(*array.Int32).Value(c.row) }
func (c *cursor) f64(col int) float64 {
	return c.rec.Column(col).(*array.Float64).Value(c.row)
}

// value returns a nullable value column's number, NaN for a null (a
// number that had no finite value, see nullReasons).
func (c *cursor) value(col int) float64 {
	if c.null(col) {
		return math.NaN()
	}
	return c.f64(col)
}
func (c *cursor) str(col int) string   { return c.rec.Column(col).(*array.String).Value(c.row) }
func (c *cursor) boolean(col int) bool { return c.rec.Column(col).(*array.Boolean).Value(c.row) }
func (c *cursor) null(col int) bool    { return c.rec.Column(col).IsNull(c.row) }

// key returns the (point, age) of the current row of a table whose first
// two columns are point and age.
func (c *cursor) key() (int32, int32) { return c.i32(0), c.i32(1) }
