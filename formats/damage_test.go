package formats

import (
	"bytes"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
)

// writeSample writes a small sweep and returns the folder and result.
func writeSample(t testing.TB, f Format) (string, Result) {
	t.Helper()
	dir := t.TempDir()
	res, err := Write(dir, sweepSet(t, 3, 1, 5), Options{Format: f})
	if err != nil {
		t.Fatal(err)
	}
	return dir, res
}

// rewrite re-encodes a table file with mutate applied to every batch and
// with the same metadata, as an editor of the file would: the result is a
// well-formed file whose numbers no longer match its content hash.
func rewrite(t testing.TB, path string, mutate func(rec arrow.RecordBatch, base int64) arrow.RecordBatch, meta func(map[string]string)) {
	t.Helper()
	mem := memory.DefaultAllocator
	tf, err := openTable(path, mem)
	if err != nil {
		t.Fatal(err)
	}
	raw := map[string]string{}
	for k, v := range tf.meta.raw {
		raw[k] = v
	}
	if meta != nil {
		meta(raw)
	}
	var s sink
	if tf.format == Arrow {
		s, err = newArrowSink(path, tf.schema, mem)
	} else {
		s, err = newParquetSink(path, tf.schema, mem)
	}
	if err != nil {
		t.Fatal(err)
	}
	var base int64
	for {
		rec, err := tf.batch()
		if err != nil {
			break
		}
		// Batches read from Parquet carry field metadata; re-attach the
		// table's plain schema, as the writer uses.
		plain := array.NewRecordBatch(tf.schema, rec.Columns(), rec.NumRows())
		out := mutate(plain, base)
		base += rec.NumRows()
		if err := s.write(out); err != nil {
			t.Fatal(err)
		}
		if out != plain {
			out.Release()
		}
		plain.Release()
	}
	tf.close()
	if err := s.finish(raw); err != nil {
		t.Fatal(err)
	}
	if err := s.commit(); err != nil {
		t.Fatal(err)
	}
}

// setFloat returns rec with float64 column col at file row target replaced
// by f(old).
func setFloat(col int, target int64, f func(float64) float64) func(arrow.RecordBatch, int64) arrow.RecordBatch {
	return func(rec arrow.RecordBatch, base int64) arrow.RecordBatch {
		if target < base || target >= base+rec.NumRows() {
			return rec
		}
		old := rec.Column(col).(*array.Float64)
		b := array.NewFloat64Builder(memory.DefaultAllocator)
		defer b.Release()
		for i := 0; i < old.Len(); i++ {
			v := old.Value(i)
			if base+int64(i) == target {
				v = f(v)
			}
			if old.IsNull(i) {
				b.AppendNull()
			} else {
				b.Append(v)
			}
		}
		cols := append([]arrow.Array(nil), rec.Columns()...)
		cols[col] = b.NewArray()
		defer cols[col].Release()
		return array.NewRecordBatch(rec.Schema(), cols, rec.NumRows())
	}
}

func wantMismatch(t *testing.T, err error, fragments ...string) {
	t.Helper()
	if err == nil {
		t.Fatal("verify passed a damaged output")
	}
	if IsNotOutput(err) {
		t.Fatalf("damaged gridstage output reported as not gridstage output: %v", err)
	}
	for _, f := range fragments {
		if !strings.Contains(err.Error(), f) {
			t.Errorf("error %q does not mention %q", err, f)
		}
	}
}

// TestVerifyFlippedProbability changes one transition probability: the row
// no longer sums to one, and verify names the file, the point and the row.
func TestVerifyFlippedProbability(t *testing.T) {
	for _, f := range []Format{Parquet, Arrow} {
		t.Run(f.String(), func(t *testing.T) {
			dir, res := writeSample(t, f)
			path := res.Files[0].Path // transitions
			// Row 32 is point 1 (5×5 = 25 rows per point), from_state 1, to_state 2.
			rewrite(t, path, setFloat(4, 32, func(p float64) float64 { return 1 - p }), nil)
			_, err := Verify(path)
			wantMismatch(t, err, filepath.Base(path), "point 1", "row 30", "from_state 1", "sums to")
			_, err = Verify(dir)
			wantMismatch(t, err, filepath.Base(path), "point 1")
		})
	}
}

// TestVerifyBaselineTable changes the baseline method's matrices: a
// probability moved out of its row is caught by the row check, a change
// the row sum cannot see by the content hash, and in a folder both name
// the baseline file.
func TestVerifyBaselineTable(t *testing.T) {
	for _, f := range []Format{Parquet, Arrow} {
		t.Run(f.String(), func(t *testing.T) {
			dir, res := writeSample(t, f)
			path := res.Files[4].Path
			if res.Files[4].Table != TableBaseline || res.Files[4].Rows != 2*25 {
				t.Fatalf("file 4 is %s with %d rows, want the baseline table with 2 × 25 rows (points 0 and 2)", res.Files[4].Table, res.Files[4].Rows)
			}
			// Row 32 is the second baseline chain (point 2), from_state 1, to_state 2.
			rewrite(t, path, setFloat(4, 32, func(p float64) float64 { return 1 - p }), nil)
			_, err := Verify(path)
			wantMismatch(t, err, filepath.Base(path), "point 2", "from_state 1", "sums to")
			_, err = Verify(dir)
			wantMismatch(t, err, filepath.Base(path), "point 2")

			dir, res = writeSample(t, f)
			path = res.Files[4].Path
			rewrite(t, path, setFloat(4, 3, func(p float64) float64 { return p + 1e-15 }), nil)
			_, err = Verify(dir)
			wantMismatch(t, err, filepath.Base(path), "content hash")
		})
	}
}

