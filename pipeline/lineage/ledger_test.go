package lineage

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

func sample(i int) Record {
	return Record{
		EstimateID: fmt.Sprintf("%064x", 1000+i), EstimatePath: "est/" + strconv.Itoa(i) + ".json", Pipeline: "demo",
		Stage: "gridstage-models", StageVersion: "0.1.0", Model: "burnside",
		ChainHash: fmt.Sprintf("%064x", 7000+i%3), SpecHash: "spec" + strconv.Itoa(i%3), ManifestHash: "man",
		ChainPath: "/out/wages.points.parquet", FileHash: "file", Process: "wages", Point: i % 3,
		Time: time.Date(2026, 1, 2, 3, 4, 5, 6000*(i+1), time.UTC),
	}
}

func TestAppendReadRoundTrip(t *testing.T) {
	path := filepath.Join(t.TempDir(), "sub", "lineage.parquet")
	if _, err := Read(path); !os.IsNotExist(err) {
		t.Fatalf("missing ledger: err = %v, want not-exist", err)
	}
	first := []Record{sample(0), sample(1)}
	if err := Append(path, first); err != nil {
		t.Fatal(err)
	}
	if err := Append(path, []Record{sample(2), sample(3)}); err != nil {
		t.Fatal(err)
	}
	got, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 4 {
		t.Fatalf("%d records, want 4", len(got))
	}
	for i, r := range got {
		if want := sample(i); r != want {
			t.Errorf("record %d:\n got %+v\nwant %+v", i, r, want)
		}
	}
	entries, _ := os.ReadDir(filepath.Dir(path))
	for _, e := range entries {
		if strings.Contains(e.Name(), ".tmp") {
			t.Errorf("temporary file %s left behind", e.Name())
		}
	}
}

func TestQueries(t *testing.T) {
	var recs []Record
	for i := 0; i < 6; i++ {
		recs = append(recs, sample(i))
	}
	est, err := ByEstimate(recs, recs[4].EstimateID)
	if err != nil || len(est) != 1 || est[0].ChainHash != recs[4].ChainHash {
		t.Fatalf("ByEstimate = %+v, %v", est, err)
	}
	users, err := ByChain(recs, recs[1].ChainHash)
	if err != nil || len(users) != 2 { // points 1 and 4 share chain 7001
		t.Fatalf("ByChain = %d records, %v; want 2", len(users), err)
	}
	if _, err := ByChain(recs, "00000"); err == nil || !strings.Contains(err.Error(), "too short") {
		t.Errorf("short prefix: err = %v", err)
	}
	if _, err := ByChain(recs, "000000000000"); err == nil || !strings.Contains(err.Error(), "ambiguous") {
		t.Errorf("ambiguous prefix: err = %v", err)
	}
	if _, err := ByEstimate(recs, "ffffffff"); err == nil || !strings.Contains(err.Error(), "no estimate ffffffff") {
		t.Errorf("unknown id: err = %v", err)
	}
}

func TestEstimateIDDeterministic(t *testing.T) {
	v := Values{Scalars: map[string]float64{"b": 2, "a": 1}, Vectors: map[string][]float64{"v": {1, 2}}}
	id1 := EstimateID("s", "1", "burnside", map[string]float64{"beta": 0.95, "theta": -1.5}, []string{"h"}, v)
	id2 := EstimateID("s", "1", "burnside", map[string]float64{"theta": -1.5, "beta": 0.95}, []string{"h"}, v)
	if id1 != id2 || len(id1) != 64 {
		t.Fatalf("ids %s, %s", id1, id2)
	}
	v.Vectors["v"][1] = 2.0000000001
	if EstimateID("s", "1", "burnside", map[string]float64{"beta": 0.95, "theta": -1.5}, []string{"h"}, v) == id1 {
		t.Error("a changed value kept the id")
	}
}

