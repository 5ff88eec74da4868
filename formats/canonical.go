package formats

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"hash"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// A file gridstage wrote is exactly gridstage's encoding of its values:
// the writer is deterministic (pinned created_by, fixed writer settings,
// sorted metadata), so re-encoding the values read back, in the file's own
// row groups or record batches and with its own metadata, must give the
// same bytes. Verify does this for every Parquet file whose created_by is
// CreatedBy and every Arrow IPC file. Equal bytes prove that every
// structure a standard reader relies on — footer, page headers, logical
// types, message headers, buffer offsets, padding — is what gridstage
// writes for these values, so DuckDB, apache-arrow or any other correct
// reader reads the same values and types as gridstage does. Parquet files
// re-encoded by another writer (created_by differs) get the structural
// checks of parquetStructure instead. A change of the Parquet or Arrow
// library that alters the bytes gridstage writes must bump FormatVersion,
// which CreatedBy names.

// canonicalEncoder re-encodes a file's batches and hashes the bytes.
type canonicalEncoder struct {
	h      hash.Hash
	schema *arrow.Schema // with the file's metadata (Arrow) or plain (Parquet)
	pq     *pqarrow.FileWriter
	ipc    *ipc.FileWriter
	meta   map[string]string
	err    error
}

// newCanonicalEncoder starts re-encoding a table file; raw is its
// key/value metadata as read.
func newCanonicalEncoder(t *tableFile, mem memory.Allocator) (*canonicalEncoder, error) {
	e := &canonicalEncoder{h: sha256.New(), meta: map[string]string{}}
	for k, v := range t.meta.raw {
		// pqarrow stores the Arrow schema under this key itself.
		if k != "ARROW:schema" {
			e.meta[k] = v
		}
	}
	var err error
	if t.format == Arrow {
		keys := sortedKeys(e.meta)
		vals := make([]string, len(keys))
		for i, k := range keys {
			vals[i] = e.meta[k]
		}
		md := arrow.NewMetadata(keys, vals)
		e.schema = arrow.NewSchema(t.schema.Fields(), &md)
		e.ipc, err = ipc.NewFileWriter(e.h, ipc.WithSchema(e.schema), ipc.WithAllocator(mem))
		return e, err
	}
	e.schema = t.schema
	e.pq, err = pqarrow.NewFileWriter(t.schema, plainWriter{e.h}, parquetProps(mem), pqarrow.NewArrowWriterProperties(pqarrow.WithAllocator(mem)))
	return e, err
}

// add re-encodes one batch as read from the file: one Parquet row group
// or one Arrow record batch, as the file has them.
func (e *canonicalEncoder) add(rec arrow.RecordBatch) {
	if e.err != nil {
		return
	}
	b := array.NewRecordBatch(e.schema, rec.Columns(), rec.NumRows())
	defer b.Release()
	if e.ipc != nil {
		e.err = e.ipc.Write(b)
	} else {
		e.err = e.pq.Write(b)
	}
}

// sum finishes the encoding and returns the SHA-256 of its bytes.
func (e *canonicalEncoder) sum() (string, error) {
	if e.err == nil {
		if e.ipc != nil {
			e.err = e.ipc.Close()
		} else {
			for _, k := range sortedKeys(e.meta) {
				if e.err = e.pq.AppendKeyValueMetadata(k, e.meta[k]); e.err != nil {
					break
				}
			}
			if e.err == nil {
				e.err = e.pq.Close()
			}
		}
	}
	if e.err != nil {
		return "", fmt.Errorf("re-encoding the values: %w", e.err)
	}
	return hex.EncodeToString(e.h.Sum(nil)), nil
}

// close releases the encoder without finishing it.
func (e *canonicalEncoder) close() {
	if e.ipc != nil {
		e.ipc.Close()
	} else if e.pq != nil {
		e.pq.Close()
	}
}

// isOwnParquet reports whether a Parquet created_by is this format's.
func isOwnParquet(createdBy string) bool { return strings.TrimSpace(createdBy) == CreatedBy }
