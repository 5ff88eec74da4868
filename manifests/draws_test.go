package manifests

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// writeParquet writes a Parquet table with a float64 column rho, an int64
// column states and a string column note, as an optimizer written in
// another language might.
func writeParquet(t *testing.T, path string, rho []float64, states []int64, notes []string) {
	t.Helper()
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "rho", Type: arrow.PrimitiveTypes.Float64},
		{Name: "states", Type: arrow.PrimitiveTypes.Int64},
		{Name: "note", Type: arrow.BinaryTypes.String},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	b.Field(0).(*array.Float64Builder).AppendValues(rho, nil)
	b.Field(1).(*array.Int64Builder).AppendValues(states, nil)
	b.Field(2).(*array.StringBuilder).AppendValues(notes, nil)
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

func TestParquetDraws(t *testing.T) {
	dir := t.TempDir()
	writeParquet(t, filepath.Join(dir, "d.parquet"), []float64{0.8, 0.9}, []int64{5, 7}, []string{"a", "b"})
	src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    sweep:\n      draws: {file: d.parquet, ignore: [note]}\n"
	m, err := Parse(strings.NewReader(src), "m.yaml", dir)
	if err != nil {
		t.Fatal(err)
	}
	want := [][]Param{{{"rho", 0.8}, {"states", 5}}, {{"rho", 0.9}, {"states", 7}}}
	for k, w := range want {
		if !reflect.DeepEqual(m.Jobs[k].Params, w) {
			t.Errorf("point %d: %v, want %v", k, m.Jobs[k].Params, w)
		}
	}

	// A text column that is not ignored is a type error at the table's
	// first data row (line 2, as in CSV) and the column's index.
	src = strings.Replace(src, "{file: d.parquet, ignore: [note]}", "{file: d.parquet, ignore: [rho]}", 1)
	src = strings.Replace(src, "sigma: 0.1", "sigma: 0.1\n    rho: 0.5", 1)
	_, err = Parse(strings.NewReader(src), "m.yaml", dir)
	if err == nil || !strings.Contains(err.Error(), "d.parquet:1:3: processes[0].sweep.draws: column \"note\" is not a parameter") {
		t.Errorf("unknown column: got %v", err)
	}

	writeParquet(t, filepath.Join(dir, "e.parquet"), []float64{0.8, 1.5}, []int64{5, 7}, []string{"a", "b"})
	src = "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    sweep:\n      draws: {file: e.parquet, ignore: [note]}\n"
	_, err = Parse(strings.NewReader(src), "m.yaml", dir)
	want1 := filepath.Join(dir, "e.parquet") + ":3:1: processes[0].sweep.draws.rho: 1.5 is out of range: want a number in (-1, 1)"
	if err == nil || err.Error() != want1 {
		t.Errorf("out-of-range cell: got %v\nwant %s", err, want1)
	}
}

// TestDamagedParquetDraws checks that a truncated or bit-flipped Parquet
// draw table gives an error naming the manifest entry, not a crash.
func TestDamagedParquetDraws(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "d.parquet")
	writeParquet(t, good, []float64{0.8, 0.9}, []int64{5, 7}, []string{"a", "b"})
	data, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	damaged := map[string][]byte{
		"truncated.parquet": data[:len(data)/2],
		"empty.parquet":     {},
		"text.parquet":      []byte("rho\n0.5\n"),
	}
	for i := 0; i < len(data); i += 7 {
		flipped := append([]byte(nil), data...)
		flipped[i] ^= 0x5a
		if err := os.WriteFile(filepath.Join(dir, "flip.parquet"), flipped, 0o644); err != nil {
			t.Fatal(err)
		}
		src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    sweep: {draws: {file: flip.parquet, ignore: [note]}}\n"
		// A flip in the data pages may still read; only a crash fails.
		_, _ = Parse(strings.NewReader(src), "m.yaml", dir)
	}
	for name, b := range damaged {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
		src := "run: r\nprocesses:\n  - name: p\n    kind: ar1\n    sigma: 0.1\n    sweep: {draws: " + name + "}\n"
		_, err := Parse(strings.NewReader(src), "m.yaml", dir)
		if !errors.Is(err, ErrFile) || !strings.Contains(err.Error(), "m.yaml:6:20: processes[0].sweep.draws: cannot read "+name+" as Parquet") {
			t.Errorf("%s: got %v", name, err)
		}
	}
}
