package manifests

import (
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// Issue 16 case 8: a small Parquet draw table whose ignored text column
// decodes to gigabytes. Here 20,000 rows of one 20 KB text (400 MB if
// decoded; the file, dictionary-encoded, is a few KB) beside the rho
// column in use. Reading must not decode the ignored column: the parse
// allocates less than 50 MB more than for the same table without it
// (decoding the column would allocate at least its 400 MB).
func TestIgnoredDrawColumnIsNotDecoded(t *testing.T) {
	const rows = 20000
	dir := t.TempDir()
	writeBomb(t, filepath.Join(dir, "bomb.parquet"), rows, true)
	writeBomb(t, filepath.Join(dir, "plain.parquet"), rows, false)
	parse := func(src string) uint64 {
		t.Helper()
		var before, after runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&before)
		m, err := Parse(strings.NewReader(src), "m.yaml", dir)
		runtime.ReadMemStats(&after)
		if err != nil {
			t.Fatal(err)
		}
		if len(m.Jobs) != rows {
			t.Fatalf("%d jobs, want %d", len(m.Jobs), rows)
		}
		return after.TotalAlloc - before.TotalAlloc
	}
	src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    sweep:\n      draws: {file: bomb.parquet, ignore: [mean]}\n"
	bomb := parse(src)
	plain := parse(strings.Replace(src, "{file: bomb.parquet, ignore: [mean]}", "{file: plain.parquet}", 1))
	if bomb > plain+50<<20 {
		t.Errorf("parsing allocated %d MB with the ignored column, %d MB without: it was decoded", bomb>>20, plain>>20)
	}
	// The same column in use is refused by its type, before decoding.
	_, err := Parse(strings.NewReader(strings.Replace(src, ", ignore: [mean]", "", 1)), "m.yaml", dir)
	if err == nil || !strings.Contains(err.Error(), "column mean of bomb.parquet holds utf8 values: want numbers") {
		t.Errorf("text column in use: %v", err)
	}
}

// writeBomb writes rows draws of rho and, with text, a column mean
// holding one 20 KB text in every row (dictionary-encoded: a few KB).
func writeBomb(t *testing.T, path string, rows int, text bool) {
	t.Helper()
	dictType := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int32, ValueType: arrow.BinaryTypes.String}
	fields := []arrow.Field{{Name: "rho", Type: arrow.PrimitiveTypes.Float64}}
	if text {
		fields = append(fields, arrow.Field{Name: "mean", Type: dictType})
	}
	schema := arrow.NewSchema(fields, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	long := strings.Repeat("x", 20000)
	for i := 0; i < rows; i++ {
		b.Field(0).(*array.Float64Builder).Append(0.5 + 0.4*float64(i)/float64(rows))
		if text {
			if err := b.Field(1).(*array.BinaryDictionaryBuilder).AppendString(long); err != nil {
				t.Fatal(err)
			}
		}
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w, err := pqarrow.NewFileWriter(schema, f, nil, pqarrow.DefaultWriterProps())
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
}

// Issue 16 case 10: errors repeat at most the start of a long value.
func TestLongValuesAreShortenedInErrors(t *testing.T) {
	long := strings.Repeat("n", 100000)
	src := "run: r\nprocesses:\n  - name: " + long + "\n    kind: ar1\n    rho: 0.9\n    sigma: 0.1\n"
	_, err := Parse(strings.NewReader(src), "m.yaml", t.TempDir())
	if err == nil {
		t.Fatal("a 100 KB name was accepted")
	}
	if len(err.Error()) > 1000 || !strings.Contains(err.Error(), "(100000 bytes in all)") {
		t.Errorf("error of %d bytes: %.300s", len(err.Error()), err)
	}
}
