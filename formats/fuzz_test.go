package formats

import (
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"gridstage/solver"
)

// FuzzVerifyDamaged feeds damaged gridstage files to Verify, which must
// return (usually an error) and never panic or exhaust memory. Seeds are
// real files of both formats with a few damages.
func FuzzVerifyDamaged(f *testing.F) {
	for _, format := range []Format{Parquet, Arrow} {
		dir := f.TempDir()
		res, err := Write(dir, sweepSet(f, 2, 2, 3), Options{Format: format})
		if err != nil {
			f.Fatal(err)
		}
		for _, file := range res.Files {
			b, err := os.ReadFile(file.Path)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(b)
			f.Add(b[:len(b)/2])
			flipped := append([]byte(nil), b...)
			flipped[len(b)/3] ^= 0xFF
			f.Add(flipped)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		// Named like gridstage output of the format its magic suggests,
		// so that Verify treats it as damaged output.
		name := "x.transitions.parquet"
		if len(data) >= 6 && string(data[:6]) == "ARROW1" {
			name = "x.transitions.arrow"
		}
		path := filepath.Join(t.TempDir(), name)
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
		Verify(path)
		if ref, ok := RefOf(path); ok {
			if s, err := Read(ref, nil); err == nil && s == nil {
				t.Fatal("Read returned neither a set nor an error")
			}
		}
	})
}

// FuzzNoNonFiniteInFiles solves AR(1) chains over the whole parameter
// range (every method, node rule and innovation law, heavy tails whose
// kurtosis is infinite, near-unit roots whose Tauchen matrix is the
// identity), writes them in both formats and reads every float column
// back: no file may hold a NaN or an infinity (issue 10), and every null
// of a moment column has its reason.
func FuzzNoNonFiniteInFiles(f *testing.F) {
	f.Add(0.9, 0.1, 9, 4, uint8(0), uint8(0), uint8(0))
	f.Add(0.9, 0.1, 9, 2, uint8(0), uint8(1), uint8(4))      // t with ν = 3: no finite skewness or kurtosis
	f.Add(0.999999, 0.1, 9, 0, uint8(1), uint8(0), uint8(0)) // Tauchen: the identity matrix
	f.Add(0.999, 0.1, 9, 4, uint8(0), uint8(1), uint8(0))
	f.Add(-0.95, 3.0, 5, 4, uint8(2), uint8(2), uint8(1))
	f.Fuzz(func(t *testing.T, rho, sigma float64, n, moments int, method, grid, shock uint8) {
		if n > 60 {
			n = 2 + n%59
		}
		p := solver.AR1{Rho: rho, Sigma: sigma, Mean: 0.5}
		switch shock % 5 {
		case 1:
			p.Shock = solver.Standardized{Base: solver.Mixture{Weights: []float64{0.85, 0.15}, Means: []float64{0.1, -0.6}, SDs: []float64{0.5, 1.5}}}
		case 2:
			p.Shock = solver.Standardized{Base: solver.StudentT{Nu: 5.5, Scale: 1}}
		case 3:
			p.Shock = solver.Standardized{Base: solver.Laplace{Scale: 1}}
		case 4:
			p.Shock = solver.Standardized{Base: solver.StudentT{Nu: 3, Scale: 1}}
		}
		s := solver.Settings{States: n, Moments: moments, Method: solver.Method(method % 4), Nodes: solver.NodeRule(grid % 4)}
		if s.Method != solver.MaxEnt {
			s.Moments = 0
		}
		c, err := p.Discretize(s)
		if err != nil {
			return // refused input: FuzzAR1 checks the refusals
		}
		set := &Set{Header: Header{Run: "fuzz", Process: "x", Kind: "ar1", Method: s.Method.String(), Dim: 1},
			Records: []Record{{Spec: []byte("{}"), SpecHash: specHash("{}"), Chain: c, Diag: solver.Diagnose(c, p)}}}
		for _, format := range []Format{Parquet, Arrow} {
			dir := t.TempDir()
			if _, err := Write(dir, set, Options{Format: format}); err != nil {
				t.Fatalf("%+v %+v: %v", p, s, err)
			}
			for _, table := range []string{TableStates, TableTransitions, TableDiagnostics, TableSummary} {
				checkFiniteTable(t, SetRef{Dir: dir, Process: "x", Format: format}.Path(table))
			}
		}
	})
}

// checkFiniteTable fails on any NaN or infinity in a table file, and on a
// row with a null moment but no null_reasons.
func checkFiniteTable(t *testing.T, path string) {
	t.Helper()
	tf, err := openTable(path, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	defer tf.close()
	for {
		rec, err := tf.batch()
		if err == io.EOF {
			return
		}
		if err != nil {
			t.Fatal(err)
		}
		reasons := rec.Schema().FieldIndices(ColNullReasons)
		for c := 0; c < int(rec.NumCols()); c++ {
			col, ok := rec.Column(c).(*array.Float64)
			if !ok {
				continue
			}
			name := rec.Schema().Field(c).Name
			moment := slices.Contains(diagnosticMomentColumns(), name) || slices.Contains(summaryMomentColumns(), name)
			for i := 0; i < col.Len(); i++ {
				if col.IsNull(i) {
					if moment && (len(reasons) != 1 || rec.Column(reasons[0]).IsNull(i)) {
						t.Fatalf("%s row %d: %s is null without a reason", path, i, name)
					}
					continue
				}
				if x := col.Value(i); math.IsNaN(x) || math.IsInf(x, 0) {
					t.Fatalf("%s row %d: %s = %v", path, i, name, x)
				}
			}
		}
	}
}
