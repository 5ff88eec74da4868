// Package pqcheck checks the structure of a Parquet file that standard
// readers rely on but the Go Parquet library does not need: the footer's
// row counts, the physical and logical type of every column (DuckDB reads a
// BYTE_ARRAY column without a STRING annotation as binary, not text),
// column chunks lying inside the file without overlap, and every data
// page's count of values (Apache Parquet format specification:
// parquet.thrift, FileMetaData, ColumnMetaData, PageHeader).
package pqcheck

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"sort"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/schema"
)

// Check checks the file behind pr, whose bytes r holds (size of them),
// against the flat Arrow schema want. It may panic on a damaged file, like
// the library it reads with: call it under a recover.
func Check(pr *file.Reader, r io.ReaderAt, size int64, want *arrow.Schema) error {
	md := pr.MetaData()
	footerStart := size - 8 - int64(md.Size())
	if footerStart < 4 {
		return fmt.Errorf("the footer (%d bytes) does not fit a %d-byte file", md.Size(), size)
	}
	// The footer must be Thrift that the library re-encodes to the same
	// bytes: a field it skipped or misread (a damaged field header, say)
	// is one another reader may read differently or reject. Writers that
	// encode fields in order, as Thrift's compact protocol does (checked
	// with DuckDB's writer), pass.
	raw := make([]byte, md.Size())
	if _, err := r.ReadAt(raw, footerStart); err != nil {
		return err
	}
	again, err := md.Serialize(context.Background())
	if err != nil || !bytes.Equal(again, raw) {
		return fmt.Errorf("the footer does not re-encode to its own bytes: a field in it is damaged or unknown")
	}
	sc := md.Schema
	if sc.NumColumns() != want.NumFields() || sc.Root().NumFields() != want.NumFields() {
		return fmt.Errorf("the footer's schema has %d columns (%d top-level fields), want %d", sc.NumColumns(), sc.Root().NumFields(), want.NumFields())
	}
	for i, f := range want.Fields() {
		if err := checkColumn(sc.Column(i), f); err != nil {
			return fmt.Errorf("column %d (%s): %w", i, f.Name, err)
		}
	}
	var rows int64
	type span struct{ start, end int64 }
	var spans []span
	for g := 0; g < md.NumRowGroups(); g++ {
		rg := md.RowGroup(g)
		n := rg.NumRows()
		if n < 0 {
			return fmt.Errorf("row group %d has %d rows", g, n)
		}
		rows += n
		if rg.NumColumns() != want.NumFields() {
			return fmt.Errorf("row group %d has %d column chunks, want %d", g, rg.NumColumns(), want.NumFields())
		}
		for c := 0; c < want.NumFields(); c++ {
			cc, err := rg.ColumnChunk(c)
			if err != nil {
				return fmt.Errorf("row group %d column %d: %w", g, c, err)
			}
			col := sc.Column(c)
			switch {
			case cc.FilePath() != "":
				return fmt.Errorf("row group %d column %s lives in another file (%.40q)", g, col.Name(), cc.FilePath())
			case cc.Type() != col.PhysicalType():
				return fmt.Errorf("row group %d column %s is stored as %s, its schema says %s", g, col.Name(), cc.Type(), col.PhysicalType())
			case len(cc.PathInSchema()) != 1 || cc.PathInSchema()[0] != col.Name():
				return fmt.Errorf("row group %d column chunk %d names column %v, want %s", g, c, cc.PathInSchema(), col.Name())
			case cc.NumValues() != n:
				return fmt.Errorf("row group %d column %s holds %d values for %d rows", g, col.Name(), cc.NumValues(), n)
			}
			start := cc.DataPageOffset()
			if cc.HasDictionaryPage() {
				if d := cc.DictionaryPageOffset(); d < start {
					start = d
				}
			}
			end := start + cc.TotalCompressedSize()
			if start < 4 || cc.TotalCompressedSize() <= 0 || end > footerStart || end < start {
				return fmt.Errorf("row group %d column %s spans bytes %d to %d, outside the data (4 to %d)", g, col.Name(), start, end, footerStart)
			}
			spans = append(spans, span{start, end})
			if err := checkPages(pr, g, c, n); err != nil {
				return fmt.Errorf("row group %d column %s: %w", g, col.Name(), err)
			}
		}
	}
	if md.NumRows != rows {
		return fmt.Errorf("the footer says %d rows, its row groups hold %d", md.NumRows, rows)
	}
	sort.Slice(spans, func(i, j int) bool { return spans[i].start < spans[j].start })
	for i := 1; i < len(spans); i++ {
		if spans[i].start < spans[i-1].end {
			return fmt.Errorf("two column chunks overlap at byte %d", spans[i].start)
		}
	}
	return nil
}

// checkColumn checks one leaf of the footer's schema against an Arrow
// field: flat, and with the physical and logical types standard readers
// map back to that Arrow type.
func checkColumn(col *schema.Column, f arrow.Field) error {
	if col.Name() != f.Name {
		return fmt.Errorf("is named %.40q", col.Name())
	}
	if col.MaxRepetitionLevel() != 0 || col.MaxDefinitionLevel() > 1 {
		return fmt.Errorf("is nested or repeated")
	}
	lt := col.LogicalType()
	none := lt == nil || lt.Equals(schema.NoLogicalType{})
	ok := false
	switch t := f.Type.(type) {
	case *arrow.Int32Type:
		ok = col.PhysicalType() == parquet.Types.Int32 && (none || lt.Equals(schema.NewIntLogicalType(32, true)))
	case *arrow.Float64Type:
		ok = col.PhysicalType() == parquet.Types.Double && none
	case *arrow.BooleanType:
		ok = col.PhysicalType() == parquet.Types.Boolean && none
	case *arrow.StringType:
		ok = col.PhysicalType() == parquet.Types.ByteArray && lt != nil && lt.Equals(schema.StringLogicalType{})
	case *arrow.TimestampType:
		ok = col.PhysicalType() == parquet.Types.Int64 && t.Unit == arrow.Microsecond &&
			lt != nil && lt.Equals(schema.NewTimestampLogicalType(t.TimeZone != "", schema.TimeUnitMicros))
	}
	if !ok {
		return fmt.Errorf("is stored as %s with logical type %v, which standard readers do not read as %s", col.PhysicalType(), lt, f.Type)
	}
	return nil
}

// checkPages walks the pages of one column chunk: known page types, and
// data pages whose value counts add up to the chunk's rows.
func checkPages(pr *file.Reader, g, c int, rows int64) error {
	pages, err := pr.RowGroup(g).GetColumnPageReader(c)
	if err != nil {
		return err
	}
	defer pages.Close()
	var values int64
	dict := 0
	for pages.Next() {
		p := pages.Page()
		switch p.Type() {
		case file.PageTypeDataPage, file.PageTypeDataPageV2:
			if p.NumValues() < 0 {
				return fmt.Errorf("a data page holds %d values", p.NumValues())
			}
			values += int64(p.NumValues())
		case file.PageTypeDictionaryPage:
			if dict++; dict > 1 || values > 0 {
				return fmt.Errorf("a dictionary page that is not the chunk's first page")
			}
		default:
			return fmt.Errorf("a page of unexpected type %v", p.Type())
		}
	}
	if err := pages.Err(); err != nil {
		return err
	}
	if values != rows {
		return fmt.Errorf("its data pages hold %d values for %d rows", values, rows)
	}
	return nil
}
