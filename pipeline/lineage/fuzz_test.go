package lineage

import (
	"bytes"
	"crypto/sha256"
	"os"
	"path/filepath"
	"testing"
)

// FuzzRead feeds the ledger reader arbitrary bytes (seeded with a real
// ledger and damaged copies of it). It must return an error or records,
// never panic; and whatever it accepts as this version's ledger must be
// exactly write's encoding of the records it returned (the structural
// guarantee of checkStructure).
func FuzzRead(f *testing.F) {
	path := filepath.Join(f.TempDir(), "lineage.parquet")
	if err := Append(path, []Record{sample(0), sample(1), sample(2)}); err != nil {
		f.Fatal(err)
	}
	good, err := os.ReadFile(path)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(good)
	for _, i := range []int{0, 4, 301, len(good) / 2, len(good) - 9, len(good) - 1} {
		b := bytes.Clone(good)
		b[i] ^= 0x20
		f.Add(b)
	}
	f.Add(good[:len(good)/2])
	f.Add([]byte("PAR1PAR1"))
	f.Fuzz(func(t *testing.T, b []byte) {
		recs, err := read(bytes.NewReader(b), "fuzz.parquet")
		if err != nil {
			return
		}
		if !bytes.Contains(b, []byte(createdBy)) {
			return // another writer's ledger: structural checks only
		}
		h := sha256.New()
		if err := write(h, recs); err != nil {
			t.Fatalf("accepted records do not re-encode: %v", err)
		}
		if sum := sha256.Sum256(b); !bytes.Equal(h.Sum(nil), sum[:]) {
			t.Fatalf("accepted a ledger that is not the encoding of its %d records", len(recs))
		}
	})
}