// TestVerifyChangedValue changes numbers in ways row checks cannot see: the
// content hash must catch them.
func TestVerifyChangedValue(t *testing.T) {
	_, res := writeSample(t, Parquet)
	trans := res.Files[0].Path
	// Move 1e-15 of mass within a row: the row sum stays within 1e-12.
	rewrite(t, trans, setFloat(4, 3, func(p float64) float64 { return p + 1e-15 }), nil)
	_, err := Verify(trans)
	wantMismatch(t, err, "content hash")

	// Move a grid point.
	dir, res := writeSample(t, Arrow)
	states := res.Files[1].Path
	rewrite(t, states, setFloat(3, 1, func(x float64) float64 { return x * 1.01 }), nil)
	_, err = Verify(dir)
	wantMismatch(t, err, filepath.Base(states), "content hash")
}

// TestVerifyForgedHash changes a number and also the file's own content
// hash: the file alone verifies, the folder does not, because the points
// file records its siblings' hashes and each point's chain hash.
func TestVerifyForgedHash(t *testing.T) {
	dir, res := writeSample(t, Parquet)
	states := res.Files[1].Path
	mutate := setFloat(3, 1, func(x float64) float64 { return x * 1.01 })
	rewrite(t, states, mutate, nil)
	_, err := Verify(states)
	var mm *MismatchError
	if !errors.As(err, &mm) || !strings.Contains(err.Error(), "recomputed from the values is ") {
		t.Fatalf("want a content hash mismatch, got %v", err)
	}
	forged := err.Error()[strings.Index(err.Error(), "is ")+3:][:64]
	rewrite(t, states, func(r arrow.RecordBatch, _ int64) arrow.RecordBatch { return r },
		func(m map[string]string) { m[KeyContentHash] = forged; m[KeyMetadataHash] = metadataHash(m) })
	if _, err := Verify(states); err != nil {
		t.Fatalf("the forged file alone should verify: %v", err)
	}
	_, err = Verify(dir)
	wantMismatch(t, err, filepath.Base(states), "points file records")
}

// TestVerifyTruncated cuts files short at several lengths.
func TestVerifyTruncated(t *testing.T) {
	for _, f := range []Format{Parquet, Arrow} {
		dir, res := writeSample(t, f)
		for _, file := range res.Files {
			full := readFile(t, file.Path)
			for _, n := range []int{0, 3, 7, len(full) / 3, len(full) / 2, len(full) - 9, len(full) - 1} {
				if err := os.WriteFile(file.Path, full[:n], 0o644); err != nil {
					t.Fatal(err)
				}
				_, err := Verify(file.Path)
				if err == nil || IsNotOutput(err) {
					t.Errorf("%s cut to %d of %d bytes: got %v, want a damage error", filepath.Base(file.Path), n, len(full), err)
				} else if !strings.Contains(err.Error(), file.Path) {
					t.Errorf("error %q does not name the file", err)
				}
				if _, err := Verify(dir); err == nil || IsNotOutput(err) {
					t.Errorf("folder with %s cut to %d bytes: got %v", filepath.Base(file.Path), n, err)
				}
			}
			os.WriteFile(file.Path, full, 0o644)
		}
	}
}

