package manifests

import (
	"context"
	"fmt"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// readParquet reads a Parquet draw table: one numeric column per parameter
// (float64, float32 or an integer type), no nulls. Positions in errors are
// those the table would have written as CSV: the header is line 1, data
// row k (from 1) is line k+1, and the column is the column's index from 1.
func (d *decoder) readParquet(t *drawTable, full string, at loc, path string, names, ignore []string) (ok bool) {
	f, ok := d.openTable(full, at)
	if !ok {
		return false
	}
	defer f.Close()
	// A damaged file must give an error, never a crash of the whole run.
	defer func() {
		if p := recover(); p != nil {
			d.r.add(at, ErrFile, "cannot read %s as Parquet: %v", t.file, p)
			ok = false
		}
	}()
	pr, err := file.NewParquetReader(f)
	if err != nil {
		d.r.add(at, ErrFile, "cannot read %s as Parquet: %v", t.file, err)
		return false
	}
	defer pr.Close()
	if n := pr.NumRows(); n > maxJobs {
		d.r.add(at, ErrRange, "%s has %d rows: want at most %d draws", t.file, n, maxJobs)
		return false
	}
	fr, err := pqarrow.NewFileReader(pr, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		d.r.add(at, ErrFile, "cannot read %s as Parquet: %v", t.file, err)
		return false
	}
	schema, err := fr.Schema()
	if err != nil {
		d.r.add(at, ErrFile, "cannot read %s as Parquet: %v", t.file, err)
		return false
	}
	cols := make([]string, schema.NumFields())
	for i, fld := range schema.Fields() {
		cols[i] = fld.Name
	}
	cellAt := func(row, col int) loc { return loc{pos: Pos{File: full, Line: row + 2, Column: col + 1}} }
	use, ok := d.header(t, cols, func(i int) loc { l := cellAt(-1, i); l.path = path; return l }, at, names, ignore)
	if !ok {
		return false
	}
	// Only the columns in use are decoded (an ignored column may be text
	// of any size), each must be numeric, and what they decode to is
	// bounded before anything is decoded.
	var indices []int
	for c, u := range use {
		if !u {
			continue
		}
		if !isNumericType(schema.Field(c).Type) {
			d.r.add(cellAt(-1, c), ErrType, "column %s of %s holds %s values: want numbers", shorten(cols[c], 40), t.file, schema.Field(c).Type)
			return false
		}
		if len(pr.MetaData().Schema.Column(c).ColumnPath()) != 1 || pr.MetaData().Schema.NumColumns() != len(cols) {
			d.r.add(at, ErrFile, "%s has nested columns: want a flat table of numbers", t.file)
			return false
		}
		indices = append(indices, c)
	}
	var decoded int64
	for g := 0; g < pr.NumRowGroups(); g++ {
		rg := pr.MetaData().RowGroup(g)
		for _, c := range indices {
			cc, err := rg.ColumnChunk(c)
			if err != nil {
				d.r.add(at, ErrFile, "cannot read %s as Parquet: %v", t.file, err)
				return false
			}
			decoded += max(cc.TotalUncompressedSize(), 0)
		}
	}
	if limit := int64(len(indices)) * (maxJobs + 1) * 16; decoded > limit {
		d.r.add(at, ErrRange, "%s: its %d columns in use decode to %d bytes, more than %d numbers of up to 8 bytes each can take (%d): the file is damaged or not a draw table",
			t.file, len(indices), decoded, maxJobs, limit)
		return false
	}
	groups := make([]int, pr.NumRowGroups())
	for g := range groups {
		groups[g] = g
	}
	tbl, err := fr.ReadRowGroups(context.Background(), indices, groups)
	if err != nil {
		d.r.add(at, ErrFile, "cannot read %s as Parquet: %v", t.file, err)
		return false
	}
	defer tbl.Release()
	nrows := int(tbl.NumRows())
	if nrows == 0 {
		d.r.add(at, ErrMissing, "%s has no rows: want one row per draw", t.file)
		return false
	}
	t.rows = make([][]num, nrows)
	for k, c := range indices {
		row := 0
		cellPath := joinKey(path, cols[c]) // shared by the column's cells
		for _, chunk := range tbl.Column(k).Data().Chunks() {
			for k := 0; k < chunk.Len(); k++ {
				l := cellAt(row, c)
				l.path = cellPath
				v, good := cellValue(chunk, k)
				if !good {
					d.r.add(l, ErrType, "column %s holds %s: want numbers without nulls", cols[c], describeCell(chunk, k))
					return false
				}
				t.rows[row] = append(t.rows[row], num{v: v, text: formatNumber(v), at: l, set: true})
				row++
			}
		}
	}
	return true
}

// isNumericType reports whether cellValue reads values of type t.
func isNumericType(t arrow.DataType) bool {
	switch t.ID() {
	case arrow.FLOAT64, arrow.FLOAT32, arrow.INT64, arrow.INT32, arrow.INT16, arrow.INT8, arrow.UINT32, arrow.UINT16, arrow.UINT8:
		return true
	}
	return false
}

// cellValue reads a numeric cell.
func cellValue(a arrow.Array, k int) (float64, bool) {
	if a.IsNull(k) {
		return math.NaN(), false
	}
	switch x := a.(type) {
	case *array.Float64:
		return x.Value(k), true
	case *array.Float32:
		return float64(x.Value(k)), true
	case *array.Int64:
		return float64(x.Value(k)), true
	case *array.Int32:
		return float64(x.Value(k)), true
	case *array.Int16:
		return float64(x.Value(k)), true
	case *array.Int8:
		return float64(x.Value(k)), true
	case *array.Uint32:
		return float64(x.Value(k)), true
	case *array.Uint16:
		return float64(x.Value(k)), true
	case *array.Uint8:
		return float64(x.Value(k)), true
	}
	return 0, false
}

func describeCell(a arrow.Array, k int) string {
	if a.IsNull(k) {
		return "a null"
	}
	return fmt.Sprintf("a %s value", a.DataType())
}
