package formats

import (
	"encoding/json"
	"gridstage/internal/noderef"
	"math"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gridstage/solver"
)

type interopFile struct {
	Path             string            `json:"path"`
	Format           string            `json:"format"`
	Table            string            `json:"table"`
	Rows             int64             `json:"rows"`
	Metadata         map[string]string `json:"metadata"`
	ContentHash      string            `json:"contentHash"`
	TransitionRows   int               `json:"transitionRows"`
	WorstRowSumError float64           `json:"worstRowSumError"`
	DerivativeSums   int               `json:"derivativeSums"`
}

// TestInteropDuckDBArrow writes a sweep of AR(1) chains (ρ = 0.9, 0.5,
// σ = 0.1, maximum entropy, 9 states), a life-cycle chain and a VAR sweep
// with vector diagnostics (vectorSet: nulls among the vector columns) in
// both formats, then reads them with DuckDB (Parquet) and apache-arrow (Arrow
// IPC) through tools/interop/check.mjs, which checks metadata keys, probabilities
// in [0, 1], row sums within 1e-12, and recomputes every content hash from
// the values those readers return with its own implementation of the
// encoding in docs/HASHES.md. Here the metadata and row counts the
// readers report must equal what the writer produced, and the transition
// matrix DuckDB loads with the README's query must equal the solver's bit
// for bit (a float64 passes through Parquet, DuckDB and JSON unchanged),
// and so must a derivative dP/dρ read from the sensitivities table alone.
func TestInteropDuckDBArrow(t *testing.T) {
	node, tools := noderef.Interop(t, "the interoperability check")
	script := filepath.Join(tools, "check.mjs")
	set := &Set{Header: Header{Run: "interop", Process: "wages", Kind: "ar1", Method: "maxent", Dim: 1, Params: []string{"rho"}}}
	for i, rho := range []float64{0.9, 0.5} {
		p := solver.AR1{Rho: rho, Sigma: 0.1}
		c, err := p.Discretize(solver.Settings{States: 9})
		if err != nil {
			t.Fatal(err)
		}
		set.Records = append(set.Records, Record{Point: i, Params: map[string]float64{"rho": rho}, SpecHash: specHash(`{"rho":` + strconv.FormatFloat(rho, 'g', -1, 64) + `}`),
			Spec: []byte(`{"rho":` + strconv.FormatFloat(rho, 'g', -1, 64) + `}`), Chain: c, Diag: solver.Diagnose(c, p)})
	}
	dir := t.TempDir()
	want := map[string]File{}
	var args []string
	sens := sensitivitySet(t)
	for _, s := range []*Set{set, lifeCycleSet(t), vectorSet(t), sens} {
		for _, f := range []Format{Parquet, Arrow} {
			res, err := Write(dir, s, Options{Format: f})
			if err != nil {
				t.Fatal(err)
			}
			for _, file := range res.Files {
				want[file.Path] = file
				args = append(args, file.Path)
			}
		}
	}
	out, err := exec.Command(node, append([]string{script}, args...)...).Output()
	if err != nil {
		t.Fatalf("tools/interop/check.mjs failed: %v\n%s", err, stderrOf(err))
	}
	var rep struct{ Files []interopFile }
	if err := json.Unmarshal(out, &rep); err != nil {
		t.Fatalf("tools/interop/check.mjs printed no JSON report: %v\n%s", err, out)
	}
	if len(rep.Files) != len(args) {
		t.Fatalf("the readers checked %d files, want %d", len(rep.Files), len(args))
	}
	for _, got := range rep.Files {
		w := want[got.Path]
		if got.Table != w.Table || got.Rows != w.Rows || got.Metadata[KeyContentHash] != w.ContentHash || got.ContentHash != w.ContentHash {
			t.Errorf("%s read by %s: table %s, %d rows, content hash %s; written: %s, %d rows, %s",
				filepath.Base(got.Path), got.Format, got.Table, got.Rows, got.Metadata[KeyContentHash], w.Table, w.Rows, w.ContentHash)
		}
		if got.Table == TableTransitions || (got.Table == TableBaseline && got.Rows > 0) {
			// Tolerance 1e-12: RowSumTolerance (see its comment).
			if got.TransitionRows == 0 || got.WorstRowSumError > RowSumTolerance {
				t.Errorf("%s: %d transition rows, worst row-sum error %g", filepath.Base(got.Path), got.TransitionRows, got.WorstRowSumError)
			}
		}
		// 2 points × 3 parameters × (7 transition rows + 1 stationary law).
		if got.Table == TableSensitivities && got.DerivativeSums != 48 {
			t.Errorf("%s: the readers summed %d derivative rows, want 48", filepath.Base(got.Path), got.DerivativeSums)
		}
	}

	// dP/dρ of point 1 from the sensitivities table, through DuckDB.
	out, err = exec.Command(node, script, "--derivative", filepath.Join(dir, "earnings.sensitivities.parquet"), "1", "rho").Output()
	if err != nil {
		t.Fatalf("derivative query failed: %v\n%s", err, stderrOf(err))
	}
	var drows []struct {
		State       int       `json:"state"`
		Derivatives []float64 `json:"derivatives"`
	}
	if err := json.Unmarshal(out, &drows); err != nil {
		t.Fatalf("derivative query printed %s: %v", out, err)
	}
	dRho := sens.Records[1].Sensitivities.Transition[1]
	if len(drows) != 7 {
		t.Fatalf("DuckDB returned %d derivative rows, want 7", len(drows))
	}
	for i, r := range drows {
		if r.State != i || !sameBits(r.Derivatives, dRho[i*7:(i+1)*7]) {
			t.Errorf("dP/drho row %d from DuckDB (state %d) %v differs from the solver's %v", i, r.State, r.Derivatives, dRho[i*7:(i+1)*7])
		}
	}

	// One matrix through the README's DuckDB query.
	out, err = exec.Command(node, script, "--matrix", filepath.Join(dir, "wages.transitions.parquet"), "1", "0").Output()
	if err != nil {
		t.Fatalf("matrix query failed: %v\n%s", err, stderrOf(err))
	}
	var rows []struct {
		From          int       `json:"from_state"`
		Level         float64   `json:"level"`
		Probabilities []float64 `json:"probabilities"`
	}
	if err := json.Unmarshal(out, &rows); err != nil {
		t.Fatalf("matrix query printed %s: %v", out, err)
	}
	c := set.Records[1].Chain
	if len(rows) != c.States() {
		t.Fatalf("DuckDB returned %d rows, the chain has %d states", len(rows), c.States())
	}
	for i, r := range rows {
		if r.From != i || math.Float64bits(r.Level) != math.Float64bits(c.Grid[i]) || !sameBits(r.Probabilities, c.Row(i)) {
			t.Errorf("row %d from DuckDB (state %d, level %v, %v) differs from the solver's (level %v, %v)", i, r.From, r.Level, r.Probabilities, c.Grid[i], c.Row(i))
		}
	}
}

// TestInteropDetectsDamage checks that the script's row-sum check can
// fail: one probability replaced by 1 − p must be reported by DuckDB's and
// apache-arrow's reading alike.
func TestInteropDetectsDamage(t *testing.T) {
	node, tools := noderef.Interop(t, "the interoperability check")
	script := filepath.Join(tools, "check.mjs")
	for _, f := range []Format{Parquet, Arrow} {
		_, res := writeSample(t, f)
		path := res.Files[0].Path
		rewrite(t, path, setFloat(4, 32, func(p float64) float64 { return 1 - p }), nil)
		out, err := exec.Command(node, script, path).CombinedOutput()
		if err == nil || !strings.Contains(string(out), "point 1") || !strings.Contains(string(out), "sums to") {
			t.Errorf("%s: the script did not report the damaged row: %v\n%s", f, err, out)
		}
	}
}

func stderrOf(err error) string {
	if ee, ok := err.(*exec.ExitError); ok {
		return string(ee.Stderr)
	}
	return ""
}