// TestVerifyBitFlip flips one bit inside the stored probabilities.
func TestVerifyBitFlip(t *testing.T) {
	t.Run("parquet", func(t *testing.T) {
		_, res := writeSample(t, Parquet)
		path := res.Files[0].Path
		full := readFile(t, path)
		r, err := file.NewParquetReader(bytes.NewReader(full))
		if err != nil {
			t.Fatal(err)
		}
		cc, err := r.MetaData().RowGroup(0).ColumnChunk(4) // probability
		if err != nil {
			t.Fatal(err)
		}
		start := cc.DataPageOffset()
		if cc.HasDictionaryPage() {
			start = cc.DictionaryPageOffset()
		}
		chunk := full[start : start+cc.TotalCompressedSize()]
		// Page headers hold statistics no reader needs; flip bits inside
		// the zstd frames of the pages (magic 28 B5 2F FD, RFC 8878 §3.1.1)
		// past their frame headers.
		magic := []byte{0x28, 0xB5, 0x2F, 0xFD}
		frames := 0
		for off := 0; ; {
			k := bytes.Index(chunk[off:], magic)
			if k < 0 {
				break
			}
			frame := int(start) + off + k
			frames++
			for pos := frame + 8; pos < frame+24 && pos < len(full)-8; pos++ {
				for bit := 0; bit < 8; bit += 3 {
					damaged := append([]byte(nil), full...)
					damaged[pos] ^= 1 << bit
					os.WriteFile(path, damaged, 0o644)
					_, err := Verify(path)
					if err == nil || IsNotOutput(err) {
						t.Fatalf("bit %d of byte %d flipped: got %v, want a damage error", bit, pos, err)
					}
				}
			}
			off += k + 4
		}
		if frames == 0 {
			t.Fatal("no zstd frame found in the probability column")
		}
	})
	t.Run("arrow", func(t *testing.T) {
		_, res := writeSample(t, Arrow)
		path := res.Files[0].Path
		full := readFile(t, path)
		set := sweepSet(t, 1, 1, 5)
		var needle [8]byte
		binary.LittleEndian.PutUint64(needle[:], math.Float64bits(set.Records[0].Chain.Transition[6]))
		pos := bytes.Index(full, needle[:])
		if pos < 0 {
			t.Fatal("probability not found in the Arrow file")
		}
		for bit := 0; bit < 64; bit += 7 {
			damaged := append([]byte(nil), full...)
			damaged[pos+bit/8] ^= 1 << (bit % 8)
			os.WriteFile(path, damaged, 0o644)
			_, err := Verify(path)
			wantMismatch(t, err, filepath.Base(path))
		}
	})
}

// TestVerifyEveryBitNeverPanics flips each byte of small files in turn:
// verify must return (pass or fail) without panicking. Flips in bytes no
// reader uses (padding, column statistics) can go unnoticed; flips in
// values cannot (TestVerifyBitFlip).
func TestVerifyEveryByteNeverPanics(t *testing.T) {
	if testing.Short() {
		t.Skip("flips every byte of two files")
	}
	for _, f := range []Format{Parquet, Arrow} {
		_, res := writeSample(t, f)
		path := res.Files[5].Path // points: strings, floats and the table hashes
		full := readFile(t, path)
		undetected := 0
		for pos := 0; pos < len(full); pos += 3 {
			damaged := append([]byte(nil), full...)
			damaged[pos] ^= 0x10
			os.WriteFile(path, damaged, 0o644)
			if _, err := Verify(path); err == nil {
				undetected++
			}
		}
		t.Logf("%s points file: %d of %d single-byte flips change nothing a reader uses (padding, unused header fields)", f, undetected, (len(full)+2)/3)
	}
}

// TestInterruptedWrite: records appended but never closed leave no file
// under a gridstage name, and an older complete set stays intact.
func TestInterruptedWrite(t *testing.T) {
	dir, _ := writeSample(t, Parquet)
	before := readFile(t, filepath.Join(dir, "earnings.transitions.parquet"))
	set := sweepSet(t, 2, 1, 7)
	w, err := Create(dir, set.Header, Options{BatchRows: 8})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range set.Records {
		if err := w.Append(r); err != nil {
			t.Fatal(err)
		}
	}
	// No Close: as if the process died here.
	rep, err := Verify(dir)
	if err != nil {
		t.Fatalf("the earlier complete set no longer verifies: %v", err)
	}
	if len(rep.Warnings) == 0 {
		t.Error("verify does not warn about the temporary files")
	}
	if !bytes.Equal(before, readFile(t, filepath.Join(dir, "earnings.transitions.parquet"))) {
		t.Error("the interrupted write changed a complete file")
	}
	w.Abort()
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), ".tmp-") {
			t.Errorf("Abort left %s", e.Name())
		}
	}
}

// TestKilledWriter kills a process in the middle of a write: nothing under
// a gridstage name may appear.
func TestKilledWriter(t *testing.T) {
	if dir := os.Getenv("GRIDSTAGE_KILL_DIR"); dir != "" {
		set := sweepSet(t, 3, 1, 9)
		w, err := Create(dir, set.Header, Options{BatchRows: 16})
		if err != nil {
			t.Fatal(err)
		}
		for _, r := range set.Records {
			w.Append(r)
		}
		p, _ := os.FindProcess(os.Getpid())
		p.Kill()
		select {}
	}
	dir := t.TempDir()
	cmd := exec.Command(os.Args[0], "-test.run=^TestKilledWriter$")
	cmd.Env = append(os.Environ(), "GRIDSTAGE_KILL_DIR="+dir)
	if err := cmd.Run(); err == nil {
		t.Fatal("the child was not killed")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) == 0 {
		t.Fatal("the child wrote nothing before it was killed")
	}
	for _, e := range entries {
		if _, _, _, ok := ParseFileName(e.Name()); ok {
			t.Errorf("a killed write left %s under a final name", e.Name())
		}
	}
	if _, err := Verify(dir); !IsNotOutput(err) {
		t.Errorf("verify of the folder: got %v, want not gridstage output", err)
	}
}
