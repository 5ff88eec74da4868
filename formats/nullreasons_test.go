package formats

import (
	"io"
	"math"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"gridstage/solver"
)

// nonFiniteSet holds three chains whose diagnostics test the version 5
// columns: maximum entropy at ρ 0.9 on 25 lattice points (rows far from
// unimodal at the grid's edges, issue 10), a Student t innovation with
// ν = 3 (no finite skewness or kurtosis: Inf and NaN in the truth), and
// the identity matrix on three points (degenerate; a row with all its
// mass on one point has no skewness or kurtosis).
func nonFiniteSet(t *testing.T) *Set {
	t.Helper()
	s := &Set{Header: Header{Run: "edges", Process: "wages", Kind: "ar1", Method: "maxent", Dim: 1, Params: []string{"case"}}}
	add := func(c *solver.Chain, p solver.AR1) {
		k := len(s.Records)
		spec := `{"case":` + string(rune('0'+k)) + `}`
		s.Records = append(s.Records, Record{Point: k, Params: map[string]float64{"case": float64(k)}, SpecHash: specHash(spec),
			Spec: []byte(spec), Chain: c, Diag: solver.Diagnose(c, p)})
	}
	wide := solver.AR1{Rho: 0.9, Sigma: 0.12}
	c, err := wide.Discretize(solver.Settings{States: 25, Moments: 4})
	if err != nil {
		t.Fatal(err)
	}
	add(c, wide)
	heavy := solver.AR1{Rho: 0.9, Sigma: 0.1, Shock: solver.Standardized{Base: solver.StudentT{Nu: 3, Scale: 1}}}
	if c, err = heavy.Discretize(solver.Settings{States: 9, Moments: 2}); err != nil {
		t.Fatal(err)
	}
	add(c, heavy)
	id := &solver.Chain{Dim: 1, Grid: []float64{-1, 0, 1}, Transition: []float64{1, 0, 0, 0, 1, 0, 0, 0, 1},
		Method: solver.Tauchen, Matched: make([]int, 3)}
	add(id, solver.AR1{Rho: 0.9, Sigma: 0.1})
	return s
}

