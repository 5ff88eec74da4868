package lineage

import (
	"crypto/sha256"
	"fmt"
	"io"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"

	"gridstage/internal/pqcheck"
)

// checkStructure checks what a reader other than this one relies on. A
// ledger written by this version (created_by is createdBy) must be exactly
// the encoding write gives its records: the writer is deterministic, so
// equal bytes prove every footer field, page header and logical type is
// the one written, and DuckDB reads the same rows and types (issue 16: a
// flipped byte once turned the model column into binary for DuckDB while
// this reader still read text). A ledger from another writer gets the
// structural checks of internal/pqcheck against the columns of its layout
// version (layout), so a version 1 ledger is checked as version 1 wrote it.
func checkStructure(f parquet.ReaderAtSeeker, pf *file.Reader, recs []Record, layout []arrow.Field) error {
	size, err := f.Seek(0, io.SeekEnd)
	if err != nil {
		return err
	}
	if pf.MetaData().GetCreatedBy() != createdBy {
		return pqcheck.Check(pf, f, size, arrow.NewSchema(layout, nil))
	}
	have := sha256.New()
	if _, err := io.Copy(have, io.NewSectionReader(f, 0, size)); err != nil {
		return err
	}
	want := sha256.New()
	if err := write(want, recs); err != nil {
		return err
	}
	if string(have.Sum(nil)) != string(want.Sum(nil)) {
		return fmt.Errorf("its rows read, but its bytes are not this ledger's encoding of them: its structure (footer, page headers, types) was altered, so other readers may read it differently")
	}
	return nil
}