func TestReadRejectsOtherFiles(t *testing.T) {
	dir := t.TempDir()
	junk := filepath.Join(dir, "junk.parquet")
	os.WriteFile(junk, []byte("PAR1 definitely not parquet PAR1"), 0o644)
	if _, err := Read(junk); err == nil || !strings.Contains(err.Error(), junk) {
		t.Errorf("junk: err = %v, want an error naming the file", err)
	}
	// A truncated ledger must fail to read, not return fewer rows.
	good := filepath.Join(dir, "l.parquet")
	if err := Append(good, []Record{sample(0), sample(1)}); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(good)
	cut := filepath.Join(dir, "cut.parquet")
	os.WriteFile(cut, b[:len(b)-10], 0o644)
	if _, err := Read(cut); err == nil {
		t.Error("truncated ledger read without error")
	}
}

// TestAppendSurvivesKill appends from a child process and kills it with
// SIGKILL at varying moments: the ledger must always read back whole, with
// a row count that is a multiple of the batch size.
func TestAppendSurvivesKill(t *testing.T) {
	if os.Getenv("LINEAGE_APPEND_LOOP") != "" {
		appendLoop(os.Getenv("LINEAGE_APPEND_LOOP"))
		return
	}
	if testing.Short() {
		t.Skip("spawns processes")
	}
	path := filepath.Join(t.TempDir(), "lineage.parquet")
	for round, delay := range []time.Duration{150, 220, 300, 400, 550, 700} {
		cmd := exec.Command(os.Args[0], "-test.run=^TestAppendSurvivesKill$")
		cmd.Env = append(os.Environ(), "LINEAGE_APPEND_LOOP="+path)
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(delay * time.Millisecond)
		cmd.Process.Kill()
		cmd.Wait()
		recs, err := Read(path)
		if os.IsNotExist(err) {
			continue // killed before the first append finished
		}
		if err != nil {
			t.Fatalf("round %d: ledger unreadable after kill: %v", round, err)
		}
		t.Logf("round %d: killed after %v with %d rows", round, delay*time.Millisecond, len(recs))
		if len(recs)%batch != 0 {
			t.Fatalf("round %d: %d rows, not a multiple of %d: a partial append survived", round, len(recs), batch)
		}
	}
	// No lock file is made (appends lock the folder). Temporary files from
	// killed appends may remain; they are never mistaken for the ledger,
	// which is only ever renamed into place whole.
}

const batch = 50

func appendLoop(path string) {
	recs := make([]Record, batch)
	for i := range recs {
		recs[i] = sample(i)
	}
	for {
		if err := Append(path, recs); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
}

// TestLargeLedgerReadsBack appends 30,000 distinct rows at once and reads
// them back. A dictionary of this many 64-character hashes outgrows its
// page, and a column that falls back to plain pages part way had its two
// page encodings listed in map order by the Parquet library, so the bytes
// of the same rows differed from one encoding to the next and Read's
// byte-for-byte check refused the ledger (before encoding 2, for about
// 63 in 64 writes of such a ledger: six columns of distinct values).
func TestLargeLedgerReadsBack(t *testing.T) {
	if testing.Short() {
		t.Skip("writes a 30,000-row ledger")
	}
	recs := make([]Record, 30000)
	for i := range recs {
		recs[i] = sample(i)
		h := fmt.Sprintf("%064x", 5000000+i)
		recs[i].SpecHash, recs[i].ChainHash, recs[i].ManifestHash, recs[i].FileHash = h, h, h, h
	}
	path := filepath.Join(t.TempDir(), "lineage.parquet")
	if err := Append(path, recs); err != nil {
		t.Fatal(err)
	}
	got, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(recs) {
		t.Fatalf("%d records, want %d", len(got), len(recs))
	}
	for i := range got {
		if got[i] != recs[i] {
			t.Fatalf("record %d:\n got %+v\nwant %+v", i, got[i], recs[i])
		}
	}
}