// column returns the named column of a table file as one slice of values
// (nil for a null) across its batches.
func column(t *testing.T, path, name string) []any {
	t.Helper()
	tf, err := openTable(path, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	defer tf.close()
	var out []any
	for {
		rec, err := tf.batch()
		if err == io.EOF {
			return out
		}
		if err != nil {
			t.Fatal(err)
		}
		idx := rec.Schema().FieldIndices(name)
		if len(idx) != 1 {
			t.Fatalf("%s: no column %q", path, name)
		}
		a := rec.Column(idx[0])
		for i := 0; i < a.Len(); i++ {
			if a.IsNull(i) {
				out = append(out, nil)
				continue
			}
			switch c := a.(type) {
			case *array.Float64:
				out = append(out, c.Value(i))
			case *array.String:
				out = append(out, c.Value(i))
			case *array.Boolean:
				out = append(out, c.Value(i))
			case *array.Int32:
				out = append(out, c.Value(i))
			}
		}
	}
}

func TestNonFiniteNullsAndShapeColumns(t *testing.T) {
	for _, f := range []Format{Parquet, Arrow} {
		t.Run(f.String(), func(t *testing.T) {
			want := nonFiniteSet(t)
			dir := t.TempDir()
			if _, err := Write(dir, want, Options{Format: f}); err != nil {
				t.Fatal(err)
			}
			ref := SetRef{Dir: dir, Process: "wages", Format: f}
			if _, err := verify(dir, memory.DefaultAllocator); err != nil {
				t.Fatalf("verify: %v", err)
			}
			// No value column of either table holds a non-finite number.
			for _, table := range []string{TableDiagnostics, TableSummary} {
				names := diagnosticMomentColumns()
				if table == TableSummary {
					names = summaryMomentColumns()
				}
				for _, name := range append(names, ColPriorKL) {
					if table == TableSummary && name == ColPriorKL {
						continue
					}
					for i, v := range column(t, ref.Path(table), name) {
						if x, ok := v.(float64); ok && (math.IsNaN(x) || math.IsInf(x, 0)) {
							t.Errorf("%s row %d column %s holds %v", table, i, name, x)
						}
					}
				}
			}
			// Diagnostics: 25 + 9 + 3 rows in point order.
			kurt := column(t, ref.Path(TableDiagnostics), "true_kurtosis")
			skew := column(t, ref.Path(TableDiagnostics), "chain_skewness")
			reasons := column(t, ref.Path(TableDiagnostics), ColNullReasons)
			far := column(t, ref.Path(TableDiagnostics), ColFarFromUnimodal)
			kl := column(t, ref.Path(TableDiagnostics), ColPriorKL)
			if kurt[0] == nil || reasons[0] != nil {
				t.Errorf("normal row 0: true kurtosis %v, reasons %v; want a number and no reason", kurt[0], reasons[0])
			}
			if far[0] != true || far[12] != false || kl[0] == nil {
				t.Errorf("ρ 0.9 rows 0 and 12: far from unimodal %v, %v; prior KL %v", far[0], far[12], kl[0])
			}
			if r, _ := reasons[25].(string); kurt[25] != nil || !strings.Contains(r, "true_kurtosis") || !strings.Contains(r, "the process has no finite moment") {
				t.Errorf("t(3) row: true kurtosis %v, reasons %q", kurt[25], r)
			}
			if r, _ := reasons[34].(string); skew[34] != nil || kl[34] != nil || !strings.Contains(r, "chain_skewness") || !strings.Contains(r, "all its mass on one point") {
				t.Errorf("identity row: chain skewness %v, prior KL %v, reasons %q", skew[34], kl[34], r)
			}
			// Summary: degenerate and shape counts per chain.
			deg := column(t, ref.Path(TableSummary), ColDegenerate)
			farStates := column(t, ref.Path(TableSummary), ColFarStates)
			if deg[0] != nil || deg[1] != nil || deg[2] == nil || !strings.Contains(deg[2].(string), "identity") {
				t.Errorf("degenerate column %v", deg)
			}
			if farStates[0].(int32) != int32(want.Records[0].Diag.FarFromUnimodal) || farStates[0].(int32) == 0 || farStates[2].(int32) != 0 {
				t.Errorf("far_from_unimodal_states %v, want %d first", farStates, want.Records[0].Diag.FarFromUnimodal)
			}
			// Read back: nulls become NaN, everything else as written.
			got, err := Read(ref, memory.DefaultAllocator)
			if err != nil {
				t.Fatal(err)
			}
			for k := range want.Records {
				w, g := want.Records[k].Diag, got.Records[k].Diag
				if g.Degenerate != w.Degenerate || g.FarFromUnimodal != w.FarFromUnimodal {
					t.Errorf("record %d: degenerate %q / %d, want %q / %d", k, g.Degenerate, g.FarFromUnimodal, w.Degenerate, w.FarFromUnimodal)
				}
				for i := range w.States {
					ws, gs := w.States[i], g.States[i]
					if (ws.PriorKL == nil) != (gs.PriorKL == nil) || ws.PriorKL != nil && *ws.PriorKL != *gs.PriorKL {
						t.Errorf("record %d state %d: prior KL differs", k, i)
					}
					if (ws.Shape == nil) != (gs.Shape == nil) || ws.Shape != nil && *ws.Shape != *gs.Shape {
						t.Errorf("record %d state %d: shape differs", k, i)
					}
					for _, pair := range [][2]float64{{ws.True.Kurt, gs.True.Kurt}, {ws.Chain.Skew, gs.Chain.Skew}} {
						finite := !math.IsNaN(pair[0]) && !math.IsInf(pair[0], 0)
						if finite && pair[0] != pair[1] || !finite && !math.IsNaN(pair[1]) {
							t.Errorf("record %d state %d: wrote %v, read %v", k, i, pair[0], pair[1])
						}
					}
				}
			}
		})
	}
}
