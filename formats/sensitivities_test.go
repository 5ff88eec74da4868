package formats

import (
	"errors"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"gridstage/solver"
)

// sensitivitySet is a sweep of smooth AR(1) chains (ρ = 0.9, 0.95, σ = 0.1,
// 7 states) with their derivatives in mean, ρ and σ.
func sensitivitySet(t testing.TB) *Set {
	t.Helper()
	set := &Set{Header: Header{Run: "sens", Process: "earnings", Kind: "ar1", Method: "maxent", Dim: 1, Params: []string{"rho"}, Sensitivities: true}}
	for i, rho := range []float64{0.9, 0.95} {
		p := solver.AR1{Rho: rho, Sigma: 0.1}
		c, sens, err := p.Sensitivities(solver.Settings{States: 7, Moments: 4, Matching: solver.MatchSmooth})
		if err != nil {
			t.Fatal(err)
		}
		spec := `{"rho":` + strconv.FormatFloat(rho, 'g', -1, 64) + `}`
		set.Records = append(set.Records, Record{Point: i, Params: map[string]float64{"rho": rho}, SpecHash: specHash(spec),
			Spec: []byte(spec), Chain: c, Diag: solver.Diagnose(c, p), Sensitivities: sens})
	}
	return set
}

// TestSensitivitiesRoundTrip: the seventh table comes back bit for bit in
// both formats, with the same content hash in each (values, not bytes).
func TestSensitivitiesRoundTrip(t *testing.T) {
	var hashes []string
	for _, f := range []Format{Parquet, Arrow} {
		mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
		want := sensitivitySet(t)
		dir := t.TempDir()
		res, err := Write(dir, want, Options{Format: f, Allocator: mem, BatchRows: 50})
		if err != nil {
			t.Fatal(err)
		}
		if len(res.Files) != len(Tables)+1 || res.Files[len(res.Files)-2].Table != TableSensitivities {
			t.Fatalf("%s: wrote %d files, want %d with the sensitivities table before the points table", f, len(res.Files), len(Tables)+1)
		}
		hashes = append(hashes, res.Files[len(res.Files)-2].ContentHash)
		got, err := Read(SetRef{Dir: dir, Process: "earnings", Format: f}, mem)
		if err != nil {
			t.Fatal(err)
		}
		if !got.Sensitivities {
			t.Errorf("%s: the header read back has no sensitivities", f)
		}
		for i, w := range want.Records {
			g := got.Records[i].Sensitivities
			if g == nil || strings.Join(g.Params, ",") != strings.Join(w.Sensitivities.Params, ",") {
				t.Fatalf("%s record %d: sensitivities %v, want parameters %v", f, i, g, w.Sensitivities.Params)
			}
			for k := range g.Params {
				if !sameBits(g.Grid[k], w.Sensitivities.Grid[k]) || !sameBits(g.Transition[k], w.Sensitivities.Transition[k]) || !sameBits(g.Stationary[k], w.Sensitivities.Stationary[k]) {
					t.Errorf("%s record %d: derivatives in %s differ from those written", f, i, g.Params[k])
				}
			}
		}
		if _, err := Verify(dir); err != nil {
			t.Errorf("%s: verify: %v", f, err)
		}
		mem.AssertSize(t, 0)
	}
	if hashes[0] != hashes[1] {
		t.Errorf("content hash %s in Parquet, %s in Arrow", hashes[0], hashes[1])
	}
}

// TestSensitivitiesDamage: verify refuses a set whose sensitivities file is
// missing or holds a changed derivative, and the writer refuses records
// that do not fit the header.
func TestSensitivitiesDamage(t *testing.T) {
	dir := t.TempDir()
	if _, err := Write(dir, sensitivitySet(t), Options{}); err != nil {
		t.Fatal(err)
	}
	path := SetRef{Dir: dir, Process: "earnings", Format: Parquet}.Path(TableSensitivities)
	saved, _ := os.ReadFile(path)
	rewrite(t, path, setFloat(7, 100, func(v float64) float64 { return v + 1e-9 }), nil)
	if _, err := Verify(dir); err == nil || !strings.Contains(err.Error(), "content hash") {
		t.Errorf("a changed derivative: verify says %v, want a content hash mismatch", err)
	}
	os.Remove(path)
	if _, err := Verify(dir); err == nil || !strings.Contains(err.Error(), "missing") {
		t.Errorf("no sensitivities file: verify says %v, want it reported missing", err)
	}
	os.WriteFile(path, saved, 0o644)
	if _, err := Verify(dir); err != nil {
		t.Errorf("restored: %v", err)
	}

	s := sensitivitySet(t)
	s.Records[1].Sensitivities = nil
	var re *RecordError
	if _, err := Write(t.TempDir(), s, Options{}); !errors.As(err, &re) || !strings.Contains(err.Error(), "no sensitivities") {
		t.Errorf("a record without sensitivities in a set with them: %v", err)
	}
	s = sensitivitySet(t)
	s.Sensitivities = false
	if _, err := Write(t.TempDir(), s, Options{}); !errors.As(err, &re) || !strings.Contains(err.Error(), "no sensitivities table") {
		t.Errorf("sensitivities in a set without the table: %v", err)
	}
	s = sensitivitySet(t)
	s.Records[0].Sensitivities.Transition[1] = s.Records[0].Sensitivities.Transition[1][:3]
	if _, err := Write(t.TempDir(), s, Options{}); !errors.As(err, &re) || !strings.Contains(err.Error(), "transition derivative") {
		t.Errorf("a short derivative: %v", err)
	}
}
