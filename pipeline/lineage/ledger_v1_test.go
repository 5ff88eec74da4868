package lineage

import (
	"encoding/json"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/parquet/file"
)

// TestReadLedgerV1 reads a ledger of layout version 1 as that version
// wrote it: testdata/v1/ledger-v1.parquet comes from the ledger code of
// commit 2c15248^ (testdata/v1/generate.sh), with absolute paths and no
// numeric_version column, and ledger-v1.json holds the records it wrote.
// Every field must read back as written, with no numeric version; queries
// work on it; an absolute path resolves to itself whatever the root; and
// appending rewrites it as version 2 with the old rows unchanged.
func TestReadLedgerV1(t *testing.T) {
	const ledger = "testdata/v1/ledger-v1.parquet"
	meta := ledgerMeta(t, ledger)
	if meta["gridstage.ledger_version"] != "1" || meta["created_by"] != "gridstage lineage ledger 1" {
		t.Fatalf("%s is not a version 1 ledger: %v", ledger, meta)
	}
	b, err := os.ReadFile("testdata/v1/ledger-v1.json")
	if err != nil {
		t.Fatal(err)
	}
	var want []Record
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	if len(want) != 3 {
		t.Fatalf("ledger-v1.json holds %d records, want the 3 generate.sh writes", len(want))
	}
	got, err := Read(ledger)
	if err != nil {
		t.Fatalf("reading a version 1 ledger: %v", err)
	}
	if len(got) != len(want) {
		t.Fatalf("%d records, want %d", len(got), len(want))
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("record %d:\n got %+v\nwant %+v", i, got[i], want[i])
		}
		if got[i].Numeric != "" {
			t.Errorf("record %d: numeric version %q, want none (version 1 did not record it)", i, got[i].Numeric)
		}
		if !filepath.IsAbs(got[i].ChainPath) || Resolve(t.TempDir(), got[i].ChainPath) != got[i].ChainPath {
			t.Errorf("record %d: the absolute chain path %s does not resolve to itself", i, got[i].ChainPath)
		}
	}
	if est, err := ByEstimate(got, want[1].EstimateID[:12]); err != nil || len(est) != 2 {
		t.Errorf("the growth estimate used two chains: %d records, %v", len(est), err)
	}
	if users, err := ByChain(got, want[0].ChainHash[:6]); err != nil || len(users) != 2 {
		t.Errorf("the earnings chain fed two estimates: %d records, %v", len(users), err)
	}

	// Appending rewrites the ledger as version 2: old rows as they were
	// (absolute paths, no numeric version), the new one with its own.
	path := filepath.Join(t.TempDir(), "lineage.parquet")
	if err := os.WriteFile(path, mustRead(t, ledger), 0o644); err != nil {
		t.Fatal(err)
	}
	fresh := sample(0)
	fresh.Numeric, fresh.Time = "4", time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)
	if err := Append(path, []Record{fresh}); err != nil {
		t.Fatalf("appending to a version 1 ledger: %v", err)
	}
	if v := ledgerMeta(t, path)["gridstage.ledger_version"]; v != LedgerVersion {
		t.Errorf("after an append the ledger has version %s, want %s", v, LedgerVersion)
	}
	after, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(after) != len(want)+1 || after[len(want)] != fresh {
		t.Fatalf("after an append: %d records, last %+v", len(after), after[len(after)-1])
	}
	for i := range want {
		if after[i] != want[i] {
			t.Errorf("old record %d changed on append:\n got %+v\nwant %+v", i, after[i], want[i])
		}
	}
}

// ledgerMeta returns a Parquet file's key/value metadata and its
// created_by (under the key "created_by").
func ledgerMeta(t *testing.T, path string) map[string]string {
	t.Helper()
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	m := map[string]string{"created_by": pf.MetaData().GetCreatedBy()}
	kv := pf.MetaData().KeyValueMetadata()
	for i, k := range kv.Keys() {
		m[k] = kv.Values()[i]
	}
	return m
}

func mustRead(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
